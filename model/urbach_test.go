package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"bandedge/model/specfun"
)

// convolutionQuad returns α(E) of DirectUrbach by direct numerical
// quadrature of its defining integral (Katahara & Hillhouse 2014)
//
//	α(E) = (C/E) ∫_{E_g}^∞ exp(−|E − E′|/γ)/(2γ) · √(E′ − E_g) dE′,
//
// split at E′ = E (the kink of the kernel) when E > E_g: tanh-sinh on
// [E_g, E] (√ singularity at E_g, kink at E) and exp-sinh on [max(E, E_g), ∞)
// with the decay length γ. It also returns the quadrature's last change
// relative to the result, as an error estimate.
func convolutionQuad(e, eg, c, g float64) (alpha, relChange float64) {
	const tol = 1e-14
	var sum, change float64
	lo := eg
	if e > eg {
		s, ch := tanhSinh(func(_, da, db float64) float64 {
			// da = E′ − E_g, db = E − E′ ≥ 0
			return math.Exp(-db/g) / (2 * g) * math.Sqrt(da)
		}, eg, e, tol)
		sum += s
		change += ch
		lo = e
	}
	s, ch := expSinh(func(_, da float64) float64 {
		// E′ = lo + da; E′ − E = (lo − E) + da ≥ 0, E′ − E_g = (lo − E_g) + da
		return math.Exp(-((lo-e)+da)/g) / (2 * g) * math.Sqrt((lo-eg)+da)
	}, lo, g, tol)
	sum += s
	change += ch
	return c / e * sum, change / sum
}

// TestDirectUrbachQuadrature compares the closed form of DirectUrbach with
// numerical quadrature of the convolution integral at z = (E − E_g)/γ from
// −30 to 200, for two broadenings. Tolerance 1e-10 relative (the brief);
// the quadrature itself is converged to about 1e-14 (checked).
func TestDirectUrbachQuadrature(t *testing.T) {
	const eg, c = 2.0, 2e4
	var zs []float64
	for z := -30.0; z <= 200; z += 1.37 {
		zs = append(zs, z)
	}
	zs = append(zs, -1e-3, -1e-9, 0, 1e-9, 1e-3, 0.01, 0.1, 0.5, 1, 2, 6.5*6.5,
		math.Nextafter(urbachAsymZ, 0), urbachAsymZ, 50.01, 144, 200)
	var worst float64
	for _, g := range []float64{0.005, 0.03} {
		m := DirectUrbach{}
		p := []float64{eg, c, g}
		for _, z := range zs {
			e := eg + z*g
			want, qerr := convolutionQuad(e, eg, c, g)
			if qerr > 1e-12 {
				t.Fatalf("γ=%v z=%v: quadrature not converged (change %.2g)", g, z, qerr)
			}
			got := make([]float64, 1)
			m.Eval(got, []float64{e}, p)
			rel := math.Abs(got[0]-want) / want
			if rel > 1e-10 {
				t.Errorf("γ=%v z=%v: α = %.15g, quadrature %.15g (rel %.3g)", g, z, got[0], want, rel)
			}
			worst = math.Max(worst, rel)
		}
	}
	t.Logf("closed form vs quadrature: worst relative difference %.3g over z ∈ [−30, 200]", worst)
}

// TestDirectUrbachNarrowLimit checks that DirectUrbach tends to Direct as
// γ → 0 above the gap. From the expansion F(z) = √z·(1 − 1/(4z²) −
// 15/(16z⁴) − …) (derived in UrbachEdgeF) the relative difference is
// −1/(4z²) to leading order; at z ≥ 50 the next term is below 0.2 % of it,
// so we check that coefficient to 1 %, i.e. that the difference vanishes
// as γ² (z from 50 to 3000).
func TestDirectUrbachNarrowLimit(t *testing.T) {
	const eg, c = 1.4, 3e4
	for _, de := range []float64{0.05, 0.1, 0.3} {
		for _, g := range []float64{1e-3, 3e-4, 1e-4} {
			e := []float64{eg + de}
			u, d := make([]float64, 1), make([]float64, 1)
			DirectUrbach{}.Eval(u, e, []float64{eg, c, g})
			Direct{}.Eval(d, e, []float64{eg, c})
			z := de / g
			rel := (u[0] - d[0]) / d[0]
			want := -1 / (4 * z * z)
			if !scalar.EqualWithinRel(rel, want, 0.01) {
				t.Errorf("E−E_g=%v γ=%v: relative difference %.4g, want ≈ %.4g", de, g, rel, want)
			}
		}
	}
}

