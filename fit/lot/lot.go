// Package lot qualifies a lot: it analyses many scans with one set of
// settings in a bounded worker pool (Run), judges each against a spec's
// limits with the spec's decision rule (io/sheet), rolls the results up per
// wafer and per lot (Roll), and checks a supplier's claimed gap against one
// scan or the lot mean (JudgeClaim). It knows nothing of flags or terminals:
// the command wires it to files and streams.
//
// Concurrency follows the project's rule for batch work: N workers read
// indices from a channel and put each result in a slice indexed like the
// input, so output order never depends on scheduling; a file's failure stays
// with that file's result; each job checks ctx.Err() before it starts and a
// running fit stops through its context; nothing mutable is shared between
// jobs (each owns its bytes, settings, problem and buffers), and there is no
// nested parallelism.
package lot

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"sync"

	"bandedge/fit/scan"
	"bandedge/io/results"
	"bandedge/io/sheet"
)

// Job is one scan to analyse.
type Job struct {
	// Path is the scan file.
	Path string
	// Name is the stem of the scan's output files, unique in the batch
	// (see Names).
	Name string
	// Settings are the analysis settings of this scan (the command line
	// with the sample sheet's overrides, see ApplySample).
	Settings scan.Settings
	// Sample is the scan's sample-sheet row (nil: none).
	Sample *sheet.Sample
	// Err, when not nil, fails the scan before it is read: the sheet row
	// gave settings that cannot be used.
	Err error
}

// Scan is the outcome of one job.
type Scan struct {
	Job Job
	// Row is the scan's summary row; Row.Status says how it ended.
	Row results.Row
	// Record is the full result record (nil unless fitted).
	Record *results.Record
	// Err is why the scan was not fitted, or what its fit's issues are
	// (not converged, singular covariance, a parameter on its bound; see
	// results.Record.IssueText); nil for a fit without issues.
	Err error
	// Judgements are the spec's scan-level limits applied to this scan,
	// in the spec's order; Verdict is the worst of them (sheet.NoLimit
	// without a spec or when the scan was not fitted).
	Judgements []sheet.Judgement
	Verdict    sheet.Verdict
	// OutputErr is the error of Settings.Done, if any.
	OutputErr error
	// Reused is true when the scan was not analysed again but taken from
	// the record of an earlier run (Settings.Reuse); Refit says why an
	// earlier result was not reused ("" when there was none).
	Reused bool
	Refit  string
}

// Fitted reports whether the scan has a fit without issues: converged,
// with a covariance and no parameter on its bound (status ok). Only such
// scans enter the roll-up statistics and can pass a limit.
func (s *Scan) Fitted() bool { return s.Row.Status == results.StatusOK }

// Settings configure Run. A nil *Settings uses the defaults.
type Settings struct {
	// Workers is the number of scans analysed at once; 0 means
	// runtime.GOMAXPROCS(0).
	Workers int
	// Spec, when not nil, gives the verdicts.
	Spec *sheet.Spec
	// Provenance returns the provenance recorded with each scan's record;
	// nil records only the settings.
	Provenance func(s scan.Settings) results.Provenance
	// Analyze analyses one file's bytes; nil means scan.Analyze.
	Analyze func(ctx context.Context, name string, b []byte, s scan.Settings) (*scan.Outcome, error)
	// Done, when not nil, is called in the worker as soon as a scan is
	// finished (o is nil unless it was fitted), before the next job. It
	// writes that scan's own files (its result record and report), so a
	// cancelled batch keeps every finished result. It must not touch
	// another scan's state. Its error is kept in Scan.OutputErr.
	Done func(ctx context.Context, sc *Scan, o *scan.Outcome) error
	// Reuse, when not nil, is asked before a scan is analysed, with the
	// job and the SHA-256 of the file's bytes as read now. It returns the
	// record of an earlier run to reuse instead of analysing the file again
	// (batch --resume), or nil and the reason the scan must be analysed
	// anew ("" when there is no earlier result). A reused scan gets its row
	// from the record (results.RowFromRecord) and is judged from it, so its
	// row and verdicts are those the earlier analysis gave; Done is called
	// for it with a nil outcome and Scan.Reused set.
	Reuse func(j Job, sha256 string) (*results.Record, string)
	// Progress, when not nil, is called after each finished scan with
	// the number done, the total and the number not fitted so far. It is
	// called from Run's own goroutine, one call at a time.
	Progress func(done, total, failed int)
}

// ErrCancelled is the reason given to scans that were not started because
// the batch was cancelled; it wraps context.Canceled.
var ErrCancelled = fmt.Errorf("lot: not analysed, the batch was interrupted: %w", context.Canceled)

