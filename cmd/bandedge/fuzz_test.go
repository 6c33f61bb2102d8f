package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// fuzzCommands are the commands FuzzRun drives (the first argument, picked
// by sel). demo and verify are left out: they take seconds to minutes by
// design and read no user input.
var fuzzCommands = []string{"fit", "batch", "claim", "trend", "help"}

// fuzzExitCodes are the documented exit codes a command line may give
// (README, "Exit status"). 1 (an unexpected internal error) is not among
// them: no command line should cause one; 130 only after a cancel.
var fuzzExitCodes = map[int]bool{exitOK: true, exitUsage: true, exitInput: true, exitFit: true, exitFail: true, exitIndeterminate: true}

// fuzzRunDeadline bounds one command line: the seeds take about a second
// (a batch of three scans with reports), so this catches only a hang.
const fuzzRunDeadline = 3 * time.Minute

// fuzzWorkspace writes the files a fuzzed command line can name into dir:
// scan.csv and scan_296K.csv (a scan of the batch test lot), scans/ (two
// scans and a truncated file), samples.csv and spec.txt (the lot's
// sheet and spec, see testdata/README.md, section batch).
func fuzzWorkspace(tb testing.TB, dir string) {
	tb.Helper()
	src := filepath.Join(batchData, "scans")
	cp := func(from, to string) {
		b, err := os.ReadFile(from)
		if err != nil {
			tb.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, to), b, 0o644); err != nil {
			tb.Fatal(err)
		}
	}
	if err := os.MkdirAll(filepath.Join(dir, "scans"), 0o755); err != nil {
		tb.Fatal(err)
	}
	cp(filepath.Join(src, "KM2611-W01-s01.csv"), "scan.csv")
	cp(filepath.Join(src, "KM2611-W04-s02.csv"), "scan_296K.csv")
	for _, f := range []string{"KM2611-W01-s01.csv", "KM2611-W04-s06.csv", "bad_truncated.csv"} {
		cp(filepath.Join(src, f), filepath.Join("scans", f))
	}
	cp(filepath.Join(batchData, "samples.csv"), "samples.csv")
	cp(filepath.Join(batchData, "spec.txt"), "spec.txt")
}

// FuzzRun runs the command line, run(), with fuzzed arguments after one of
// fuzzCommands, in a fresh folder holding a tiny workspace
// (fuzzWorkspace); args is split at newlines. The contract: never a
// panic, a return within fuzzRunDeadline, an exit code from the
// documented set (130 only when the high bit of sel cancels the context
// after a few milliseconds), and a message on stderr for every non-zero
// code. Arguments that name a path outside the folder ("/", "\", "..")
// are skipped, so that the fuzzer writes nowhere else.
func FuzzRun(f *testing.F) {
	seeds := []struct {
		cmd  int
		args string
	}{
		{0, "scan.csv --thickness 2um --index 3.6"},
		{0, "scan.csv --thickness 2um --index 3.6 --index-err 0.05 --json --report r.png"},
		{0, "scan.csv --thickness 2um --model auto --temperature 296"},
		{0, "scan.csv --window 1.40:1.46 --thickness 2um --t-noise 0.2% --coverage-factor 3"},
		{0, "scan.csv --thickness 2um --model indirect+gauss+const --temperature 296 --temperature-err 1 --material GaAs"},
		{0, "scan.csv"},
		{0, "missing.csv --thickness 1mm"},
		{1, "scans --out out --samples samples.csv --spec spec.txt --no-reports --index 3.6"},
		{1, "scans scan.csv --out out --workers 1 --thickness 2um --wafer-diameter 150mm"},
		{1, "scans --out out --samples samples.csv --index 3.6 --resume"},
		// Regression seeds: these exited 1 (an unclassified error) before
		// the output folder and the sheet's and spec's read errors were
		// classified (exit 2 and 3).
		{1, "scans --out scan.csv --no-reports"},
		{1, "scans --out out --samples scans --no-reports"},
		{1, "scans --out out --spec scans --no-reports"},
		{2, "--gap 1.42 scan.csv --thickness 2um --index 3.6"},
		{2, "--gap 1.42 --gap-tol 0.01 out"},
		{3, "scan_296K.csv scan.csv --thickness 2um --json"},
		{4, "batch"},
	}
	for i, s := range seeds {
		f.Add(uint8(s.cmd), strings.ReplaceAll(s.args, " ", "\n"))
		if i == 0 {
			f.Add(uint8(s.cmd|0x80), strings.ReplaceAll(s.args, " ", "\n"))
		}
	}
	f.Fuzz(func(t *testing.T, sel uint8, args string) {
		var argv []string
		if args != "" {
			argv = strings.Split(args, "\n")
		}
		if len(argv) > 24 {
			return
		}
		for _, a := range argv {
			if strings.ContainsAny(a, `/\`) || strings.Contains(a, "..") || len(a) > 256 {
				return
			}
		}
		dir := t.TempDir()
		fuzzWorkspace(t, dir)
		t.Chdir(dir)
		argv = append([]string{fuzzCommands[int(sel&0x7f)%len(fuzzCommands)]}, argv...)
		ctx, cancel := context.WithCancel(context.Background())
		defer cancel()
		cancelled := sel&0x80 != 0
		if cancelled {
			time.AfterFunc(5*time.Millisecond, cancel)
		}
		var stdout, stderr bytes.Buffer
		code := -1
		done := make(chan struct{})
		go func() {
			defer close(done)
			code = run(ctx, argv, &stdout, &stderr)
		}()
		select {
		case <-done:
		case <-time.After(fuzzRunDeadline):
			t.Fatalf("bandedge %q did not return within %v", argv, fuzzRunDeadline)
		}
		if !fuzzExitCodes[code] && !(cancelled && code == exitCancelled) {
			t.Fatalf("bandedge %q: exit %d, not a documented code\nstderr:\n%s", argv, code, stderr.String())
		}
		if code != exitOK && stderr.Len() == 0 {
			t.Fatalf("bandedge %q: exit %d with nothing on stderr", argv, code)
		}
	})
}
