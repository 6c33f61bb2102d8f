package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"bandedge/fit/edge"
	"bandedge/fit/scan"
	"bandedge/io/results"
	"bandedge/model/optics"
	"bandedge/reports"
)

// fitOptions are the inputs of the fit command.
type fitOptions struct {
	Out, ErrOut io.Writer
	File        string
	JSON        bool
	Report      string
	Views       bool
	Flags       analysisFlags
	Settings    scan.Settings
	Now         func() time.Time
	// Analyze, when set, analyses the file instead of scan.AnalyzeFile
	// (tests inject fits that did not converge with it).
	Analyze func(ctx context.Context, path string, s scan.Settings) (*scan.Outcome, error)
}

func newFitCmd(runF func(context.Context, *fitOptions) error) *cobra.Command {
	opts := &fitOptions{Now: time.Now}
	cmd := &cobra.Command{
		Use:   "fit FILE",
		Short: "Fit the absorption edge of one scan",
		Long: "fit reads one spectrophotometer export (transmittance, absorbance or α against wavelength,\n" +
			"energy or wavenumber), converts it to α(E) and fits the edge model over the automatic or\n" +
			"forced window. It prints E_g, E_U, the amplitude and (with masses) E_P, each with its\n" +
			"uncertainty budget, and can write a JSON record and a PNG report.",
		Example: "  bandedge fit wafer07.csv --thickness 1.2um --index 3.6\n" +
			"  bandedge fit wafer07.csv --thickness 1.2um --index 3.6 --json --report wafer07.png",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			opts.File = args[0]
			s, err := opts.Flags.settings()
			if err != nil {
				return err
			}
			opts.Settings = s
			if opts.Report != "" && !strings.HasSuffix(strings.ToLower(opts.Report), ".png") {
				return flagErrorf("--report %q: the report is a PNG file; give a path ending in .png", opts.Report)
			}
			if opts.Views && opts.Report == "" {
				return flagErrorf("--views adds a page to the report: give --report PATH.png too")
			}
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runFit(cmd.Context(), opts)
		},
	}
	opts.Flags.register(cmd.Flags())
	cmd.Flags().BoolVar(&opts.JSON, "json", false, "print the result as one JSON object instead of text")
	cmd.Flags().StringVar(&opts.Report, "report", "", "write a PNG report to this path")
	cmd.Flags().BoolVar(&opts.Views, "views", false, "also write the Tauc (r = 1/2, 3/2, 2, 3), Cody and Urbach views as PATH-views.png")
	return cmd
}

func runFit(ctx context.Context, opts *fitOptions) error {
	analyze := opts.Analyze
	if analyze == nil {
		analyze = scan.AnalyzeFile
	}
	o, err := analyze(ctx, opts.File, opts.Settings)
	if err == nil && ctx.Err() != nil {
		// Interrupted while it ran: the budget may lack the terms whose
		// refits the cancellation stopped. Print nothing.
		err = ctx.Err()
	}
	if err != nil {
		return classify(err)
	}
	rec := results.FromOutcome(o, results.NewProvenance(version, opts.Settings, opts.Now()))
	if opts.Report != "" {
		if err := writeReport(opts.Report, o, rec); err != nil {
			return err
		}
		if opts.Views {
			if err := writeViews(viewsPath(opts.Report), o, rec); err != nil {
				return err
			}
		}
	}
	if opts.JSON {
		if err := results.WriteJSON(opts.Out, rec); err != nil {
			return err
		}
	} else {
		printText(opts.Out, o)
		if opts.Report != "" {
			fmt.Fprintf(opts.Out, "report      %s\n", opts.Report)
		}
		if opts.Views {
			fmt.Fprintf(opts.Out, "views       %s\n", viewsPath(opts.Report))
		}
	}
	// A fit that did not converge, has no covariance or ended on a bound
	// is printed with its warnings but exits with 4: its numbers are not
	// estimates with the uncertainty the budget states.
	if t := rec.IssueText(); t != "" {
		return &exitError{code: exitFit, msg: fmt.Sprintf("%s: %s", opts.File, t)}
	}
	return nil
}

