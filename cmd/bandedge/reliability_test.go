package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"bandedge/fit/lot"
	"bandedge/fit/scan"
	"bandedge/io/atomicfile"
	"bandedge/io/results"
)

// relNow is the clock of the reliability tests: every run records the
// same time, so that outputs compare byte for byte.
func relNow() time.Time { return time.Date(2026, 3, 1, 10, 42, 0, 0, time.UTC) }

// lotSettings are the analysis flags of the batch test lot (batchArgs).
func lotSettings(t *testing.T) scan.Settings {
	t.Helper()
	s, err := (&analysisFlags{Index: 3.6, IndexErr: 0.05, WavelengthErr: 0.2, Model: "direct+urbach", Coverage: 2}).settings()
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// injure turns a real analysis into one with the given issue, the way
// fit/edge reports it: a fit that stopped early, a covariance that could
// not be computed, or the Urbach energy on its bound (with edge's warning
// for each), so that what the command does with it can be checked.
func injure(t *testing.T, o *scan.Outcome, issue string) {
	t.Helper()
	res := o.Result
	switch issue {
	case "":
	case results.IssueNotConverged:
		res.Converged, res.Status = false, "IterationLimit"
		res.Warnings = append(res.Warnings, "the fit did not converge (IterationLimit): the numbers are the last iterate, not an estimate")
	case results.IssueSingular:
		res.Fit.Cov = nil
		for i := range res.Params {
			res.Params[i].StdErr = math.NaN()
		}
		res.Correlation = nil
		res.Warnings = append(res.Warnings, "the covariance could not be computed (fit: singular covariance): the parameters are not determined by these data")
	case results.IssueAtBound:
		p := &res.Params[len(res.Params)-1]
		p.AtBound = true
		res.Warnings = append(res.Warnings, p.Symbol+" ended on its bound: the true optimum may lie outside the model's range and its interval is not meaningful")
	default:
		t.Fatalf("unknown issue %q", issue)
	}
}

// TestRunFitIssues: a fit that did not converge, has a singular
// covariance or ends on a bound is printed with its warning, lists the
// issue in its JSON record, and exits with 4 (exitFit), naming the file
// and the issue; a clean fit exits 0 with no issue.
func TestRunFitIssues(t *testing.T) {
	file := filepath.Join(batchData, "scans", "KM2611-W01-s01.csv")
	for _, tc := range []struct {
		issue, want string // want: a phrase of the exit message
	}{
		{issue: ""},
		{issue: results.IssueNotConverged, want: "did not converge"},
		{issue: results.IssueSingular, want: "covariance could not be computed"},
		{issue: results.IssueAtBound, want: "E_U ended on its bound"},
	} {
		for _, asJSON := range []bool{false, true} {
			t.Run(tc.issue+map[bool]string{false: "/text", true: "/json"}[asJSON], func(t *testing.T) {
				var out, errOut bytes.Buffer
				s := lotSettings(t)
				s.Thickness = 2e-4
				opts := &fitOptions{Out: &out, ErrOut: &errOut, File: file, JSON: asJSON, Settings: s, Now: relNow,
					Analyze: func(ctx context.Context, path string, s scan.Settings) (*scan.Outcome, error) {
						o, err := scan.AnalyzeFile(ctx, path, s)
						if err == nil {
							injure(t, o, tc.issue)
						}
						return o, err
					}}
				err := runFit(context.Background(), opts)
				if tc.issue == "" {
					if err != nil {
						t.Fatalf("clean fit: %v", err)
					}
				} else {
					var ee *exitError
					if !errors.As(err, &ee) || ee.code != exitFit || !strings.Contains(ee.msg, tc.want) || !strings.HasPrefix(ee.msg, file+": ") {
						t.Fatalf("err = %v, want exit %d naming %s and %q", err, exitFit, file, tc.want)
					}
				}
				if !asJSON {
					if tc.issue != "" && !strings.Contains(out.String(), "warning") {
						t.Errorf("no warning printed:\n%s", out.String())
					}
					return
				}
				var rec results.Record
				if err := json.Unmarshal(out.Bytes(), &rec); err != nil {
					t.Fatal(err)
				}
				want := []string{}
				if tc.issue != "" {
					want = []string{tc.issue}
				}
				if !slices.Equal(rec.Issues, want) {
					t.Errorf("issues %q, want %q", rec.Issues, want)
				}
			})
		}
	}
}

// TestRunBatchIssues: in a batch, scans whose fit has an issue get it as
// their status (summary.json, summary.csv), are listed in failures.txt
// with the file and the issue, are indeterminate on every limit, make
// their wafer indeterminate, and make the batch exit with 3 (a release
// is not possible with them); the clean scan passes.
func TestRunBatchIssues(t *testing.T) {
	scans := filepath.Join(batchData, "scans")
	issueOf := map[string]string{
		"KM2611-W01-s02.csv": results.IssueNotConverged,
		"KM2611-W01-s06.csv": results.IssueSingular,
		"KM2611-W04-s01.csv": results.IssueAtBound,
	}
	out := t.TempDir()
	var so, se bytes.Buffer
	opts := &batchOptions{Out: &so, ErrOut: &se, OutDir: out, Samples: filepath.Join(batchData, "samples.csv"),
		Spec: filepath.Join(batchData, "spec.txt"), Workers: 2, NoReports: true, DiameterMM: 100, Now: relNow, Settings: lotSettings(t),
		Analyze: func(ctx context.Context, name string, b []byte, s scan.Settings) (*scan.Outcome, error) {
			o, err := scan.Analyze(ctx, name, b, s)
			if err == nil {
				injure(t, o, issueOf[filepath.Base(name)])
			}
			return o, err
		}}
	opts.Inputs = []string{filepath.Join(scans, "KM2611-W01-s01.csv")}
	for f := range issueOf {
		opts.Inputs = append(opts.Inputs, filepath.Join(scans, f))
	}
	slices.Sort(opts.Inputs[1:])
	err := runBatch(context.Background(), opts)
	var ee *exitError
	if !errors.As(err, &ee) || ee.code != exitInput {
		t.Fatalf("err = %v, want exit %d (scans not to be trusted)", err, exitInput)
	}
	s := readSummary(t, out)
	if c := s.Counts; c.OK != 1 || c.NotConverged != 1 || c.Singular != 1 || c.AtBound != 1 || c.Scans != 4 {
		t.Errorf("counts %+v", c)
	}
	for _, r := range s.Rows {
		want, injured := issueOf[filepath.Base(r.File)]
		if !injured {
			if r.Status != results.StatusOK || r.Verdict != "pass" {
				t.Errorf("%s: status %s verdict %s, want ok, pass", r.File, r.Status, r.Verdict)
			}
			continue
		}
		if r.Status != want || r.Verdict != "indeterminate" || r.Error == "" || r.Provenance == nil {
			t.Errorf("%s: status %q verdict %q error %q", r.File, r.Status, r.Verdict, r.Error)
		}
		for _, v := range r.Verdicts {
			if v.Verdict != "indeterminate" {
				t.Errorf("%s: %s %s, want indeterminate", r.File, v.Quantity, v.Verdict)
			}
		}
	}
	fb, err := os.ReadFile(filepath.Join(out, "failures.txt"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(fb)), "\n")
	if len(lines) != len(issueOf) {
		t.Fatalf("failures.txt:\n%s", fb)
	}
	for _, l := range lines {
		named := false
		for f := range issueOf {
			named = named || strings.HasPrefix(l, filepath.Join(scans, f)+": ")
		}
		if !named {
			t.Errorf("failure line %q names none of the injured scans", l)
		}
	}
	var ru results.Rollup
	rb, _ := os.ReadFile(filepath.Join(out, "rollup.json"))
	if err := json.Unmarshal(rb, &ru); err != nil {
		t.Fatal(err)
	}
	for _, g := range ru.Groups {
		if g.Verdict != "indeterminate" {
			t.Errorf("%s %s: verdict %s, want indeterminate (sites not to be trusted)", g.Level, g.Wafer, g.Verdict)
		}
	}
}

// tempFiles lists the temporary files of atomicfile under dir.
func tempFiles(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() && atomicfile.IsTemp(d.Name()) {
			out = append(out, p)
		}
		return nil
	})
	return out
}

