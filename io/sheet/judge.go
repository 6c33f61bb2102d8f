package sheet

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat"
)

// Guard is the decision rule of a spec: how the uncertainty of a result
// enters the pass/fail decision. The zero value is GuardExpanded, the
// guarded rule.
type Guard int

const (
	// GuardExpanded: guarded acceptance and rejection with guard band
	// w = U, the expanded uncertainty k·u_c of the result.
	GuardExpanded Guard = iota
	// GuardStat: the same rule with w = k·u_stat, the statistical
	// (fit) standard error times the coverage factor, leaving out the
	// systematic budget terms.
	GuardStat
	// GuardNone: simple acceptance, w = 0: the measured value alone
	// decides.
	GuardNone
)

func parseGuard(s string) (Guard, bool) {
	switch s {
	case "expanded":
		return GuardExpanded, true
	case "stat":
		return GuardStat, true
	case "none":
		return GuardNone, true
	}
	return 0, false
}

// String returns the spelling used in spec files: "expanded", "stat" or
// "none".
func (g Guard) String() string {
	switch g {
	case GuardExpanded:
		return "expanded"
	case GuardStat:
		return "stat"
	case GuardNone:
		return "none"
	}
	return fmt.Sprintf("Guard(%d)", int(g))
}

// Rule names the decision rule for printing beside verdicts, with the
// coverage factor k of the uncertainties (k ≤ 0 or NaN: not printed),
// e.g. "guarded acceptance and rejection, w = U (k = 2)".
func (g Guard) Rule(k float64) string {
	kk := ""
	if k > 0 && !math.IsInf(k, 0) {
		kk = fmt.Sprintf(" (k = %.3g)", k)
	}
	switch g {
	case GuardExpanded:
		return "guarded acceptance and rejection, w = U" + kk
	case GuardStat:
		return "guarded acceptance and rejection, w = k·u_stat" + kk + ", statistical uncertainty only"
	case GuardNone:
		return "simple acceptance, w = 0: the measured value alone decides"
	}
	return g.String()
}

// Verdict is the outcome of judging one value against one limit.
type Verdict int

const (
	// NoLimit: the spec has no limit on the quantity.
	NoLimit Verdict = iota
	// Pass: conforming, with the guard band inside the limits.
	Pass
	// Fail: not conforming, with the guard band wholly outside the limits.
	Fail
	// Indeterminate: the guard band straddles a limit (or the value or
	// its uncertainty is NaN): neither conformity nor non-conformity can
	// be stated under the rule.
	Indeterminate
)

// String returns "no limit", "pass", "fail" or "indeterminate".
func (v Verdict) String() string {
	switch v {
	case NoLimit:
		return "no limit"
	case Pass:
		return "pass"
	case Fail:
		return "fail"
	case Indeterminate:
		return "indeterminate"
	}
	return fmt.Sprintf("Verdict(%d)", int(v))
}

// Judge decides whether value, with guard-band half-width expandedU,
// conforms to the spec's limit on quantity q (NoLimit if there is none).
//
// For GuardExpanded pass U = k·u_c (results: eg_expanded_ev); for
// GuardStat pass k·u_stat; for GuardNone expandedU is ignored. For
// quantities without an uncertainty (chi2_reduced, points_used, the *_err
// fields, wafer statistics) pass 0: the decision is then on the value.
// The rule, with limits [lo, hi] closed (a value on a limit conforms):
//
//	guarded (w = U ≥ 0):
//	  pass           lo ≤ value − U  and  value + U ≤ hi
//	  fail           value + U < lo  or   value − U > hi
//	  indeterminate  otherwise (the interval [value − U, value + U] meets a limit)
//	none (w = 0):
//	  pass           lo ≤ value ≤ hi
//	  fail           otherwise
//
// This is guarded acceptance with guarded rejection, w = U, the non-binary
// decision rule of ILAC-G8:09/2019 ("Guidelines on Decision Rules and
// Statements of Conformity", ILAC, 2019), and the conformance / non-
// conformance zones of ISO 14253-1:2017 (Geometrical product specifications
// — Inspection by measurement — Part 1: Decision rules for verifying
// conformity or nonconformity with specifications), where an uncertainty
// range straddling a limit proves neither; GuardNone is ILAC-G8's simple
// acceptance (w = 0). See also JCGM 106:2012, Evaluation of measurement
// data — The role of measurement uncertainty in conformity assessment.
//
// A NaN value gives Indeterminate under every rule; so does, for the
// guarded rules, a NaN or negative expandedU, or value ± U undefined
// (±Inf ∓ Inf). Infinite values are compared as numbers. Comparisons are
// on the float64 results of value − U and value + U.
func (s *Spec) Judge(q string, value, expandedU float64) Verdict {
	l, ok := s.Limit(q)
	if !ok {
		return NoLimit
	}
	return judge(l, s.Guard, value, expandedU)
}

