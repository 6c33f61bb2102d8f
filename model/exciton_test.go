package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Tests of the excitonic edge (Elliott, Phys. Rev. 108, 1384, 1957) and its
// broadening (Katahara & Hillhouse 2014), in the scaled form of exciton.go:
// α = (C/E)·√γ·Y(z, ρ), z = (E − E_g)/γ, ρ = R_x/γ.

// excSourceRef is the Sommerfeld-enhanced continuum in units of γ,
// written from Elliott's formula 2π√(ρ/s)·√s/(1 − exp(−2π√(ρ/s))).
func excSourceRef(s, rho float64) float64 {
	x := 2 * math.Pi * math.Sqrt(rho/s)
	return x * math.Sqrt(s) / -math.Expm1(-x)
}

// excContRef returns the broadened continuum X(z, ρ) by quadrature.
func excContRef(z, rho, theta float64) float64 {
	K := func(u float64) float64 { return kernelRef(u, 1, theta) }
	var sum float64
	lo := 0.0
	if z > 0 {
		s, _ := tanhSinh(func(_, da, db float64) float64 { return K(db) * excSourceRef(da, rho) }, 0, z, 1e-15)
		sum += s
		lo = z
	}
	s, _ := expSinh(func(_, da float64) float64 { return K(lo-z+da) * excSourceRef(lo+da, rho) }, lo, 1, 1e-15)
	return sum + s
}

// excLinesRef sums the broadened lines n ≤ M = 20000 one by one and adds
// the rest as the smeared density 2π√ρ over [−ρ/(M+½)², 0] (midpoint
// rule; its error, ~(ρ/M³)² of a part that is itself below ρ/M² of the
// total, is far below 1e-12).
func excLinesRef(z, rho, theta float64) float64 {
	const M = 20000
	var s float64
	for n := M; n >= 1; n-- {
		fn := float64(n)
		s += 4 * math.Pi * rho * math.Sqrt(rho) / (fn * fn * fn) * kernelRef(z+rho/(fn*fn), 1, theta)
	}
	k := excKernel{theta}
	return s + 2*math.Pi*math.Sqrt(rho)*k.cdfDiff(z+rho/((M+0.5)*(M+0.5)), z)
}

// TestExcitonQuadrature compares Y = lines + continuum with the references
// above over ρ from 3e-7 (small-ρ expansion) through the table (1e-6 …
// 100) to 2000 (moment expansion), at z from below the n = 1 line to 200.
// Tolerance 2e-8 relative: the table is built to 1e-11 (Chebyshev tails),
// the small-ρ expansion is exact to O(ρ²) and the Euler–Maclaurin sum of
// the lines to its f⁽⁷⁾ remainder; measured worst 3.2e-9 (ρ = 0.5, z near
// 0, see t.Log).
func TestExcitonQuadrature(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: 20000-line reference sums")
	}
	for _, theta := range []float64{1, 2} {
		for _, rho := range []float64{3e-7, 1e-5, 0.01, 0.5, 3, 30, 99, 150, 2000} {
			var ev excEval
			var c excCaches
			ev.init(theta, rho)
			var worst float64
			for _, z := range []float64{-3*rho - 8, -rho - 3, -rho, -rho / 4, -rho / 9, -10, -3, -1, -0.3, -0.01, -1e-4, 0, 1e-4, 0.01, 0.3, 1, 3, 10, 30, 63, 65, 200} {
				if theta == 2 && z < -rho-6 {
					continue // below e^{−36} of the n = 1 line
				}
				want := excLinesRef(z, rho, theta) + excContRef(z, rho, theta)
				if want < 1e-300 {
					continue // underflow (far below the n = 1 line)
				}
				y, _, _ := ev.eval(z, false, &c)
				rel := math.Abs(y-want) / want
				if math.IsNaN(rel) {
					t.Errorf("θ=%g ρ=%g z=%g: Y = %v", theta, rho, z, y)
				}
				worst = math.Max(worst, rel)
				if rel > 2e-8 {
					t.Errorf("θ=%g ρ=%g z=%g: Y = %.15g, reference %.15g (rel %.3g)", theta, rho, z, y, want, rel)
				}
			}
			t.Logf("θ=%g ρ=%g: worst relative difference %.2g", theta, rho, worst)
		}
	}
}

