package model

import (
	"math"
	"sync"

	"bandedge/model/specfun"
)

// The broadened Elliott continuum. In units of the kernel width γ
// (z = ε/γ, ρ = R_x/γ, u = ln ρ) the continuum of the excitonic edge is
//
//	X(z, ρ) = ∫_0^∞ K(z − s) S_ρ(s) ds,  S_ρ(s) = 2π√ρ / (1 − exp(−2π√(ρ/s))),
//
// and α_continuum = (C/E)·√γ·X. X depends on two variables, so it is
// tabulated once (at first use, by quadrature) as the ratio
//
//	R(z, u) = X / N,   N(z, ρ) = 2π√ρ·Kcdf(z) + F_{1/2}(z),
//
// where N is the broadened step 2π√ρ·Θ(ε) (the Sommerfeld limit at the
// gap) plus the broadened bare band √ε, both known in closed or tabulated
// form. R stays between 0.9 and 1 and is smooth in z and u; it is stored
// on octave tables in z (R itself; for the Laplace kernel X = X(0)·eᶻ
// exactly below the gap, so only R(0) is needed there) with Chebyshev
// series in u on [ln ρ_lo, ln ρ_hi] (excNY nodes). Outside the table:
//
//   - ρ < ρ_lo = 1e-6 (R_x ≪ γ): the expansion
//     X = F_{1/2} + π√ρ·Kcdf + (π²ρ/3)·F_{−1/2} − 2πζ(3)·ρ^{3/2}·K + O(ρ²),
//     from S_ρ = √s + π√ρ + π√ρ·L(π√(ρ/s)) with L(y) = coth y − 1/y =
//     y/3 + …, the remainder's mass ∫(L(π√(ρ/s)) − (π/3)√(ρ/s)) ds =
//     −2ζ(3)ρ (partial fractions of coth); error below 1e-9 relative.
//   - ρ > ρ_hi = 100 (sharp lines), and z > z_R = 64 for every ρ: the
//     moment expansion X = 2π√ρ·Kcdf(z) + Σ_{k≤5} m_k q^{(2k)}(z) of the
//     smooth part q = S_ρ − 2π√ρ·Θ (C^∞ and exponentially flat at s = 0;
//     m_k = μ_{2k}/(2k)!: 1 for the Laplace kernel, 1/(4^k k!) for the
//     Gaussian), with q's derivatives from Taylor arithmetic (jet).
//   - |z| < 2^{−11}: the chord between R(0) and the first octave node.
//
// Tolerances: 1e-11 on the Chebyshev tails in z and the pieces; the series
// in u have tails below 1.4e-11 (57 nodes). Measured against quadrature of
// the continuum plus the directly summed lines (TestExcitonQuadrature):
// below 3.2e-9 relative for every ρ from 3e-7 to 2000, the rest coming
// from the Euler–Maclaurin sum of the lines (exciton.go).

const (
	excRhoLo = 1e-6
	excRhoHi = 100
	excNY    = 57 // Chebyshev–Lobatto nodes in u = ln ρ
	excKLo   = -10
	excKHiR  = 6                                 // z_R = 64
	excKHiL  = 4                                 // Gaussian: X(−16) < e^{−250}; beyond, R is held at its last value
	excMom   = 5                                 // moment terms k = 0 … 5
	zeta3    = 1.2020569031595942853997381615114 // ζ(3), Apéry's constant (from memory; checked in the tests)
)

// excKernel is a broadening kernel of unit width: the Laplace kernel
// ½e^{−|u|} (θ = 1) or the Gaussian e^{−u²}/√π (θ = 2).
type excKernel struct{ theta float64 }

// k returns K(u).
func (k excKernel) k(u float64) float64 {
	if k.theta == 1 {
		return 0.5 * math.Exp(-math.Abs(u))
	}
	return math.Exp(-u*u) / sqrtPi
}

// cdf returns Kcdf(u) = ∫_{−∞}^u K.
func (k excKernel) cdf(u float64) float64 {
	if k.theta == 1 {
		if u <= 0 {
			return 0.5 * math.Exp(u)
		}
		return 1 - 0.5*math.Exp(-u)
	}
	return 0.5 * math.Erfc(-u)
}

// sf returns 1 − Kcdf(u) without cancellation.
func (k excKernel) sf(u float64) float64 {
	if k.theta == 1 {
		if u >= 0 {
			return 0.5 * math.Exp(-u)
		}
		return 1 - 0.5*math.Exp(u)
	}
	return 0.5 * math.Erfc(u)
}

// cdfDiff returns Kcdf(a) − Kcdf(b) for a ≥ b without cancellation.
func (k excKernel) cdfDiff(a, b float64) float64 {
	switch {
	case b >= 0:
		return k.sf(b) - k.sf(a)
	case a <= 0:
		return k.cdf(a) - k.cdf(b)
	}
	return 1 - k.sf(a) - k.cdf(b)
}

