package selfcheck

import "math"

// Double-exponential quadrature (Takahasi & Mori, Publ. RIMS Kyoto Univ.
// 9, 721, 1974), for the broadening check. It is written here because
// gonum/integrate has fixed-order rules (quad.Fixed: Gauss-Legendre on a
// finite interval, Gauss-Hermite) and Romberg/Simpson on sampled data, but
// no adaptive or double-exponential rule with an error estimate; the fixed
// rules converge only algebraically at the √(E′ − E_g) endpoint
// singularity. The tanh-sinh and exp-sinh rules below converge
// double-exponentially for integrands analytic inside the interval,
// whatever their algebraic behaviour at the ends, and refine until two
// levels agree.

// Quadrature limits: the refinement stops at maxLevel halvings of the
// initial step 1/2 (the last level has ≈ 2·4.5·2^11 ≈ 18 000 nodes).
const maxLevel = 11

// tanhSinh integrates f over an interval of length w > 0 with the nodes
// x = (w/2)(1 + tanh((π/2) sinh t)). f receives the distances da = x − a
// and db = b − x of each node from the two ends, each computed without
// cancellation, so that an endpoint singularity such as √(x − a) is
// evaluated accurately. It halves the step until two successive levels
// differ by at most relTol·|sum| (from the third level on) and returns the
// sum, the last difference as its error estimate, and whether it met
// relTol.
func tanhSinh(f func(da, db float64) float64, w, relTol float64) (sum, errEst float64, ok bool) {
	m := w / 2
	const tmax = 4.5 // weights at |t| = 4.5 are below 1e-60
	node := func(t float64) float64 {
		u := math.Pi / 2 * math.Sinh(t)
		da := 2 * m / (1 + math.Exp(-2*u))
		db := 2 * m / (1 + math.Exp(2*u))
		ch := math.Cosh(u)
		wt := m * math.Pi / 2 * math.Cosh(t) / (ch * ch)
		if wt == 0 || da == 0 || db == 0 {
			return 0
		}
		return wt * f(da, db)
	}
	return refine(node, -tmax, tmax, relTol)
}

// expSinh integrates f over [0, ∞) with the nodes x = L·exp((π/2) sinh t),
// for an f that decays at least like exp(−x/L) times a power of x; nodes
// beyond x = 800·L, where that factor underflows, are skipped. f receives
// x. Results as for tanhSinh.
func expSinh(f func(x float64) float64, l, relTol float64) (sum, errEst float64, ok bool) {
	node := func(t float64) float64 {
		u := math.Pi / 2 * math.Sinh(t)
		if u > math.Log(800) {
			return 0
		}
		x := l * math.Exp(u)
		if x == 0 {
			return 0
		}
		return x * math.Pi / 2 * math.Cosh(t) * f(x)
	}
	// At t = −5, x = L·e^{−116}: the omitted [0, x] is negligible.
	return refine(node, -5, 4, relTol)
}

// refine is the trapezoidal rule on [lo, hi] in t, halving the step from
// 1/2 and reusing the previous nodes.
func refine(node func(t float64) float64, lo, hi, relTol float64) (sum, errEst float64, ok bool) {
	h := 0.5
	var s float64
	for k := math.Ceil(lo / h); k*h <= hi; k++ {
		s += node(k * h)
	}
	est := s * h
	for level := 1; level <= maxLevel; level++ {
		h /= 2
		// New nodes are the odd multiples of h.
		k := math.Ceil(lo / h)
		if math.Mod(k, 2) == 0 {
			k++
		}
		for ; k*h <= hi; k += 2 {
			s += node(k * h)
		}
		next := s * h
		errEst = math.Abs(next - est)
		est = next
		if level >= 3 && errEst <= relTol*math.Abs(est) {
			return est, errEst, true
		}
	}
	return est, errEst, false
}
