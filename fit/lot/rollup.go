package lot

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandedge/io/results"
	"bandedge/io/sheet"
)

// Group is the roll-up of one wafer or one lot.
type Group struct {
	// Level is "wafer" or "lot".
	Level string
	// Lot and Wafer identify the group; a lot group has Wafer "". Scans
	// without a wafer (or lot) in the sample sheet form the group "".
	Lot, Wafer string
	// Indices are the scans of the group, as indices into Run's result.
	Indices []int
	// Scans counts them; Fitted those with a converged fit; Failed the
	// rest (failed, not converged, cancelled).
	Scans, Fitted, Failed int
	// Stats holds, for every scan-level quantity (sheet.Quantities), the
	// statistics over the fitted scans (sheet.Rollup: gonum's stat.Mean
	// and stat.StdDev, non-finite values skipped).
	Stats map[string]sheet.Stats
	// Pass, Fail and Indeterminate count the scans' overall verdicts.
	Pass, Fail, Indeterminate int
	// Judgements are the wafer-level limits applied to this wafer (none for
	// a lot).
	Judgements []sheet.Judgement
	// Verdict is the group's verdict (sheet.NoLimit without a spec) and
	// Reasons say why it is not a pass.
	Verdict sheet.Verdict
	Reasons []string
}

// Rollup is the roll-up of a batch: wafers sorted by lot and wafer, then
// lots sorted by name.
type Rollup struct {
	Wafers []Group
	Lots   []Group
}

// scanQuantities are the scan-level quantity names of a spec.
func scanQuantities() []string {
	var out []string
	for _, q := range sheet.Quantities() {
		if !strings.HasPrefix(q, "wafer.") {
			out = append(out, q)
		}
	}
	return out
}

// Roll computes the roll-up. The verdict rules, stated in the README:
//
//   - a wafer's verdict is the worst (sheet.Worst: fail, indeterminate,
//     pass) of its scans' overall verdicts and of the spec's wafer-level
//     limits applied to its statistics (JudgeWafer, on the value);
//   - a scan that was not fitted has no verdict of its own, but makes its
//     wafer at least indeterminate: a site without a result cannot be
//     called conforming;
//   - a lot's verdict is the worst of its wafers'; wafer-level limits are
//     not applied to lot statistics.
//
// Without a spec every verdict is sheet.NoLimit.
func Roll(scans []Scan, spec *sheet.Spec) Rollup {
	type key struct{ lot, wafer string }
	waferIdx := map[key][]int{}
	lotIdx := map[string][]int{}
	for i := range scans {
		r := &scans[i].Row
		k := key{r.Lot, r.Wafer}
		waferIdx[k] = append(waferIdx[k], i)
		lotIdx[r.Lot] = append(lotIdx[r.Lot], i)
	}
	var ru Rollup
	keys := make([]key, 0, len(waferIdx))
	for k := range waferIdx {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(a, b int) bool {
		if keys[a].lot != keys[b].lot {
			return keys[a].lot < keys[b].lot
		}
		return NaturalLess(keys[a].wafer, keys[b].wafer)
	})
	waferVerdicts := map[string][]sheet.Verdict{}
	for _, k := range keys {
		g := group(scans, waferIdx[k], spec)
		g.Lot, g.Wafer, g.Level = k.lot, k.wafer, "wafer"
		if spec != nil {
			g.Judgements = spec.JudgeWafer(g.Stats)
			vs := []sheet.Verdict{g.Verdict}
			for _, j := range g.Judgements {
				vs = append(vs, j.Verdict)
				if j.Verdict != sheet.Pass {
					g.Reasons = append(g.Reasons, fmt.Sprintf("%s: %s = %s", j.Verdict, j.Limit, fmtStat(j.Value)))
				}
			}
			g.Verdict = sheet.Worst(vs...)
		}
		waferVerdicts[k.lot] = append(waferVerdicts[k.lot], g.Verdict)
		ru.Wafers = append(ru.Wafers, g)
	}
	lots := make([]string, 0, len(lotIdx))
	for l := range lotIdx {
		lots = append(lots, l)
	}
	sort.Strings(lots)
	for _, l := range lots {
		g := group(scans, lotIdx[l], nil)
		g.Lot, g.Level = l, "lot"
		g.Reasons = nil
		if spec != nil {
			g.Verdict = sheet.Worst(waferVerdicts[l]...)
			for _, w := range ru.Wafers {
				if w.Lot == l && w.Verdict != sheet.Pass {
					g.Reasons = append(g.Reasons, fmt.Sprintf("wafer %s: %s", orNone(w.Wafer), w.Verdict))
				}
			}
		}
		ru.Lots = append(ru.Lots, g)
	}
	return ru
}