// copyDir copies the regular files of src into dst.
func copyDir(t *testing.T, src, dst string) {
	t.Helper()
	ents, err := os.ReadDir(src)
	if err != nil {
		t.Fatal(err)
	}
	os.MkdirAll(dst, 0o755)
	for _, e := range ents {
		if !e.Type().IsRegular() {
			continue
		}
		b, err := os.ReadFile(filepath.Join(src, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dst, e.Name()), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// summaryWithout returns summary.json of dir as indented JSON without the
// named top-level keys.
func summaryWithout(t *testing.T, dir string, keys ...string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range keys {
		delete(m, k)
	}
	out, _ := json.MarshalIndent(m, "", "  ")
	return string(out)
}

// TestRunBatchInterruptResume: a batch cancelled mid-run (the context,
// as Ctrl-C cancels it in main) exits 130 with a valid summary of what
// was done, every finished scan's result file, no temporary file and a
// message that says how to complete it; --resume then fits only the scans
// that were not finished, removes the temporary file a killed write left,
// and ends with outputs identical to an uninterrupted run's (every
// file byte for byte; summary.json but for its resume block). A second
// --resume after one scan file and one sheet thickness changed refits
// exactly those two and says why.
func TestRunBatchInterruptResume(t *testing.T) {
	work := t.TempDir()
	scans := filepath.Join(work, "scans")
	copyDir(t, filepath.Join(batchData, "scans"), scans)
	sheetPath := filepath.Join(work, "samples.csv")
	sb, err := os.ReadFile(filepath.Join(batchData, "samples.csv"))
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(sheetPath, sb, 0o644)
	specPath := filepath.Join(batchData, "spec.txt")

	var mu sync.Mutex
	analysed := map[string]int{}
	newOpts := func(out string) *batchOptions {
		return &batchOptions{Out: io.Discard, ErrOut: io.Discard, Inputs: []string{scans}, OutDir: out, Samples: sheetPath, Spec: specPath,
			Workers: 1, NoReports: true, DiameterMM: 100, Now: relNow, Settings: lotSettings(t),
			Analyze: func(ctx context.Context, name string, b []byte, s scan.Settings) (*scan.Outcome, error) {
				mu.Lock()
				analysed[filepath.Base(name)]++
				mu.Unlock()
				return scan.Analyze(ctx, name, b, s)
			}}
	}
	exitOf := func(err error) int {
		var ee *exitError
		if errors.As(err, &ee) {
			return ee.code
		}
		if err != nil {
			t.Fatalf("unclassified error %v", err)
		}
		return exitOK
	}

	// The reference: one uninterrupted run.
	ref := filepath.Join(work, "ref")
	refCode := exitOf(runBatch(context.Background(), newOpts(ref)))

	// The interrupted run: cancelled after the third scan.
	out := filepath.Join(work, "out")
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	o := newOpts(out)
	o.OnProgress = func(done, total int) {
		if done == 3 {
			cancel()
		}
	}
	err = runBatch(ctx, o)
	var ee *exitError
	if !errors.As(err, &ee) || ee.code != exitCancelled || !errors.Is(err, context.Canceled) || !strings.Contains(ee.msg, "--resume") {
		t.Fatalf("interrupted run: %v, want exit %d wrapping context.Canceled and naming --resume", err, exitCancelled)
	}
	s := readSummary(t, out)
	finished := map[string]bool{}
	for _, r := range s.Rows {
		base := filepath.Base(r.File)
		switch {
		case r.Status == results.StatusOK:
			finished[base] = true
			if _, err := os.Stat(filepath.Join(out, r.ResultFile)); r.ResultFile == "" || err != nil {
				t.Errorf("finished %s has no result file: %v", base, err)
			}
		case r.Status == results.StatusCancelled:
			name := strings.TrimSuffix(base, filepath.Ext(base))
			if _, err := os.Stat(filepath.Join(out, "results", name+".json")); err == nil {
				t.Errorf("cancelled %s has a result file", base)
			}
		}
	}
	if len(finished) < 1 || s.Counts.Cancelled == 0 || s.Counts.Scans != 10 {
		t.Fatalf("interrupted summary: %d finished, counts %+v", len(finished), s.Counts)
	}
	for _, f := range []string{"summary.csv", "failures.txt", "rollup.csv", "rollup.json"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("interrupted run wrote no %s: %v", f, err)
		}
	}
	if tmp := tempFiles(t, out); len(tmp) > 0 {
		t.Errorf("temporary files left: %v", tmp)
	}
	// A write killed before its rename leaves its temporary file.
	stale := filepath.Join(out, "results", ".KM2611-W04-s06.json.tmp-4242")
	os.WriteFile(stale, []byte(`{"partial`), 0o644)

	// --resume: only the unfinished scans are analysed.
	clear(analysed)
	o = newOpts(out)
	o.Resume = true
	if code := exitOf(runBatch(context.Background(), o)); code != refCode {
		t.Errorf("resumed run exits %d, the uninterrupted one %d", code, refCode)
	}
	for f := range finished {
		if analysed[f] != 0 {
			t.Errorf("%s was finished but analysed again", f)
		}
	}
	if len(analysed) != 10-len(finished) {
		t.Errorf("analysed %v; want the %d unfinished scans", analysed, 10-len(finished))
	}
	if tmp := tempFiles(t, out); len(tmp) > 0 {
		t.Errorf("temporary files left after --resume: %v", tmp)
	}
	rs := readSummary(t, out)
	if rs.Resume == nil || rs.Resume.Reused != len(finished) || len(rs.Resume.Refitted) != 0 || rs.Resume.StaleRemoved != 1 {
		t.Errorf("resume block %+v", rs.Resume)
	}
	// Identical to the uninterrupted run.
	for _, f := range []string{"summary.csv", "failures.txt", "rollup.csv", "rollup.json"} {
		a, _ := os.ReadFile(filepath.Join(ref, f))
		b, _ := os.ReadFile(filepath.Join(out, f))
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs from the uninterrupted run's:\n%s\n---\n%s", f, a, b)
		}
	}
	if a, b := summaryWithout(t, ref, "resume"), summaryWithout(t, out, "resume"); a != b {
		t.Errorf("summary.json differs from the uninterrupted run's")
	}
	ents, _ := os.ReadDir(filepath.Join(ref, "results"))
	for _, e := range ents {
		a, _ := os.ReadFile(filepath.Join(ref, "results", e.Name()))
		b, _ := os.ReadFile(filepath.Join(out, "results", e.Name()))
		if !bytes.Equal(a, b) {
			t.Errorf("results/%s differs from the uninterrupted run's", e.Name())
		}
	}

	// A changed file and a changed setting are refitted, and the summary
	// says why; the rest is reused.
	changed := filepath.Join(scans, "KM2611-W01-s02.csv")
	cb, _ := os.ReadFile(changed)
	os.WriteFile(changed, append([]byte("# re-exported\n"), cb...), 0o644)
	os.WriteFile(sheetPath, bytes.Replace(sb, []byte("KM2611-W04-s01.csv,W04,KM-2611,0,0,1.993"), []byte("KM2611-W04-s01.csv,W04,KM-2611,0,0,1.995"), 1), 0o644)
	clear(analysed)
	o = newOpts(out)
	o.Resume = true
	exitOf(runBatch(context.Background(), o))
	rs = readSummary(t, out)
	reasons := map[string]string{}
	for _, r := range rs.Resume.Refitted {
		reasons[filepath.Base(r.File)] = r.Reason
	}
	if !strings.Contains(reasons["KM2611-W01-s02.csv"], "file changed") || !strings.Contains(reasons["KM2611-W04-s01.csv"], "thickness_cm") || len(reasons) != 2 {
		t.Errorf("refitted %v", rs.Resume.Refitted)
	}
	if analysed["KM2611-W01-s02.csv"] != 1 || analysed["KM2611-W04-s01.csv"] != 1 || analysed["KM2611-W01-s01.csv"] != 0 {
		t.Errorf("analysed %v", analysed)
	}
	// The bad files have no record and are tried again; every good scan
	// but the two changed ones is reused.
	if rs.Resume.Reused != 5 || rs.Resume.New != 3 {
		t.Errorf("resume block %+v", rs.Resume)
	}
}

// TestReusable: a record is reused only for the same path, bytes,
// settings, tool version and schema, and with its report when reports
// are drawn; each refusal says why.
func TestReusable(t *testing.T) {
	dir := t.TempDir()
	resDir, repDir := filepath.Join(dir, "results"), filepath.Join(dir, "reports")
	os.MkdirAll(resDir, 0o755)
	os.MkdirAll(repDir, 0o755)
	file := filepath.Join(batchData, "scans", "KM2611-W01-s01.csv")
	s := lotSettings(t)
	s.Thickness = 2e-4
	o, err := scan.AnalyzeFile(context.Background(), file, s)
	if err != nil {
		t.Fatal(err)
	}
	write := func(rec *results.Record) {
		atomicfile.Write(filepath.Join(resDir, "a.json"), func(w io.Writer) error { return results.WriteJSON(w, rec) })
	}
	good := results.FromOutcome(o, results.NewProvenance(version, s, relNow()))
	job := func(set scan.Settings) lot.Job { return lot.Job{Path: file, Name: "a", Settings: set} }
	other := s
	other.WavelengthErr = 0.3
	for _, tc := range []struct {
		name   string
		rec    func() *results.Record
		job    lot.Job
		sum    string
		report bool
		want   string // "" reuse; else a phrase of the reason
	}{
		{name: "same", rec: func() *results.Record { return good }, job: job(s), sum: o.SHA256},
		{name: "no record", job: job(s), sum: o.SHA256, want: "-"},
		{name: "bytes changed", rec: func() *results.Record { return good }, job: job(s), sum: strings.Repeat("0", 64), want: "file changed"},
		{name: "settings changed", rec: func() *results.Record { return good }, job: job(other), sum: o.SHA256, want: "wavelength_err_nm 0.2 → 0.3"},
		{name: "other version", rec: func() *results.Record { r := *good; r.Provenance.Version = "0.0.1"; return &r }, job: job(s), sum: o.SHA256, want: "bandedge 0.0.1"},
		{name: "older schema", rec: func() *results.Record { r := *good; r.Provenance.Schema = 1; return &r }, job: job(s), sum: o.SHA256, want: "schema 1"},
		{name: "other path", rec: func() *results.Record { r := *good; r.File = "elsewhere.csv"; return &r }, job: job(s), sum: o.SHA256, want: "elsewhere.csv"},
		{name: "report missing", rec: func() *results.Record { return good }, job: job(s), sum: o.SHA256, report: true, want: "report is missing"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			os.Remove(filepath.Join(resDir, "a.json"))
			if tc.rec != nil {
				write(tc.rec())
			}
			rec, why := reusable(&batchOptions{NoReports: !tc.report}, tc.job, tc.sum, resDir, repDir)
			switch tc.want {
			case "":
				if rec == nil || why != "" {
					t.Fatalf("not reused: %q", why)
				}
			case "-":
				if rec != nil || why != "" {
					t.Fatalf("got %v, %q; want nothing", rec != nil, why)
				}
			default:
				if rec != nil || !strings.Contains(why, tc.want) {
					t.Fatalf("reason %q, want %q", why, tc.want)
				}
			}
		})
	}
	os.WriteFile(filepath.Join(resDir, "a.json"), []byte("{not json"), 0o644)
	if rec, why := reusable(&batchOptions{NoReports: true}, job(s), o.SHA256, resDir, repDir); rec != nil || !strings.Contains(why, "cannot be read") {
		t.Errorf("damaged record: %v, %q", rec != nil, why)
	}
}

