package model

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/mathext"
)

// Tests of the band × tail family (Edge) against its definitions.
// Sources: the convolution tails of Katahara & Hillhouse (J. Appl. Phys.
// 116, 173504, 2014), the indirect edge of Macfarlane & Roberts (Phys. Rev.
// 97, 1714, 1955), the excitonic edge of Elliott (Phys. Rev. 108, 1384,
// 1957). The references are direct numerical quadratures of the defining
// integrals with the adaptive double-exponential rules of quad_test.go,
// converged to ~1e-14, written independently of the tables' builder
// (dequad.go) and evaluated on the fly.

// kernelRef returns the normalised kernel G(u) = exp(−|u/γ|^θ)/(2γΓ(1+1/θ)).
func kernelRef(u, g, theta float64) float64 {
	return math.Exp(-math.Pow(math.Abs(u)/g, theta)) / (2 * g * math.Gamma(1+1/theta))
}

// convRef returns ∫_{x0}^∞ G(x − s)(s − x0)^r ds by quadrature, split at
// the kernel's peak s = x.
func convRef(x, x0, r, g, theta float64) float64 {
	pw := func(d float64) float64 {
		if r == 0 {
			return 1
		}
		return math.Pow(d, r)
	}
	var sum float64
	lo := x0
	if x > x0 {
		s, _ := tanhSinh(func(_, da, db float64) float64 { return kernelRef(db, g, theta) * pw(da) }, x0, x, 1e-15)
		sum += s
		lo = x
	}
	s, _ := expSinh(func(_, da float64) float64 {
		return kernelRef((lo-x)+da, g, theta) * pw((lo-x0)+da)
	}, lo, g, 1e-15)
	return sum + s
}

// thetaOf returns the kernel exponent of a tail.
func thetaOf(t tailKind, p []float64) float64 {
	switch t {
	case tailUrbach:
		return 1
	case tailGauss:
		return 2
	case tailTheta:
		return p[3]
	}
	return math.NaN()
}

// edgeRef returns α(E) of a power-law or indirect Edge with a convolution
// tail by quadrature of its definition.
func edgeRef(m Edge, e float64, p []float64) float64 {
	eg, amp, g := p[0], p[1], p[2]
	th := thetaOf(m.tail, p)
	switch m.band {
	case bandDirect:
		return amp / e * convRef(e, eg, 0.5, g, th)
	case bandForbidden:
		return amp / e * convRef(e, eg, 1.5, g, th)
	case bandIndirect:
		eph := p[len(p)-1]
		n := 1 / math.Expm1(eph/m.kT)
		return amp * (n*convRef(e, eg-eph, 2, g, th) + (n+1)*convRef(e, eg+eph, 2, g, th))
	}
	panic("edgeRef: band")
}

