package sheet

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// The decision rule under test is the one stated on Spec.Judge: guarded
// acceptance and guarded rejection with w = U (ILAC-G8:09/2019; ISO
// 14253-1:2017 conformance and non-conformance zones), limits closed.
// Boundary values are binary fractions (exact in float64), so that the
// cases test the rule, not rounding in value ± U.
func TestJudge(t *testing.T) {
	inf := math.Inf(1)
	nan := math.NaN()
	two := &Spec{Guard: GuardExpanded, Limits: []Limit{{Quantity: "eg_ev", Lo: 1.25, Hi: 1.75}}}
	upper := &Spec{Guard: GuardExpanded, Limits: []Limit{{Quantity: "urbach_ev", Lo: -inf, Hi: 0.25}}}
	lower := &Spec{Guard: GuardExpanded, Limits: []Limit{{Quantity: "points_used", Lo: 50, Hi: inf}}}
	none := &Spec{Guard: GuardNone, Limits: two.Limits}
	stat := &Spec{Guard: GuardStat, Limits: two.Limits}
	for _, tc := range []struct {
		name     string
		spec     *Spec
		q        string
		value, u float64
		want     Verdict
	}{
		// Two-sided [1.25, 1.75], U = 0.125.
		{"inside", two, "eg_ev", 1.5, 0.125, Pass},
		{"inside/band-touches-lo", two, "eg_ev", 1.375, 0.125, Pass}, // value − U = lo: closed limit, conforming
		{"inside/band-touches-hi", two, "eg_ev", 1.625, 0.125, Pass},
		{"inside/band-straddles-lo", two, "eg_ev", 1.3125, 0.125, Indeterminate},
		{"on-lo", two, "eg_ev", 1.25, 0.125, Indeterminate},
		{"outside/band-touches-lo", two, "eg_ev", 1.125, 0.125, Indeterminate}, // value + U = lo: not wholly outside
		{"outside/band-straddles-hi", two, "eg_ev", 1.8125, 0.125, Indeterminate},
		{"outside-lo", two, "eg_ev", 1.0, 0.125, Fail},
		{"outside-hi", two, "eg_ev", 2.0, 0.125, Fail},
		{"band-wider-than-tolerance", two, "eg_ev", 1.5, 0.5, Indeterminate}, // 2U > hi − lo: no pass possible
		{"band-covers-both", two, "eg_ev", 3, 2, Indeterminate},
		{"U-zero/on-lo", two, "eg_ev", 1.25, 0, Pass},
		{"U-zero/just-below", two, "eg_ev", math.Nextafter(1.25, 0), 0, Fail},
		{"U-infinite", two, "eg_ev", 1.5, inf, Indeterminate},
		{"U-NaN", two, "eg_ev", 1.5, nan, Indeterminate},
		{"U-negative", two, "eg_ev", 1.5, -0.125, Indeterminate},
		{"value-NaN", two, "eg_ev", nan, 0.125, Indeterminate},
		{"value-inf", two, "eg_ev", inf, 0, Fail},
		{"value-inf/U-inf", two, "eg_ev", inf, inf, Indeterminate}, // Inf − Inf is NaN
		{"no-limit", two, "urbach_ev", 1, 0, NoLimit},
		// One-sided: upper only (.. 0.25) and lower only (50 ..).
		{"upper/inside", upper, "urbach_ev", 0.125, 0.0625, Pass},
		{"upper/band-touches", upper, "urbach_ev", 0.1875, 0.0625, Pass},
		{"upper/very-low", upper, "urbach_ev", -1e300, 1, Pass},
		{"upper/on-limit", upper, "urbach_ev", 0.25, 0.0625, Indeterminate},
		{"upper/outside", upper, "urbach_ev", 0.5, 0.125, Fail},
		{"lower/inside", lower, "points_used", 80, 0, Pass},
		{"lower/on-limit", lower, "points_used", 50, 0, Pass},
		{"lower/below", lower, "points_used", 49, 0, Fail},
		{"lower/straddles", lower, "points_used", 51, 2, Indeterminate},
		// Simple acceptance: the value alone; U ignored, even NaN.
		{"none/inside", none, "eg_ev", 1.5, 10, Pass},
		{"none/on-lo", none, "eg_ev", 1.25, nan, Pass},
		{"none/on-hi", none, "eg_ev", 1.75, 0.5, Pass},
		{"none/just-above", none, "eg_ev", math.Nextafter(1.75, 2), 0, Fail},
		{"none/outside", none, "eg_ev", 1.0, 0, Fail},
		{"none/NaN", none, "eg_ev", nan, 0, Indeterminate},
		// GuardStat applies the same rule to the w the caller passes.
		{"stat/inside", stat, "eg_ev", 1.5, 0.125, Pass},
		{"stat/straddles", stat, "eg_ev", 1.3125, 0.125, Indeterminate},
		{"stat/outside", stat, "eg_ev", 1.0, 0.125, Fail},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if got := tc.spec.Judge(tc.q, tc.value, tc.u); got != tc.want {
				t.Errorf("Judge(%q, %g, %g) under %v = %v, want %v", tc.q, tc.value, tc.u, tc.spec.Guard, got, tc.want)
			}
		})
	}
}

