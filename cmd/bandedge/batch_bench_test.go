package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"bandedge/bench/scangen"
	"bandedge/fit/lot"
	"bandedge/fit/scan"
	"bandedge/io/atomicfile"
	"bandedge/io/results"
)

// benchBatch writes one synthetic 1000-point scan (bench/scangen, seed 1)
// and returns the batch options the command line
//
//	bandedge batch DIR --out OUT --thickness 2um --index 3.6 --index-err 0.05 --wavelength-err 0.2 [--no-reports]
//
// gives, and the scan's job.
func benchBatch(b *testing.B, noReports bool) (*batchOptions, lot.Job) {
	b.Helper()
	dir := b.TempDir()
	l, err := scangen.Write(dir, 1, 1)
	if err != nil {
		b.Fatal(err)
	}
	args := append([]string{l.Dir, "--out", filepath.Join(dir, "out"), "--thickness", "2um"}, strings.Fields(scangen.Flags)...)
	if noReports {
		args = append(args, "--no-reports")
	}
	var opts *batchOptions
	cmd := newBatchCmd(func(_ context.Context, o *batchOptions) error { opts = o; return nil })
	cmd.SetArgs(args)
	cmd.SetOut(io.Discard)
	cmd.SetErr(io.Discard)
	if err := cmd.Execute(); err != nil {
		b.Fatal(err)
	}
	for _, d := range []string{"results", "reports"} {
		if err := os.MkdirAll(filepath.Join(opts.OutDir, d), 0o755); err != nil {
			b.Fatal(err)
		}
	}
	return opts, lot.Job{Path: l.Files[0], Name: "scan", Settings: opts.Settings}
}

// benchScanPipeline runs one scan per iteration through what batch does
// for each scan in a worker: lot.Run reads and hashes the file, reads,
// converts and analyses it (fit/scan: the automatic window, the eight
// window-family refits and the two index refits of the budget), builds
// the record and summary row, and writeScanFiles writes results/scan.json
// and, unless noReports, reports/scan.png, and the record is flushed to
// disk. The per-batch summary, roll-up
// and wafer maps are not included (BenchmarkBatchLot has them).
func benchScanPipeline(b *testing.B, noReports bool) {
	opts, job := benchBatch(b, noReports)
	resDir, repDir := filepath.Join(opts.OutDir, "results"), filepath.Join(opts.OutDir, "reports")
	now := time.Date(2026, 12, 2, 0, 0, 0, 0, time.UTC)
	var records atomicfile.Deferred
	set := &lot.Settings{
		Workers:    1,
		Provenance: func(s scan.Settings) results.Provenance { return results.NewProvenance(version, s, now) },
		Done: func(ctx context.Context, sc *lot.Scan, o *scan.Outcome) error {
			return writeScanFiles(opts, &records, sc, o, resDir, repDir)
		},
	}
	jobs := []lot.Job{job}
	ctx := context.Background()
	b.ReportAllocs()
	for b.Loop() {
		scans, err := lot.Run(ctx, jobs, set)
		if err != nil || !scans[0].Fitted() || scans[0].OutputErr != nil {
			b.Fatalf("%v, %v, %v", err, scans[0].Err, scans[0].OutputErr)
		}
		if err := records.Sync(); err != nil { // one scan's flush, as a batch pays it
			b.Fatal(err)
		}
	}
}

// BenchmarkBatchScan is the batch pipeline per scan without the PNG report
// (batch --no-reports).
func BenchmarkBatchScan(b *testing.B) { benchScanPipeline(b, true) }

// BenchmarkBatchScanPNG is the batch pipeline per scan with its PNG edge
// report.
func BenchmarkBatchScanPNG(b *testing.B) { benchScanPipeline(b, false) }

// BenchmarkBatchLot runs the whole batch command,
//
//	bandedge batch LOT/scans --out OUT --samples LOT/samples.csv --spec LOT/spec.txt \
//	    --index 3.6 --index-err 0.05 --wavelength-err 0.2 --no-reports
//
// on a lot written by bench/scangen (go run ./bench/throughput -write-only
// -dir LOT) named by the environment variable BANDEDGE_BENCH_LOT, and
// reports the time per scan; it is skipped without it. With -benchtime=1x
// and -cpuprofile it gives the profile of a large batch (bench/README.md).
func BenchmarkBatchLot(b *testing.B) {
	dir := os.Getenv("BANDEDGE_BENCH_LOT")
	if dir == "" {
		b.Skip("BANDEDGE_BENCH_LOT is not set")
	}
	ents, err := os.ReadDir(filepath.Join(dir, "scans"))
	if err != nil {
		b.Fatal(err)
	}
	out := b.TempDir()
	args := append([]string{"batch", filepath.Join(dir, "scans"), "--out", out, "--samples", filepath.Join(dir, "samples.csv"),
		"--spec", filepath.Join(dir, "spec.txt"), "--no-reports"}, strings.Fields(scangen.Flags)...)
	b.ReportAllocs()
	var stdout, stderr bytes.Buffer
	for b.Loop() {
		stdout.Reset()
		stderr.Reset()
		// Exit status 5 (a wafer fails the spec) or 6 is the lot's verdict, not an error.
		if code := run(context.Background(), args, &stdout, &stderr); code != exitOK && code != exitFail && code != exitIndeterminate {
			b.Fatalf("exit %d: %s", code, stderr.String())
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(ents)), "ns/scan")
	if testing.Verbose() {
		fmt.Fprint(os.Stderr, stdout.String())
	}
}
