package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// Limits and special cases of the family (see Edge for the formulas).

func eval1(m Model, e float64, p []float64) float64 {
	a := make([]float64, 1)
	m.Eval(a, []float64{e}, p)
	return a[0]
}

// TestNarrowTailLimit checks that a convolution tail of width γ → 0 gives
// the unbroadened band: for a power law ε^r the relative difference is
// C(r,2)·μ₂·(γ/ε)² + O(γ⁴) with the kernel's second moment μ₂ (1/2 for
// exp(−u²)/√π, Γ(3/θ)/Γ(1/θ) in general, 2 for θ = 1): from the
// asymptotic series of powtab.go, whose next term is O((γ/ε)²) of this
// one, below 1e-3 of it at γ/ε ≤ 1e-2. Checked to 1 %.
func TestNarrowTailLimit(t *testing.T) {
	cfg := Config{Temperature: 300}
	tests := []struct {
		band, tail string
		r          float64
		extra      []float64 // θ for theta
		mu2        float64
	}{
		{"direct", "gauss", 0.5, nil, 0.5},
		{"direct", "theta", 0.5, []float64{1.3}, math.Gamma(3/1.3) / math.Gamma(1/1.3)},
		{"direct-forbidden", "urbach", 1.5, nil, 2},
		{"direct-forbidden", "gauss", 1.5, nil, 0.5},
		{"direct-forbidden", "theta", 1.5, []float64{2.4}, math.Gamma(3/2.4) / math.Gamma(1/2.4)},
	}
	const eg, c = 1.4, 3e4
	for _, tc := range tests {
		m := mustNew(t, tc.band, tc.tail, cfg)
		bare := mustNew(t, tc.band, "none", cfg)
		for _, de := range []float64{0.05, 0.2} {
			for _, g := range []float64{5e-4, 2e-4} {
				p := append([]float64{eg, c, g}, tc.extra...)
				e := eg + de
				rel := eval1(m, e, p)/eval1(bare, e, []float64{eg, c}) - 1
				want := tc.r * (tc.r - 1) / 2 * tc.mu2 * (g / de) * (g / de)
				if !scalar.EqualWithinRel(rel, want, 0.01) {
					t.Errorf("%s ε=%v γ=%v: relative difference %.5g, want %.5g", m.Name(), de, g, rel, want)
				}
			}
		}
	}
	// Indirect: each branch x² broadens to x² + μ₂γ² exactly (for x ≫ γ):
	// α − α₀ = A·μ₂γ²·(2n + 1) above both thresholds.
	for _, tc := range []struct {
		tail string
		mu2  float64
	}{{"urbach", 2}, {"gauss", 0.5}} {
		m := mustNew(t, "indirect", tc.tail, cfg)
		bare := mustNew(t, "indirect", "none", cfg)
		p := []float64{1.1, 1e3, 0.002, 0.03}
		e := 1.3
		n := 1 / math.Expm1(p[3]/(Boltzmann*300))
		got := eval1(m, e, p) - eval1(bare, e, []float64{p[0], p[1], p[3]})
		want := p[1] * tc.mu2 * p[2] * p[2] * (2*n + 1)
		if !scalar.EqualWithinRel(got, want, 1e-6) {
			t.Errorf("indirect+%s: α − α₀ = %.8g, want A·μ₂γ²(2n+1) = %.8g", tc.tail, got, want)
		}
	}
}

// TestGaussianTail checks that the Gaussian-broadened edge falls like a
// Gaussian far below the gap: with K = exp(−u²)/√π and w = (E_g − E)/γ,
// Laplace's method on F_r(−w) = ∫_0^∞ K(w+s) s^r ds gives
//
//	F_r(−w) = e^{−w²} Γ(r+1) / (√π (2w)^{r+1}) · (1 − (r+1)_2/(4w²) + (r+1)_4/(32w⁴) − …)
//
// ((x)_k the rising factorial; from e^{−s²} = 1 − s² + s⁴/2 − …), so
// (ratio − 1)·4w² must approach −(r+1)(r+2) + (r+1)_4/(8w²): checked to
// 1e-3 at w = 12 and 24 (the next term is below 2e-4 of it there).
func TestGaussianTail(t *testing.T) {
	for _, tc := range []struct {
		band string
		r    float64
	}{{"direct", 0.5}, {"direct-forbidden", 1.5}} {
		m := mustNew(t, tc.band, "gauss", Config{})
		const eg, c, g = 2.0, 1e4, 0.02
		for _, w := range []float64{12, 24} {
			e := eg - w*g
			a := eval1(m, e, []float64{eg, c, g})
			lead := c / e * math.Pow(g, tc.r) * math.Exp(-w*w) * math.Gamma(tc.r+1) / (sqrtPi * math.Pow(2*w, tc.r+1))
			coef := (a/lead - 1) * 4 * w * w
			r := tc.r
			want := -(r+1)*(r+2) + (r+1)*(r+2)*(r+3)*(r+4)/(8*w*w)
			if !scalar.EqualWithinRel(coef, want, 1e-3) {
				t.Errorf("%s w=%v: (α/leading − 1)·4w² = %.5g, want %.5g", tc.band, w, coef, want)
			}
		}
		// and the local decay length at one width below the gap is γ/2,
		// the TailWidth of the Gaussian tail (to the prefactor's slope)
		if tw := m.(Tailed).TailWidth([]float64{eg, c, g}); tw != g/2 {
			t.Errorf("%s: TailWidth = %v, want γ/2 = %v", tc.band, tw, g/2)
		}
	}
}