func mustNew(t testing.TB, band, tail string, cfg Config) Model {
	t.Helper()
	m, err := New(band, tail, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func edgeOf(m Model) Edge {
	switch v := m.(type) {
	case Edge:
		return v
	case TailedEdge:
		return v.Edge
	}
	panic("not an Edge")
}

// TestFamilyQuadrature compares the power-law and indirect models with
// convolution tails against quadrature of the convolution, at z = (E −
// E_g)/γ from −30 to 150 (where E > 0.2 eV). Tolerances per tail, from the
// build tolerances of the tables (on ψ = ln F or φ = F/z^a, so about
// relative) with a margin of five: urbach 1e-11 (closed forms; tables of
// lapTab at 3e-13); gauss 1e-11 (table tolerance 2e-12; measured worst
// 1.3e-12, see t.Log); theta 1e-9 (tolerance 2e-10 in z and 6e-11 in θ;
// measured worst 1.2e-10). A reference below 1e-280 of the amplitude is
// skipped (quadrature noise, and no data reach it).
func TestFamilyQuadrature(t *testing.T) {
	cfg := Config{Temperature: 300}
	tests := []struct {
		band, tail string
		p          []float64
		tol        float64
	}{
		{"direct-forbidden", "urbach", []float64{1.5, 1e4, 0.02}, 1e-11},
		{"direct-forbidden", "urbach", []float64{1.5, 1e4, 0.003}, 1e-11},
		{"indirect", "urbach", []float64{1.1, 1e3, 0.01, 0.03}, 1e-11},
		{"indirect", "urbach", []float64{1.1, 1e3, 0.05, 0.06}, 1e-11},
		{"direct", "gauss", []float64{1.5, 2e4, 0.02}, 1e-11},
		{"direct", "gauss", []float64{1.5, 2e4, 0.004}, 1e-11},
		{"direct-forbidden", "gauss", []float64{2.0, 1e4, 0.03}, 1e-11},
		{"indirect", "gauss", []float64{1.1, 1e3, 0.015, 0.05}, 1e-11},
		{"direct", "theta", []float64{1.5, 2e4, 0.02, 0.8}, 1e-9},
		{"direct", "theta", []float64{1.5, 2e4, 0.02, 1.37}, 1e-9},
		{"direct", "theta", []float64{1.5, 2e4, 0.01, 2.9}, 1e-9},
		{"direct", "theta", []float64{1.5, 2e4, 0.02, 3.0}, 1e-9},
		{"direct-forbidden", "theta", []float64{1.5, 2e4, 0.02, 1.1}, 1e-9},
		{"indirect", "theta", []float64{1.1, 1e3, 0.015, 1.7, 0.02}, 1e-9},
	}
	for _, tc := range tests {
		m := mustNew(t, tc.band, tc.tail, cfg)
		ed := edgeOf(m)
		g := tc.p[2]
		var worst float64
		for z := -30.0; z <= 150; z += 0.731 {
			for _, dz := range []float64{0, 1e-6, 3e-4} {
				e := tc.p[0] + (z+dz)*g
				if e < 0.2 {
					continue
				}
				want := edgeRef(ed, e, tc.p)
				if want < 1e-280*tc.p[1] {
					continue
				}
				got := make([]float64, 1)
				m.Eval(got, []float64{e}, tc.p)
				rel := math.Abs(got[0]-want) / want
				worst = math.Max(worst, rel)
				if rel > tc.tol {
					t.Errorf("%s %v: E=%.10g (z=%.4g): α = %.15g, quadrature %.15g (rel %.3g)", m.Name(), tc.p, e, z+dz, got[0], want, rel)
				}
			}
		}
		t.Logf("%s %v: worst relative difference %.2g", m.Name(), tc.p, worst)
	}
}

// TestFamilyJacobian checks every analytic Jacobian against fd.Central
// (checkJacobian: 1e-6 relative or 1e-7 of the column's largest entry).
// The free-θ models are checked in TestThetaJacobian instead.
// Energies avoid a 3 meV band around the thresholds of the models without
// a convolution (kinks, where a central difference straddles two slopes).
func TestFamilyJacobian(t *testing.T) {
	cfg := Config{Temperature: 300}
	grid := func(lo, hi, step float64, skip ...float64) []float64 {
		var e []float64
	next:
		for x := lo; x <= hi; x += step {
			for _, s := range skip {
				if math.Abs(x-s) < 3e-3 {
					continue next
				}
			}
			e = append(e, x)
		}
		return e
	}
	tests := []struct {
		band, tail string
		p          []float64
		e          []float64
		step       float64
	}{
		{"direct-forbidden", "none", []float64{1.5, 1e4}, grid(1.3, 2.2, 0.0137, 1.5), 0},
		{"direct-forbidden", "urbach", []float64{1.5, 1e4, 0.02}, grid(0.9, 3.0, 0.0173), 0},
		{"direct-forbidden", "gauss", []float64{1.5, 1e4, 0.02}, grid(1.3, 2.5, 0.0071), 0},
		{"direct-forbidden", "joined", []float64{1.5, 1e4, 0.02}, grid(1.3, 2.5, 0.0093, 1.5+joinEps(1.5, 1.5, 0.02)), 0},
		{"direct", "gauss", []float64{1.5, 2e4, 0.02}, grid(1.3, 2.5, 0.0071), 0},
		{"direct", "gauss", []float64{1.5, 2e4, 0.3}, grid(0.5, 4, 0.031), 0},
		{"direct", "joined", []float64{1.5, 2e4, 0.02}, grid(1.2, 2.5, 0.0093, 1.5+joinEps(0.5, 1.5, 0.02)), 0},
		{"indirect", "none", []float64{1.1, 1e3, 0.03}, grid(1.0, 1.6, 0.0071, 1.07, 1.13), 0},
		{"indirect", "urbach", []float64{1.1, 1e3, 0.01, 0.03}, grid(0.8, 1.6, 0.0071), 0},
		{"indirect", "gauss", []float64{1.1, 1e3, 0.01, 0.03}, grid(1.0, 1.6, 0.0031), 0},
		{"indirect", "joined", []float64{1.1, 1e3, 0.01, 0.03}, grid(0.9, 1.6, 0.0071, 1.09, 1.15), 0},
		// Exciton: the Laplace kernel has a cusp at each line E_g − R_x/n²,
		// where α has one too; those energies are left out (offLines). A
		// central difference on a line of width γ has the truncation error
		// (h/γ)²/6 with h = 6e-6·E_g, so the sharp cases use a small E_g.
		{"exciton", "urbach", []float64{1.5, 2e4, 0.01, 0.005}, offLines(grid(1.3, 2.0, 0.0037), 1.5, 0.005, 1e-4), 0},    // ρ = 0.5
		{"exciton", "urbach", []float64{0.3, 2e4, 0.002, 0.03}, offLines(grid(0.2, 0.5, 0.00071), 0.3, 0.03, 1e-5), 1e-7}, // ρ = 15
		{"exciton", "urbach", []float64{0.4, 2e4, 0.001, 0.3}, offLines(grid(0.08, 0.41, 0.00093), 0.4, 0.3, 1e-5), 1e-7}, // ρ = 300 (moments)
		{"exciton", "urbach", []float64{1.5, 2e4, 0.5, 2e-4}, grid(0.3, 4, 0.031), 0},                                     // ρ = 4e-4
		{"exciton", "urbach", []float64{1.5, 2e4, 1, 1e-4}, grid(0.3, 6, 0.031), 0},                                       // ρ = 1e-4
		{"exciton", "gauss", []float64{0.5, 2e4, 0.01, 0.005}, grid(0.4, 1.0, 0.0037), 0},
		{"exciton", "gauss", []float64{0.3, 2e4, 0.003, 0.03}, grid(0.25, 0.5, 0.00053), 1e-7},
		{"exciton", "gauss", []float64{0.4, 2e4, 0.001, 0.3}, grid(0.08, 0.41, 0.00093), 1e-7}, // ρ = 300 (moments)
		{"exciton", "gauss", []float64{1.5, 2e4, 0.5, 1e-4}, grid(0.3, 4, 0.031), 0},           // ρ = 2e-4
		{"exciton", "gauss", []float64{1.5, 2e4, 1, 1e-4}, grid(0.3, 6, 0.031), 0},             // ρ = 1e-4 (small-ρ expansion)
	}
	for _, tc := range tests {
		m := mustNew(t, tc.band, tc.tail, cfg)
		t.Run(m.Name(), func(t *testing.T) {
			checkJacobian(t, jacobianCase{name: m.Name(), m: m.(interface {
				Model
				Jacobianer
			}), p: tc.p, e: tc.e, step: tc.step})
		})
	}
}

// TestThetaJacobian checks the Jacobians of the free-θ models against
// fd.Central applied to the quadrature of the defining convolution
// (edgeRef), not to the model: the model's two-variable table is accurate
// to ~1e-9 in value, but a finite difference at gonum's relative step 6e-6
// differentiates that interpolation error too (measured 1e-5 relative at
// z ≈ 20, θ = 0.85), while the analytic Jacobian uses the tabulated
// derivatives. Step 2e-6 relative: the reference is converged to ~1e-14,
// which gives 5e-9 of noise, and the truncation (2e-6·E_g/γ)²/6 is below
// 4e-9. Tolerance as checkJacobian.
func TestThetaJacobian(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: quadrature references")
	}
	cfg := Config{Temperature: 300}
	for _, tc := range []struct {
		band string
		p    []float64
		lo   float64
		hi   float64
		step float64
	}{
		{"direct", []float64{1.5, 2e4, 0.02, 0.85}, 0.9, 3.0, 0.0213},
		{"direct", []float64{1.5, 2e4, 0.02, 2.6}, 1.4, 2.0, 0.0047},
		{"direct-forbidden", []float64{1.5, 1e4, 0.02, 1.3}, 1.0, 2.5, 0.0193},
		{"indirect", []float64{1.1, 1e3, 0.01, 1.6, 0.03}, 0.95, 1.6, 0.0081},
	} {
		m := mustNew(t, tc.band, "theta", cfg)
		ed := edgeOf(m)
		var e []float64
		for x := tc.lo; x <= tc.hi; x += tc.step {
			e = append(e, x)
		}
		np := len(tc.p)
		got := mat.NewDense(len(e), np, nil)
		m.(Jacobianer).Jacobian(got, e, tc.p)
		want := mat.NewDense(len(e), np, nil)
		pp := make([]float64, np)
		fd.Jacobian(want, func(y, x []float64) {
			for j := range x {
				pp[j] = x[j] * tc.p[j]
			}
			for i, ei := range e {
				y[i] = edgeRef(ed, ei, pp)
			}
		}, ones(np), &fd.JacobianSettings{Formula: fd.Central, Step: 2e-6})
		for j := 0; j < np; j++ {
			colMax := 0.0
			for i := range e {
				want.Set(i, j, want.At(i, j)/tc.p[j])
				colMax = math.Max(colMax, math.Abs(want.At(i, j)))
			}
			for i := range e {
				g, w := got.At(i, j), want.At(i, j)
				if !scalar.EqualWithinAbsOrRel(g, w, 1e-7*colMax, 1e-6) {
					t.Errorf("%s %v: ∂α/∂%s at E=%v: analytic %.10g, fd of quadrature %.10g",
						m.Name(), tc.p, m.Params()[j].Name, e[i], g, w)
				}
			}
		}
	}
}

func ones(n int) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = 1
	}
	return x
}