// TestUrbachTailSlope checks the Urbach rule (Urbach 1953) far below the gap:
// ln α is linear in E with slope 1/E_U − 1/E (the 1/E comes from the C/E
// prefactor), so ln(αE) has slope exactly 1/E_U. Central differences of
// step 1 meV on an exponential are exact up to rounding (≈1e-12 here), so
// ln(αE) is checked to 1e-9 relative, and the slope of ln α equals 1/E_U to
// within the relative tolerance 1.01·E_U/E (the 1/E prefactor, plus 1 % for
// the finite difference of ln E): 0.5 % to 20 % for the cases below.
func TestUrbachTailSlope(t *testing.T) {
	const eg, c, h = 1.5, 1e4, 1e-3
	for _, eu := range []float64{0.005, 0.02, 0.05} {
		for _, z := range []float64{-25, -15, -8} {
			e0 := eg + z*eu
			es := []float64{e0 - h, e0 + h}
			a := make([]float64, 2)
			DirectUrbach{}.Eval(a, es, []float64{eg, c, eu})
			slopeAE := (math.Log(a[1]*es[1]) - math.Log(a[0]*es[0])) / (2 * h)
			if !scalar.EqualWithinRel(slopeAE, 1/eu, 1e-9) {
				t.Errorf("E_U=%v z=%v: slope of ln(αE) = %.10g, want 1/E_U = %.10g", eu, z, slopeAE, 1/eu)
			}
			slopeA := (math.Log(a[1]) - math.Log(a[0])) / (2 * h)
			if d := math.Abs(slopeA*eu - 1); d > 1.01*eu/e0 {
				t.Errorf("E_U=%v z=%v: slope of ln α · E_U = %.6g, want 1 within %.3g", eu, z, slopeA*eu, eu/e0)
			}
		}
	}
}

// TestUrbachEdgeF checks F against its derivation: values at z = 0 and in
// the tail (closed forms), continuity across the branch points z = 0 and
// z = 50, F' against a central difference, the identity F″ = F − √z·Θ(z),
// and the asymptotic form of h = F/2 − zF' against the direct formula.
func TestUrbachEdgeF(t *testing.T) {
	q := math.Sqrt(math.Pi) / 4
	t.Run("closed forms", func(t *testing.T) {
		// F(0) = F'(0) = Γ(3/2)/2 = √π/4; F(−5) = √π/4·e⁻⁵.
		f0, d0 := UrbachEdgeF(0)
		f5, _ := UrbachEdgeF(-5)
		fp, dp := UrbachEdgeF(1e-300) // z > 0 branch at its start
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"F(0)", f0, q}, {"F'(0)", d0, q}, {"F(−5)", f5, q * math.Exp(-5)}, {"F(0+)", fp, q}, {"F'(0+)", dp, q}} {
			if !scalar.EqualWithinRel(c.got, c.want, 1e-15) {
				t.Errorf("%s = %.17g, want %.17g", c.name, c.got, c.want)
			}
		}
		if f, d := UrbachEdgeF(-800); f != 0 || d != 0 {
			t.Errorf("F(−800) = %v, %v: want underflow to 0", f, d)
		}
	})
	t.Run("continuity at z=50", func(t *testing.T) {
		z0 := math.Nextafter(urbachAsymZ, 0)
		fa, da, ha := urbachEdge(z0)
		fb, db, hb := urbachEdge(urbachAsymZ)
		// the direct branch loses ~log10(z²) digits in h: tolerance 1e-12
		for _, c := range []struct {
			name   string
			a, b   float64
			relTol float64
		}{{"F", fa, fb, 1e-14}, {"F'", da, db, 1e-14}, {"h", ha, hb, 1e-12}} {
			if !scalar.EqualWithinRel(c.a, c.b, c.relTol) {
				t.Errorf("%s jumps at z=50: %.17g vs %.17g", c.name, c.a, c.b)
			}
		}
	})
	t.Run("asymptotic h vs direct", func(t *testing.T) {
		// at z ≥ 50 compare h with F/2 − zF' from D and erfcx (accurate
		// to ~1e-15 each, amplified by ~z² by the cancellation): 1e-10.
		for _, z := range []float64{50, 60, 100, 200} {
			y := math.Sqrt(z)
			_, _, h := urbachEdge(z)
			fz, dz := directF(y)
			if want := fz/2 - z*dz; !scalar.EqualWithinRel(h, want, 1e-10) {
				t.Errorf("z=%v: h = %.15g, direct %.15g", z, h, want)
			}
			if f, _ := UrbachEdgeF(z); !scalar.EqualWithinRel(f, fz, 1e-14) {
				t.Errorf("z=%v: F = %.17g, direct %.17g", z, f, fz)
			}
		}
	})
	t.Run("derivatives", func(t *testing.T) {
		const step = 1e-4
		for z := -20.0; z <= 150; z += 0.617 {
			fp, _ := UrbachEdgeF(z + step)
			fm, _ := UrbachEdgeF(z - step)
			f, df := UrbachEdgeF(z)
			fd1 := (fp - fm) / (2 * step)
			if !scalar.EqualWithinAbsOrRel(fd1, df, 1e-10, 1e-8) {
				t.Errorf("z=%v: F' = %.12g, central difference %.12g", z, df, fd1)
			}
			fd2 := (fp - 2*f + fm) / (step * step) // rounding ≈ 1e-16·F/step² ≈ 1e-7
			want := f
			if z > 0 {
				want -= math.Sqrt(z)
			}
			if !scalar.EqualWithinAbsOrRel(fd2, want, 2e-6, 1e-6) {
				t.Errorf("z=%v: F'' ≈ %.9g, want F − √z·Θ(z) = %.9g", z, fd2, want)
			}
		}
	})
	t.Run("large z", func(t *testing.T) {
		// F = √z − 1/(4z^{3/2}) + O(z^{−7/2}); F' = 1/(2√z) + O(z^{−5/2})
		for _, z := range []float64{1e4, 1e8, 1e300} {
			f, df := UrbachEdgeF(z)
			if !scalar.EqualWithinRel(f, math.Sqrt(z)-1/(4*z*math.Sqrt(z)), 1e-15) ||
				!scalar.EqualWithinRel(df, 0.5/math.Sqrt(z), 1e-7) {
				t.Errorf("z=%g: F, F' = %.17g, %.17g", z, f, df)
			}
		}
	})
}

