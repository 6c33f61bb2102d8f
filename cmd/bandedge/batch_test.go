package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"bandedge/io/results"
)

// batchData is the invented test lot (testdata/README.md, section batch).
var batchData = filepath.Join("..", "..", "testdata", "batch")

// batchArgs are the analysis flags the test lot was made for.
var batchArgs = []string{"--index", "3.6", "--index-err", "0.05", "--wavelength-err", "0.2"}

func TestNewBatchCmd(t *testing.T) {
	tests := []struct {
		name    string
		args    string
		check   func(t *testing.T, o *batchOptions)
		wantErr bool
	}{
		{name: "everything", args: "scans extra.jdx --out o --samples s.csv --spec p.txt --workers 3 --no-reports --wafer-diameter 150mm --thickness 2um --thickness-err 0.05um --index 3.6",
			check: func(t *testing.T, o *batchOptions) {
				if len(o.Inputs) != 2 || o.OutDir != "o" || o.Samples != "s.csv" || o.Spec != "p.txt" || o.Workers != 3 || !o.NoReports {
					t.Errorf("options %+v", o)
				}
				if o.DiameterMM != 150 || o.Settings.Thickness != 2e-4 || !o.ThicknessErrAbs || o.Settings.Index != 3.6 {
					t.Errorf("diameter %g, settings %+v, abs %v", o.DiameterMM, o.Settings, o.ThicknessErrAbs)
				}
			}},
		{name: "resume", args: "scans --out o --resume", check: func(t *testing.T, o *batchOptions) {
			if !o.Resume {
				t.Errorf("--resume not set")
			}
		}},
		{name: "defaults", args: "scans --out o", check: func(t *testing.T, o *batchOptions) {
			if o.Workers != 0 || o.NoReports || o.DiameterMM != 100 || o.Samples != "" || o.ThicknessErrAbs || o.Resume {
				t.Errorf("options %+v", o)
			}
		}},
		{name: "relative thickness error", args: "scans --out o --thickness 2um --thickness-err 2%", check: func(t *testing.T, o *batchOptions) {
			if o.ThicknessErrAbs || o.Settings.ThicknessRelErr != 0.02 {
				t.Errorf("abs %v rel %g", o.ThicknessErrAbs, o.Settings.ThicknessRelErr)
			}
		}},
		{name: "no out", args: "scans", wantErr: true},
		{name: "no input", args: "--out o", wantErr: true},
		{name: "negative workers", args: "scans --out o --workers -1", wantErr: true},
		{name: "diameter without unit", args: "scans --out o --wafer-diameter 100", wantErr: true},
		{name: "tiny diameter", args: "scans --out o --wafer-diameter 1mm", wantErr: true},
		{name: "bad analysis flag", args: "scans --out o --window 2:1", wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var got *batchOptions
			cmd := newBatchCmd(func(_ context.Context, o *batchOptions) error { got = o; return nil })
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

// readSummary reads OUTDIR/summary.json.
func readSummary(t *testing.T, dir string) *results.Summary {
	t.Helper()
	f, err := os.Open(filepath.Join(dir, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	s, err := results.ReadSummaryJSON(f, "summary.json")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func rowByBase(s *results.Summary, base string) *results.Row {
	for i := range s.Rows {
		if filepath.Base(s.Rows[i].File) == base {
			return &s.Rows[i]
		}
	}
	return nil
}

// TestRunBatch runs the batch over the test lot: seven good scans (six
// CSV, one JCAMP-DX), three bad files, a sample sheet with positions and
// a spec; then subsets that pass, straddle or have no spec.
func TestRunBatch(t *testing.T) {
	scans := filepath.Join(batchData, "scans")
	sheetPath := filepath.Join(batchData, "samples.csv")
	specPath := filepath.Join(batchData, "spec.txt")
	good := []string{"KM2611-W01-s01.csv", "KM2611-W01-s02.csv", "KM2611-W01-s06.csv", "KM2611-W04-s01.csv",
		"KM2611-W04-s02.csv", "KM2611-W04-s06.csv", "KM2611-W09-s01.jdx"}
	bad := []string{"bad_garbage.dat", "bad_truncated.csv", "bad_wrongcols.csv"}

	out := t.TempDir()
	var stdout, stderr bytes.Buffer
	args := append([]string{"batch", scans, "--out", out, "--samples", sheetPath, "--spec", specPath, "--no-reports"}, batchArgs...)
	code := run(context.Background(), args, &stdout, &stderr)
	// Precedence: a fail (W04-s06 above 1.435 eV, W09's JCAMP gap below
	// 1.415 eV) outranks the unreadable files.
	if code != exitFail {
		t.Fatalf("exit %d, want %d (fail); stderr:\n%s", code, exitFail, stderr.String())
	}
	s := readSummary(t, out)
	if len(s.Rows) != len(good)+len(bad) {
		t.Fatalf("%d rows, want %d", len(s.Rows), len(good)+len(bad))
	}
	for _, g := range good {
		r := rowByBase(s, g)
		if r == nil || r.Status != results.StatusOK || r.Wafer == "" || r.Lot != "KM-2611" || r.SHA256 == "" {
			t.Errorf("%s: %+v", g, r)
			continue
		}
		if _, err := os.Stat(filepath.Join(out, r.ResultFile)); err != nil || r.ResultFile == "" {
			t.Errorf("%s: result file %q: %v", g, r.ResultFile, err)
		}
		if len(r.Extra) != 1 || r.Extra[0].Name != "operator" || r.Extra[0].Value == "" {
			t.Errorf("%s: pass-through columns %v", g, r.Extra)
		}
	}
	// The verdicts, from the spec's guarded rule (w = U).
	for _, c := range []struct{ file, verdict string }{
		{"KM2611-W01-s01.csv", "pass"}, {"KM2611-W04-s01.csv", "pass"},
		{"KM2611-W04-s02.csv", "indeterminate"}, {"KM2611-W04-s06.csv", "fail"}, {"KM2611-W09-s01.jdx", "fail"},
	} {
		if r := rowByBase(s, c.file); r == nil || r.Verdict != c.verdict {
			t.Errorf("%s verdict %v, want %s", c.file, r, c.verdict)
		}
	}
	if s.DecisionRule == "" || !strings.Contains(stdout.String(), s.DecisionRule) {
		t.Errorf("decision rule %q not printed", s.DecisionRule)
	}
	// failures.txt: one line per bad file, naming it (with the line).
	fb, err := os.ReadFile(filepath.Join(out, "failures.txt"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(fb)), "\n")
	if len(lines) != len(bad) {
		t.Errorf("failures.txt has %d lines, want %d:\n%s", len(lines), len(bad), fb)
	}
	pos := regexp.MustCompile(`^(\S+):(\d+):(\d+): \S`)
	for i, b := range bad {
		if i >= len(lines) {
			break
		}
		m := pos.FindStringSubmatch(lines[i])
		if m == nil || filepath.Base(m[1]) != b {
			t.Errorf("failure line %q does not name %s with its line", lines[i], b)
		}
		if r := rowByBase(s, b); r == nil || r.Status != results.StatusFailed || r.Error != lines[i] {
			t.Errorf("%s row %+v", b, r)
		}
	}
	// summary.csv has the same rows.
	cf, _ := os.Open(filepath.Join(out, "summary.csv"))
	recs, err := csv.NewReader(cf).ReadAll()
	cf.Close()
	if err != nil || len(recs) != len(s.Rows)+1 {
		t.Errorf("summary.csv: %d records, %v", len(recs), err)
	}
	// Roll-up and maps.
	var ru results.Rollup
	rb, _ := os.ReadFile(filepath.Join(out, "rollup.json"))
	if err := json.Unmarshal(rb, &ru); err != nil {
		t.Fatal(err)
	}
	if len(ru.Groups) != 4 || ru.Groups[0].Wafer != "W01" || ru.Groups[1].Verdict != "fail" || ru.Groups[3].Level != "lot" {
		t.Errorf("roll-up groups %+v", ru.Groups)
	}
	for _, w := range []string{"W01", "W04", "W09"} {
		if _, err := os.Stat(filepath.Join(out, "maps", "KM-2611_"+w+".png")); err != nil {
			t.Errorf("wafer map %s: %v", w, err)
		}
	}
	if _, err := os.Stat(filepath.Join(out, "reports")); err == nil {
		t.Error("--no-reports made a reports folder")
	}
	if !strings.Contains(stdout.String(), "W04") || !strings.Contains(stdout.String(), "wafer maps") {
		t.Errorf("stdout:\n%s", stdout.String())
	}

	// Subsets: the exit status follows the documented precedence.
	sub := func(files ...string) []string {
		var p []string
		for _, f := range files {
			p = append(p, filepath.Join(scans, f))
		}
		return p
	}
	cases := []struct {
		name  string
		files []string
		spec  bool
		want  int
	}{
		{name: "all pass", files: sub("KM2611-W01-s01.csv", "KM2611-W01-s02.csv", "KM2611-W04-s01.csv"), spec: true, want: exitOK},
		{name: "straddles", files: sub("KM2611-W01-s01.csv", "KM2611-W04-s02.csv"), spec: true, want: exitIndeterminate},
		{name: "unreadable beats indeterminate", files: sub("KM2611-W04-s02.csv", "bad_truncated.csv"), spec: true, want: exitInput},
		{name: "no spec, bad files", files: []string{scans}, want: exitInput},
		{name: "no spec, good files", files: sub("KM2611-W01-s01.csv", "KM2611-W09-s01.jdx"), want: exitOK},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			o := t.TempDir()
			a := append(append([]string{"batch"}, tc.files...), "--out", o, "--samples", sheetPath, "--no-reports")
			if tc.spec {
				a = append(a, "--spec", specPath)
			}
			var so, se bytes.Buffer
			if code := run(context.Background(), append(a, batchArgs...), &so, &se); code != tc.want {
				t.Errorf("exit %d, want %d\n%s%s", code, tc.want, so.String(), se.String())
			}
		})
	}
}

// TestRunBatchReports: per-scan reports are written and named in the
// summary; a JCAMP-DX file is recognised by content, whatever its name.
func TestRunBatchReports(t *testing.T) {
	dir := t.TempDir()
	jdx, _ := os.ReadFile(filepath.Join(batchData, "scans", "KM2611-W09-s01.jdx"))
	os.WriteFile(filepath.Join(dir, "W09-export.txt"), jdx, 0o644)
	csvb, _ := os.ReadFile(filepath.Join(batchData, "scans", "KM2611-W01-s01.csv"))
	os.WriteFile(filepath.Join(dir, "W01-s01.csv"), csvb, 0o644)
	out := t.TempDir()
	var so, se bytes.Buffer
	code := run(context.Background(), append([]string{"batch", dir, "--out", out, "--thickness", "2um"}, batchArgs...), &so, &se)
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, se.String())
	}
	s := readSummary(t, out)
	for _, r := range s.Rows {
		if r.Status != results.StatusOK || r.ReportFile == "" {
			t.Errorf("%s: status %s report %q", r.File, r.Status, r.ReportFile)
			continue
		}
		if st, err := os.Stat(filepath.Join(out, r.ReportFile)); err != nil || st.Size() < 10000 {
			t.Errorf("report %s: %v", r.ReportFile, err)
		}
	}
	if len(s.Rows) != 2 {
		t.Errorf("%d rows", len(s.Rows))
	}
	// No positions: no wafer map, and the summary says why.
	if !strings.Contains(so.String(), "no positions") {
		t.Errorf("stdout:\n%s", so.String())
	}
}

// stripTimes blanks the time stamps of a batch output file: the "time"
// fields of the JSON files, the analysed_at column of summary.csv.
func stripTimes(t *testing.T, name string, b []byte) []byte {
	t.Helper()
	if !strings.HasSuffix(name, ".csv") {
		return regexp.MustCompile(`"time": "[^"]*"`).ReplaceAll(b, []byte(`"time": ""`))
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil || len(recs) == 0 {
		t.Fatalf("%s: %v", name, err)
	}
	col := -1
	for i, h := range recs[0] {
		if h == "analysed_at" {
			col = i
		}
	}
	if col < 0 {
		return b
	}
	var out bytes.Buffer
	w := csv.NewWriter(&out)
	for _, r := range recs[1:] {
		r[col] = ""
	}
	w.WriteAll(recs)
	return out.Bytes()
}

// TestRunBatchDeterministic: the outputs do not depend on the number of
// workers (summary.csv, summary.json and rollup.json byte for byte but
// for their time stamps).
func TestRunBatchDeterministic(t *testing.T) {
	var outs [][3][]byte
	for _, w := range []string{"1", "4"} {
		out := t.TempDir()
		var so, se bytes.Buffer
		args := append([]string{"batch", filepath.Join(batchData, "scans"), "--out", out, "--samples", filepath.Join(batchData, "samples.csv"),
			"--spec", filepath.Join(batchData, "spec.txt"), "--no-reports", "--workers", w}, batchArgs...)
		run(context.Background(), args, &so, &se)
		var got [3][]byte
		for i, f := range []string{"summary.csv", "summary.json", "rollup.json"} {
			b, err := os.ReadFile(filepath.Join(out, f))
			if err != nil {
				t.Fatal(err)
			}
			got[i] = stripTimes(t, f, b)
		}
		outs = append(outs, got)
	}
	for i, f := range []string{"summary.csv", "summary.json", "rollup.json"} {
		if !bytes.Equal(outs[0][i], outs[1][i]) {
			t.Errorf("%s differs between 1 and 4 workers", f)
		}
	}
}

// TestRunBatchCancel: cancelling mid-batch returns context.Canceled,
// with every finished scan's result written and in the summary, and the
// rest reported as cancelled.
func TestRunBatchCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	out := t.TempDir()
	var so, se bytes.Buffer
	opts := &batchOptions{Out: &so, ErrOut: &se, Inputs: []string{filepath.Join(batchData, "scans")}, OutDir: out,
		Samples: filepath.Join(batchData, "samples.csv"), Workers: 1, NoReports: true, DiameterMM: 100,
		Now: func() time.Time { return time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC) },
		OnProgress: func(done, total int) {
			if done == 3 {
				cancel()
			}
		}}
	var err error
	if opts.Settings, err = (&analysisFlags{Index: 3.6, IndexErr: 0.05, WavelengthErr: 0.2, Model: "direct+urbach", Coverage: 2}).settings(); err != nil {
		t.Fatal(err)
	}
	err = runBatch(ctx, opts)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
	s := readSummary(t, out)
	if s.Time != "2026-01-02T03:04:05Z" {
		t.Errorf("time %q", s.Time)
	}
	finished := 0
	for _, r := range s.Rows {
		switch r.Status {
		case results.StatusOK:
			finished++
			if _, err := os.Stat(filepath.Join(out, r.ResultFile)); err != nil {
				t.Errorf("finished scan %s has no result file: %v", r.File, err)
			}
		case results.StatusCancelled, results.StatusFailed:
		default:
			t.Errorf("%s: status %s", r.File, r.Status)
		}
	}
	if finished < 3 || s.Counts.Cancelled == 0 || len(s.Rows) != 10 {
		t.Errorf("finished %d, counts %+v", finished, s.Counts)
	}
	if code := run(ctx, []string{"batch", filepath.Join(batchData, "scans"), "--out", t.TempDir()}, io.Discard, io.Discard); code != exitCancelled {
		t.Errorf("cancelled run: exit %d, want %d", code, exitCancelled)
	}
}