// offLines drops the energies within tol of a line E_g − R_x/n².
func offLines(e []float64, eg, rx, tol float64) []float64 {
	var out []float64
next:
	for _, x := range e {
		for n := 1; n < 400; n++ {
			if math.Abs(x-(eg-rx/float64(n*n))) < tol {
				continue next
			}
		}
		out = append(out, x)
	}
	return out
}

// TestFamilyFinite checks the Model contract over wide random parameters
// within the bounds (seeded PCG, seed printed on failure): finite α ≥ 0
// and a finite Jacobian at energies from far below to far above the gap.
func TestFamilyFinite(t *testing.T) {
	const seed = 20241202
	rng := rand.New(rand.NewPCG(seed, seed))
	for _, name := range Names() {
		// α ∝ ε² overflows for the indirect band beyond 1e150 eV: its
		// exact value is not a float64 there.
		e := []float64{-1, 0, 1e-300, 1e-3, 0.3, 0.9, 1, 1.1, 1.5, 2, 3, 5, 20, 1e3, 1e100, 1e300}
		if strings.HasPrefix(name, "indirect") {
			e = e[:len(e)-1]
		}
		a := make([]float64, len(e))
		m, err := LookupConfig(name, Config{Temperature: 1 + 999*rng.Float64()})
		if err != nil {
			t.Fatal(err)
		}
		ps := m.Params()
		jac := mat.NewDense(len(e), len(ps), nil)
		p := make([]float64, len(ps))
		for k := 0; k < 200; k++ {
			for j, q := range ps {
				lo, hi := q.Min, q.Max
				switch q.Name {
				case "eg":
					lo, hi = 0.05, 19.9
				case "amp":
					p[j] = math.Pow(10, 8*rng.Float64()-2)
					continue
				}
				if q.Name == "eu" || q.Name == "gw" || q.Name == "eph" || q.Name == "rx" {
					p[j] = math.Exp(math.Log(lo) + (math.Log(hi)-math.Log(lo))*rng.Float64())
					continue
				}
				p[j] = lo + (hi-lo)*rng.Float64()
			}
			m.Eval(a, e, p)
			m.(Jacobianer).Jacobian(jac, e, p)
			for i, v := range a {
				if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
					t.Fatalf("%s seed %d: α(%v; %v) = %v", name, seed, e[i], p, v)
				}
				for j := range ps {
					if v := jac.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
						t.Fatalf("%s seed %d: J[%v; %v][%s] = %v", name, seed, e[i], p, ps[j].Name, v)
					}
				}
			}
		}
	}
}

