package optics

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestSlabRoundTrip inverts SlabTransmittance with SlabAlpha over a grid of
// αd in [1e-6, 30] and R in [0, 0.7]. Tolerance: 1e-12 relative in αd, or
// 1e-14 absolute: T ≈ 0.5 carries only ~1e-16 absolute information, so
// αd ≪ 1 cannot be recovered to better than ~1e-16 absolute (relative
// 1e-10 at αd = 1e-6) by any formula; the absolute term covers that and is
// still 100 times tighter than the information limit allows us to fail.
func TestSlabRoundTrip(t *testing.T) {
	const d = 0.05 // cm
	var worstRel, worstAbs float64
	for _, r := range []float64{0, 1e-9, 0.01, 0.04, 0.1, 0.3, 0.5, 0.7} {
		for k := 0; k <= 150; k++ {
			ad := 1e-6 * math.Pow(30/1e-6, float64(k)/150)
			tr := SlabTransmittance(ad/d, r, d)
			got, ok := SlabAlpha(tr, r, d)
			if !ok {
				t.Fatalf("R=%v αd=%v: ok=false for T=%v", r, ad, tr)
			}
			diff := math.Abs(got*d - ad)
			if diff > 1e-12*ad+1e-14 {
				t.Errorf("R=%v αd=%.6g: recovered %.17g", r, ad, got*d)
			}
			worstRel = math.Max(worstRel, diff/ad)
			worstAbs = math.Max(worstAbs, diff)
		}
	}
	t.Logf("worst relative %.3g, worst absolute %.3g in αd", worstRel, worstAbs)
}

// TestSlabNoReflection checks the limit R → 0 (Pankove 1971): at R = 0 the
// inversion is α = −ln T/d exactly (1e-15), and ∂α/∂R at R = 0 is −2/d
// (the derivative of ln(1 − R)² in α = (1/d) ln[(1 − R)²/T]), so
// (α(R) − α(0))·d/R → −2; checked to 1e-3 at R ≤ 1e-4, where the next term
// is O(R).
func TestSlabNoReflection(t *testing.T) {
	const d = 0.1
	for _, tr := range []float64{1e-12, 1e-4, 0.01, 0.3, 0.9, 1} {
		a0, _ := SlabAlpha(tr, 0, d)
		if want := -math.Log(tr) / d; !scalar.EqualWithinAbsOrRel(a0, want, 1e-15, 1e-15) {
			t.Errorf("T=%v R=0: α = %.17g, want −ln T/d = %.17g", tr, a0, want)
		}
		for _, r := range []float64{1e-4, 1e-6} {
			a, _ := SlabAlpha(tr, r, d)
			if slope := (a - a0) * d / r; !scalar.EqualWithinAbs(slope, -2, 1e-3) {
				t.Errorf("T=%v R=%v: (α(R)−α(0))·d/R = %.6g, want → −2", tr, r, slope)
			}
		}
	}
}

// TestSlabThickApproximation checks the common approximation
// α ≈ (1/d)·ln[(1 − R)²/T] for αd ≫ 1 (PHYSICS.md 2; Pankove 1971): the
// exact difference is ln(1 − R²x²)/d ≈ R²x²/d, below 1e-9 relative for
// αd ≥ 10.
func TestSlabThickApproximation(t *testing.T) {
	const d = 0.05
	for _, r := range []float64{0.1, 0.3, 0.6} {
		for _, ad := range []float64{10, 15, 25} {
			tr := SlabTransmittance(ad/d, r, d)
			got, _ := SlabAlpha(tr, r, d)
			approx := math.Log((1-r)*(1-r)/tr) / d
			if !scalar.EqualWithinRel(got, approx, 1e-9) {
				t.Errorf("R=%v αd=%v: exact %.12g, thick-slab approximation %.12g", r, ad, got, approx)
			}
		}
	}
}

// TestSlabAlphaGrad compares ∂α/∂T and ∂α/∂R with central differences of
// relative step 1e-6 (truncation ~1e-12, rounding ~1e-10 relative here):
// tolerance 1e-7 relative, 1e-9 cm⁻¹ absolute.
func TestSlabAlphaGrad(t *testing.T) {
	const d = 0.07
	for _, r := range []float64{0, 0.04, 0.3, 0.65} {
		for _, tr := range []float64{1e-6, 1e-3, 0.05, 0.3, 0.5, 0.6, 0.95} {
			a, dT, dR, ok := SlabAlphaGrad(tr, r, d)
			a1, _ := SlabAlpha(tr, r, d)
			if !ok || a != a1 {
				t.Fatalf("T=%v R=%v: SlabAlphaGrad α = %v (ok %v), SlabAlpha %v", tr, r, a, ok, a1)
			}
			h := 1e-6 * tr
			ap, _ := SlabAlpha(tr+h, r, d)
			am, _ := SlabAlpha(tr-h, r, d)
			if fd := (ap - am) / (2 * h); !scalar.EqualWithinAbsOrRel(dT, fd, 1e-9, 1e-7) {
				t.Errorf("T=%v R=%v: ∂α/∂T = %.10g, fd %.10g", tr, r, dT, fd)
			}
			const hr = 1e-6
			rp, _ := SlabAlpha(tr, r+hr, d)
			var fdr float64
			if r >= hr {
				rm, _ := SlabAlpha(tr, r-hr, d)
				fdr = (rp - rm) / (2 * hr)
			} else { // R = 0 is the domain edge: second-order forward difference
				r2, _ := SlabAlpha(tr, r+2*hr, d)
				fdr = (-3*a + 4*rp - r2) / (2 * hr)
			}
			if !scalar.EqualWithinAbsOrRel(dR, fdr, 1e-6, 1e-6) {
				t.Errorf("T=%v R=%v: ∂α/∂R = %.10g, fd %.10g", tr, r, dR, fdr)
			}
		}
	}
}

