package model

import (
	"math"
	"sync"

	"gonum.org/v1/gonum/mathext"
)

// Convolutions of a power law with the generalised broadening kernel of
// Katahara & Hillhouse (J. Appl. Phys. 116, 173504, 2014), in units of the
// kernel width γ:
//
//	F_a(z; θ) = ∫_0^∞ K_θ(z − s) s^a ds,   K_θ(u) = exp(−|u|^θ) / (2Γ(1 + 1/θ)),
//
// for a ∈ {−1/2, 1/2, 1, 3/2, 2}. A band c·(E′ − E₀)^r broadened by
// G(u) = K_θ(u/γ)/γ is c·γ^r F_r((E − E₀)/γ), and dF_r/dz = r F_{r−1}.
// Apart from θ = 1 (laptab.go) and θ = 2 with integer a there is no closed
// form, so F_a is tabulated once, at first use, by quadrature (dequad.go)
// on octave tables (octtab.go), in a form that keeps the relative accuracy
// in both tails:
//
//   - z < 0, w = −z: ψ(w) = ln F_a(−w) for w < 1, and
//     ψ(w) = ln F_a(−w) + w^θ + (a+1)(θ−1) ln w for w ≥ 1, which takes out
//     the leading Laplace-method behaviour F ≈ c₀Γ(a+1)(θw^{θ−1})^{−(a+1)}
//     e^{−w^θ} so that what is left is smooth and nearly constant in w
//     (ln w itself would cost a Chebyshev degree of ~20 per octave); F
//     underflows to 0 beyond the table.
//   - z > 0: φ(z) = F_a(z) for z < 1 and F_a(z)/z^a for z ≥ 1 (→ 1 + O(z⁻²));
//     beyond the table the asymptotic series
//     F_a = Σ_k C(a, 2k) μ_{2k} z^{a−2k},  μ_{2k} = Γ((2k+1)/θ)/Γ(1/θ)
//     (the kernel's even moments; only exponentially small terms are
//     dropped, below e^{−z^θ}).
//   - |z| below the first octave (2^{−14} ≈ 6e-5): the chord between
//     F_a(0) = Γ((a+1)/θ)/(2Γ(1/θ)) and the first node, exact to
//     F''z²/8 + O(|z|^{a+θ+1}) < 1e-9 relative.
//
// For the free-θ kernel every octave coefficient is itself a Chebyshev
// series in η = ln θ on [ln 0.8, ln 3] (buildOct2).
//
// Build tolerances (on Chebyshev tails and pieces, in ψ or φ, i.e. about
// relative): 2e-12 for the Gaussian and 2e-10 for free θ, for F_a and
// F_{a−1} alike; in θ the free-θ tables' Chebyshev tails are below 6e-11
// (29 nodes: fewer leave ∂F/∂θ, the derivative of that series, worse than
// 1e-6).
// Measured against adaptive quadrature of the defining integral
// (TestFamilyQuadrature): Gaussian 1.3e-12, free θ 1.2e-10 relative over
// z from −30 to 150.

// Kernel exponent range of the free-θ tail (see thetaParam).
const (
	thetaMin, thetaMax = 0.8, 3.0
	thetaNY            = 29 // Chebyshev–Lobatto nodes in η = ln θ
)

// powKind selects the source exponent a by 2a.
type powKind int

const (
	powMinusHalf powKind = -1
	powHalf      powKind = 1
	powOne       powKind = 2
	powThreeHalf powKind = 3
	powTwo       powKind = 4
)

func (k powKind) a() float64 { return float64(k) / 2 }

// spow returns x^a for a = k/2, x ≥ 0.
func spow(x float64, k powKind) float64 {
	switch k {
	case powMinusHalf:
		return 1 / math.Sqrt(x)
	case powHalf:
		return math.Sqrt(x)
	case powOne:
		return x
	case powThreeHalf:
		return x * math.Sqrt(x)
	case powTwo:
		return x * x
	}
	panic("model: unknown power")
}

// kernelNorm returns c₀ = 1/(2Γ(1 + 1/θ)).
func kernelNorm(theta float64) float64 { return 1 / (2 * math.Gamma(1+1/theta)) }

