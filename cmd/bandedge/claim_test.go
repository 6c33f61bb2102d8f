package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat/distuv"

	"bandedge/fit/scan"
	"bandedge/io/results"
)

func TestNewClaimCmd(t *testing.T) {
	tests := []struct {
		name    string
		args    string
		check   func(t *testing.T, o *claimOptions)
		wantErr bool
	}{
		{name: "file with tolerance", args: "s.csv --gap 1.42 --gap-tol 0.01 --thickness 2um --index 3.6", check: func(t *testing.T, o *claimOptions) {
			if o.Target != "s.csv" || o.Gap != 1.42 || o.GapTol != 0.01 || o.Settings.Thickness != 2e-4 || o.Settings.Index != 3.6 {
				t.Errorf("options %+v", o)
			}
		}},
		{name: "folder without tolerance", args: "out/ --gap 1.424", check: func(t *testing.T, o *claimOptions) {
			if o.Target != "out/" || o.GapTol != 0 {
				t.Errorf("options %+v", o)
			}
		}},
		{name: "no gap", args: "s.csv", wantErr: true},
		{name: "zero gap", args: "s.csv --gap 0", wantErr: true},
		{name: "negative tolerance", args: "s.csv --gap 1.42 --gap-tol -0.01", wantErr: true},
		{name: "tolerance above the gap", args: "s.csv --gap 1.42 --gap-tol 2", wantErr: true},
		{name: "no target", args: "--gap 1.42", wantErr: true},
		{name: "two targets", args: "a b --gap 1.42", wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var got *claimOptions
			cmd := newClaimCmd(func(_ context.Context, o *claimOptions) error { got = o; return nil })
			cmd.SetArgs(strings.Fields(tc.args))
			cmd.SetOut(io.Discard)
			cmd.SetErr(io.Discard)
			err := cmd.Execute()
			if tc.wantErr {
				if err == nil {
					t.Fatal("no error")
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			tc.check(t, got)
		})
	}
}

var zLine = regexp.MustCompile(`(?m)^z .*= (\S+) `)
var pLine = regexp.MustCompile(`(?m)^p\s+(\S+) `)

// TestRunClaim: one scan, claims placed at known numbers of u_c from the
// measured gap, z and p against a hand computation with distuv.Normal.
func TestRunClaim(t *testing.T) {
	file := filepath.Join(batchData, "scans", "KM2611-W01-s01.csv")
	flags := append([]string{"--thickness", "2um"}, batchArgs...)
	fa := &analysisFlags{Thickness: "2um", Index: 3.6, IndexErr: 0.05, WavelengthErr: 0.2, Model: "direct+urbach", Coverage: 2}
	s, err := fa.settings()
	if err != nil {
		t.Fatal(err)
	}
	o, err := scan.AnalyzeFile(context.Background(), file, s)
	if err != nil {
		t.Fatal(err)
	}
	eg, uc := o.Result.Params[0].Value, o.Result.Budgets["eg"].Combined
	tests := []struct {
		name     string
		gap, tol float64
		want     int
		verdict  string
	}{
		{name: "at the measured value", gap: eg, want: exitOK, verdict: "consistent"},
		{name: "1.5 u_c away", gap: eg + 1.5*uc, want: exitOK, verdict: "consistent"},
		{name: "2.5 u_c away", gap: eg - 2.5*uc, want: exitIndeterminate, verdict: "cannot tell"},
		{name: "10 u_c away", gap: eg + 10*uc, want: exitFail, verdict: "inconsistent"},
		// The claim's tolerance widens the comparison: 10 u_c away but
		// tol/√3 = 10 u_c gives |z| = 10/√101 ≈ 0.995.
		{name: "10 u_c away, wide tolerance", gap: eg + 10*uc, tol: 10 * math.Sqrt(3) * uc, want: exitOK, verdict: "consistent"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var so, se bytes.Buffer
			args := append([]string{"claim", file, "--gap", strconv.FormatFloat(tc.gap, 'g', -1, 64), "--gap-tol", strconv.FormatFloat(tc.tol, 'g', -1, 64)}, flags...)
			code := run(context.Background(), args, &so, &se)
			if code != tc.want {
				t.Errorf("exit %d, want %d\n%s%s", code, tc.want, so.String(), se.String())
			}
			out := so.String()
			if !strings.Contains(out, "verdict     "+tc.verdict) || !strings.Contains(out, "largest term of u_c is") {
				t.Errorf("output:\n%s", out)
			}
			// Hand computation: z = (E − E_claim)/√(u_c² + (tol/√3)²),
			// p = 2·(1 − Φ(|z|)) with Φ the standard normal CDF (distuv).
			uClaim := tc.tol / math.Sqrt(3)
			z := (eg - tc.gap) / math.Sqrt(uc*uc+uClaim*uClaim)
			p := 2 * (1 - distuv.Normal{Mu: 0, Sigma: 1}.CDF(math.Abs(z)))
			mz, mp := zLine.FindStringSubmatch(out), pLine.FindStringSubmatch(out)
			if mz == nil || mp == nil {
				t.Fatalf("no z or p line:\n%s", out)
			}
			gz, _ := strconv.ParseFloat(mz[1], 64)
			gp, _ := strconv.ParseFloat(mp[1], 64)
			// Printed to 3 and 2 significant digits.
			if !scalar.EqualWithinAbsOrRel(gz, z, 1e-3, 5e-3) || !scalar.EqualWithinAbsOrRel(gp, p, 1e-3, 5e-2) {
				t.Errorf("printed z %g p %g, want %g %g", gz, gp, z, p)
			}
		})
	}
}

// TestRunClaimFolder judges every scan of a batch folder and the lot
// mean; the exit status is the lot mean's verdict.
func TestRunClaimFolder(t *testing.T) {
	out := t.TempDir()
	args := append([]string{"batch", filepath.Join(batchData, "scans", "KM2611-W01-s01.csv"), filepath.Join(batchData, "scans", "KM2611-W01-s02.csv"),
		filepath.Join(batchData, "scans", "KM2611-W01-s06.csv"), filepath.Join(batchData, "scans", "bad_truncated.csv"),
		"--out", out, "--samples", filepath.Join(batchData, "samples.csv"), "--no-reports"}, batchArgs...)
	if code := run(context.Background(), args, io.Discard, io.Discard); code != exitInput {
		t.Fatalf("batch exit %d", code)
	}
	s := readSummary(t, out)
	var eg, uc []float64
	for _, r := range s.Rows {
		if r.Status == results.StatusOK {
			eg, uc = append(eg, r.EgEV.Float()), append(uc, r.EgErrEV.Float())
		}
	}
	mean := (eg[0] + eg[1] + eg[2]) / 3
	for _, tc := range []struct {
		gap  float64
		want int
	}{{mean, exitOK}, {mean + 0.05, exitFail}} {
		var so, se bytes.Buffer
		code := run(context.Background(), []string{"claim", out, "--gap", fmt.Sprint(tc.gap)}, &so, &se)
		if code != tc.want {
			t.Errorf("gap %g: exit %d, want %d\n%s", tc.gap, code, tc.want, so.String())
		}
		txt := so.String()
		if !strings.Contains(txt, "lot mean") || !strings.Contains(txt, "KM2611-W01-s06.csv") || !strings.Contains(txt, "not fitted 1") {
			t.Errorf("output:\n%s", txt)
		}
	}
	var so bytes.Buffer
	if code := run(context.Background(), []string{"claim", t.TempDir(), "--gap", "1.42"}, &so, io.Discard); code != exitInput {
		t.Errorf("folder without summary: exit %d, want %d", code, exitInput)
	}
}
