package lot

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sync/atomic"
	"testing"

	"bandedge/fit/scan"
	"bandedge/io/results"
)

// TestRunCancelledDuringAnalysis: an analysis that returns a result after
// the batch was cancelled is not kept (fit/edge skips the budget refits a
// cancellation stops, so such a result may lack uncertainty terms): the
// scan is reported cancelled, with no record, and Done gets no outcome.
func TestRunCancelledDuringAnalysis(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	p := filepath.Join(t.TempDir(), "s.csv")
	os.WriteFile(p, []byte("x"), 0o644)
	analyze := func(context.Context, string, []byte, scan.Settings) (*scan.Outcome, error) {
		cancel() // the interrupt arrives while the fit runs
		return fakeOutcome(1.424, 0.0005, 0.008, 0.0001, false), nil
	}
	var withOutcome atomic.Int64
	sc, err := Run(ctx, []Job{{Path: p, Name: "s"}}, &Settings{Workers: 1, Analyze: analyze,
		Done: func(_ context.Context, _ *Scan, o *scan.Outcome) error {
			if o != nil {
				withOutcome.Add(1)
			}
			return nil
		}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v", err)
	}
	if sc[0].Row.Status != results.StatusCancelled || sc[0].Record != nil || withOutcome.Load() != 0 {
		t.Errorf("status %s, record %v, Done with an outcome %d times", sc[0].Row.Status, sc[0].Record != nil, withOutcome.Load())
	}
}

// TestRunReuse: a job whose earlier record Reuse returns is not analysed;
// its row is the record's (RowFromRecord) with its sample, it is judged
// from the record exactly as the analysis was, and Done sees Reused. A job
// Reuse refuses is analysed, with the reason kept in Refit.
func TestRunReuse(t *testing.T) {
	dir := t.TempDir()
	var jobs []Job
	for i := range 4 {
		p := filepath.Join(dir, fmt.Sprintf("s%d.csv", i))
		os.WriteFile(p, []byte{byte(i)}, 0o644)
		jobs = append(jobs, Job{Path: p, Name: fmt.Sprintf("s%d", i)})
	}
	spec := readSpec(t, "bandedge-spec 1\nguard expanded\nlimit eg_ev 1.415 .. 1.435\nlimit urbach_ev .. 0.012\n")
	var calls atomic.Int64
	analyze := func(_ context.Context, name string, _ []byte, _ scan.Settings) (*scan.Outcome, error) {
		calls.Add(1)
		o := fakeOutcome(1.4345, 0.0005, 0.008, 0.0001, false) // straddles: indeterminate
		o.Path = name
		return o, nil
	}
	first, err := Run(context.Background(), jobs, &Settings{Workers: 2, Spec: spec, Analyze: analyze,
		Provenance: func(s scan.Settings) results.Provenance { return results.Provenance{Tool: "bandedge", Settings: s} }})
	if err != nil {
		t.Fatal(err)
	}
	calls.Store(0)
	var reusedDone atomic.Int64
	second, err := Run(context.Background(), jobs, &Settings{Workers: 2, Spec: spec, Analyze: analyze,
		Provenance: func(s scan.Settings) results.Provenance { return results.Provenance{Tool: "bandedge", Settings: s} },
		Reuse: func(j Job, sum string) (*results.Record, string) {
			for i := range first {
				if first[i].Job.Path == j.Path && first[i].Row.SHA256 == sum && j.Name != "s3" {
					return first[i].Record, ""
				}
			}
			return nil, "changed on purpose"
		},
		Done: func(_ context.Context, sc *Scan, o *scan.Outcome) error {
			if sc.Reused && o == nil {
				reusedDone.Add(1)
			}
			return nil
		}})
	if err != nil {
		t.Fatal(err)
	}
	if calls.Load() != 1 || reusedDone.Load() != 3 {
		t.Errorf("%d analyses, %d reused Done calls; want 1 and 3", calls.Load(), reusedDone.Load())
	}
	for i := range second {
		a, b := second[i], first[i]
		if a.Reused != (i != 3) || (i == 3) != (a.Refit == "changed on purpose") {
			t.Errorf("scan %d: reused %v refit %q", i, a.Reused, a.Refit)
		}
		if a.Verdict != b.Verdict || a.Row.Verdict != "indeterminate" || len(a.Judgements) != len(b.Judgements) {
			t.Errorf("scan %d: verdict %v (%v), first run %v", i, a.Verdict, a.Row.Verdict, b.Verdict)
		}
		for k := range a.Judgements {
			if a.Judgements[k] != b.Judgements[k] {
				t.Errorf("scan %d: judgement %d %+v, first run %+v", i, k, a.Judgements[k], b.Judgements[k])
			}
		}
	}
}