func judge(l Limit, g Guard, value, u float64) Verdict {
	if math.IsNaN(value) {
		return Indeterminate
	}
	if g == GuardNone {
		if l.Lo <= value && value <= l.Hi {
			return Pass
		}
		return Fail
	}
	if math.IsNaN(u) || u < 0 {
		return Indeterminate
	}
	a, b := value-u, value+u
	switch {
	case math.IsNaN(a) || math.IsNaN(b):
		return Indeterminate
	case l.Lo <= a && b <= l.Hi:
		return Pass
	case b < l.Lo || a > l.Hi:
		return Fail
	}
	return Indeterminate
}

// Worst returns the most adverse of the verdicts, in the order Fail,
// Indeterminate, Pass, NoLimit: a wafer or lot passes only if every scan
// and every wafer-level limit does. Worst() is NoLimit.
func Worst(vs ...Verdict) Verdict {
	rank := func(v Verdict) int {
		switch v {
		case Fail:
			return 3
		case Indeterminate:
			return 2
		case Pass:
			return 1
		}
		return 0
	}
	w := NoLimit
	for _, v := range vs {
		if rank(v) > rank(w) {
			w = v
		}
	}
	return w
}

// Stats are the wafer-level statistics of one scan-level quantity over the
// scans of a wafer.
type Stats struct {
	// Count is the number of finite values used; Skipped the number of NaN
	// or infinite values left out (failed fits, missing fields).
	Count, Skipped int
	// Mean, Min, Max and Range (= Max − Min) of the finite values.
	Mean, Min, Max, Range float64
	// StdDev is the sample standard deviation (n − 1 in the denominator;
	// NaN for fewer than two values).
	StdDev float64
	// Nonuniformity is (Max − Min)/(2·Mean), the half-range relative to
	// the mean (common practice for wafer maps); NaN if Mean is zero.
	Nonuniformity float64
}

// Rollup computes the wafer statistics of values, skipping non-finite
// ones. With no finite value every statistic but the counts is NaN. Mean
// and StdDev are gonum's stat.Mean and stat.StdDev (unweighted).
func Rollup(values []float64) Stats {
	var xs []float64
	st := Stats{}
	for _, v := range values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			st.Skipped++
			continue
		}
		xs = append(xs, v)
	}
	st.Count = len(xs)
	nan := math.NaN()
	if st.Count == 0 {
		st.Mean, st.Min, st.Max, st.Range, st.StdDev, st.Nonuniformity = nan, nan, nan, nan, nan, nan
		return st
	}
	st.Min, st.Max = xs[0], xs[0]
	for _, v := range xs {
		st.Min, st.Max = math.Min(st.Min, v), math.Max(st.Max, v)
	}
	st.Range = st.Max - st.Min
	st.Mean = stat.Mean(xs, nil)
	st.StdDev = nan
	if st.Count > 1 {
		st.StdDev = stat.StdDev(xs, nil)
	}
	st.Nonuniformity = nan
	if st.Mean != 0 {
		st.Nonuniformity = st.Range / (2 * st.Mean)
	}
	return st
}

// Value returns the statistic named stat ("count", "mean", "min", "max",
// "range", "stdev", "nonuniformity").
func (st Stats) Value(stat string) (float64, bool) {
	switch stat {
	case "count":
		return float64(st.Count), true
	case "mean":
		return st.Mean, true
	case "min":
		return st.Min, true
	case "max":
		return st.Max, true
	case "range":
		return st.Range, true
	case "stdev":
		return st.StdDev, true
	case "nonuniformity":
		return st.Nonuniformity, true
	}
	return math.NaN(), false
}

// Judgement is one limit applied to one value.
type Judgement struct {
	Limit   Limit
	Value   float64
	Verdict Verdict
}

// JudgeWafer applies every wafer-level limit of the spec
// ("wafer.<field>.<stat>") to the statistics of one wafer, given per
// scan-level field (stats["eg_ev"] = Rollup of the wafer's eg_ev values),
// in file order. The statistics carry no uncertainty here, so each is
// judged on its value (U = 0; under GuardNone the same). A limit on a field
// missing from stats is judged on NaN: Indeterminate.
func (s *Spec) JudgeWafer(stats map[string]Stats) []Judgement {
	var out []Judgement
	for _, l := range s.Limits {
		f, stName, ok := splitWafer(l.Quantity)
		if !ok {
			continue
		}
		v := math.NaN()
		if st, ok := stats[f]; ok {
			v, _ = st.Value(stName)
		}
		out = append(out, Judgement{Limit: l, Value: v, Verdict: judge(l, s.Guard, v, 0)})
	}
	return out
}

// splitWafer splits "wafer.<field>.<stat>".
func splitWafer(q string) (field, stat string, ok bool) {
	rest, ok := strings.CutPrefix(q, "wafer.")
	i := strings.LastIndexByte(rest, '.')
	if !ok || i < 0 {
		return "", "", false
	}
	return rest[:i], rest[i+1:], true
}