var _ = errors.Is
var _ = scalar.EqualWithinRel
var _ = mathext.Digamma

// TestEvalJacobian: the one-pass EvalJacobian of every model of the
// registry that offers it gives the Jacobian bit for bit and α within
// 4 ulp (1e-15 relative; absolute 1e-290 for subnormal values) of Eval, over random parameters in the models'
// ranges and energies from below the gap to far above it. The values
// come from α = C·∂α/∂C, which holds because the amplitude multiplies
// every band of the family; a model where it did not would fail here.
func TestEvalJacobian(t *testing.T) {
	const seed = 20261202
	rng := rand.New(rand.NewPCG(seed, seed))
	e := []float64{-1, 0, 0.3, 0.9, 1, 1.05, 1.1, 1.2, 1.3, 1.42, 1.45, 1.5, 1.7, 2, 3, 5}
	seen := 0
	for _, name := range Names() {
		m, err := LookupConfig(name, Config{Temperature: 300})
		if err != nil {
			t.Fatal(err)
		}
		vj, ok := m.(ValueJacobianer)
		if !ok {
			continue
		}
		seen++
		ps := m.Params()
		want, got := make([]float64, len(e)), make([]float64, len(e))
		jw, jg := mat.NewDense(len(e), len(ps), nil), mat.NewDense(len(e), len(ps), nil)
		p := make([]float64, len(ps))
		for k := 0; k < 100; k++ {
			for j, q := range ps {
				switch q.Name {
				case "eg":
					p[j] = 0.5 + 1.5*rng.Float64()
				case "amp":
					p[j] = math.Pow(10, 6*rng.Float64())
				case "eu", "gw", "eph", "rx":
					lo, hi := math.Max(q.Min, 1e-3), math.Min(q.Max, 0.2)
					p[j] = math.Exp(math.Log(lo) + (math.Log(hi)-math.Log(lo))*rng.Float64())
				default:
					p[j] = q.Min + (q.Max-q.Min)*rng.Float64()
				}
			}
			m.Eval(want, e, p)
			m.(Jacobianer).Jacobian(jw, e, p)
			vj.EvalJacobian(got, jg, e, p)
			if !mat.Equal(jw, jg) {
				t.Fatalf("%s at %v: EvalJacobian's Jacobian differs from Jacobian", name, p)
			}
			for i := range e {
				// 1e-290: subnormal α (deep in a Gaussian tail) has fewer digits.
				if d := math.Abs(got[i] - want[i]); d > 1e-15*math.Abs(want[i])+1e-290 {
					t.Fatalf("%s at %v, E = %g: EvalJacobian α = %.17g, Eval %.17g", name, p, e[i], got[i], want[i])
				}
			}
		}
	}
	if seen < 15 {
		t.Errorf("only %d models offer EvalJacobian", seen)
	}
}