// kernelPow returns u^θ for u ≥ 0 (build time only). exp(θ·ln u) is
// twice as fast as math.Pow and exact to ~1e-16·|θ ln u| relative, i.e.
// to ~1e-13 where the kernel e^{−u^θ} is still above the underflow.
func kernelPow(u, theta float64) float64 {
	switch theta {
	case 2:
		return u * u
	case 1:
		return u
	}
	if u == 0 {
		return 0
	}
	return math.Exp(theta * math.Log(u))
}

// kernelMoment returns μ_{2k} = Γ((2k+1)/θ)/Γ(1/θ) and d ln μ_{2k}/dθ.
func kernelMoment(k int, theta float64) (mu, dlnmu float64) {
	a, b := float64(2*k+1)/theta, 1/theta
	la, _ := math.Lgamma(a)
	lb, _ := math.Lgamma(b)
	mu = math.Exp(la - lb)
	dlnmu = (-float64(2*k+1)*mathext.Digamma(a) + mathext.Digamma(b)) / (theta * theta)
	return mu, dlnmu
}

// powZero returns F_a(0; θ) = Γ((a+1)/θ)/(2Γ(1/θ)) and ∂/∂θ of it.
func powZero(k powKind, theta float64) (f0, df0 float64) {
	a1 := (k.a() + 1) / theta
	la, _ := math.Lgamma(a1)
	lb, _ := math.Lgamma(1 / theta)
	f0 = math.Exp(la-lb) / 2
	df0 = f0 * (-(k.a()+1)*mathext.Digamma(a1) + mathext.Digamma(1/theta)) / (theta * theta)
	return f0, df0
}

// Octave ranges (see powPair).
const (
	powKLo    = -13 // first octave [2^{−14}, 2^{−13})
	powMaxAsy = 40  // largest number of asymptotic terms
)

// powRange returns the last octaves: left to where F underflows for every
// θ of the kernel, right to where the asymptotic series is exact to 1e-15.
func powRange(theta float64) (kHiL, kHiR int) {
	if theta == 2 {
		return 5, 4 // w² ≥ 1024 > 745 + ψ; e^{−z²} < 1e-111 at z = 16
	}
	return 12, 7 // w^0.8 ≥ 776 at w = 4096; e^{−128^0.8} ≈ 1e-21
}

// powPair is the table of F_a and F_{a−1} for one kernel, a fixed θ or the
// free-θ range: a band with exponent r needs F_r for α and rF_{r−1} = F_r'
// for ∂α/∂E_g.
type powPair struct {
	k      powKind // a = k/2 (the pair holds a and a−1)
	theta  float64 // fixed exponent; 0 for the free-θ table
	fl, fr octSide // F_a: left ψ, right φ
	gl, gr octSide // F_{a−1}
	// fixed θ only: F(0) and the asymptotic series coefficients
	// β_k = C(a, 2k)·μ_{2k} of F_a (F_{a−1} follows from F_a' = aF_{a−1}).
	f0, g0 float64
	beta   []float64
	// build statistics, reported by the tests
	nodes        int
	tailF, tailG float64 // largest t-truncation coefficient
	yTail        float64 // largest y-truncation coefficient (free θ)
}

// leftShift returns the analytic part taken out of ψ for w ≥ 1:
// (a+1)(θ−1) ln w.
func leftShift(k powKind, theta, lnw float64) float64 {
	return (k.a() + 1) * (theta - 1) * lnw
}