// TestExcitonLimits checks Elliott's limits of the broadened edge.
func TestExcitonLimits(t *testing.T) {
	t.Run("continuum far above the gap", func(t *testing.T) {
		// S(ε)/√ε = 1 + π√(R/ε) + (π²/3)(R/ε) + O((R/ε)²) (the expansion of
		// x/(1−e^{−x}) = 1 + x/2 + x²/12 − …, x = 2π√(R/ε)): check the
		// first-order coefficient π to 1 % at ε = 1e4·R_x, with γ ≪ ε.
		for _, tail := range []string{"urbach", "gauss"} {
			m := mustNew(t, "exciton", tail, Config{})
			p := []float64{1.5, 2e4, 0.005, 0.002}
			eps := 1e4 * p[3] // 20 eV above the gap
			e := []float64{p[0] + eps}
			a := make([]float64, 1)
			m.Eval(a, e, p)
			ratio := a[0] * e[0] / (p[1] * math.Sqrt(eps))
			r := math.Sqrt(p[3] / eps)
			coef := (ratio - 1 - math.Pi*math.Pi/3*r*r) / r
			if !scalar.EqualWithinRel(coef, math.Pi, 0.01) {
				t.Errorf("%s: (αE/(C√ε) − 1)/√(R_x/ε) = %.6g, want π", tail, coef)
			}
		}
	})
	t.Run("Sommerfeld step at the gap", func(t *testing.T) {
		// With γ ≪ R_x the lines merge towards the gap into the density
		// 2π√R_x, which the continuum continues (Elliott 1957): near the
		// gap αE/C = 2π√R_x, up to the continuum's e^{−2π√(R/ε)} (nil
		// here) and the discreteness of the lines that are not yet merged
		// (spacing 2ρ/n³ ≳ 1 kernel width for n ≲ (2ρ)^{1/3}, at a few
		// widths' distance): their kernel tails, smeared wrongly by the
		// continuum picture, leave at most ~e^{−d}·δ²/12 for the Laplace
		// kernel (cusps) and e^{−d²}-small for the Gaussian. Measured at
		// ρ = 2000, z = −0.5, 0, +5: 2e-6 (urbach, at z = −0.5) and 3e-12
		// (gauss); tolerances 1e-5 and 1e-10.
		for _, tc := range []struct {
			tail string
			tol  float64
		}{{"urbach", 1e-5}, {"gauss", 1e-10}} {
			m := mustNew(t, "exciton", tc.tail, Config{})
			p := []float64{1.5, 2e4, 1e-4, 0.2} // ρ = 2000
			for _, dz := range []float64{-0.5, 0, 5} {
				e := []float64{p[0] + dz*p[2]}
				a := make([]float64, 1)
				m.Eval(a, e, p)
				got := a[0] * e[0] / p[1]
				want := 2 * math.Pi * math.Sqrt(p[3])
				if !scalar.EqualWithinRel(got, want, tc.tol) {
					t.Errorf("%s z=%g: αE/C = %.8g, want 2π√R_x = %.8g (rel %.2g)", tc.tail, dz, got, want, got/want-1)
				}
				t.Logf("%s z=%g: αE/(2πC√R_x) − 1 = %.2g", tc.tail, dz, got/want-1)
			}
		}
	})
	t.Run("line positions and strengths", func(t *testing.T) {
		// With γ ≪ R_x the n-th line is a kernel of area 4πR_x^{3/2}/n³ at
		// E_g − R_x/n². At its centre the Laplace kernel's peak 1/(2γ)
		// dominates: αE/C·(2γ)/(4πR_x^{3/2}/n³) → 1 up to the neighbours'
		// tails (e^{−(line spacing)/γ}): 1e-6 for n = 1, 2 at ρ = 500.
		m := mustNew(t, "exciton", "urbach", Config{})
		p := []float64{1.5, 2e4, 0.0002, 0.1}
		for _, n := range []float64{1, 2} {
			e := []float64{p[0] - p[3]/(n*n)}
			a := make([]float64, 1)
			m.Eval(a, e, p)
			got := a[0] * e[0] / p[1] * 2 * p[2] / (4 * math.Pi * math.Pow(p[3], 1.5) / (n * n * n))
			if !scalar.EqualWithinAbsOrRel(got, 1, 1e-6, 1e-6) {
				t.Errorf("line n=%g: peak/expected = %.9g, want 1", n, got)
			}
		}
	})
	t.Run("small R_x gives the direct edge", func(t *testing.T) {
		// ρ → 0: X → F_{1/2}, the broadened direct edge; the exciton
		// correction is [π√ρ·Kcdf + (π²ρ/3)F_{−1/2}]/F_{1/2} + O(ρ^{3/2})
		// (exctab.go) ≈ 3.5e-3 at ρ = 1e-6 — check it to 1e-3 of itself
		// against DirectUrbach (the neglected terms are ~1e-6 of it).
		m := mustNew(t, "exciton", "urbach", Config{})
		p := []float64{1.5, 2e4, 0.01, 1e-8}
		for _, z := range []float64{-3, 0, 3} {
			e := []float64{p[0] + z*p[2]}
			a, d := make([]float64, 1), make([]float64, 1)
			m.Eval(a, e, p)
			DirectUrbach{}.Eval(d, e, p[:3])
			f, df := UrbachEdgeF(z)
			k := excKernel{1}
			rho := p[3] / p[2]
			want := (math.Pi*math.Sqrt(rho)*k.cdf(z) + math.Pi*math.Pi*rho/3*2*df) / f
			if got := a[0]/d[0] - 1; !scalar.EqualWithinRel(got, want, 1e-3) {
				t.Errorf("z=%g: α/α_direct − 1 = %.6g, want π√ρ·Kcdf/F = %.6g", z, got, want)
			}
		}
	})
}