// directF is the z > 0 closed form with D and erfcx, without the
// asymptotic branch.
func directF(y float64) (f, df float64) {
	q := math.Sqrt(math.Pi) / 4
	dw, ex := specfun.Dawson(y), specfun.Erfcx(y)
	return y - dw/2 + q*ex, dw/2 + q*ex
}

// jacobianCase is one check of an analytic Jacobian against fd.Jacobian.
type jacobianCase struct {
	name string
	m    interface {
		Model
		Jacobianer
	}
	p []float64
	e []float64
	// step is the relative finite-difference step (0: gonum's default
	// 6e-6). Sharp features of width γ need h ≪ γ: the central
	// difference's truncation error is about (h/γ)²/6 relative.
	step float64
}

// checkJacobian compares m.Jacobian with fd.Jacobian (fd.Central, gonum's
// default step 6e-6 scaled here by each parameter). Tolerance: 1e-6
// relative per entry, or 1e-7 of the column's largest entry (central
// differences at relative step ~1e-5 are accurate to ~1e-9 on smooth
// functions; the margin absorbs rounding in α ≈ 1e4).
func checkJacobian(t *testing.T, tc jacobianCase) {
	t.Helper()
	np := len(tc.p)
	got := mat.NewDense(len(tc.e), np, nil)
	tc.m.Jacobian(got, tc.e, tc.p)
	// Finite differences in scaled parameters: x_j = p_j / s_j.
	// (x_j = ±1 keeps the sign of a negative parameter, e.g. a baseline)
	scale := make([]float64, np)
	x0 := make([]float64, np)
	for j, v := range tc.p {
		scale[j] = math.Abs(v)
		if v == 0 {
			scale[j] = 1
		}
		x0[j] = v / scale[j]
	}
	want := mat.NewDense(len(tc.e), np, nil)
	pp := make([]float64, np)
	fd.Jacobian(want, func(y, x []float64) {
		for j := range x {
			pp[j] = x[j] * scale[j]
		}
		tc.m.Eval(y, tc.e, pp)
	}, x0, &fd.JacobianSettings{Formula: fd.Central, Step: tc.step})
	for j := 0; j < np; j++ {
		colMax := 0.0
		for i := range tc.e {
			want.Set(i, j, want.At(i, j)/scale[j])
			colMax = math.Max(colMax, math.Abs(want.At(i, j)))
		}
		for i := range tc.e {
			g, w := got.At(i, j), want.At(i, j)
			if !scalar.EqualWithinAbsOrRel(g, w, 1e-7*colMax, 1e-6) {
				t.Errorf("%s: ∂α/∂%s at E=%v: analytic %.10g, fd %.10g",
					tc.name, tc.m.Params()[j].Name, tc.e[i], g, w)
			}
		}
	}
}