// newPowPair builds the table; theta = 0 means the free-θ range.
func newPowPair(k powKind, theta float64) *powPair {
	p := &powPair{k: k, theta: theta}
	de := newDETable()
	const qtol = 1e-13
	ka, kg := k, k-2
	kHiL, kHiR := powRange(theta)
	thetas := []float64{theta}
	ny := 1
	if theta == 0 {
		ny = thetaNY
		thetas = make([]float64, ny)
		eta0, eta1 := math.Log(thetaMin), math.Log(thetaMax)
		for j := range thetas {
			u := math.Cos(math.Pi * float64(j) / float64(ny-1))
			thetas[j] = math.Exp(eta0 + (u+1)/2*(eta1-eta0))
		}
	}
	type key struct {
		x    float64
		k, j int
	}
	type pair struct{ f, g float64 }
	memoR, memoL := map[key]pair{}, map[key]pair{}
	right := func(z float64, oct, j int) pair {
		if v, ok := memoR[key{z, oct, j}]; ok {
			return v
		}
		th := thetas[j]
		f, g := powQuadRight(de, z, th, ka, kg, qtol)
		c0 := kernelNorm(th)
		f, g = c0*f, c0*g
		if oct >= 1 { // z ≥ 1
			f, g = f/spow(z, ka), g/spow(z, kg)
		}
		memoR[key{z, oct, j}] = pair{f, g}
		return memoR[key{z, oct, j}]
	}
	left := func(w float64, oct, j int) pair {
		if v, ok := memoL[key{w, oct, j}]; ok {
			return v
		}
		th := thetas[j]
		f, g := powQuadLeft(de, w, th, ka, kg, qtol)
		c0 := kernelNorm(th)
		// ln(c₀·f) = ln F + w^θ (powQuadLeft takes e^{−w^θ} out)
		f, g = math.Log(c0*f), math.Log(c0*g)
		if oct <= 0 { // w < 1
			wt := kernelPow(w, th)
			f, g = f-wt, g-wt
		} else {
			lw := math.Log(w)
			f += leftShift(ka, th, lw)
			g += leftShift(kg, th, lw)
		}
		memoL[key{w, oct, j}] = pair{f, g}
		return memoL[key{w, oct, j}]
	}
	// F_{a−1} enters h = a(F_a − zF_{a−1}), the bracket of ∂α/∂γ, which
	// cancels to O(z⁻²) of F_a at large z: it needs the same tolerance.
	tolF, tolG := 2e-12, 2e-12
	if theta == 0 {
		tolF, tolG = 2e-10, 2e-10
	}
	build := func(kHi int, tol float64, g func(x float64, k, j int) float64) octSide {
		if ny == 1 {
			return buildOct1(powKLo, kHi, func(x float64, k int) float64 { return g(x, k, 0) }, tol)
		}
		return buildOct2(powKLo, kHi, ny, g, tol)
	}
	p.fr = build(kHiR, tolF, func(z float64, k, j int) float64 { return right(z, k, j).f })
	p.fl = build(kHiL, tolF, func(w float64, k, j int) float64 { return left(w, k, j).f })
	p.gr = build(kHiR, tolG, func(z float64, k, j int) float64 { return right(z, k, j).g })
	p.gl = build(kHiL, tolG, func(w float64, k, j int) float64 { return left(w, k, j).g })
	p.nodes = len(memoL) + len(memoR)
	p.tailF = math.Max(p.fl.tailErr, p.fr.tailErr)
	p.tailG = math.Max(p.gl.tailErr, p.gr.tailErr)
	if ny > 1 {
		p.yTail = math.Max(math.Max(p.fl.yTail(), p.fr.yTail()), math.Max(p.gl.yTail(), p.gr.yTail()))
		return p
	}
	p.f0, _ = powZero(ka, theta)
	p.g0, _ = powZero(kg, theta)
	p.beta = powAsymCoeffs(ka, theta, nil, nil)
	return p
}

// powAsymCoeffs returns β_k = C(a, 2k)·μ_{2k}(θ), k = 0, 1, … while the
// terms can still matter at the right end of the table (|β_k| z^{−2k} >
// 1e-18 at z = 2^{kHiR}), appended to buf (no allocation when buf has
// room); when dst is not nil it also fills dst[k] with dβ_k/dθ.
func powAsymCoeffs(k powKind, theta float64, buf, dst []float64) []float64 {
	_, kHiR := powRange(0)
	if theta == 2 {
		_, kHiR = powRange(2)
	}
	zr := math.Ldexp(1, kHiR)
	a := k.a()
	binom := 1.0 // C(a, 2i)
	for i := 0; i < powMaxAsy; i++ {
		mu, dl := kernelMoment(i, theta)
		b := binom * mu
		if i > 0 && (b == 0 || math.Abs(b)*math.Pow(zr, -2*float64(i)) < 1e-18) {
			break
		}
		buf = append(buf, b)
		if dst != nil {
			dst[i] = b * dl
		}
		binom *= (a - float64(2*i)) * (a - float64(2*i+1)) / (float64(2*i+1) * float64(2*i+2))
	}
	return buf
}

