package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"bandedge/fit/lot"
	"bandedge/fit/scan"
	"bandedge/fit/trend"
	"bandedge/io/quantity"
	"bandedge/io/results"
	"bandedge/io/sheet"
	"bandedge/reports"
)

// trendOptions are the inputs of the trend command.
type trendOptions struct {
	Out, ErrOut io.Writer
	Files       []string
	From        string
	Samples     string
	JSON        bool
	Report      string
	Flags       analysisFlags
	Settings    scan.Settings
	Now         func() time.Time
}

func newTrendCmd(runF func(context.Context, *trendOptions) error) *cobra.Command {
	opts := &trendOptions{Now: time.Now}
	cmd := &cobra.Command{
		Use:   "trend FILE...",
		Short: "Fit E_g(T) over scans taken at several temperatures",
		Long: "trend fits the edge of every scan (with the same flags as fit), takes each scan's temperature\n" +
			"from its file name (e.g. GaAs_300K.csv) or a sample sheet, and fits the gaps against temperature with the\n" +
			"Varshni (1967) and Bose–Einstein (O'Donnell & Chen 1991) forms, weighting each gap by its\n" +
			"combined standard uncertainty.",
		Example: "  bandedge trend scans/W07_*K.csv --thickness 1.2um --index 3.6 --report trend.png",
		Args:    cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			opts.Files = args
			switch opts.From {
			case "name":
			case "column":
				if opts.Samples == "" {
					return flagErrorf("--temperature-from column reads the temperature_k (or temperature_c) column of a sample sheet: give --samples sheet.csv")
				}
			default:
				return flagErrorf("--temperature-from %q: want name (kelvin in the file name, e.g. _300K) or column (the sample sheet's temperature column)", opts.From)
			}
			s, err := opts.Flags.settings()
			if err != nil {
				return err
			}
			opts.Settings = s
			if opts.Report != "" && !strings.HasSuffix(strings.ToLower(opts.Report), ".png") {
				return flagErrorf("--report %q: give a path ending in .png", opts.Report)
			}
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runTrend(cmd.Context(), opts)
		},
	}
	opts.Flags.register(cmd.Flags())
	cmd.Flags().StringVar(&opts.From, "temperature-from", "name", "where each scan's temperature comes from: name (kelvin in the file name, e.g. _300K) or column (the sample sheet's temperature column)")
	cmd.Flags().StringVar(&opts.Samples, "samples", "", "sample sheet: per-scan temperature (with --temperature-from column), thickness and index, as for batch")
	cmd.Flags().BoolVar(&opts.JSON, "json", false, "print the result as JSON")
	cmd.Flags().StringVar(&opts.Report, "report", "", "write a PNG of E_g(T) with the fits to this path")
	return cmd
}

// trendRecord is the JSON output of trend.
type trendRecord struct {
	Points     []trendPoint       `json:"points"`
	Fits       []trendFit         `json:"fits"`
	Failures   []string           `json:"failures"`
	Provenance results.Provenance `json:"provenance"`
}

type trendPoint struct {
	File   string      `json:"file"`
	SHA256 string      `json:"sha256"`
	T      results.Num `json:"temperature_k"`
	Eg     results.Num `json:"eg_ev"`
	U      results.Num `json:"eg_err_ev"`
}

type trendFit struct {
	Form      string                 `json:"form"`
	Params    map[string]results.Num `json:"params"`
	StdErr    map[string]results.Num `json:"stderr"`
	Chi2Red   results.Num            `json:"chi2_reduced"`
	DoF       int                    `json:"dof"`
	Converged bool                   `json:"converged"`
	Eg300     results.Num            `json:"eg_300k_ev"`
	Eg300Err  results.Num            `json:"eg_300k_err_ev"`
}