// TestRerunFromProvenance: the settings recorded in a result's
// provenance (read back from the JSON, for fit --json and for a batch
// scan with sample-sheet overrides) reproduce the record bit for bit on
// this machine: the record rebuilt from the rerun, with the same
// provenance, encodes to the same bytes (Num keeps every digit, so equal
// bytes are equal float64 values).
func TestRerunFromProvenance(t *testing.T) {
	file := filepath.Join(batchData, "scans", "KM2611-W04-s02.csv")
	var out, errOut bytes.Buffer
	code := run(context.Background(), []string{"fit", file, "--json", "--thickness", "1.987um", "--thickness-err", "2%", "--index", "3.6",
		"--index-err", "0.05", "--wavelength-err", "0.2", "--columns", "1,2", "--temperature", "296", "--temperature-err", "1",
		"--electron-mass", "0.067", "--hole-mass", "0.51", "--mass-err", "0.05", "--coverage-factor", "2.5"}, &out, &errOut)
	if code != exitOK {
		t.Fatalf("fit: exit %d\n%s", code, errOut.String())
	}
	records := map[string][]byte{"fit --json": out.Bytes()}

	bo := t.TempDir()
	code = run(context.Background(), append([]string{"batch", file, "--out", bo, "--samples", filepath.Join(batchData, "samples.csv"), "--no-reports"},
		batchArgs...), io.Discard, io.Discard)
	if code != exitOK {
		t.Fatalf("batch: exit %d", code)
	}
	b, err := os.ReadFile(filepath.Join(bo, "results", "KM2611-W04-s02.json"))
	if err != nil {
		t.Fatal(err)
	}
	records["batch results/KM2611-W04-s02.json"] = b

	for name, b := range records {
		t.Run(name, func(t *testing.T) {
			rec, err := results.ReadRecord(bytes.NewReader(b), name)
			if err != nil {
				t.Fatal(err)
			}
			s, err := rec.Provenance.AnalysisSettings()
			if err != nil {
				t.Fatal(err)
			}
			if results.SettingsDigest(s) != rec.Provenance.SettingsSHA256 {
				t.Fatalf("settings digest %s, recorded %s", results.SettingsDigest(s), rec.Provenance.SettingsSHA256)
			}
			o, err := scan.AnalyzeFile(context.Background(), rec.File, s)
			if err != nil {
				t.Fatal(err)
			}
			if o.SHA256 != rec.SHA256 {
				t.Fatalf("input sha256 %s, recorded %s", o.SHA256, rec.SHA256)
			}
			var again bytes.Buffer
			if err := results.WriteJSON(&again, results.FromOutcome(o, rec.Provenance)); err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(again.Bytes(), b) {
				t.Errorf("rerun with the recorded settings differs from the record:\n%s", firstDiff(b, again.Bytes()))
			}
		})
	}
}

