// Command throughput measures the batch throughput of bandedge end to end:
// it writes a synthetic lot of 1000-point scans (bench/scangen: the demo's
// fictional lot KM-2611, 10,000 scans by default), builds the bandedge
// command, runs
//
//	bandedge batch DIR/scans --out DIR/out --samples DIR/samples.csv --spec DIR/spec.txt \
//	    --index 3.6 --index-err 0.05 --wavelength-err 0.2 --no-reports
//
// as a user would (read, convert, fit with the full uncertainty budget,
// per-scan JSON records, summary, roll-up, wafer maps), and prints the
// wall time, the CPU time and the scans per second, with the machine's
// load average before and after.
//
//	go run ./bench/throughput                     # 10,000 scans in a temporary folder
//	go run ./bench/throughput -n 2000 -workers 4
//	go run ./bench/throughput -dir /tmp/lot -write-only   # just write the lot (for BenchmarkBatchLot)
//
// The scans are written once per folder and reused (-dir) when the folder
// already holds a lot of the same size. For where the time goes, run the
// same batch under the Go profiler (bench/README.md):
//
//	BANDEDGE_BENCH_LOT=/tmp/lot go test -run='^$' -bench=BatchLot -benchtime=1x \
//	    -cpuprofile=/tmp/batch.prof ./cmd/bandedge
package main

import (
	"bytes"
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"time"

	"bandedge/bench/scangen"
)

func main() {
	os.Exit(run(context.Background(), os.Args[1:], os.Stdout, os.Stderr))
}

type options struct {
	n, workers int
	seed       uint64
	dir, bin   string
	writeOnly  bool
	keep       bool
}

func run(ctx context.Context, args []string, out, errOut io.Writer) int {
	var o options
	fs := flag.NewFlagSet("throughput", flag.ContinueOnError)
	fs.SetOutput(errOut)
	fs.IntVar(&o.n, "n", 10000, "number of scans")
	fs.IntVar(&o.workers, "workers", 0, "batch --workers (0: the batch default, all cores)")
	fs.Uint64Var(&o.seed, "seed", 1, "random seed of the scans")
	fs.StringVar(&o.dir, "dir", "", "folder for the lot and the batch output (default: a temporary folder, removed afterwards)")
	fs.StringVar(&o.bin, "bin", "", "bandedge binary to run (default: go build ./cmd/bandedge)")
	fs.BoolVar(&o.writeOnly, "write-only", false, "write the lot into -dir and stop")
	fs.BoolVar(&o.keep, "keep", false, "keep the batch output")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if err := measure(ctx, o, out, errOut); err != nil {
		fmt.Fprintf(errOut, "throughput: %v\n", err)
		return 1
	}
	return 0
}

func measure(ctx context.Context, o options, out, errOut io.Writer) error {
	dir := o.dir
	if dir == "" {
		if o.writeOnly {
			return fmt.Errorf("-write-only needs -dir")
		}
		d, err := os.MkdirTemp("", "throughput")
		if err != nil {
			return err
		}
		defer os.RemoveAll(d)
		dir = d
	}
	scans := filepath.Join(dir, "scans")
	if ents, err := os.ReadDir(scans); err != nil || len(ents) != o.n {
		t0 := time.Now()
		os.RemoveAll(scans)
		if _, err := scangen.Write(dir, o.n, o.seed); err != nil {
			return err
		}
		fmt.Fprintf(out, "wrote %d scans of %d points into %s in %.1f s\n", o.n, scangen.Points, scans, time.Since(t0).Seconds())
	} else {
		fmt.Fprintf(out, "reusing the %d scans in %s\n", o.n, scans)
	}
	if o.writeOnly {
		return nil
	}
	bin := o.bin
	if bin == "" {
		_, file, _, _ := runtime.Caller(0)
		root := filepath.Join(filepath.Dir(file), "..", "..")
		bin = filepath.Join(dir, "bandedge")
		cmd := exec.CommandContext(ctx, "go", "build", "-o", bin, "./cmd/bandedge")
		cmd.Dir = root
		cmd.Stderr = errOut
		if err := cmd.Run(); err != nil {
			return fmt.Errorf("go build: %w", err)
		}
	}
	outDir := filepath.Join(dir, "out")
	os.RemoveAll(outDir)
	if !o.keep {
		defer os.RemoveAll(outDir)
	}
	args := []string{"batch", scans, "--out", outDir, "--samples", filepath.Join(dir, "samples.csv"),
		"--spec", filepath.Join(dir, "spec.txt"), "--no-reports"}
	args = append(args, strings.Fields(scangen.Flags)...)
	if o.workers > 0 {
		args = append(args, "--workers", fmt.Sprint(o.workers))
	}
	fmt.Fprintf(out, "machine: %s/%s, %d CPUs; load average before %s\n", runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), loadavg())
	fmt.Fprintf(out, "running: bandedge %s\n", strings.Join(args, " "))
	var stdout, stderr bytes.Buffer
	cmd := exec.CommandContext(ctx, bin, args...)
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	t0 := time.Now()
	err := cmd.Run()
	wall := time.Since(t0)
	// The demo lot has a wafer out of spec: exit status 5 is its verdict.
	if ee, ok := err.(*exec.ExitError); err != nil && (!ok || (ee.ExitCode() != 5 && ee.ExitCode() != 6)) {
		return fmt.Errorf("bandedge batch: %w\n%s", err, stderr.String())
	}
	ps := cmd.ProcessState
	var maxRSS int64
	if ru, ok := ps.SysUsage().(*syscall.Rusage); ok {
		maxRSS = ru.Maxrss
	}
	for _, l := range strings.Split(stdout.String(), "\n") {
		if strings.HasPrefix(l, "batch ") || strings.HasPrefix(l, "fitted ") || strings.HasPrefix(l, "verdicts ") {
			fmt.Fprintln(out, "  "+l)
		}
	}
	cpu := ps.UserTime() + ps.SystemTime()
	fmt.Fprintf(out, "%d scans in %.2f s wall (%.0f scans/s, %.2f ms per scan); CPU %.2f s (user %.2f, system %.2f), %.2f cores busy; max RSS %d MiB\n",
		o.n, wall.Seconds(), float64(o.n)/wall.Seconds(), 1e3*wall.Seconds()/float64(o.n), cpu.Seconds(),
		ps.UserTime().Seconds(), ps.SystemTime().Seconds(), cpu.Seconds()/wall.Seconds(), maxRSS/1024)
	fmt.Fprintf(out, "load average after %s\n", loadavg())
	return nil
}

func loadavg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return "unknown"
	}
	f := strings.Fields(string(b))
	if len(f) < 3 {
		return "unknown"
	}
	return strings.Join(f[:3], " ")
}
