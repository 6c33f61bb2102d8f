package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"

	"bandedge/fit"
	"bandedge/fit/selfcheck"
	"bandedge/fit/strd"
)

// verifyRoot is the root command with the verify command built on runF,
// replacing a verify command the root may already have.
func verifyRoot(t *testing.T, runF func(context.Context, *verifyOptions) error) (*bytes.Buffer, *bytes.Buffer, func(args ...string) error) {
	t.Helper()
	var out, errOut bytes.Buffer
	root := newRootCmd(&out, &errOut)
	for _, c := range root.Commands() {
		if c.Name() == "verify" {
			root.RemoveCommand(c)
		}
	}
	root.AddCommand(newVerifyCmd(runF))
	return &out, &errOut, func(args ...string) error {
		root.SetArgs(append([]string{"verify"}, args...))
		return root.ExecuteContext(context.Background())
	}
}

func TestNewVerifyCmd(t *testing.T) {
	tests := []struct {
		name    string
		args    []string
		want    verifyOptions
		wantErr bool // a *flagError, printed with usage
	}{
		{name: "defaults", args: nil, want: verifyOptions{}},
		{name: "json", args: []string{"--json"}, want: verifyOptions{JSON: true}},
		{name: "only nist", args: []string{"--only", "nist"}, want: verifyOptions{Only: "nist"}},
		{name: "only physics, out", args: []string{"--only=physics", "--out", "rec.json", "--json"},
			want: verifyOptions{Only: "physics", OutFile: "rec.json", JSON: true}},
		{name: "only unknown", args: []string{"--only", "gpu"}, wantErr: true},
		{name: "only upper case", args: []string{"--only", "NIST"}, wantErr: true},
		{name: "out empty", args: []string{"--out", ""}, wantErr: true},
		{name: "positional argument", args: []string{"nist"}, wantErr: true},
		{name: "unknown flag", args: []string{"--fast"}, wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var got *verifyOptions
			_, _, run := verifyRoot(t, func(_ context.Context, o *verifyOptions) error {
				got = o
				return nil
			})
			err := run(tc.args...)
			if tc.wantErr {
				var fe *flagError
				if !errors.As(err, &fe) {
					t.Fatalf("error %v (%T), want a *flagError", err, err)
				}
				if got != nil {
					t.Error("runF was called despite the bad flags")
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if got == nil {
				t.Fatal("runF not called")
			}
			if got.JSON != tc.want.JSON || got.Only != tc.want.Only || got.OutFile != tc.want.OutFile {
				t.Errorf("options %+v, want %+v", *got, tc.want)
			}
			if got.Out == nil || got.ErrOut == nil || got.Now == nil || got.Checks == nil || got.Settings != nil {
				t.Errorf("streams, clock, checks or settings not set up as defaults: %+v", *got)
			}
		})
	}
}

// fixedNow is the clock of the tests' records.
func fixedNow() time.Time { return time.Date(2025, 3, 14, 15, 9, 26, 0, time.FixedZone("CET", 3600)) }

// nistCounts are the numbers of NIST StRD nonlinear problems per level as
// NIST lists them (https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml):
// 8 lower, 11 average, 8 higher.
var nistCounts = map[string]int{"lower": 8, "average": 11, "higher": 8}

// TestRunVerify runs the real suite once (text to stdout, JSON record to a
// file) and asserts the bar on every NIST run (NIST StRD certified
// values; LRE after McCullough 1999): LRE ≥ 6 on every parameter, ≥ 4 on
// the standard deviations and the residual SD, from both starts, with the
// default settings; and that every physics check passes.
func TestRunVerify(t *testing.T) {
	var out, errOut bytes.Buffer
	path := filepath.Join(t.TempDir(), "record.json")
	opts := &verifyOptions{Out: &out, ErrOut: &errOut, OutFile: path, Now: fixedNow, Checks: selfcheck.All}
	if err := runVerify(context.Background(), opts); err != nil {
		t.Fatalf("verify: %v\n%s", err, out.String())
	}
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var rec verifyRecord
	if err := json.Unmarshal(data, &rec); err != nil {
		t.Fatalf("record does not decode: %v", err)
	}

	// Provenance.
	if rec.Tool != "bandedge" || rec.Version != version || rec.GoVersion != runtime.Version() ||
		rec.OS != runtime.GOOS || rec.Arch != runtime.GOARCH || rec.CPUs != runtime.NumCPU() {
		t.Errorf("provenance %s %s %s %s/%s %d", rec.Tool, rec.Version, rec.GoVersion, rec.OS, rec.Arch, rec.CPUs)
	}
	if rec.Time != "2025-03-14T14:09:26Z" {
		t.Errorf("time %q, want the clock in UTC, RFC 3339", rec.Time)
	}
	if host, err := os.Hostname(); err == nil && rec.Hostname != host {
		t.Errorf("hostname %q, want %q", rec.Hostname, host)
	}

	// NIST: 27 problems × 2 starts, every run at the bar.
	if len(rec.NIST) != 54 {
		t.Fatalf("%d NIST rows, want 54", len(rec.NIST))
	}
	seen := map[string]int{}
	perLevel := map[string]int{}
	for _, n := range rec.NIST {
		seen[n.Name] |= 1 << n.Start
		perLevel[n.Difficulty]++
		if !n.Pass || n.Error != "" || n.ParamLRE < strd.MinParamLRE || n.StdDevLRE < strd.MinSDLRE || n.ResidualSDLRE < strd.MinSDLRE {
			t.Errorf("%s start %d: pass %v, LRE param %.2f sd %.2f res sd %.2f, status %s %s",
				n.Name, n.Start, n.Pass, n.ParamLRE, n.StdDevLRE, n.ResidualSDLRE, n.Status, n.Error)
		}
		if n.ParamLRE < 6 || n.StdDevLRE < 4 || n.ResidualSDLRE < 4 { // the numbers, independent of strd's constants
			t.Errorf("%s start %d below the issue's bar", n.Name, n.Start)
		}
	}
	if len(seen) != 27 {
		t.Errorf("%d distinct problems, want 27", len(seen))
	}
	for name, starts := range seen {
		if starts != 1<<1|1<<2 {
			t.Errorf("%s: starts %b, want both 1 and 2", name, starts)
		}
	}
	for level, n := range nistCounts {
		if perLevel[level] != 2*n {
			t.Errorf("level %s: %d runs, want %d", level, perLevel[level], 2*n)
		}
	}

	// Summary per level, recomputed from the rows.
	if len(rec.Summary.Levels) != 3 {
		t.Fatalf("%d level summaries, want 3", len(rec.Summary.Levels))
	}
	fallbacks := 0
	for _, n := range rec.NIST {
		if n.Fallback {
			fallbacks++
		}
	}
	for _, l := range rec.Summary.Levels {
		m := math.Inf(1)
		for _, n := range rec.NIST {
			if n.Difficulty == l.Difficulty {
				m = math.Min(m, n.ParamLRE.Float())
			}
		}
		if l.MinParamLRE.Float() != m || l.Runs != 2*nistCounts[l.Difficulty] || l.Failed != 0 {
			t.Errorf("level %s: min LRE %v (rows %v), runs %d, failed %d", l.Difficulty, l.MinParamLRE, m, l.Runs, l.Failed)
		}
		t.Logf("%-8s min parameter LRE %.2f, min sd LRE %.2f, min residual-SD LRE %.2f, fallback %d",
			l.Difficulty, l.MinParamLRE, l.MinSDLRE, l.MinResidualSDLRE, l.FallbackRuns)
	}
	if rec.Summary.FallbackRuns != fallbacks {
		t.Errorf("summary fallback %d, rows %d", rec.Summary.FallbackRuns, fallbacks)
	}
	t.Logf("fallback used in %d of 54 runs", fallbacks)

	// Physics checks.
	want := selfcheck.All()
	if len(rec.Physics) != len(want) || len(rec.Physics) == 0 {
		t.Fatalf("%d physics rows, want %d", len(rec.Physics), len(want))
	}
	for i, p := range rec.Physics {
		if !p.Pass || p.Name != want[i].Name || p.Source == "" {
			t.Errorf("physics %q: pass %v, source %q", p.Name, p.Pass, p.Source)
		}
	}

	// Verdict, in the record and on stdout, with the tables.
	n := 54 + len(want)
	if wantV := "all " + strconv.Itoa(n) + " checks passed on this machine"; rec.Verdict != wantV || !rec.Pass || rec.Summary.Failed != 0 {
		t.Errorf("verdict %q pass %v, want %q", rec.Verdict, rec.Pass, wantV)
	}
	text := out.String()
	for _, s := range []string{
		"bandedge " + version, runtime.Version(), "2025-03-14T14:09:26Z",
		"Misra1a", "Bennett5", "LRE param", "fallback used in",
		"direct+urbach z=0", "Katahara & Hillhouse", "Pankove", "CODATA 2018",
		"\n" + rec.Verdict + "\n",
	} {
		if !strings.Contains(text, s) {
			t.Errorf("text output lacks %q", s)
		}
	}
	if strings.Contains(text, "FAIL") {
		t.Errorf("text output reports a failure:\n%s", text)
	}
	if !strings.Contains(errOut.String(), path) {
		t.Errorf("stderr %q does not name the record file", errOut.String())
	}
}

// TestRunVerifyFails checks that a failing check makes verify exit with
// exitFail and say so, in text and in JSON, and that a NaN survives as
// JSON null.
func TestRunVerifyFails(t *testing.T) {
	bad := selfcheck.Check{Name: "injected failure", Source: "test", Quantity: "nothing", Got: math.NaN(), Want: 1, Tol: 1e-9}
	checks := func() []selfcheck.Check { return append(selfcheck.All(), bad) }
	n := len(selfcheck.All()) + 1
	verdict := "1 of " + strconv.Itoa(n) + " checks FAILED"

	t.Run("text", func(t *testing.T) {
		var out bytes.Buffer
		err := runVerify(context.Background(), &verifyOptions{Out: &out, Only: suitePhysics, Now: fixedNow, Checks: checks})
		var ee *exitError
		if !errors.As(err, &ee) || ee.code != exitFail {
			t.Fatalf("error %v, want an exitError with code %d", err, exitFail)
		}
		for _, s := range []string{"injected failure", "FAIL", "FAILED injected failure", "\n" + verdict + "\n"} {
			if !strings.Contains(out.String(), s) {
				t.Errorf("output lacks %q:\n%s", s, out.String())
			}
		}
		if strings.Contains(out.String(), "NIST StRD") {
			t.Error("--only physics printed the NIST table")
		}
	})
	t.Run("json", func(t *testing.T) {
		var out bytes.Buffer
		err := runVerify(context.Background(), &verifyOptions{Out: &out, JSON: true, Only: suitePhysics, Now: fixedNow, Checks: checks})
		var ee *exitError
		if !errors.As(err, &ee) || ee.code != exitFail {
			t.Fatalf("error %v, want exit code %d", err, exitFail)
		}
		var raw struct {
			NIST    []json.RawMessage `json:"nist"`
			Physics []map[string]any  `json:"physics"`
			Verdict string            `json:"verdict"`
			Pass    bool              `json:"pass"`
			Suites  []string          `json:"suites"`
		}
		if err := json.Unmarshal(out.Bytes(), &raw); err != nil {
			t.Fatalf("JSON does not decode: %v\n%s", err, out.String())
		}
		last := raw.Physics[len(raw.Physics)-1]
		if last["name"] != "injected failure" || last["got"] != nil || last["pass"] != false {
			t.Errorf("last physics row %v, want the injected failure with got null", last)
		}
		if raw.Verdict != verdict || raw.Pass || len(raw.NIST) != 0 || len(raw.Suites) != 1 || raw.Suites[0] != suitePhysics {
			t.Errorf("verdict %q pass %v, %d NIST rows, suites %v", raw.Verdict, raw.Pass, len(raw.NIST), raw.Suites)
		}
	})
	t.Run("nist starved of iterations", func(t *testing.T) {
		// One iteration per strategy cannot solve any NIST problem from
		// NIST's starts: every run must fail, none may crash.
		var out bytes.Buffer
		err := runVerify(context.Background(), &verifyOptions{Out: &out, Only: suiteNIST, Now: fixedNow,
			Settings: &fit.Settings{MaxIterations: 1}})
		var ee *exitError
		if !errors.As(err, &ee) || ee.code != exitFail {
			t.Fatalf("error %v, want exit code %d", err, exitFail)
		}
		if !strings.Contains(out.String(), "NOT the defaults") {
			t.Error("the record does not say that the settings were changed")
		}
		if !strings.Contains(out.String(), "54 of 54 checks FAILED") {
			t.Errorf("output lacks the verdict:\n%s", out.String())
		}
	})
}

func TestRunVerifyErrors(t *testing.T) {
	t.Run("cancelled", func(t *testing.T) {
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		var out bytes.Buffer
		err := runVerify(ctx, &verifyOptions{Out: &out, Now: fixedNow})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("error %v, want context.Canceled", err)
		}
		if out.Len() != 0 {
			t.Errorf("a cancelled run printed a record:\n%s", out.String())
		}
	})
	t.Run("out in a missing folder", func(t *testing.T) {
		var out bytes.Buffer
		path := filepath.Join(t.TempDir(), "no-such-dir", "rec.json")
		err := runVerify(context.Background(), &verifyOptions{Out: &out, Only: suitePhysics, OutFile: path, Now: fixedNow})
		var ee *exitError
		if err == nil || errors.As(err, &ee) {
			t.Errorf("error %v, want a write error", err)
		}
	})
}