// classify wraps a scan error so that run picks the right exit code.
func classify(err error) error {
	if errors.Is(err, context.Canceled) {
		return err // an interrupt, not a bad input or fit: run exits 130
	}
	var se *scan.Error
	if e, ok := err.(*scan.Error); ok {
		se = e
	}
	if se == nil {
		return err
	}
	switch se.Stage {
	case scan.StageRead, scan.StageConvert:
		return &exitError{code: exitInput, msg: se.Error()}
	}
	return &exitError{code: exitFit, msg: se.Error()}
}

func writeReport(path string, o *scan.Outcome, rec *results.Record) error {
	fig, err := reports.EdgeFigure(reports.EdgeReport{
		Title:      o.Spectrum.Name,
		Comparison: o.Comparison,
		Data:       o.Data,
		Result:     o.Result,
		Model:      o.Model,
		InputLines: describeInput(o),
		Footer:     footer(rec),
	})
	if err != nil {
		return fmt.Errorf("report for %s: %w", o.Path, err)
	}
	return reports.WritePNG(path, fig)
}

// viewsPath is the file of the views page that goes with a report.
func viewsPath(report string) string {
	return strings.TrimSuffix(report, filepath.Ext(report)) + "-views.png"
}

func writeViews(path string, o *scan.Outcome, rec *results.Record) error {
	eg, _ := o.Result.Param("eg")
	fig, err := reports.ViewsFigure(reports.ViewsReport{
		Title:         o.Spectrum.Name + ": linearised constructions",
		Constructions: o.Result.Constructions,
		Gap:           eg.Value,
		Model:         o.Result.Model,
		Footer:        footer(rec),
	})
	if err != nil {
		return fmt.Errorf("views for %s: %w", o.Path, err)
	}
	return reports.WritePNG(path, fig)
}

// footer is the short provenance line of a report: tool version,
// platform, model, settings digest, input SHA-256 and time (the record
// holds them in full).
func footer(r *results.Record) string { return r.Provenance.Short(r.SHA256) }

// printText prints the human-readable result.
func printText(w io.Writer, o *scan.Outcome) {
	res := o.Result
	fmt.Fprintf(w, "scan        %s\n", o.Path)
	for i, l := range describeInput(o) {
		head := ""
		if i == 0 {
			head = "conversion"
		}
		fmt.Fprintf(w, "%-11s %s\n", head, l)
	}
	fmt.Fprintf(w, "model       %s, %s\n", res.Model, convergedText(res))
	fmt.Fprintf(w, "window      %.4f–%.4f eV, %d points (%s)\n", res.Window[0], res.Window[1], res.Points, res.WindowRule)
	fmt.Fprintf(w, "χ²_red      %.3g on %d degrees of freedom\n", res.Chi2Red, res.DoF)
	fmt.Fprintln(w)
	fmt.Fprintf(w, "%-6s %12s %11s %11s  %s\n", "", "value", "u_c", "U", "unit")
	for _, row := range headline(res) {
		fmt.Fprintf(w, "%-6s %12s %11s %11s  %s\n", row.sym, fmtSig(row.v, 6), fmtSig(row.uc, 2), fmtSig(row.U, 2), row.unit)
	}
	k := res.Budgets["eg"].K
	fmt.Fprintf(w, "(u_c combined standard uncertainty; U = %g·u_c, expanded)\n", k)
	for _, key := range res.BudgetKeys() {
		if key == "amp" {
			continue
		}
		b := res.Budgets[key]
		fmt.Fprintf(w, "\nbudget of %s (%s)\n", b.Quantity, b.Unit)
		for _, t := range b.Terms {
			fmt.Fprintf(w, "  %-18s %s  %10s  %s\n", t.Source, t.Type, fmtSig(t.U, 2), t.Note)
		}
		fmt.Fprintf(w, "  %-18s    %10s  %s\n", "combined u_c", fmtSig(b.Combined, 2), "root-sum-square, independent inputs")
	}
	if c := o.Comparison; c != nil {
		printComparison(w, c)
	}
	if res.Tauc != nil {
		// The construction of the model's own band (r = 2 for an indirect
		// edge, …), named after it.
		kind := strings.ReplaceAll(strings.TrimPrefix(res.Tauc.Name, "tauc-"), "-", " ")
		fmt.Fprintf(w, "\nTauc (%s, r = %g) E_g = %.4f ± %.2g eV over %.4f–%.4f eV (%d points; statistical only)\n",
			kind, res.Tauc.Exponent, res.Tauc.Value, res.Tauc.Err, res.Tauc.Range[0], res.Tauc.Range[1], res.Tauc.Points)
	}
	if res.Urbach != nil {
		fmt.Fprintf(w, "Urbach plot E_U = %.2f ± %.2g meV over %.4f–%.4f eV (%d points; statistical only)\n",
			1e3*res.Urbach.Value, 1e3*res.Urbach.Err, res.Urbach.Range[0], res.Urbach.Range[1], res.Urbach.Points)
	}
	fmt.Fprintln(w)
	if len(res.Warnings) == 0 {
		fmt.Fprintln(w, "warnings    none")
	}
	for _, wn := range res.Warnings {
		fmt.Fprintf(w, "warning     %s\n", wn)
	}
}