// TestThetaSpecialCases checks that the free-θ kernel at θ = 1 and θ = 2
// reproduces the dedicated models (exponential: closed forms; Gaussian:
// its own table). Tolerance 1e-9 relative, as TestFamilyQuadrature for the
// free-θ table (measured there 1.2e-10, here below 1e-10).
func TestThetaSpecialCases(t *testing.T) {
	cfg := Config{Temperature: 250}
	for _, band := range []string{"direct", "direct-forbidden", "indirect"} {
		th := mustNew(t, band, "theta", cfg)
		for _, tc := range []struct {
			tail  string
			theta float64
		}{{"urbach", 1}, {"gauss", 2}} {
			ref := mustNew(t, band, tc.tail, cfg)
			var worst float64
			for z := -25.0; z < 60; z += 0.377 {
				p := []float64{1.2, 1e4, 0.015}
				pt := []float64{1.2, 1e4, 0.015, tc.theta}
				if band == "indirect" {
					p = append(p, 0.025)
					pt = append(pt, 0.025)
				}
				e := 1.2 + z*0.015
				want := eval1(ref, e, p)
				if want < 1e-250 {
					continue
				}
				rel := math.Abs(eval1(th, e, pt)/want - 1)
				worst = math.Max(worst, rel)
				if rel > 1e-9 {
					t.Errorf("%s θ=%v z=%.3g: theta %.15g, %s %.15g", band, tc.theta, z, eval1(th, e, pt), tc.tail, want)
				}
			}
			t.Logf("%s+theta at θ=%v vs %s: worst relative difference %.2g", band, tc.theta, tc.tail, worst)
		}
	}
}

// TestJoinedTail checks the joining condition: value and slope of α are
// continuous at E_j, the tail is exactly exponential with slope 1/E_U
// below it, and the band is untouched above it. One-sided differences of
// step h = 1e-7 eV: truncation h·α”/α' ≈ 1e-5 relative; tolerance 1e-4.
func TestJoinedTail(t *testing.T) {
	cfg := Config{Temperature: 300}
	for _, tc := range []struct {
		band string
		r    float64
	}{{"direct", 0.5}, {"direct-forbidden", 1.5}} {
		m := mustNew(t, tc.band, "joined", cfg)
		bare := mustNew(t, tc.band, "none", cfg)
		for _, eu := range []float64{0.005, 0.03, 0.2} {
			p := []float64{1.5, 2e4, eu}
			ej := p[0] + joinEps(tc.r, p[0], eu)
			const h = 1e-7
			lo, at, hi := eval1(m, ej-h, p), eval1(m, ej, p), eval1(m, ej+h, p)
			band := eval1(bare, ej, p[:2])
			if !scalar.EqualWithinRel(at, band, 1e-14) {
				t.Errorf("%s E_U=%v: α(E_j) = %.15g, band %.15g", tc.band, eu, at, band)
			}
			sl, sr := (at-lo)/h, (hi-at)/h
			if !scalar.EqualWithinRel(sl, sr, 1e-4) {
				t.Errorf("%s E_U=%v: slope below E_j %.10g, above %.10g", tc.band, eu, sl, sr)
			}
			if !scalar.EqualWithinRel(sl/at, 1/eu, 1e-4) {
				t.Errorf("%s E_U=%v: d ln α/dE at E_j = %.10g, want 1/E_U = %.10g", tc.band, eu, sl/at, 1/eu)
			}
			// exponential below: ln α drops by exactly Δ/E_U over Δ
			delta := math.Min(10*eu, 1)
			if d := math.Log(at / eval1(m, ej-delta, p)); !scalar.EqualWithinRel(d, delta/eu, 1e-12) {
				t.Errorf("%s E_U=%v: ln α(E_j)/α(E_j − Δ) = %.15g, want Δ/E_U = %.15g", tc.band, eu, d, delta/eu)
			}
		}
	}
	// indirect: each branch joins at x = 2E_U (ε = 2E_U ∓ E_ph)
	m := mustNew(t, "indirect", "joined", cfg)
	bare := mustNew(t, "indirect", "none", cfg)
	p := []float64{1.1, 1e3, 0.004, 0.03}
	for _, e := range []float64{1.1 + 0.03 + 0.008 + 1e-9, 1.3} { // above both joins
		if a, b := eval1(m, e, p), eval1(bare, e, []float64{1.1, 1e3, 0.03}); !scalar.EqualWithinRel(a, b, 1e-12) {
			t.Errorf("indirect+joined above the joins: %.15g, band %.15g", a, b)
		}
	}
}