// derivs fills d[m] = K^{(m)}(u), m = 0 … len(d)−1. For the Laplace
// kernel the branch (side = +1 for u > 0, −1 for u < 0) is given, so that
// u = 0 can be taken from either side.
func (k excKernel) derivs(u float64, side int, d []float64) {
	if k.theta == 1 {
		v := 0.5 * math.Exp(-math.Abs(u))
		s := -1.0 // d/du of e^{−u}
		if side < 0 {
			s = 1
		}
		for m := range d {
			d[m] = v
			v *= s
		}
		return
	}
	// K^{(m)} = (−1)^m H_m(u) K with the physicists' Hermite polynomials,
	// H_{m+1} = 2u H_m − 2m H_{m−1}
	kv := math.Exp(-u*u) / sqrtPi
	if kv == 0 { // also avoids 0·Inf from H_m at huge |u|
		for m := range d {
			d[m] = 0
		}
		return
	}
	hPrev, h := 0.0, 1.0
	sign := 1.0
	for m := range d {
		d[m] = sign * h * kv
		hPrev, h = h, 2*u*h-2*float64(m)*hPrev
		sign = -sign
	}
}

// momentCoeff returns m_k = μ_{2k}/(2k)! of the kernel.
func (k excKernel) momentCoeff(i int) float64 {
	if k.theta == 1 {
		return 1
	}
	m := 1.0
	for j := 1; j <= i; j++ {
		m /= 4 * float64(j)
	}
	return m
}

// excSource returns S_ρ(s) for s > 0.
func excSource(s, rho float64) float64 {
	x := 2 * math.Pi * math.Sqrt(rho/s)
	return 2 * math.Pi * math.Sqrt(rho) / -math.Expm1(-x)
}

// excTab is the table of R(z, u) for one kernel.
type excTab struct {
	kern        excKernel
	right, left octSide   // left: Gaussian only
	r0          []float64 // Chebyshev coefficients in u of R(0, u)
	nodes       int
	tail, yTail float64
}

var (
	excOnce [2]sync.Once
	excTabs [2]*excTab
)

// excTable returns the table for θ = 1 or 2, built at first use.
func excTable(theta float64) *excTab {
	i := 0
	if theta == 2 {
		i = 1
	}
	excOnce[i].Do(func() { excTabs[i] = newExcTab(theta) })
	return excTabs[i]
}

// excHalf returns F_{1/2}(z) and F_{1/2}'(z) of the kernel.
func excHalf(theta, z float64, pe *powEval) (f, df float64) {
	if theta == 1 {
		return UrbachEdgeF(z)
	}
	o := pe.eval(z, true, nil)
	return o.f, o.df
}

func newExcTab(theta float64) *excTab {
	t := &excTab{kern: excKernel{theta}}
	de := newDETable()
	const qtol = 1e-13
	u0, u1 := math.Log(excRhoLo), math.Log(excRhoHi)
	rhos := make([]float64, excNY)
	for j := range rhos {
		c := math.Cos(math.Pi * float64(j) / float64(excNY-1))
		rhos[j] = math.Exp(u0 + (c+1)/2*(u1-u0))
	}
	var pe powEval
	if theta == 2 {
		pe.init(gaussPair(powHalf), 2, true)
	}
	kern := t.kern
	norm := func(z, rho float64) float64 {
		f, _ := excHalf(theta, z, &pe)
		return 2*math.Pi*math.Sqrt(rho)*kern.cdf(z) + f
	}
	// X(z) for z ≥ 0: ∫_0^z K(z−s)S ds + ∫_z^∞ K(s−z)S ds
	xRight := func(z, rho float64) float64 {
		var sum float64
		if z > 0 {
			lo := math.Max(0, z-40)
			if theta == 1 {
				lo = math.Max(0, z-750)
			}
			a, _, _ := de.tanhSinh2(func(da, db float64) (float64, float64) {
				return kern.k(db) * excSource(lo+da, rho), 0
			}, lo, z, qtol)
			sum += a
		}
		b, _, _ := de.expSinh2(func(v float64) (float64, float64) {
			return kern.k(v) * excSource(z+v, rho), 0
		}, 1, qtol)
		return sum + b
	}
	memo := map[[3]float64]float64{}
	val := func(x float64, k, j int, left bool) float64 {
		key := [3]float64{x, float64(j), 0}
		if left {
			key[2] = 1
		}
		if v, ok := memo[key]; ok {
			return v
		}
		rho := rhos[j]
		var v float64
		if !left {
			v = xRight(x, rho) / norm(x, rho)
		} else {
			// Gaussian, z = −x: X·e^{x²} and N·e^{x²} without underflow
			w := x
			xs, _, _ := de.expSinh2(func(s float64) (float64, float64) {
				return math.Exp(-s*(2*w+s)) / sqrtPi * excSource(s, rho), 0
			}, math.Min(1, 1/(2*w)), qtol)
			lnF := pe.lnF(-w, nil)
			ns := 2*math.Pi*math.Sqrt(rho)*0.5*specfun.Erfcx(w) + math.Exp(lnF+w*w)
			v = xs / ns
		}
		memo[key] = v
		return v
	}
	const ttol = 1e-11
	t.right = buildOct2(excKLo, excKHiR, excNY, func(z float64, k, j int) float64 { return val(z, k, j, false) }, ttol)
	if theta == 2 {
		t.left = buildOct2(excKLo, excKHiL, excNY, func(w float64, k, j int) float64 { return val(w, k, j, true) }, ttol)
	}
	r0 := make([]float64, excNY)
	for j, rho := range rhos {
		r0[j] = xRight(0, rho) / norm(0, rho)
	}
	t.r0 = lobattoCoeffs(r0)
	t.nodes = len(memo) + excNY
	t.tail = math.Max(t.right.tailErr, t.left.tailErr)
	t.yTail = t.right.yTail()
	if theta == 2 {
		t.yTail = math.Max(t.yTail, t.left.yTail())
	}
	return t
}