// TestExcitonConstants checks the constants of the small-ρ expansion:
// ζ(3) against its series Σ1/n³ (Euler–Maclaurin tail, exact to 1e-17),
// and the mass of the Langevin remainder −2ζ(3) (derived in exctab.go from
// coth y = 1/y + Σ 2y/(y² + k²π²)) against quadrature.
func TestExcitonConstants(t *testing.T) {
	const N = 1000
	var s float64
	for n := N; n >= 1; n-- {
		s += 1 / float64(n*n*n)
	}
	// Σ_{n>N} 1/n³ = 1/(2N²) − 1/(2N³) + 1/(4N⁴) − …
	fn := float64(N)
	s += 1/(2*fn*fn) - 1/(2*fn*fn*fn) + 1/(4*fn*fn*fn*fn)
	if !scalar.EqualWithinRel(s, zeta3, 1e-15) {
		t.Errorf("Σ1/n³ = %.17g, ζ(3) constant %.17g", s, zeta3)
	}
	rem := func(x float64) float64 { // L(π/√t) − π/(3√t), L(y) = coth y − 1/y
		y := math.Pi / math.Sqrt(x)
		if y < 1e-2 {
			return -y*y*y/45 + 2*math.Pow(y, 5)/945
		}
		return 1/math.Tanh(y) - 1/y - y/3
	}
	a, _ := tanhSinh(func(x, _, _ float64) float64 { return rem(x) }, 0, 1, 1e-15)
	b, _ := expSinh(func(x, _ float64) float64 { return rem(x) }, 1, 1, 1e-15)
	if got := a + b; !scalar.EqualWithinRel(got, -2*zeta3, 1e-7) {
		t.Errorf("∫(L − y/3)dt = %.12g, want −2ζ(3) = %.12g", got, -2*zeta3)
	}
}