// printComparison prints the ranking of --model auto.
func printComparison(w io.Writer, c *edge.Comparison) {
	fmt.Fprintf(w, "\nmodel comparison: %s\n", c.Criterion)
	fmt.Fprintf(w, "  %-4s %-26s %2s %10s %8s %7s %8s %10s %9s %8s\n", "rank", "model", "k", "AIC", "ΔAIC", "weight", "ΔBIC", "E_g (eV)", "u_c", "χ²_red")
	for r, i := range c.Ranked {
		cd := c.Candidates[i]
		eg, _ := cd.Result.Param("eg")
		egText := fmt.Sprintf("%.4f", eg.Value)
		if cd.Result.TailOnly {
			egText = "n/d"
		}
		fmt.Fprintf(w, "  %-4d %-26s %2d %10.1f %8.1f %7.3f %8.1f %10s %9s %8.3g\n", r+1, cd.Model, cd.K, cd.AIC, cd.DeltaAIC, cd.Weight,
			cd.DeltaBIC, egText, fmtSig(cd.Result.Budgets["eg"].Combined, 2), cd.Result.Chi2Red)
	}
	for _, cd := range c.Candidates {
		if cd.Result == nil {
			fmt.Fprintf(w, "  %-4s %-26s not fitted: %s\n", "-", cd.Model, cd.Err)
		}
	}
	fmt.Fprintf(w, "  recommended: %s (the numbers above the budget tables are its own)\n", c.Candidates[c.Recommended].Model)
}

type headlineRow struct {
	sym, unit string
	v, uc, U  float64
}

func headline(res *edge.Result) []headlineRow {
	var rows []headlineRow
	for _, p := range res.Params {
		if b, ok := res.Budgets[p.Name]; ok {
			rows = append(rows, headlineRow{sym: p.Symbol, unit: p.Unit, v: p.Value, uc: b.Combined, U: b.Expanded})
		}
	}
	if b, ok := res.Budgets["ep"]; ok {
		rows = append(rows, headlineRow{sym: "E_P", unit: "eV", v: res.EP, uc: b.Combined, U: b.Expanded})
	}
	return rows
}

func convergedText(res *edge.Result) string {
	if res.Converged {
		return "converged (" + res.Status + ")"
	}
	return "NOT CONVERGED (" + res.Status + ")"
}

// fmtSig formats v with n significant digits, "n/a" for NaN.
func fmtSig(v float64, n int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return fmt.Sprintf("%.*g", n, v)
}

func lengthText(cm float64) string {
	switch {
	case cm >= 0.1:
		return fmt.Sprintf("%.4g mm", cm*10)
	case cm >= 1e-4:
		return fmt.Sprintf("%.4g µm", cm*1e4)
	}
	return fmt.Sprintf("%.4g nm", cm*1e7)
}

// maskReasons lists the masked-point counts in plain words.
func maskReasons(o *scan.Outcome) []string {
	var out []string
	for _, r := range optics.Reasons() {
		if r == optics.Usable {
			continue
		}
		if n := o.Conversion.Counts[r]; n > 0 {
			out = append(out, fmt.Sprintf("%d %s", n, r.Text(o.Conversion.Kind)))
		}
	}
	return out
}
