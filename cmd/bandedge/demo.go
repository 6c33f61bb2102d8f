package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"bandedge/cmd/bandedge/demo"
	"bandedge/fit/scan"
	"bandedge/io/atomicfile"
	"bandedge/io/results"
)

// demoOptions are the inputs of the demo command.
type demoOptions struct {
	Out, ErrOut io.Writer
	Dir         string
	// Sites is the number of scans of the lot-qualification stage (0:
	// skip it); LotReports draws that stage's per-scan reports too (the
	// first stage already shows edge reports; the lot stage's point is
	// the summary, roll-up and wafer maps, and 65 reports take most of its
	// time).
	Sites      int
	LotReports bool
	Now        func() time.Time
}

func newDemoCmd(runF func(context.Context, *demoOptions) error) *cobra.Command {
	opts := &demoOptions{Now: time.Now}
	cmd := &cobra.Command{
		Use:   "demo",
		Short: "Write invented demo scans and analyse them",
		Long: "demo writes scans of an invented lot (KM-2611 of the fictional Kestrel Moor compound fab)\n" +
			"in several export styles, fits each one as a user would, and writes a JSON record and a PNG\n" +
			"report per scan. The spectra are made from known parameters, printed beside the results.\n\n" +
			"A second stage qualifies the invented lot: five wafers mapped at --sites scans in all, with radial\n" +
			"E_g and E_U non-uniformity, a sample sheet with positions, a spec file, one wafer out of spec and\n" +
			"three deliberately bad files; it runs 'bandedge batch' on them and says where the wafer maps and\n" +
			"the roll-up are.",
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			if opts.Dir == "" {
				return flagErrorf("--out must name a folder")
			}
			if opts.Sites != 0 && (opts.Sites < 5 || opts.Sites > 100000) {
				return flagErrorf("--sites %d: want 0 (no lot stage) or 5 to 100000 scans", opts.Sites)
			}
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runDemo(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.Dir, "out", "bandedge-demo", "folder for the demo scans, results and reports")
	cmd.Flags().IntVar(&opts.Sites, "sites", demo.DefaultLotSites, "scans of the lot-qualification stage, spread over five wafers (0: skip it; 1000 for a throughput check)")
	cmd.Flags().BoolVar(&opts.LotReports, "lot-reports", false, "also draw a PNG report per scan in the lot stage (slower; wafer maps are always drawn)")
	return cmd
}

func runDemo(ctx context.Context, opts *demoOptions) error {
	scansDir := filepath.Join(opts.Dir, "scans")
	resDir := filepath.Join(opts.Dir, "results")
	repDir := filepath.Join(opts.Dir, "reports")
	for _, d := range []string{resDir, repDir} {
		if err := os.MkdirAll(d, 0o755); err != nil {
			return err
		}
	}
	scans, paths, err := demo.Write(scansDir)
	if err != nil {
		return fmt.Errorf("demo: %w", err)
	}
	w := opts.Out
	fmt.Fprintf(w, "Demo lot KM-2611 (fictional Kestrel Moor compound fab): %d scans written to %s\n", len(scans), scansDir)
	fmt.Fprintf(w, "Each is analysed as a user would with 'bandedge fit'; truth is what the spectrum was made from.\n\n")
	fmt.Fprintf(w, "%-24s %-22s %-9s %-10s %s\n", "scan", "E_g ± U (k=2), eV", "truth", "|Δ|/u_c", "E_U ± U, meV")
	var failed []string
	for i, s := range scans {
		if err := ctx.Err(); err != nil {
			return err
		}
		o, err := scan.AnalyzeFile(ctx, paths[i], s.Settings)
		if err != nil {
			failed = append(failed, err.Error())
			fmt.Fprintf(w, "%-24s failed: %v\n", s.File, err)
			continue
		}
		rec := results.FromOutcome(o, results.NewProvenance(version, s.Settings, opts.Now()))
		base := s.File[:len(s.File)-len(filepath.Ext(s.File))]
		if err := atomicfile.Write(filepath.Join(resDir, base+".json"), func(w io.Writer) error { return results.WriteJSON(w, rec) }); err != nil {
			return err
		}
		if err := writeReport(filepath.Join(repDir, base+".png"), o, rec); err != nil {
			return err
		}
		eg, uc, U := rec.EgEV.Float(), rec.EgErrEV.Float(), rec.EgExpandedEV.Float()
		eu := "n/a"
		if rec.UrbachEV != nil {
			eu = fmt.Sprintf("%.2f ± %.2f", 1e3*rec.UrbachEV.Float(), 2e3*rec.UrbachErrEV.Float())
		}
		egText, dev := fmt.Sprintf("%.4f ± %.4f", eg, U), fmt.Sprintf("%.2g", abs(eg-s.Truth[0])/uc)
		if math.IsNaN(uc) {
			egText, dev = "not determined", "-"
		}
		fmt.Fprintf(w, "%-24s %-22s %-9.4f %-10s %s\n", s.File, egText, s.Truth[0], dev, eu)
	}
	fmt.Fprintf(w, "\nWhat each scan shows:\n")
	for _, s := range scans {
		fmt.Fprintf(w, "  %-24s %s; %s\n", s.File, s.Style, s.Note)
	}
	fmt.Fprintf(w, "\nThe same analysis by hand, for the first scan:\n  bandedge fit %s %s --report W03.png\n", paths[0], scans[0].Flags)
	fmt.Fprintf(w, "\nJSON records: %s\nPNG reports:  %s\n", resDir, repDir)
	fmt.Fprintf(w, "\nCaution: the demo data are invented. A fitted gap is model-dependent; qualification decisions\n"+
		"follow the site's written procedures and accredited metrology.\n")
	if len(failed) > 0 {
		return &exitError{code: exitFit, msg: fmt.Sprintf("%d demo scans failed", len(failed))}
	}
	if opts.Sites > 0 {
		return runDemoLot(ctx, opts)
	}
	return nil
}

// runDemoLot is the lot-qualification stage: it writes the invented lot
// and runs the batch on it as a user would.
func runDemoLot(ctx context.Context, opts *demoOptions) error {
	dir := filepath.Join(opts.Dir, "lot")
	l, err := demo.WriteLot(dir, opts.Sites)
	if err != nil {
		return fmt.Errorf("demo lot: %w", err)
	}
	w := opts.Out
	out := filepath.Join(dir, "batch")
	fmt.Fprintf(w, "\n\nLot qualification: %d scans of lot KM-2611 on five %d mm wafers written to %s\n", l.Scans, demo.WaferDiameter, l.Dir)
	for _, d := range l.Wafers {
		fmt.Fprintf(w, "  %s\n", d)
	}
	var bad []string
	for name, why := range l.Bad {
		bad = append(bad, fmt.Sprintf("  %s: %s", name, why))
	}
	sort.Strings(bad)
	fmt.Fprintf(w, "Deliberately bad files:\n%s\n", strings.Join(bad, "\n"))
	cmdline := fmt.Sprintf("bandedge batch %s --out %s --samples %s --spec %s %s", l.Dir, out, l.Sheet, l.Spec, l.Flags)
	if !opts.LotReports {
		cmdline += " --no-reports"
	}
	fmt.Fprintf(w, "\nRunning, as a user would:\n  %s\n\n", cmdline)
	args := append([]string{l.Dir, "--out", out, "--samples", l.Sheet, "--spec", l.Spec,
		"--wafer-diameter", fmt.Sprintf("%dmm", demo.WaferDiameter)}, strings.Fields(l.Flags)...)
	if !opts.LotReports {
		args = append(args, "--no-reports")
	}
	var bo *batchOptions
	cmd := newBatchCmd(func(_ context.Context, o *batchOptions) error { bo = o; return nil })
	cmd.SetArgs(args)
	cmd.SetOut(io.Discard)
	cmd.SetErr(io.Discard)
	if err := cmd.Execute(); err != nil {
		return fmt.Errorf("demo lot flags: %w", err)
	}
	bo.Out, bo.ErrOut, bo.Now = w, opts.ErrOut, opts.Now
	err = runBatch(ctx, bo)
	var ee *exitError
	switch {
	case errors.As(err, &ee) && (ee.code == exitFail || ee.code == exitInput || ee.code == exitIndeterminate):
		fmt.Fprintf(w, "\nThe batch would exit with status %d (%s): expected here, since W04 is out of spec and three files are bad.\n", ee.code, ee.msg)
	case err != nil:
		return err
	}
	fmt.Fprintf(w, "\nWafer maps: %s\nRoll-up:    %s\nSummary:    %s\nFailures:   %s\n",
		filepath.Join(out, "maps"), filepath.Join(out, "rollup.csv"), filepath.Join(out, "summary.csv"), filepath.Join(out, "failures.txt"))
	fmt.Fprintf(w, "\nCheck a supplier's claim against the lot:\n  bandedge claim --gap 1.424 --gap-tol 0.005 %s\n", out)
	return nil
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