// TestJudgeProperties checks, on random values, what the rule implies:
// with U = 0 the guarded rule is simple acceptance; a larger U never turns
// a non-pass into a pass or a non-fail into a fail; a pass under w = U is a
// pass under w = 0 and a fail under w = U is a fail under w = 0. Seed 7.
func TestJudgeProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	lim := []Limit{{Quantity: "eg_ev", Lo: 1.4, Hi: 1.45}}
	g := &Spec{Guard: GuardExpanded, Limits: lim}
	n := &Spec{Guard: GuardNone, Limits: lim}
	for range 100000 {
		v := 1.3 + 0.25*rng.Float64()
		u1 := 0.05 * rng.Float64()
		u2 := u1 + 0.05*rng.Float64()
		simple := n.Judge("eg_ev", v, 0)
		if got := g.Judge("eg_ev", v, 0); got != simple {
			t.Fatalf("v %g: U = 0 gives %v, simple acceptance %v", v, got, simple)
		}
		a, b := g.Judge("eg_ev", v, u1), g.Judge("eg_ev", v, u2)
		if (b == Pass && a != Pass) || (b == Fail && a != Fail) {
			t.Fatalf("v %g: U %g gives %v but larger U %g gives %v", v, u1, a, u2, b)
		}
		if (a == Pass && simple != Pass) || (a == Fail && simple != Fail) {
			t.Fatalf("v %g: U %g gives %v, simple acceptance %v", v, u1, a, simple)
		}
	}
}

func TestVerdictGuardStrings(t *testing.T) {
	for v, want := range map[Verdict]string{NoLimit: "no limit", Pass: "pass", Fail: "fail", Indeterminate: "indeterminate", 9: "Verdict(9)"} {
		if got := v.String(); got != want {
			t.Errorf("Verdict(%d).String() = %q, want %q", int(v), got, want)
		}
	}
	for _, tc := range []struct {
		g          Guard
		k          float64
		name, rule string
	}{
		{GuardExpanded, 2, "expanded", "guarded acceptance and rejection, w = U (k = 2)"},
		{GuardExpanded, 0, "expanded", "guarded acceptance and rejection, w = U"},
		{GuardStat, 2.5, "stat", "guarded acceptance and rejection, w = k·u_stat (k = 2.5), statistical uncertainty only"},
		{GuardNone, 2, "none", "simple acceptance, w = 0: the measured value alone decides"},
		{Guard(7), 2, "Guard(7)", "Guard(7)"},
	} {
		if got := tc.g.String(); got != tc.name {
			t.Errorf("String() = %q, want %q", got, tc.name)
		}
		if got := tc.g.Rule(tc.k); got != tc.rule {
			t.Errorf("Rule(%g) = %q, want %q", tc.k, got, tc.rule)
		}
	}
}

func TestWorst(t *testing.T) {
	for _, tc := range []struct {
		in   []Verdict
		want Verdict
	}{
		{nil, NoLimit},
		{[]Verdict{Pass, NoLimit, Pass}, Pass},
		{[]Verdict{Pass, Indeterminate, Pass}, Indeterminate},
		{[]Verdict{Indeterminate, Fail, Pass}, Fail},
		{[]Verdict{NoLimit}, NoLimit},
	} {
		if got := Worst(tc.in...); got != tc.want {
			t.Errorf("Worst(%v) = %v, want %v", tc.in, got, tc.want)
		}
	}
}

