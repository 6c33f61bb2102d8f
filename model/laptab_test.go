package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/model/specfun"
)

// TestLapTableAccuracy compares the θ = 1 tables (lapTab) with the closed
// forms they are built from (Katahara & Hillhouse 2014, θ = 1; derived at
// UrbachEdgeF and lapF32): F_{1/2}, F_{1/2}' and F_{3/2} at 200001 points
// of (0, 50). The closed forms are accurate to ~1e-14 (specfun's D and
// erfcx, checked against 60-digit references); the interpolation error
// bound h⁶/46080·max|f⁽⁶⁾| with h = 1/48 is ~2e-13. Tolerance 5e-13.
func TestLapTableAccuracy(t *testing.T) {
	tab := lapTable()
	var w12, wd, w32 float64
	for i := 1; i <= 200001; i++ {
		z := 50 * float64(i) / 200002
		y := math.Sqrt(z)
		f, df := directF(y)
		dw, ex := specfun.Dawson(y), specfun.Erfcx(y)
		f32 := z*y + 0.75*dw + 1.5*quarterSqrtPi*ex
		g, dg := tab.half(z)
		g32, g12 := tab.threeHalves(z)
		w12 = math.Max(w12, math.Abs(g/f-1))
		w12 = math.Max(w12, math.Abs(g12/f-1))
		wd = math.Max(wd, math.Abs(dg/df-1))
		w32 = math.Max(w32, math.Abs(g32/f32-1))
	}
	for _, c := range []struct {
		name  string
		worst float64
	}{{"F_{1/2}", w12}, {"F_{1/2}'", wd}, {"F_{3/2}", w32}} {
		if c.worst > 5e-13 {
			t.Errorf("%s: table vs closed form %.3g, want ≤ 5e-13", c.name, c.worst)
		}
		t.Logf("%s: worst relative difference %.2g", c.name, c.worst)
	}
}

// TestQuinticHermite checks the interpolation formula: a quintic is
// reproduced exactly (to rounding) from its values and first two
// derivatives at the ends of an interval.
func TestQuinticHermite(t *testing.T) {
	p := func(x float64) (f, d, s float64) {
		c := []float64{0.3, -1.2, 0.7, 2.1, -0.4, 0.9}
		for i := len(c) - 1; i >= 0; i-- {
			s = s*x + 2*d
			d = d*x + f
			f = f*x + c[i]
		}
		return f, d, s
	}
	const x0, h = 0.7, 0.37
	f0, d0, s0 := p(x0)
	f1, d1, s1 := p(x0 + h)
	c := quinticHermite(f0, d0, s0, f1, d1, s1, h)
	for _, u := range []float64{0, 0.13, 0.5, 0.77, 1} {
		want, _, _ := p(x0 + u*h)
		if got := horner6(&c, u); !scalar.EqualWithinAbsOrRel(got, want, 1e-14, 1e-14) {
			t.Errorf("u=%v: %.17g, want %.17g", u, got, want)
		}
	}
}

// TestLapF32 checks F_{3/2} at its branch points: continuity of F, F' and
// h at z = 0 (both 3√π/8 for F and F') and at the start of the asymptotic
// series, z = 50 (the tables' end: 1e-12, the asymptotic branch being
// exact to 1e-17 there and the table to 3e-13), and F_{3/2}' = (3/2)F_{1/2}.
func TestLapF32(t *testing.T) {
	f0, d0, _ := lapF32(0)
	fp, dp, _ := lapF32(1e-300)
	q := 3 * sqrtPi / 8
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"F(0)", f0, q}, {"F'(0)", d0, q}, {"F(0+)", fp, q}, {"F'(0+)", dp, q}} {
		if !scalar.EqualWithinRel(c.got, c.want, 1e-14) {
			t.Errorf("%s = %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
	fa, da, ha := lapF32(math.Nextafter(urbachAsymZ, 0))
	fb, db, hb := lapF32(urbachAsymZ)
	for _, c := range []struct {
		name string
		a, b float64
		tol  float64
	}{{"F", fa, fb, 1e-12}, {"F'", da, db, 1e-12}, {"h", ha, hb, 1e-9}} { // h cancels ~z² digits
		if !scalar.EqualWithinRel(c.a, c.b, c.tol) {
			t.Errorf("%s jumps at z=50: %.17g vs %.17g", c.name, c.a, c.b)
		}
	}
	for _, z := range []float64{-3, 0.5, 7, 49, 80} {
		_, d, _ := lapF32(z)
		f12, _ := UrbachEdgeF(z)
		if !scalar.EqualWithinRel(d, 1.5*f12, 1e-12) {
			t.Errorf("z=%v: F_{3/2}' = %.15g, (3/2)F_{1/2} = %.15g", z, d, 1.5*f12)
		}
	}
}