// powQuadRight returns ∫_0^∞ exp(−|z−s|^θ) s^a ds (without the kernel
// norm) for the two exponents, z > 0: tanh-sinh on [z − W, z] (the kernel
// is below e^{−750} beyond W = 750^{1/θ}; singularities s^a at 0 and the
// kernel's cusp at z) plus exp-sinh on [z, ∞).
func powQuadRight(de *deTable, z, theta float64, k0, k1 powKind, tol float64) (f, g float64) {
	lo := math.Max(0, z-math.Pow(750, 1/theta))
	p0, p1, _ := de.tanhSinh2(func(da, db float64) (float64, float64) {
		kv := math.Exp(-kernelPow(db, theta))
		if kv == 0 {
			return 0, 0
		}
		s := lo + da
		return kv * spow(s, k0), kv * spow(s, k1)
	}, lo, z, tol)
	q0, q1, _ := de.expSinh2(func(v float64) (float64, float64) {
		kv := math.Exp(-kernelPow(v, theta))
		if kv == 0 {
			return 0, 0
		}
		return kv * spow(z+v, k0), kv * spow(z+v, k1)
	}, 1, tol)
	return p0 + q0, p1 + q1
}

// powQuadLeft returns ∫_0^∞ exp(−[(w+s)^θ − w^θ]) s^a ds for the two
// exponents (w > 0): the tail integral with the decay e^{−w^θ} taken out.
// The bracket is computed as w^θ·expm1(θ·log1p(s/w)), without
// cancellation; the decay length of the integrand is min(1, 1/(θw^{θ−1})).
func powQuadLeft(de *deTable, w, theta float64, k0, k1 powKind, tol float64) (f, g float64) {
	wt := kernelPow(w, theta)
	L := 1.0
	if w > 1 {
		L = 1 / (theta * math.Pow(w, theta-1))
	}
	f, g, _ = de.expSinh2(func(s float64) (float64, float64) {
		var d float64
		if theta == 2 {
			d = s * (2*w + s)
		} else {
			d = wt * math.Expm1(theta*math.Log1p(s/w))
		}
		kv := math.Exp(-d)
		if kv == 0 {
			return 0, 0
		}
		return kv * spow(s, k0), kv * spow(s, k1)
	}, L, tol)
	return f, g
}

// Lazily built tables: Gaussian kernel (θ = 2) and free θ, per source
// exponent pair (indexed by powIndex).
var (
	gaussPairOnce, thetaPairOnce [3]sync.Once
	gaussPairs, thetaPairs       [3]*powPair
)

func powIndex(k powKind) int {
	switch k {
	case powHalf:
		return 0
	case powThreeHalf:
		return 1
	case powTwo:
		return 2
	}
	panic("model: no table for this power")
}

// gaussPair returns the Gaussian-kernel table of F_a, F_{a−1} (built at
// first use: about 3 ms, BenchmarkTableBuild).
func gaussPair(k powKind) *powPair {
	i := powIndex(k)
	gaussPairOnce[i].Do(func() { gaussPairs[i] = newPowPair(k, 2) })
	return gaussPairs[i]
}

// thetaPair returns the free-θ table of F_a, F_{a−1} (built at first use:
// about 0.3 s of one core, BenchmarkTableBuild; 29 exponents θ × ~630
// quadratures).
func thetaPair(k powKind) *powPair {
	i := powIndex(k)
	thetaPairOnce[i].Do(func() { thetaPairs[i] = newPowPair(k, 0) })
	return thetaPairs[i]
}

