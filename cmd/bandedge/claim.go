package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"bandedge/fit/lot"
	"bandedge/fit/scan"
	"bandedge/io/results"
)

// claimOptions are the inputs of the claim command.
type claimOptions struct {
	Out, ErrOut io.Writer
	// Target is a scan file or a batch output folder.
	Target string
	// Gap and GapTol are the claimed E_g and its tolerance half-width, eV.
	Gap, GapTol float64
	Flags       analysisFlags
	Settings    scan.Settings
}

func newClaimCmd(runF func(context.Context, *claimOptions) error) *cobra.Command {
	opts := &claimOptions{}
	cmd := &cobra.Command{
		Use:   "claim --gap EG [--gap-tol TOL] FILE|OUTDIR",
		Short: "Check a supplier's claimed band gap against one scan or a batch",
		Long: "claim compares a claimed band gap with the measured one: for a scan FILE (fitted with the\n" +
			"analysis flags) or a batch output folder OUTDIR (its summary.json: every scan and the lot mean).\n" +
			"It prints the measured E_g, its combined standard uncertainty u_c from the budget, the z-score\n" +
			"z = (measured − claimed)/√(u_c² + u_claim²) with u_claim = tol/√3 (the tolerance as a rectangular\n" +
			"distribution, JCGM 100:2008 §4.3.7), the two-sided p-value and a verdict:\n" +
			"consistent (|z| ≤ 2), inconsistent (|z| > 3), or cannot tell (2 < |z| ≤ 3, u_c unknown, or u_c above\n" +
			"1 % of the claimed gap). Exit status: 0 consistent, 5 inconsistent, 6 cannot tell; for a folder, the\n" +
			"verdict on the lot mean.",
		Example: "  bandedge claim --gap 1.424 --gap-tol 0.005 wafer07.csv --thickness 2um --index 3.6 --index-err 0.05\n" +
			"  bandedge claim --gap 1.424 lot-out/",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			opts.Target = args[0]
			if !cmd.Flags().Changed("gap") {
				return flagErrorf("--gap is required: the claimed band gap in eV")
			}
			if !(opts.Gap > 0) || opts.Gap > 20 {
				return flagErrorf("--gap %g: want a band gap in eV, above 0 and at most 20", opts.Gap)
			}
			if !(opts.GapTol >= 0) || opts.GapTol >= opts.Gap {
				return flagErrorf("--gap-tol %g: want a tolerance half-width in eV, not negative and below the gap", opts.GapTol)
			}
			s, err := opts.Flags.settings()
			if err != nil {
				return err
			}
			opts.Settings = s
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runClaim(cmd.Context(), opts)
		},
	}
	opts.Flags.register(cmd.Flags())
	cmd.Flags().Float64Var(&opts.Gap, "gap", 0, "claimed band gap E_g in eV (required)")
	cmd.Flags().Float64Var(&opts.GapTol, "gap-tol", 0, "the claim's tolerance half-width in eV, e.g. 0.01 for 1.42 ± 0.01 (treated as rectangular)")
	return cmd
}

func runClaim(ctx context.Context, opts *claimOptions) error {
	c := lot.Claim{Gap: opts.Gap, Tol: opts.GapTol}
	st, err := os.Stat(opts.Target)
	if err != nil {
		return &exitError{code: exitInput, msg: err.Error()}
	}
	var v lot.ClaimVerdict
	if st.IsDir() {
		v, err = claimFolder(opts, c)
	} else {
		v, err = claimScan(ctx, opts, c)
	}
	if err != nil {
		return err
	}
	switch v {
	case lot.Consistent:
		return nil
	case lot.Inconsistent:
		return &exitError{code: exitFail, msg: "claim: inconsistent with the data"}
	}
	return &exitError{code: exitIndeterminate, msg: "claim: cannot tell with this data"}
}

func printClaimHead(w io.Writer, c lot.Claim) {
	if c.Tol > 0 {
		fmt.Fprintf(w, "claim       E_g = %.4f ± %.4f eV; the tolerance is read as a rectangular distribution: u_claim = tol/√3 = %.2g eV (JCGM 100:2008 §4.3.7)\n",
			c.Gap, c.Tol, c.UClaim())
	} else {
		fmt.Fprintf(w, "claim       E_g = %.4f eV, no tolerance given (u_claim = 0)\n", c.Gap)
	}
}

func printClaimRule(w io.Writer, c lot.Claim) {
	fmt.Fprintf(w, "rule        consistent |z| ≤ %d; inconsistent |z| > %d; cannot tell for %d < |z| ≤ %d, when u_c is unknown, or when u_c > %.0f %% of the claimed gap (%.2g eV)\n",
		lot.ClaimConsistentZ, lot.ClaimInconsistentZ, lot.ClaimConsistentZ, lot.ClaimInconsistentZ, 100*lot.ClaimMaxRelU, lot.ClaimMaxRelU*c.Gap)
}

