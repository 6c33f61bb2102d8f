package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
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
	Now         func() time.Time
}

func newDemoCmd(runF func(context.Context, *demoOptions) error) *cobra.Command {
	opts := &demoOptions{Now: time.Now}
	cmd := &cobra.Command{
		Use:   "demo",
		Short: "Write invented demo scans and analyse them",
		Long: "demo writes scans of an invented lot (KM-2611 of the fictional Kestrel Moor compound fab)\n" +
			"in several export styles, fits each one as a user would, and writes a JSON record and a PNG\n" +
			"report per scan. The spectra are made from known parameters, printed beside the results.",
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			if opts.Dir == "" {
				return flagErrorf("--out must name a folder")
			}
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runDemo(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.Dir, "out", "bandedge-demo", "folder for the demo scans, results and reports")
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
	return nil
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