func runTrend(ctx context.Context, opts *trendOptions) error {
	var samples *sheet.Samples
	if opts.Samples != "" {
		var err error
		if samples, err = readSheet(opts.Samples); err != nil {
			return err
		}
	}
	var pts []trend.Point
	var sums []string // SHA-256 of each point's file
	var failures []string
	for _, f := range opts.Files {
		if err := ctx.Err(); err != nil {
			return err
		}
		s := opts.Settings
		if samples != nil {
			if smp, ok := samples.Lookup(f); ok {
				var err error
				if s, err = lot.ApplySample(lot.Defaults{Settings: s}, &smp, opts.Samples); err != nil {
					failures = append(failures, err.Error())
					continue
				}
			}
		}
		t, ok := s.Temperature, s.Temperature > 0
		if opts.From == "name" {
			t, ok = quantity.TemperatureFromName(f)
		}
		if !ok {
			failures = append(failures, fmt.Sprintf("%s: no temperature (%s)", f, map[string]string{
				"name":   "write it in kelvin in the file name, e.g. _300K",
				"column": "no temperature for this file in " + opts.Samples,
			}[opts.From]))
			continue
		}
		s.Temperature = t
		o, err := scan.AnalyzeFile(ctx, f, s)
		if err := ctx.Err(); err != nil {
			return err // interrupted: the last analysis may lack budget terms
		}
		if err != nil {
			failures = append(failures, err.Error())
			continue
		}
		if issue := results.FromOutcome(o, results.Provenance{}).IssueText(); issue != "" {
			// A gap without a trustworthy uncertainty cannot weight the fit.
			failures = append(failures, fmt.Sprintf("%s: not used: %s", f, issue))
			continue
		}
		eg, _ := o.Result.Param("eg")
		pts = append(pts, trend.Point{Label: f, T: t, Eg: eg.Value, U: o.Result.Budgets["eg"].Combined})
		sums = append(sums, o.SHA256)
	}
	for _, msg := range failures {
		fmt.Fprintln(opts.ErrOut, "bandedge: trend:", msg)
	}
	var fits []*trend.Result
	var fitErrs []string
	for _, form := range []trend.Form{trend.Varshni{}, trend.BoseEinstein{}} {
		r, err := trend.Fit(ctx, form, pts)
		if err != nil {
			fitErrs = append(fitErrs, err.Error())
			continue
		}
		fits = append(fits, r)
	}
	if len(fits) == 0 {
		return &exitError{code: exitFit, msg: strings.Join(fitErrs, "; ")}
	}
	prov := results.NewProvenance(version, opts.Settings, opts.Now())
	prov.Model = modelOf(opts.Settings)
	prov.Tail = tailOf(opts.Settings)
	if opts.Report != "" {
		pg, err := reports.TrendFigure(reports.TrendReport{Title: "E_g(T): " + fmt.Sprintf("%d scans", len(pts)), Points: pts, Fits: fits,
			Footer: trendFooter(prov, sums)})
		if err != nil {
			return err
		}
		if err := reports.WritePNG(opts.Report, pg); err != nil {
			return err
		}
	}
	if opts.JSON {
		rec := trendRecord{Failures: append([]string{}, failures...), Provenance: prov}
		for i, p := range pts {
			rec.Points = append(rec.Points, trendPoint{File: p.Label, SHA256: sums[i], T: results.Num(p.T), Eg: results.Num(p.Eg), U: results.Num(p.U)})
		}
		for _, f := range fits {
			tf := trendFit{Form: f.Form.Name(), Params: map[string]results.Num{}, StdErr: map[string]results.Num{},
				Chi2Red: results.Num(f.Chi2Red), DoF: f.DoF, Converged: f.Converged}
			for j, pi := range f.Form.Params() {
				tf.Params[pi.Name] = results.Num(f.Params[j])
				tf.StdErr[pi.Name] = results.Num(f.StdErr[j])
			}
			eg, u := f.At(300)
			tf.Eg300, tf.Eg300Err = results.Num(eg), results.Num(u)
			rec.Fits = append(rec.Fits, tf)
		}
		if err := results.WriteJSON(opts.Out, rec); err != nil {
			return err
		}
	} else {
		w := opts.Out
		fmt.Fprintf(w, "%-40s %8s %12s %10s\n", "scan", "T (K)", "E_g (eV)", "u_c (eV)")
		for _, p := range pts {
			fmt.Fprintf(w, "%-40s %8.1f %12.5f %10s\n", p.Label, p.T, p.Eg, fmtSig(p.U, 2))
		}
		for _, f := range fits {
			fmt.Fprintf(w, "\n%s: χ²_red = %.3g on %d degrees of freedom%s\n", f.Form.Name(), f.Chi2Red, f.DoF,
				map[bool]string{true: "", false: " (NOT CONVERGED)"}[f.Converged])
			for j, pi := range f.Form.Params() {
				fmt.Fprintf(w, "  %-8s %14.6g ± %-10.2g %s\n", pi.Symbol, f.Params[j], f.StdErr[j], pi.Unit)
			}
			eg, u := f.At(300)
			fmt.Fprintf(w, "  E_g(300 K) = %.5f ± %.2g eV\n", eg, u)
			if p := f.PValue(); p < 1e-3 {
				fmt.Fprintf(w, "  warning: the χ² test fails (p = %.1g): this form does not describe the gaps within their uncertainties\n", p)
			}
		}
		fmt.Fprintln(w, "\n(standard uncertainties, k = 1; covariance scaled by χ²_red when it exceeds 1)")
		if opts.Report != "" {
			fmt.Fprintf(w, "report %s\n", opts.Report)
		}
	}
	if len(failures) > 0 {
		return &exitError{code: exitInput, msg: fmt.Sprintf("trend: %d of %d scans could not be used", len(failures), len(opts.Files))}
	}
	for _, f := range fits {
		if !f.Converged {
			return &exitError{code: exitFit, msg: "trend: a fit did not converge"}
		}
	}
	return nil
}

// trendFooter is the short provenance of the trend page: as a report's
// footer, with the SHA-256 of the inputs' SHA-256 digests (hex, in the
// order of the points; the JSON output lists each).
func trendFooter(p results.Provenance, sums []string) string {
	h := sha256.Sum256([]byte(strings.Join(sums, "\n")))
	return p.Short("") + fmt.Sprintf(" · %d inputs, sha256 of their sha256 %s…", len(sums), hex.EncodeToString(h[:])[:12])
}