func claimScan(ctx context.Context, opts *claimOptions, c lot.Claim) (lot.ClaimVerdict, error) {
	o, err := scan.AnalyzeFile(ctx, opts.Target, opts.Settings)
	if err == nil && ctx.Err() != nil {
		err = ctx.Err() // interrupted: the budget may lack terms
	}
	if err != nil {
		return 0, classify(err)
	}
	rec := results.FromOutcome(o, results.Provenance{})
	row := results.RowFromOutcome(o, rec)
	w := opts.Out
	printClaimHead(w, c)
	fmt.Fprintf(w, "scan        %s\n", opts.Target)
	measured, uc := row.EgEV.Float(), row.EgErrEV.Float()
	if t := rec.IssueText(); t != "" {
		// Not converged, singular or on a bound: no estimate to judge.
		measured = math.NaN()
		fmt.Fprintf(w, "note        %s\n", t)
	}
	r := lot.JudgeClaim(c, measured, uc, row.EgDominant, row.EgDominantU.Float())
	if math.IsNaN(row.EgEV.Float()) {
		fmt.Fprintf(w, "measured    E_g not determined (model %s)\n", o.Result.Model)
	} else {
		fmt.Fprintf(w, "measured    E_g = %.5f eV, u_c = %s eV (combined standard uncertainty from the budget; model %s)\n", measured, fmtSig(uc, 2), o.Result.Model)
	}
	if b, ok := o.Result.Budgets["eg"]; ok {
		var parts []string
		for _, t := range b.Dominant() {
			parts = append(parts, fmt.Sprintf("%s %s", t.Source, fmtSig(t.U, 2)))
		}
		fmt.Fprintf(w, "budget      %s (eV; largest first)\n", strings.Join(parts, ", "))
	}
	printClaimResult(w, r)
	printClaimRule(w, c)
	return r.Verdict, nil
}

func printClaimResult(w io.Writer, r lot.ClaimResult) {
	fmt.Fprintf(w, "z           (%s − %.5f)/√(u_c² + u_claim²) = %s   (u_c %s, u_claim %.2g, total %s eV)\n",
		fmtSig(r.Measured, 6), r.Claim.Gap, fmtSig(r.Z, 3), fmtSig(r.UC, 2), r.UClaim, fmtSig(r.UTotal, 2))
	fmt.Fprintf(w, "p           %s (two-sided, normal distribution: 2·Φ(−|z|))\n", fmtSig(r.P, 2))
	fmt.Fprintf(w, "verdict     %s\n", r.Verdict)
	fmt.Fprintf(w, "because     %s\n", r.Reason)
}

func claimFolder(opts *claimOptions, c lot.Claim) (lot.ClaimVerdict, error) {
	path := filepath.Join(opts.Target, "summary.json")
	f, err := os.Open(path)
	if err != nil {
		return 0, &exitError{code: exitInput, msg: fmt.Sprintf("%s: no batch summary here (run bandedge batch first): %v", opts.Target, err)}
	}
	defer f.Close()
	sum, err := results.ReadSummaryJSON(f, path)
	if err != nil {
		return 0, &exitError{code: exitInput, msg: err.Error()}
	}
	w := opts.Out
	printClaimHead(w, c)
	fmt.Fprintf(w, "batch       %s: %d scans (the analysis flags are not used: the batch's results are)\n\n", opts.Target, len(sum.Rows))
	fmt.Fprintf(w, "%-32s %10s %9s %8s %8s  %s\n", "scan", "E_g/eV", "u_c/eV", "z", "p", "verdict")
	var eg, uc []float64
	counts := map[lot.ClaimVerdict]int{}
	skipped := 0
	for _, row := range sum.Rows {
		if row.Status != results.StatusOK {
			skipped++
			continue
		}
		r := lot.JudgeClaim(c, row.EgEV.Float(), row.EgErrEV.Float(), row.EgDominant, row.EgDominantU.Float())
		counts[r.Verdict]++
		eg = append(eg, row.EgEV.Float())
		uc = append(uc, row.EgErrEV.Float())
		fmt.Fprintf(w, "%-32s %10s %9s %8s %8s  %s\n", filepath.Base(row.File), fmtSig(r.Measured, 6), fmtSig(r.UC, 2), fmtSig(r.Z, 3), fmtSig(r.P, 2), r.Verdict)
	}
	fmt.Fprintf(w, "\nscans       consistent %d · inconsistent %d · cannot tell %d", counts[lot.Consistent], counts[lot.Inconsistent], counts[lot.CannotTell])
	if skipped > 0 {
		fmt.Fprintf(w, " · not fitted %d (not judged)", skipped)
	}
	fmt.Fprintln(w)
	m := lot.MeanGap(eg, uc)
	dom, domU := "the per-scan budget (mean u_c, treated as fully correlated between scans)", m.MeanUC
	if m.SE > m.MeanUC {
		dom, domU = "the site-to-site scatter (standard error of the mean)", m.SE
	}
	fmt.Fprintf(w, "lot mean    E_g = %s eV over %d scans with a determined gap; s = %s eV, standard error s/√n = %s eV; mean u_c = %s eV\n",
		fmtSig(m.Mean, 6), m.N, fmtSig(m.StdDev, 2), fmtSig(m.SE, 2), fmtSig(m.MeanUC, 2))
	fmt.Fprintf(w, "            u(mean) = √(SE² + mean u_c²) = %s eV: the per-scan budget does not average down (same instrument and settings)\n", fmtSig(m.U, 2))
	r := lot.JudgeClaim(c, m.Mean, m.U, dom, domU)
	printClaimResult(w, r)
	printClaimRule(w, c)
	return r.Verdict, nil
}