// firstDiff shows the first line where a and b differ.
func firstDiff(a, b []byte) string {
	la, lb := strings.Split(string(a), "\n"), strings.Split(string(b), "\n")
	for i := range min(len(la), len(lb)) {
		if la[i] != lb[i] {
			return la[i] + "\n" + lb[i]
		}
	}
	return "lengths differ"
}

// TestProvenanceEverywhere: every JSON result and summary carries the
// input's SHA-256, the tool version, the model, the tail, the settings
// and the time; the PNG footers (edge report, wafer map, trend page) carry
// the short form.
func TestProvenanceEverywhere(t *testing.T) {
	out := t.TempDir()
	file := filepath.Join(batchData, "scans", "KM2611-W01-s01.csv")
	code := run(context.Background(), append([]string{"batch", file, "--out", out, "--samples", filepath.Join(batchData, "samples.csv"), "--no-reports"},
		batchArgs...), io.Discard, io.Discard)
	if code != exitOK {
		t.Fatalf("batch: exit %d", code)
	}
	s := readSummary(t, out)
	if s.Version != version || s.GoVersion == "" || s.Platform == "" || s.Time == "" || s.Model != "direct+urbach" || s.Tail != "urbach" ||
		s.SettingsSHA256 != results.SettingsDigest(s.Settings) {
		t.Errorf("summary provenance: version %q go %q platform %q time %q model %q tail %q digest %q", s.Version, s.GoVersion, s.Platform,
			s.Time, s.Model, s.Tail, s.SettingsSHA256)
	}
	r := s.Rows[0]
	p := r.Provenance
	if r.SHA256 == "" || p == nil || p.Version != version || p.Model != "direct+urbach" || p.Tail != "urbach" || p.Time == "" ||
		p.Settings.Thickness != 2e-4 || p.SettingsSHA256 != results.SettingsDigest(p.Settings) {
		t.Fatalf("row provenance %+v (sha256 %q)", p, r.SHA256)
	}
	cb, _ := os.ReadFile(filepath.Join(out, "summary.csv"))
	for _, col := range []string{"sha256", "model", "tool_version", "analysed_at", "tail", "settings_sha256", "settings"} {
		if !strings.Contains(strings.SplitN(string(cb), "\n", 2)[0], col) {
			t.Errorf("summary.csv has no %s column", col)
		}
	}
	rec, err := results.ReadRecord(mustOpen(t, filepath.Join(out, r.ResultFile)), r.ResultFile)
	if err != nil {
		t.Fatal(err)
	}
	short := footer(rec)
	for _, part := range []string{"bandedge " + version, "model direct+urbach", "settings " + p.SettingsSHA256[:12], "input sha256 " + r.SHA256[:12], p.Time} {
		if !strings.Contains(short, part) {
			t.Errorf("report footer %q lacks %q", short, part)
		}
	}
	mf := mapFooter(s)
	for _, part := range []string{"bandedge " + version, "model direct+urbach", "settings " + s.SettingsSHA256[:12], s.Time, "summary.json"} {
		if !strings.Contains(mf, part) {
			t.Errorf("wafer map footer %q lacks %q", mf, part)
		}
	}
	tf := trendFooter(rec.Provenance, []string{r.SHA256})
	if !strings.Contains(tf, "model direct+urbach") || !strings.Contains(tf, "1 inputs") {
		t.Errorf("trend footer %q", tf)
	}
}

func mustOpen(t *testing.T, path string) io.Reader {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return bytes.NewReader(b)
}

// TestUsageErrors: a wrong number of arguments or an unknown command is a
// usage error, exit 2 with the usage line, like a bad flag (FuzzRun found
// "bandedge batch" without arguments exiting 1; regression seed
// testdata/fuzz/FuzzRun/7f3dc1242ca6bcdc).
func TestUsageErrors(t *testing.T) {
	for _, argv := range [][]string{{"batch"}, {"fit"}, {"fit", "a.csv", "b.csv"}, {"claim"}, {"trend"}, {"verify", "x"}, {"fitt"}, {"demo", "x"}} {
		var errOut bytes.Buffer
		if code := run(context.Background(), argv, io.Discard, &errOut); code != exitUsage || !strings.Contains(errOut.String(), "Run 'bandedge") {
			t.Errorf("bandedge %q: exit %d, want %d with usage\n%s", argv, code, exitUsage, errOut.String())
		}
	}
	if code := run(context.Background(), nil, io.Discard, io.Discard); code != exitOK {
		t.Errorf("bandedge without arguments (help): exit %d", code)
	}
}
