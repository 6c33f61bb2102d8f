package lot

import (
	"math"
	"strings"

	"bandedge/fit/edge"
	"bandedge/io/results"
	"bandedge/io/sheet"
)

// Measured is one scan-level quantity with the half-widths of its guard
// band under the two guarded rules.
type Measured struct {
	// Value is the result (NaN when not determined).
	Value float64
	// Expanded is U = k·u_c from the quantity's budget; Stat is k·u_stat,
	// the statistical term alone times the same k. Both are 0 for
	// quantities that carry no uncertainty of their own (χ²_red, point
	// counts, the uncertainties themselves).
	Expanded, Stat float64
}

// Measure returns every scan-level quantity a spec can name (see
// sheet.Quantities) for a fitted scan, from its record and summary row
// (which is RowFromRecord of the record), so that a record read back from
// its file is judged exactly as the analysis that wrote it. Where E_g is
// not determined (Record.TailOnly) E_g, the amplitude and E_P are NaN, so
// that every rule judges them indeterminate, never pass.
func Measure(rec *results.Record, row *results.Row) map[string]Measured {
	m := map[string]Measured{}
	withBudget := func(q, key string, v float64) {
		b, ok := rec.Budget(key)
		if !ok {
			m[q] = Measured{Value: math.NaN(), Expanded: math.NaN(), Stat: math.NaN()}
			return
		}
		st := math.NaN()
		if t, ok := b.Term("statistical"); ok {
			st = float64(b.K) * float64(t.U)
		}
		m[q] = Measured{Value: v, Expanded: float64(b.Expanded), Stat: st}
	}
	withBudget("eg_ev", "eg", float64(row.EgEV))
	withBudget("urbach_ev", "eu", float64(row.UrbachEV))
	withBudget("amplitude", "amp", float64(row.Amplitude))
	withBudget("ep_ev", "ep", float64(row.EPEV))
	for _, q := range []string{"eg_err_ev", "eg_expanded_ev", "urbach_err_ev", "amplitude_err", "ep_err_ev", "chi2_reduced", "points_used"} {
		v, _ := row.Value(q)
		m[q] = Measured{Value: v}
	}
	return m
}

// guardWidth returns the half-width of the guard band the spec's rule
// uses for a measured quantity.
func guardWidth(g sheet.Guard, x Measured) float64 {
	switch g {
	case sheet.GuardStat:
		return x.Stat
	case sheet.GuardNone:
		return 0
	}
	return x.Expanded
}

// judge applies the spec's scan-level limits to a fitted scan (one with a
// Record). A fit with an issue (not converged, singular covariance, a
// parameter on its bound) is indeterminate on every limit: its numbers are
// not estimates with a meaningful uncertainty.
func judge(sc *Scan, spec *sheet.Spec) {
	if spec == nil || sc.Record == nil {
		return
	}
	m := Measure(sc.Record, &sc.Row)
	var vs []sheet.Verdict
	for _, l := range spec.Limits {
		if strings.HasPrefix(l.Quantity, "wafer.") {
			continue
		}
		x, ok := m[l.Quantity]
		if !ok {
			x = Measured{Value: math.NaN()}
		}
		v := spec.Judge(l.Quantity, x.Value, guardWidth(spec.Guard, x))
		if sc.Row.Status != results.StatusOK {
			v = sheet.Indeterminate
		}
		sc.Judgements = append(sc.Judgements, sheet.Judgement{Limit: l, Value: x.Value, Verdict: v})
		sc.Row.Verdicts = append(sc.Row.Verdicts, results.LimitVerdict{Quantity: l.Quantity, Verdict: v.String()})
		vs = append(vs, v)
	}
	sc.Verdict = sheet.Worst(vs...)
	if sc.Verdict != sheet.NoLimit {
		sc.Row.Verdict = sc.Verdict.String()
	}
}

// DecisionRule names the spec's rule for the outputs, with the coverage
// factor k used by the scans ("" without a spec).
func DecisionRule(spec *sheet.Spec, k float64) string {
	if spec == nil {
		return ""
	}
	if !(k > 0) {
		k = edge.DefaultCoverage
	}
	return spec.Guard.Rule(k)
}