// TestRollup: statistics worked by hand. Values 1.420, 1.424, 1.428 eV:
// mean 1.424, range 0.008, sample standard deviation
// sqrt((0.004² + 0 + 0.004²)/2) = 0.004, non-uniformity 0.008/(2·1.424).
// Tolerance 1e-12 relative: a few roundings of three-term sums.
func TestRollup(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	st := Rollup([]float64{1.424, nan, 1.420, 1.428, inf})
	want := Stats{Count: 3, Skipped: 2, Mean: 1.424, Min: 1.420, Max: 1.428, Range: 0.008, StdDev: 0.004, Nonuniformity: 0.008 / (2 * 1.424)}
	if st.Count != want.Count || st.Skipped != want.Skipped {
		t.Fatalf("Count %d Skipped %d, want %d %d", st.Count, st.Skipped, want.Count, want.Skipped)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"mean", st.Mean, want.Mean}, {"min", st.Min, want.Min}, {"max", st.Max, want.Max}, {"range", st.Range, want.Range},
		{"stdev", st.StdDev, want.StdDev}, {"nonuniformity", st.Nonuniformity, want.Nonuniformity},
	} {
		if !scalar.EqualWithinAbsOrRel(c.got, c.want, 0, 1e-12) {
			t.Errorf("%s = %.15g, want %.15g", c.name, c.got, c.want)
		}
		if v, ok := st.Value(c.name); !ok || v != c.got {
			t.Errorf("Value(%q) = %g, %v", c.name, v, ok)
		}
	}
	if v, ok := st.Value("count"); !ok || v != 3 {
		t.Errorf("Value(count) = %g, %v", v, ok)
	}
	if _, ok := st.Value("median"); ok {
		t.Error("Value(median) ok")
	}
	one := Rollup([]float64{2})
	if one.Count != 1 || one.Mean != 2 || one.Range != 0 || !math.IsNaN(one.StdDev) || one.Nonuniformity != 0 {
		t.Errorf("one value: %+v", one)
	}
	empty := Rollup([]float64{nan})
	if empty.Count != 0 || empty.Skipped != 1 || !math.IsNaN(empty.Mean) || !math.IsNaN(empty.Nonuniformity) {
		t.Errorf("no finite value: %+v", empty)
	}
	zero := Rollup([]float64{-1, 1})
	if !math.IsNaN(zero.Nonuniformity) {
		t.Errorf("mean 0: nonuniformity %g, want NaN", zero.Nonuniformity)
	}
}

func TestJudgeWafer(t *testing.T) {
	inf := math.Inf(1)
	sp := &Spec{Guard: GuardExpanded, Limits: []Limit{
		{Quantity: "eg_ev", Lo: 1.415, Hi: 1.435},
		{Quantity: "wafer.eg_ev.nonuniformity", Lo: -inf, Hi: 0.004},
		{Quantity: "wafer.eg_ev.count", Lo: 5, Hi: inf},
		{Quantity: "wafer.urbach_ev.max", Lo: -inf, Hi: 0.012},
	}}
	stats := map[string]Stats{"eg_ev": Rollup([]float64{1.420, 1.424, 1.428})}
	got := sp.JudgeWafer(stats)
	want := []struct {
		q string
		v Verdict
	}{
		{"wafer.eg_ev.nonuniformity", Pass}, // 0.00281 ≤ 0.004
		{"wafer.eg_ev.count", Fail},         // 3 < 5
		{"wafer.urbach_ev.max", Indeterminate},
	}
	if len(got) != len(want) {
		t.Fatalf("%d judgements, want %d: %+v", len(got), len(want), got)
	}
	for i, w := range want {
		if got[i].Limit.Quantity != w.q || got[i].Verdict != w.v {
			t.Errorf("judgement %d: %s %v (value %g), want %s %v", i, got[i].Limit.Quantity, got[i].Verdict, got[i].Value, w.q, w.v)
		}
	}
	if w := Worst(func() []Verdict {
		var vs []Verdict
		for _, j := range got {
			vs = append(vs, j.Verdict)
		}
		return vs
	}()...); w != Fail {
		t.Errorf("worst %v, want fail", w)
	}
}

func ExampleSpec_Judge() {
	sp := &Spec{Guard: GuardExpanded, Limits: []Limit{{Quantity: "eg_ev", Lo: 1.415, Hi: 1.435}}}
	for _, r := range []struct{ eg, U float64 }{{1.425, 0.004}, {1.417, 0.004}, {1.409, 0.004}} {
		fmt.Printf("eg_ev %.3f ± %.3f: %v\n", r.eg, r.U, sp.Judge("eg_ev", r.eg, r.U))
	}
	fmt.Println(sp.Guard.Rule(2))
	// Output:
	// eg_ev 1.425 ± 0.004: pass
	// eg_ev 1.417 ± 0.004: indeterminate
	// eg_ev 1.409 ± 0.004: fail
	// guarded acceptance and rejection, w = U (k = 2)
}