// TestSlabDomain checks the documented domain of SlabAlpha and
// SlabTransmittance.
func TestSlabDomain(t *testing.T) {
	inf, nan := math.Inf(1), math.NaN()
	bad := []struct{ t, r, d float64 }{
		{0, 0.3, 0.1}, {-0.01, 0.3, 0.1}, {nan, 0.3, 0.1}, {inf, 0.3, 0.1},
		{0.5, -0.1, 0.1}, {0.5, 1, 0.1}, {0.5, nan, 0.1},
		{0.5, 0.3, 0}, {0.5, 0.3, -1}, {0.5, 0.3, nan}, {0.5, 0.3, inf},
	}
	for _, c := range bad {
		if a, ok := SlabAlpha(c.t, c.r, c.d); ok || !math.IsNaN(a) {
			t.Errorf("SlabAlpha(%v, %v, %v) = %v, %v; want NaN, false", c.t, c.r, c.d, a, ok)
		}
		if _, dT, dR, ok := SlabAlphaGrad(c.t, c.r, c.d); ok || !math.IsNaN(dT) || !math.IsNaN(dR) {
			t.Errorf("SlabAlphaGrad(%v, %v, %v): want NaN, false", c.t, c.r, c.d)
		}
	}
	// Above the slab maximum (1 − R)/(1 + R) = 0.538 for R = 0.3: kept as
	// data with α < 0, and still the inverse of the forward formula.
	const r, d = 0.3, 0.05
	for _, tr := range []float64{0.54, 0.6, 1.0, 1.05} {
		a, ok := SlabAlpha(tr, r, d)
		if !ok || !(a < 0) {
			t.Errorf("T=%v above the maximum: α = %v ok = %v, want a negative α", tr, a, ok)
			continue
		}
		if back := SlabTransmittance(a, r, d); !scalar.EqualWithinRel(back, tr, 1e-13) {
			t.Errorf("T=%v: forward of the inverse gives %.17g", tr, back)
		}
	}
	if v := SlabTransmittance(-1e4, 0.3, 0.05); !math.IsNaN(v) { // R·x ≥ 1
		t.Errorf("SlabTransmittance with R·x ≥ 1 = %v, want NaN", v)
	}
	if v := SlabTransmittance(1, 0.3, 0); !math.IsNaN(v) {
		t.Errorf("SlabTransmittance with d = 0 = %v, want NaN", v)
	}
}

// TestSlabTransmittanceGrad compares dT/dα with central differences of
// SlabTransmittance of step h = 1e-5/d in α (truncation ~1e-10 relative,
// rounding ~1e-11): tolerance 1e-7 relative, 1e-13 cm absolute (where T
// itself underflows towards zero). The value must equal SlabTransmittance
// exactly, and the domain is the same (NaN at R·x ≥ 1, d ≤ 0).
func TestSlabTransmittanceGrad(t *testing.T) {
	const d = 2e-4
	for _, r := range []float64{0, 0.04, 0.32, 0.65} {
		for _, ad := range []float64{-0.2, 0, 1e-4, 0.01, 0.5, 2, 8, 20} {
			a := ad / d
			tr, g := SlabTransmittanceGrad(a, r, d)
			if want := SlabTransmittance(a, r, d); tr != want {
				t.Fatalf("R=%v αd=%v: T = %v, SlabTransmittance %v", r, ad, tr, want)
			}
			h := 1e-5 / d
			fd := (SlabTransmittance(a+h, r, d) - SlabTransmittance(a-h, r, d)) / (2 * h)
			if !scalar.EqualWithinAbsOrRel(g, fd, 1e-13, 1e-7) {
				t.Errorf("R=%v αd=%v: dT/dα = %.10g, fd %.10g", r, ad, g, fd)
			}
		}
	}
	for _, c := range []struct{ a, r, d float64 }{{-1e4, 0.3, 0.05}, {1, 0.3, 0}, {1, 1, 0.1}, {math.NaN(), 0.3, 0.1}} {
		if tr, g := SlabTransmittanceGrad(c.a, c.r, c.d); !math.IsNaN(tr) || !math.IsNaN(g) {
			t.Errorf("SlabTransmittanceGrad(%v, %v, %v) = %v, %v; want NaN", c.a, c.r, c.d, tr, g)
		}
	}
}