// powCaches holds the per-call collapse caches of a free-θ powEval (about
// 38 kB, on the caller's stack; nil for a fixed-θ table).
type powCaches struct {
	fl, fr, fly, fry, gl, gr octCache
}

// powEval evaluates a powPair at one θ for the duration of one Eval or
// Jacobian call. It lives on the caller's stack (no pointers into it are
// kept anywhere) and is not safe for concurrent use.
type powEval struct {
	p           *powPair
	k           powKind
	theta, a    float64
	free        bool
	yb          yBasis
	fl, fr      octView
	gl, gr      octView
	f0, f0t, g0 float64
	beta, betaT [powMaxAsy]float64
	nb          int
	xe, zR, wR  float64
	// chord ends at ±xe (computed at first need)
	edgeDone             [2]bool
	edgeF, edgeFt, edgeG [2]float64
}

// init prepares e for θ (ignored for a fixed-θ table); jac asks for
// θ-derivatives.
func (e *powEval) init(p *powPair, theta float64, jac bool) {
	*e = powEval{p: p, k: p.k, a: p.k.a(), free: p.theta == 0}
	e.xe = p.fr.lo()
	e.zR = p.fr.hi()
	e.wR = p.fl.hi()
	e.fl.init(&p.fl, jac)
	e.fr.init(&p.fr, jac)
	e.gl.init(&p.gl, false)
	e.gr.init(&p.gr, false)
	if !e.free {
		e.theta = p.theta
		e.f0, e.g0 = p.f0, p.g0
		e.nb = copy(e.beta[:], p.beta)
		return
	}
	e.theta = theta
	e.yb.set(math.Log(theta), math.Log(thetaMin), math.Log(thetaMax), thetaNY)
	e.f0, e.f0t = powZero(p.k, theta)
	e.g0, _ = powZero(p.k-2, theta)
	var dst []float64
	if jac {
		dst = e.betaT[:]
	}
	e.nb = len(powAsymCoeffs(p.k, theta, e.beta[:0:powMaxAsy], dst))
}

// powOut is F_a at one z: f = F_a, df = F_a' = aF_{a−1}, h = aF_a − zF_a'
// (the bracket of ∂/∂γ) and ft = ∂F_a/∂θ.
type powOut struct{ f, df, h, ft float64 }

// cache accessors (nil caches for a fixed-θ table)
func (c *powCaches) get() (fl, fr, fly, fry, gl, gr *octCache) {
	if c == nil {
		return
	}
	return &c.fl, &c.fr, &c.fly, &c.fry, &c.gl, &c.gr
}

// eval returns F_a(z); with jac, also F_a', h and ∂F_a/∂θ. c holds the
// caches of a free-θ table (nil for a fixed θ).
func (e *powEval) eval(z float64, jac bool, c *powCaches) (o powOut) {
	cfl, cfr, cfly, cfry, cgl, cgr := c.get()
	b := &e.yb
	switch {
	case z != z:
		return powOut{z, z, z, z}
	case z >= e.zR:
		return e.asym(z)
	case z > e.xe:
		if e.free && jac {
			o.f, o.ft = e.fr.valueY(z, b, cfr, cfry)
			o.ft /= e.theta // the table's y is η = ln θ
		} else {
			o.f = e.fr.value(z, b, cfr, cfry)
		}
		if jac {
			g := e.gr.value(z, b, cgr, nil)
			if z >= 1 {
				g *= spow(z, e.k-2)
			}
			o.df = e.a * g
		}
		if z >= 1 {
			zk := spow(z, e.k)
			o.f *= zk
			o.ft *= zk
		}
		o.h = e.a*o.f - z*o.df
		return o
	case z >= -e.xe:
		return e.chord(z, jac, c)
	case z > -1:
		// ψ = ln F (smooth near the gap)
		w := -z
		var psi, psiT float64
		if e.free && jac {
			psi, psiT = e.fl.valueY(w, b, cfl, cfly)
		} else {
			psi = e.fl.value(w, b, cfl, cfly)
		}
		o.f = math.Exp(psi)
		if jac {
			o.df = e.a * math.Exp(e.gl.value(w, b, cgl, nil))
			o.h = e.a*o.f - z*o.df
			o.ft = o.f * psiT / e.theta // the table's y is η = ln θ
		}
		return o
	case z > -e.wR:
		// ψ = ln F + w^θ + (a+1)(θ−1) ln w
		w := -z
		lw := math.Log(w)
		wt := w * w
		if e.theta != 2 {
			wt = math.Exp(e.theta * lw)
		}
		var psi, psiT float64
		if e.free && jac {
			psi, psiT = e.fl.valueY(w, b, cfl, cfly)
		} else {
			psi = e.fl.value(w, b, cfl, cfly)
		}
		o.f = math.Exp(psi - wt - leftShift(e.k, e.theta, lw))
		if jac && o.f != 0 {
			g := e.gl.value(w, b, cgl, nil) - wt - leftShift(e.k-2, e.theta, lw)
			o.df = e.a * math.Exp(g)
			o.h = e.a*o.f - z*o.df
			if e.free {
				// ∂ψ/∂θ = (1/θ)∂ψ/∂η; ∂/∂θ of w^θ + (a+1)(θ−1) ln w
				o.ft = o.f * (psiT/e.theta - wt*lw - (e.a+1)*lw)
			}
		}
		return o
	}
	return powOut{} // underflow
}

