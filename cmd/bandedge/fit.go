package main

import (
	"context"
	"fmt"
	"io"
	"math"
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
	Flags       analysisFlags
	Settings    scan.Settings
	Now         func() time.Time
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
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runFit(cmd.Context(), opts)
		},
	}
	opts.Flags.register(cmd.Flags())
	cmd.Flags().BoolVar(&opts.JSON, "json", false, "print the result as one JSON object instead of text")
	cmd.Flags().StringVar(&opts.Report, "report", "", "write a PNG report to this path")
	return cmd
}

func runFit(ctx context.Context, opts *fitOptions) error {
	o, err := scan.AnalyzeFile(ctx, opts.File, opts.Settings)
	if err != nil {
		return classify(err)
	}
	rec := results.FromOutcome(o, results.NewProvenance(version, opts.Settings, opts.Now()))
	if opts.Report != "" {
		if err := writeReport(opts.Report, o, rec); err != nil {
			return err
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
	}
	if !o.Result.Converged {
		return &exitError{code: exitFit, msg: fmt.Sprintf("%s: the fit did not converge (%s)", opts.File, o.Result.Status)}
	}
	return nil
}

// classify wraps a scan error so that run picks the right exit code.
func classify(err error) error {
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

// footer is the short provenance line of a report.
func footer(r *results.Record) string {
	p := r.Provenance
	return fmt.Sprintf("bandedge %s · %s · input sha256 %s… · %s", p.Version, p.Platform, r.SHA256[:12], p.Time)
}

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
	for _, key := range []string{"eg", "eu", "ep"} {
		b, ok := res.Budgets[key]
		if !ok {
			continue
		}
		fmt.Fprintf(w, "\nbudget of %s (%s)\n", b.Quantity, b.Unit)
		for _, t := range b.Terms {
			fmt.Fprintf(w, "  %-18s %s  %10s  %s\n", t.Source, t.Type, fmtSig(t.U, 2), t.Note)
		}
		fmt.Fprintf(w, "  %-18s    %10s  %s\n", "combined u_c", fmtSig(b.Combined, 2), "root-sum-square, independent inputs")
	}
	if res.Tauc != nil {
		fmt.Fprintf(w, "\nTauc (direct allowed) E_g = %.4f ± %.2g eV over %.4f–%.4f eV (%d points; statistical only)\n",
			res.Tauc.Value, res.Tauc.Err, res.Tauc.Range[0], res.Tauc.Range[1], res.Tauc.Points)
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

type headlineRow struct {
	sym, unit string
	v, uc, U  float64
}

func headline(res *edge.Result) []headlineRow {
	var rows []headlineRow
	for _, key := range []string{"eg", "eu", "amp"} {
		p, ok := res.Param(key)
		b, okb := res.Budgets[key]
		if !ok || !okb {
			continue
		}
		rows = append(rows, headlineRow{sym: p.Symbol, unit: p.Unit, v: p.Value, uc: b.Combined, U: b.Expanded})
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