// group computes the counts and statistics of the scans at idx, and with a
// spec the verdict from the scans alone.
func group(scans []Scan, idx []int, spec *sheet.Spec) Group {
	g := Group{Indices: idx, Scans: len(idx), Stats: map[string]sheet.Stats{}}
	var vs []sheet.Verdict
	for _, i := range idx {
		sc := &scans[i]
		if !sc.Fitted() {
			g.Failed++
			continue
		}
		g.Fitted++
		switch sc.Verdict {
		case sheet.Pass:
			g.Pass++
		case sheet.Fail:
			g.Fail++
		case sheet.Indeterminate:
			g.Indeterminate++
		}
		vs = append(vs, sc.Verdict)
	}
	for _, q := range scanQuantities() {
		vals := make([]float64, 0, g.Fitted)
		for _, i := range idx {
			if scans[i].Fitted() {
				v, _ := scans[i].Row.Value(q)
				vals = append(vals, v)
			}
		}
		g.Stats[q] = sheet.Rollup(vals)
	}
	if spec != nil {
		if g.Fail > 0 {
			g.Reasons = append(g.Reasons, fmt.Sprintf("%d of %d scans fail", g.Fail, g.Scans))
		}
		if g.Indeterminate > 0 {
			g.Reasons = append(g.Reasons, fmt.Sprintf("%d of %d scans indeterminate", g.Indeterminate, g.Scans))
		}
		if g.Failed > 0 {
			g.Reasons = append(g.Reasons, fmt.Sprintf("%d of %d scans not fitted", g.Failed, g.Scans))
			vs = append(vs, sheet.Indeterminate)
		}
		if g.Fitted == 0 {
			vs = append(vs, sheet.Indeterminate)
		}
		g.Verdict = sheet.Worst(vs...)
	}
	return g
}

func orNone(s string) string {
	if s == "" {
		return "(none)"
	}
	return s
}

func fmtStat(v float64) string {
	if math.IsNaN(v) {
		return "n/a"
	}
	return fmt.Sprintf("%.4g", v)
}

// Rows returns the roll-up as rows of rollup.csv/json: the wafers, then
// the lots. Statistics are given for E_g and E_U and for every quantity a
// wafer-level limit names.
func (ru Rollup) Rows(spec *sheet.Spec) []results.GroupRow {
	qs := []string{"eg_ev", "urbach_ev"}
	if spec != nil {
		for _, l := range spec.Limits {
			f, _, ok := splitWafer(l.Quantity)
			if ok && !contains(qs, f) {
				qs = append(qs, f)
			}
		}
	}
	var out []results.GroupRow
	for _, set := range [][]Group{ru.Wafers, ru.Lots} {
		for i := range set {
			g := &set[i]
			row := results.GroupRow{Level: g.Level, Lot: g.Lot, Wafer: g.Wafer, Scans: g.Scans, Fitted: g.Fitted,
				Failed: g.Failed, Pass: g.Pass, Fail: g.Fail, Indeterminate: g.Indeterminate,
				Reasons: append([]string{}, g.Reasons...), Limits: []results.GroupLimit{}}
			if g.Verdict != sheet.NoLimit {
				row.Verdict = g.Verdict.String()
			}
			for _, q := range qs {
				st := g.Stats[q]
				row.Stats = append(row.Stats, results.QuantityStats{Quantity: q, Count: st.Count, Skipped: st.Skipped,
					Mean: results.Num(st.Mean), StdDev: results.Num(st.StdDev), Min: results.Num(st.Min),
					Max: results.Num(st.Max), Range: results.Num(st.Range), Nonuniformity: results.Num(st.Nonuniformity)})
			}
			for _, j := range g.Judgements {
				row.Limits = append(row.Limits, results.GroupLimit{Limit: j.Limit.String(), Value: results.Num(j.Value), Verdict: j.Verdict.String()})
			}
			out = append(out, row)
		}
	}
	return out
}

func splitWafer(q string) (field, stat string, ok bool) {
	rest, ok := strings.CutPrefix(q, "wafer.")
	i := strings.LastIndexByte(rest, '.')
	if !ok || i < 0 {
		return "", "", false
	}
	return rest[:i], rest[i+1:], true
}

func contains(s []string, x string) bool {
	for _, v := range s {
		if v == x {
			return true
		}
	}
	return false
}

// NaturalLess orders names with embedded numbers by value: "W2" < "W10".
func NaturalLess(a, b string) bool {
	for a != "" && b != "" {
		da, db := digits(a), digits(b)
		if da > 0 && db > 0 {
			na, nb := strings.TrimLeft(a[:da], "0"), strings.TrimLeft(b[:db], "0")
			if len(na) != len(nb) {
				return len(na) < len(nb)
			}
			if na != nb {
				return na < nb
			}
			a, b = a[da:], b[db:]
			continue
		}
		if a[0] != b[0] {
			return a[0] < b[0]
		}
		a, b = a[1:], b[1:]
	}
	return len(a) < len(b)
}

func digits(s string) int {
	n := 0
	for n < len(s) && s[n] >= '0' && s[n] <= '9' {
		n++
	}
	return n
}