// lnF returns ln F_a(z) for −wR < z < 0, without underflow.
func (e *powEval) lnF(z float64, c *powCaches) float64 {
	cfl, _, cfly, _, _, _ := c.get()
	w := -z
	switch {
	case w <= e.xe:
		return math.Log(e.chord(z, false, c).f)
	case w < 1:
		return e.fl.value(w, &e.yb, cfl, cfly)
	}
	lw := math.Log(w)
	wt := w * w
	if e.theta != 2 {
		wt = math.Exp(e.theta * lw)
	}
	return e.fl.value(w, &e.yb, cfl, cfly) - wt - leftShift(e.k, e.theta, lw)
}

// chord returns F on |z| ≤ xe from the chord between F(0) and F(±xe).
func (e *powEval) chord(z float64, jac bool, c *powCaches) powOut {
	side := 0
	x := z
	if z < 0 {
		side, x = 1, -z
	}
	if !e.edgeDone[side] {
		xe := math.Nextafter(e.xe, 2*e.xe)
		if side == 1 {
			xe = -xe
		}
		// the θ-derivative at the edge needs the y caches, set up only for
		// a Jacobian call
		o := e.eval(xe, e.fl.withY || !e.free, c)
		e.edgeF[side], e.edgeFt[side], e.edgeG[side] = o.f, o.ft, o.df/e.a
		e.edgeDone[side] = true
	}
	u := x / e.xe
	var o powOut
	o.f = e.f0 + (e.edgeF[side]-e.f0)*u
	if jac {
		o.df = e.a * (e.g0 + (e.edgeG[side]-e.g0)*u)
		o.h = e.a*o.f - z*o.df
		o.ft = e.f0t + (e.edgeFt[side]-e.f0t)*u
	}
	return o
}

// asym returns the large-z series (z ≥ zR):
//
//	F = Σ β_k z^{a−2k},  F' = Σ (a−2k) β_k z^{a−1−2k},  h = Σ 2k β_k z^{a−2k},
//
// summed while the terms decrease (the series is asymptotic).
func (e *powEval) asym(z float64) (o powOut) {
	if math.IsInf(z, 1) {
		return powOut{z, 0, 0, 0}
	}
	za := math.Pow(z, e.a)
	inv2 := 1 / (z * z)
	zk := 1.0
	last := math.Inf(1)
	for i := 0; i < e.nb; i++ {
		term := e.beta[i] * zk
		if math.Abs(term) > last {
			break
		}
		last = math.Abs(term)
		o.f += term
		o.df += (e.a - float64(2*i)) * term
		o.h += float64(2*i) * term
		if e.free {
			o.ft += e.betaT[i] * zk
		}
		zk *= inv2
	}
	o.f *= za
	o.df *= za / z
	o.h *= za
	o.ft *= za
	return o
}