// Run analyses every job and returns the scans in the order of jobs. A
// scan that cannot be read, converted or fitted fails alone; the batch
// goes on. When ctx is cancelled, the jobs not yet started are marked
// cancelled, the running ones stop, every finished scan is returned as it
// was, and the error is ctx.Err(); otherwise the error is nil.
func Run(ctx context.Context, jobs []Job, s *Settings) ([]Scan, error) {
	var set Settings
	if s != nil {
		set = *s
	}
	workers := set.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, max(len(jobs), 1))
	out := make([]Scan, len(jobs))
	idx := make(chan int)
	done := make(chan int, workers)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range idx {
				out[i] = runJob(ctx, jobs[i], &set)
				done <- i
			}
		}()
	}
	go func() {
		defer close(idx)
		for i := range jobs {
			if ctx.Err() != nil {
				return
			}
			select {
			case idx <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	go func() {
		wg.Wait()
		close(done)
	}()
	finished := make([]bool, len(jobs))
	n, failed := 0, 0
	for i := range done {
		finished[i] = true
		n++
		if !out[i].Fitted() {
			failed++
		}
		if set.Progress != nil {
			set.Progress(n, len(jobs), failed)
		}
	}
	for i := range out {
		if !finished[i] {
			out[i] = cancelled(jobs[i])
		}
	}
	return out, ctx.Err()
}

// runJob analyses one job; it is the body of a worker.
func runJob(ctx context.Context, j Job, set *Settings) Scan {
	if ctx.Err() != nil {
		return cancelled(j)
	}
	sc := Scan{Job: j, Row: results.NewRow(j.Path)}
	sc.Row.Status = results.StatusFailed
	describeSample(&sc.Row, j.Sample)
	var o *scan.Outcome
	b, sum, err := readFile(j.Path)
	sc.Row.SHA256 = sum
	switch {
	case err != nil:
		sc.Err = err
	case j.Err != nil:
		sc.Err = j.Err
	default:
		var rec *results.Record
		if set.Reuse != nil {
			rec, sc.Refit = set.Reuse(j, sum)
			sc.Reused = rec != nil
		}
		if rec == nil {
			analyze := set.Analyze
			if analyze == nil {
				analyze = scan.Analyze
			}
			o, err = analyze(ctx, j.Path, b, j.Settings)
			if err == nil && ctx.Err() != nil {
				// Cancelled while it ran: the analysis skips the budget
				// refits a cancellation stops, so its result may lack
				// uncertainty terms. Not a result to keep.
				err = fmt.Errorf("%s: analysis interrupted: %w", j.Path, ctx.Err())
			}
			if err != nil {
				o = nil
				sc.Err = err
				if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
					refit := sc.Refit
					sc = cancelled(j)
					sc.Row.SHA256, sc.Refit = sum, refit
				}
			}
		}
		if o != nil {
			prov := results.Provenance{Settings: j.Settings}
			if set.Provenance != nil {
				prov = set.Provenance(j.Settings)
			}
			rec = results.FromOutcome(o, prov)
		}
		if rec != nil {
			row := results.RowFromRecord(rec)
			describeSample(&row, j.Sample)
			row.SHA256 = sum
			sc.Row, sc.Record = row, rec
			if t := rec.IssueText(); t != "" {
				sc.Err = fmt.Errorf("%s: %s", j.Path, t)
			}
			judge(&sc, set.Spec)
		}
	}
	if sc.Err != nil {
		sc.Row.Error = oneLine(sc.Err.Error())
	}
	if set.Done != nil {
		sc.OutputErr = set.Done(ctx, &sc, o)
	}
	return sc
}

func cancelled(j Job) Scan {
	sc := Scan{Job: j, Row: results.NewRow(j.Path), Err: ErrCancelled}
	sc.Row.Status = results.StatusCancelled
	sc.Row.Error = j.Path + ": not analysed (the batch was interrupted)"
	describeSample(&sc.Row, j.Sample)
	return sc
}

// readFile reads at most scan.MaxFileBytes+1 bytes (the reader reports an
// oversized file) and returns them with their SHA-256.
func readFile(path string) ([]byte, string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, "", &scan.Error{File: path, Stage: scan.StageRead, Err: err}
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, scan.MaxFileBytes+1))
	if err != nil {
		return nil, "", &scan.Error{File: path, Stage: scan.StageRead, Err: err}
	}
	sum := sha256.Sum256(b)
	return b, hex.EncodeToString(sum[:]), nil
}

// describeSample copies the sheet's identification columns into a row.
func describeSample(r *results.Row, smp *sheet.Sample) {
	if smp == nil {
		return
	}
	r.Lot, r.Wafer, r.Notes = smp.Lot, smp.Wafer, smp.Notes
	if smp.XMM != nil {
		r.XMM = results.Num(*smp.XMM)
	}
	if smp.YMM != nil {
		r.YMM = results.Num(*smp.YMM)
	}
	if smp.TemperatureK != nil {
		r.TemperatureK = results.Num(*smp.TemperatureK)
	}
	r.Extra = r.Extra[:0]
	for _, kv := range smp.Extra {
		r.Extra = append(r.Extra, results.Column{Name: kv.Key, Value: kv.Value})
	}
}

func oneLine(s string) string {
	b := []rune(s)
	for i, r := range b {
		if r == '\n' || r == '\r' {
			b[i] = ' '
		}
	}
	return string(b)
}