func TestDirectUrbachJacobian(t *testing.T) {
	var e []float64
	for x := 0.9; x <= 3.5; x += 0.0173 { // z from −30 to 100 at γ = 0.02
		e = append(e, x)
	}
	for _, tc := range []jacobianCase{
		{name: "GaAs-like", m: DirectUrbach{}, p: []float64{1.5, 2e4, 0.02}, e: e},
		{name: "wide tail", m: DirectUrbach{}, p: []float64{1.5, 2e4, 0.3}, e: e},
		{name: "sharp", m: DirectUrbach{}, p: []float64{1.5, 2e4, 0.003}, e: e},
	} {
		t.Run(tc.name, func(t *testing.T) { checkJacobian(t, tc) })
	}
}

// TestDirectUrbachFinite checks the Model contract: for finite energies
// and parameters within the bounds of Params, Eval and Jacobian return no
// NaN or Inf and α ≥ 0. Random parameters, seeded PCG (seed 20240611).
func TestDirectUrbachFinite(t *testing.T) {
	const seed = 20240611
	rng := rand.New(rand.NewPCG(seed, seed))
	m := DirectUrbach{}
	e := []float64{-1, 0, 1e-300, 1e-3, 0.5, 1, 1.5, 2, 5, 20, 1e3, 1e300}
	a := make([]float64, len(e))
	jac := mat.NewDense(len(e), 3, nil)
	for k := 0; k < 2000; k++ {
		p := []float64{
			20 * rng.Float64(),
			math.Pow(10, 8*rng.Float64()-2),
			math.Pow(10, -4+4*rng.Float64()),
		}
		m.Eval(a, e, p)
		m.Jacobian(jac, e, p)
		for i, v := range a {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				t.Fatalf("seed %d: α(%v; %v) = %v", seed, e[i], p, v)
			}
			for j := 0; j < 3; j++ {
				if v := jac.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("seed %d: J[%v; %v][%d] = %v", seed, e[i], p, j, v)
				}
			}
		}
	}
}

// TestPanics checks the documented programmer-error panics and their
// prefix.
func TestPanics(t *testing.T) {
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"Direct dst length", func() { Direct{}.Eval(make([]float64, 2), make([]float64, 3), []float64{1, 1}) }},
		{"Direct p length", func() { Direct{}.Eval(make([]float64, 3), make([]float64, 3), []float64{1}) }},
		{"DirectUrbach p length", func() { DirectUrbach{}.Eval(make([]float64, 3), make([]float64, 3), []float64{1, 1}) }},
		{"DirectUrbach jac dims", func() {
			DirectUrbach{}.Jacobian(mat.NewDense(3, 2, nil), make([]float64, 3), []float64{1, 1, 0.1})
		}},
		{"Direct jac rows", func() { Direct{}.Jacobian(mat.NewDense(2, 2, nil), make([]float64, 3), []float64{1, 1}) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				r := recover()
				s, ok := r.(string)
				if !ok || len(s) < 6 || s[:6] != "model:" {
					t.Errorf("recovered %v, want a panic prefixed \"model:\"", r)
				}
			}()
			tc.f()
		})
	}
}

func benchEnergies() []float64 {
	e := make([]float64, 1000)
	for i := range e { // E_g − 0.3 … E_g + 0.5 eV: z from −15 to 25 at γ = 0.02
		e[i] = 1.2 + 0.8*float64(i)/float64(len(e)-1)
	}
	return e
}

func BenchmarkDirectUrbachEval(b *testing.B) {
	e := benchEnergies()
	dst := make([]float64, len(e))
	p := []float64{1.5, 2e4, 0.02}
	b.ReportAllocs()
	for b.Loop() {
		DirectUrbach{}.Eval(dst, e, p)
	}
}

func BenchmarkDirectUrbachJacobian(b *testing.B) {
	e := benchEnergies()
	dst := mat.NewDense(len(e), 3, nil)
	p := []float64{1.5, 2e4, 0.02}
	b.ReportAllocs()
	for b.Loop() {
		DirectUrbach{}.Jacobian(dst, e, p)
	}
}

func BenchmarkDirectEval(b *testing.B) {
	e := benchEnergies()
	dst := make([]float64, len(e))
	p := []float64{1.5, 2e4}
	b.ReportAllocs()
	for b.Loop() {
		Direct{}.Eval(dst, e, p)
	}
}

func BenchmarkDirectJacobian(b *testing.B) {
	e := benchEnergies()
	dst := mat.NewDense(len(e), 2, nil)
	p := []float64{1.5, 2e4}
	b.ReportAllocs()
	for b.Loop() {
		Direct{}.Jacobian(dst, e, p)
	}
}