// TestMacfarlaneRoberts checks the two-branch structure of the indirect
// edge (Macfarlane & Roberts 1955): zero below E_g − E_ph; between
// E_g ∓ E_ph only phonon absorption, √α = √(A n)·(E − E_g + E_ph); above
// E_g + E_ph both branches; and as T → 0 (n → e^{−E_ph/kT} → 0) only
// emission survives, α = A(E − E_g − E_ph)². Rounding-level tolerances.
func TestMacfarlaneRoberts(t *testing.T) {
	const eg, A, eph = 1.12, 5e3, 0.058 // Si-like TO phonon (from memory)
	m := mustNew(t, "indirect", "none", Config{Temperature: 300})
	kT := Boltzmann * 300
	n := 1 / (math.Exp(eph/kT) - 1)
	p := []float64{eg, A, eph}
	if a := eval1(m, eg-eph-1e-6, p); a != 0 {
		t.Errorf("α below E_g − E_ph = %v, want 0", a)
	}
	for _, e := range []float64{eg - eph + 0.01, eg, eg + eph - 1e-4} {
		if got, want := math.Sqrt(eval1(m, e, p)), math.Sqrt(A*n)*(e-eg+eph); !scalar.EqualWithinRel(got, want, 1e-13) {
			t.Errorf("√α(%v) = %.15g, want √(An)(E − E_g + E_ph) = %.15g", e, got, want)
		}
	}
	e := eg + eph + 0.05
	if got, want := eval1(m, e, p), A*(n*(e-eg+eph)*(e-eg+eph)+(n+1)*(e-eg-eph)*(e-eg-eph)); !scalar.EqualWithinRel(got, want, 1e-13) {
		t.Errorf("α(%v) = %.15g, want both branches %.15g", e, got, want)
	}
	// T → 0: at 2 K, n = e^{−336}: with any tail only the emission branch
	// is left, α = A·B(E − E_g − E_ph) with B the branch's broadened square
	// (γ²F_2(x/γ) for a kernel, the joined square for joined). Tolerance
	// 1e-13 relative, or 1e-100·A absolute where the emission branch is 0
	// or tiny (the absorption branch is n = e^{−336} ≈ 1e-146 of A·x²).
	var pe powEval
	pe.init(gaussPair(powTwo), 2, false)
	const g = 0.004
	for _, tail := range []string{"none", "urbach", "gauss", "joined"} {
		cold := mustNew(t, "indirect", tail, Config{Temperature: 2})
		q := []float64{eg, A, g, eph}
		if tail == "none" {
			q = []float64{eg, A, eph}
		}
		for _, e := range []float64{eg - 0.02, eg, eg + eph - 0.003, eg + eph + 0.001, eg + eph + 0.05} {
			x := e - eg - eph
			var b float64
			switch tail {
			case "none":
				b = math.Max(x, 0) * math.Max(x, 0)
			case "urbach":
				f, _, _ := lapF2(x / g)
				b = g * g * f
			case "gauss":
				b = g * g * pe.eval(x/g, false, nil).f
			case "joined":
				b, _, _ = joinedSquare(x, g)
			}
			if got, want := eval1(cold, e, q), A*b; !scalar.EqualWithinAbsOrRel(got, want, 1e-100*A, 1e-13) {
				t.Errorf("indirect+%s at 2 K, E=%v: α = %.15g, emission only %.15g", tail, e, got, want)
			}
		}
	}
	// the Jacobian's ∂/∂E_ph includes dn/dE_ph = −n(n+1)/kT: compare with
	// a central difference at fixed temperature (relative 1e-7).
	jac := mat.NewDense(1, 3, nil)
	e = eg + 0.01
	m.(Jacobianer).Jacobian(jac, []float64{e}, p)
	const h = 1e-7
	fd := (eval1(m, e, []float64{eg, A, eph + h}) - eval1(m, e, []float64{eg, A, eph - h})) / (2 * h)
	if !scalar.EqualWithinRel(jac.At(0, 2), fd, 1e-7) {
		t.Errorf("∂α/∂E_ph = %.10g, central difference %.10g", jac.At(0, 2), fd)
	}
}
