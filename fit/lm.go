package fit

import (
	"context"
	"math"
	"math/bits"
	"sync"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// Constants of the trust-region update, as in Moré (1978), section 7.
const (
	p1    = 0.1
	p5    = 0.5
	p25   = 0.25
	p75   = 0.75
	p0001 = 1e-4
	p001  = 1e-3

	// epsilon is the float64 machine epsilon, 2⁻⁵².
	epsilon = 0x1p-52
	// dwarf is the smallest positive normal float64.
	dwarf = 0x1p-1022
)

// strategy is one way of running the Levenberg–Marquardt iteration.
type strategy struct {
	name string
	// jacScaling selects D = running maximum of the Jacobian column norms
	// (Moré 1978, eq. 6.3; MINPACK mode 1); false selects D = I.
	jacScaling bool
	// factor sets the initial trust-region radius Δ₀ = factor·‖D·p₀‖
	// (factor itself when p₀ = 0). Moré recommends 100; values down to 0.1
	// make the first steps more cautious (MINPACK-1 user guide, Moré,
	// Garbow and Hillstrom 1980, ANL-80-74, section 3).
	factor float64
}

// Strategy names reported in Result.Strategy.
const (
	// StrategyJacobianScaling is the primary strategy: D from the Jacobian
	// column norms, Δ₀ = 100·‖D·p₀‖.
	StrategyJacobianScaling = "lm-jacobian-scaling"
	// StrategyIdentityScaling is the first fallback: D = I, Δ₀ = 100·‖p₀‖.
	// It differs from the primary strategy in the shape of the trust region,
	// so it does not take the same long first steps in the directions of
	// weakly determined parameters.
	StrategyIdentityScaling = "lm-identity-scaling"
	// StrategyCautiousStep is the second fallback: D from the Jacobian
	// column norms and a small first trust region, Δ₀ = 0.1·‖D·p₀‖.
	StrategyCautiousStep = "lm-cautious-step"
)

var strategies = []strategy{
	{name: StrategyJacobianScaling, jacScaling: true, factor: 100},
	{name: StrategyIdentityScaling, jacScaling: false, factor: 100},
	{name: StrategyCautiousStep, jacScaling: true, factor: 0.1},
}

// config holds the settings with defaults applied.
type config struct {
	maxIter              int
	gtol, xtol, ftol     float64
	absoluteSigma        bool
	noFallback, noPolish bool
}

func newConfig(s *Settings, n int) config {
	c := config{
		maxIter: 200 * (n + 1),
		gtol:    1e-15,
		xtol:    1e-15,
		ftol:    1e-15,
	}
	if s == nil {
		return c
	}
	if s.MaxIterations > 0 {
		c.maxIter = s.MaxIterations
	}
	if s.GradTol > 0 {
		c.gtol = s.GradTol
	}
	if s.StepTol > 0 {
		c.xtol = s.StepTol
	}
	if s.FuncTol > 0 {
		c.ftol = s.FuncTol
	}
	c.absoluteSigma = s.AbsoluteSigma
	c.noFallback = s.NoFallback
	c.noPolish = s.NoPolish
	return c
}

// work holds every buffer of one LeastSquares call, so that the iterations
// themselves do not allocate. Works are recycled through workPool between
// calls (a batch fits thousands of spectra of similar size): getWork
// reslices a recycled work when its capacity suffices. Nothing a Result
// returns points into a work.
type work struct {
	m, n      int
	f         Func
	lower     []float64 // length n; -Inf where open
	upper     []float64 // length n; +Inf where open
	hasBounds bool
	typ       []float64 // finite-difference typical scales

	// rowScale, when not nil (length m), multiplies row i of the Jacobian
	// the user's function writes (Fit: −√w_i), applied while it is copied
	// into jt.
	rowScale []float64

	jac    *mat.Dense // m×n: what f.Jacobian writes (nil for finite differences)
	jacRaw []float64  // jac's backing data, stride n (recycled)
	// jt is the Jacobian J(jacX) transposed, n×m row-major: column j of J
	// is jt[j*m : j*m+m], contiguous, which is the layout every later
	// operation wants (column norms, Jᵀr, the Householder QR, JᵀJ).
	jt    []float64
	jacX  []float64 // the point jt was evaluated at
	jacOK bool      // jt holds a finite J(jacX)

	// qr is the working copy of the free columns of J that pivotedQR
	// overwrites with its reflectors; factX and factOK identify the point
	// whose factorisation w.r, w.jpvt, w.qtb and w.free hold.
	qr     []float64
	factX  []float64
	factOK bool
	qtb    []float64 // Qᵀr, length m (first nf entries used)
	jpvt   []int

	r      []float64 // nf×nf (stride nf): R in the upper triangle
	free   []int     // free[l] = global index of local column l
	nf     int
	colnrm []float64 // global Jacobian column norms
	dloc   []float64 // local copy of the scaling diagonal
	cnloc  []float64 // local copy of the column norms
	slocal []float64 // local step
	sdiag  []float64
	wa1    []float64
	wa2    []float64
	wa3    []float64
	wa4    []float64
	qnrm   []float64 // pivotedQR scratch

	diag []float64 // global scaling diagonal D
	step []float64 // global step
	grad []float64 // Jᵀr where x is on a bound (the active set)
	xfd  []float64 // finite differences: perturbed point
	fp   []float64 // finite differences: residuals
	fm   []float64 // finite differences: residuals
	xTry []float64
	fTry []float64
	f0   []float64 // r(init)

	// Buffers of Fit, recycled with the work.
	ev     Evaluator
	sqrtw  []float64
	negsw  []float64
	bounds []float64

	stats optimize.Stats
}

// workPool recycles works between LeastSquares and Fit calls.
var workPool sync.Pool

// grow returns s resliced to length n, reallocated when its capacity is
// too small (to the next power of two, so that the varying window sizes
// of a batch settle on a few sizes). The contents are not cleared.
func grow[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n, 1<<bits.Len(uint(n-1)))
	}
	return s[:n]
}

// getWork returns a work for m residuals and n parameters, recycled from
// workPool when possible; its buffers are sized but not initialised (see
// init).
func getWork(m, n int) *work {
	w, _ := workPool.Get().(*work)
	if w == nil {
		w = new(work)
	}
	w.m, w.n = m, n
	w.lower = grow(w.lower, n)
	w.upper = grow(w.upper, n)
	w.typ = grow(w.typ, n)
	w.jt = grow(w.jt, n*m)
	w.qr = grow(w.qr, n*m)
	w.jacX = grow(w.jacX, n)
	w.factX = grow(w.factX, n)
	w.qtb = grow(w.qtb, m)
	w.jpvt = grow(w.jpvt, n)
	w.r = grow(w.r, n*n)
	w.free = grow(w.free, n)
	for _, p := range []*[]float64{&w.colnrm, &w.dloc, &w.cnloc, &w.slocal, &w.sdiag, &w.wa1, &w.wa2, &w.wa3, &w.wa4,
		&w.qnrm, &w.diag, &w.step, &w.grad, &w.xfd, &w.xTry} {
		*p = grow(*p, n)
	}
	for _, p := range []*[]float64{&w.fp, &w.fm, &w.fTry, &w.f0} {
		*p = grow(*p, m)
	}
	return w
}

// putWork returns w to workPool. The caller must not use w, or any slice
// or closure that refers to its buffers, afterwards.
func putWork(w *work) {
	w.f = Func{}
	w.ev.Reset(nil, nil)
	w.rowScale = nil
	w.jac = nil
	workPool.Put(w)
}

// newWork returns a work initialised for f from init (tests use it; the
// solver uses getWork and init).
func newWork(f Func, init []float64, typ []float64) *work {
	w := getWork(f.M, len(init))
	w.init(f, init, typ)
	return w
}

// init prepares w (from getWork(f.M, len(init))) for a run of f.
func (w *work) init(f Func, init []float64, typ []float64) {
	m, n := w.m, w.n
	w.f = f
	w.hasBounds = false
	for j := range n {
		w.lower[j] = math.Inf(-1)
		w.upper[j] = math.Inf(1)
		if f.Lower != nil {
			w.lower[j] = f.Lower[j]
		}
		if f.Upper != nil {
			w.upper[j] = f.Upper[j]
		}
		if !math.IsInf(w.lower[j], -1) || !math.IsInf(w.upper[j], 1) {
			w.hasBounds = true
		}
	}
	for j := range n {
		switch {
		case typ != nil && typ[j] > 0 && !math.IsInf(typ[j], 1):
			w.typ[j] = typ[j]
		case init[j] != 0:
			w.typ[j] = math.Abs(init[j])
		default:
			w.typ[j] = 1
		}
	}
	w.jac = nil
	if f.Jacobian != nil {
		w.jacRaw = grow(w.jacRaw, m*n)
		w.jac = mat.NewDense(m, n, w.jacRaw)
	}
	w.jacOK, w.factOK = false, false
	w.nf = 0
	w.stats = optimize.Stats{}
}

// eval fills dst with r(x) and returns Σ r_i² and whether every residual
// is finite.
func (w *work) eval(dst, x []float64) (ss float64, ok bool) {
	w.stats.FuncEvaluations++
	w.f.Residuals(dst, x)
	ss = floats.Dot(dst, dst)
	if !math.IsNaN(ss) && !math.IsInf(ss, 0) {
		return ss, true // a NaN or ±Inf entry would make ss NaN or +Inf
	}
	for _, v := range dst {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return ss, false
		}
	}
	return ss, true // finite entries whose squares overflow
}

// normFromSS returns ‖v‖₂ given ss = Σ v_i² (see norm2).
func normFromSS(v []float64, ss float64) float64 {
	if ss > 0x1p-900 && ss < 0x1p900 {
		return math.Sqrt(ss)
	}
	return floats.Norm(v, 2)
}

// jacobian fills w.jt with J(x)ᵀ, analytically or by finite differences
// (fx = r(x) is needed by the one-sided formula at a bound), and w.colnrm
// with its column norms, and reports whether every entry is finite.
//
// J depends on x alone, so a second call at the same x reuses the first.
func (w *work) jacobian(x, fx []float64) bool {
	if w.jacOK && floats.Equal(x, w.jacX) {
		return true
	}
	w.jacOK, w.factOK = false, false
	w.stats.GradEvaluations++
	if w.f.Jacobian != nil {
		clear(w.jacRaw) // a Jacobian may set only its nonzero entries
		w.f.Jacobian(w.jac, x)
		w.transposeJacobian()
	} else if !w.fdJacobian(x, fx) {
		return false
	}
	// The column norms, which also show any entry that is not finite: a
	// NaN or ±Inf makes the sum of squares NaN or +Inf (and only then, or
	// on overflow, is each entry checked).
	for j := range w.n {
		col := w.jtCol(j)
		ss := floats.Dot(col, col)
		if math.IsNaN(ss) || math.IsInf(ss, 0) {
			for _, v := range col {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return false
				}
			}
		}
		w.colnrm[j] = normFromSS(col, ss)
	}
	copy(w.jacX, x)
	w.jacOK = true
	return true
}

// transposeJacobian copies the m×n matrix written by f.Jacobian into
// w.jt, transposed and with row i scaled by rowScale[i] (when not nil).
func (w *work) transposeJacobian() {
	m, n := w.m, w.n
	raw, jt := w.jacRaw[:m*n], w.jt[:n*m]
	switch {
	case n == 3 && w.rowScale != nil: // direct+urbach, the common case
		c0, c1, c2 := jt[:m], jt[m:2*m], jt[2*m:3*m]
		s := w.rowScale[:m]
		for i := range s {
			si, row := s[i], raw[3*i:3*i+3]
			c0[i], c1[i], c2[i] = si*row[0], si*row[1], si*row[2]
		}
	case w.rowScale != nil:
		for i, si := range w.rowScale[:m] {
			for j, v := range raw[i*n : i*n+n] {
				jt[j*m+i] = si * v
			}
		}
	default:
		for i := range m {
			for j, v := range raw[i*n : i*n+n] {
				jt[j*m+i] = v
			}
		}
	}
}

// jtCol returns column j of the Jacobian held in w.jt.
func (w *work) jtCol(j int) []float64 { return w.jt[j*w.m : j*w.m+w.m] }

// clip projects x onto the box [lower, upper] and reports whether it moved.
func (w *work) clip(x []float64) bool {
	if !w.hasBounds {
		return false
	}
	moved := false
	for j, v := range x {
		if v < w.lower[j] {
			x[j] = w.lower[j]
			moved = true
		} else if v > w.upper[j] {
			x[j] = w.upper[j]
			moved = true
		}
	}
	return moved
}

// factorize builds the column-pivoted QR factorisation J_F·P = Q·R of the
// columns F of J that are free at x, and Qᵀr. A parameter on a bound is held
// fixed for this iteration when the steepest-descent direction −Jᵀr points
// out of the box (a projected-gradient active set, as in Kanzow, Yamashita
// and Fukushima, J. Comput. Appl. Math. 172, 375, 2004); every other
// parameter is free. It returns nf.
//
// J is kept transposed (w.jt), so its columns are contiguous, and the
// factorisation is a Householder QR with column pivoting written for this
// layout (pivotedQR, which says why it is not gonum's). Only the damped
// solve (qrsolv) is also our own, because LAPACK has no routine for
// updating R by a diagonal.
//
// The factorisation depends on x alone (J = J(x), r = r(x)), so a second
// call at the same x, as when a run ends on a rejected step and the polish
// starts, reuses the first; lmpar and qrsolv keep the upper triangle of R.
func (w *work) factorize(fx []float64, x []float64) int {
	m, n := w.m, w.n
	if w.factOK && floats.Equal(x, w.factX) {
		return w.nf
	}
	nf := 0
	for j := range n {
		// Jᵀr is needed only where x is on a bound.
		if w.hasBounds && (x[j] <= w.lower[j] || x[j] >= w.upper[j]) {
			w.grad[j] = floats.Dot(w.jtCol(j), fx)
			if (x[j] <= w.lower[j] && w.grad[j] > 0) || (x[j] >= w.upper[j] && w.grad[j] < 0) {
				continue
			}
		}
		w.free[nf] = j
		nf++
	}
	w.nf = nf
	copy(w.factX, x)
	w.factOK = true
	if nf == 0 {
		return 0
	}
	for l := range nf {
		j := w.free[l]
		copy(w.qr[l*m:l*m+m], w.jtCol(j))
		w.dloc[l] = w.diag[j]
		w.cnloc[l] = w.colnrm[j]
		w.qnrm[l] = w.colnrm[j]
	}
	copy(w.qtb, fx)
	pivotedQR(w.qr[:nf*m], m, nf, w.qtb, w.r[:nf*nf], w.jpvt[:nf], w.qnrm)
	return nf
}

// gradCosine returns max_j |J_jᵀr| / (‖J_j‖·‖r‖) over the free columns,
// computed from R and Qᵀr (MINPACK's gnorm).
func (w *work) gradCosine(fnorm float64) float64 {
	nf := w.nf
	if fnorm == 0 {
		return 0
	}
	g := 0.0
	for j := range nf {
		l := w.jpvt[j]
		cn := w.cnloc[l]
		if cn == 0 {
			continue
		}
		s := 0.0
		for i := 0; i <= j; i++ {
			s += w.r[i*nf+j] * (w.qtb[i] / fnorm)
		}
		g = max(g, math.Abs(s/cn))
	}
	return g
}

// lmpar finds the damping parameter λ ≥ 0 and the step x = −p that solve
//
//	min ‖J p + r‖² + λ‖D p‖²   with   ‖D p‖ ≈ Δ  (or λ = 0 and ‖D p‖ ≤ Δ),
//
// to within 10 % of Δ, by Moré's (1978, section 5) safeguarded Newton
// iteration on φ(λ) = ‖D p(λ)‖ − Δ between the bounds l₀ = −φ(0)/φ′(0) and
// u₀ = ‖(JD⁻¹)ᵀr‖/Δ. It works on the local (free) problem held in w.r, w.jpvt,
// w.dloc and w.qtb, and leaves the solution of the damped system in
// w.slocal (so the step is −w.slocal). par is the starting guess and
// the return value the accepted λ.
func (w *work) lmpar(delta, par float64) float64 {
	n := w.nf
	r, ipvt, diag, qtb := w.r, w.jpvt, w.dloc, w.qtb
	x, sdiag, wa1, wa2 := w.slocal, w.sdiag, w.wa1, w.wa2

	// Gauss–Newton direction; least-squares solution if R is singular.
	nsing := n
	for j := range n {
		wa1[j] = qtb[j]
		if r[j*n+j] == 0 && nsing == n {
			nsing = j
		}
		if nsing < n {
			wa1[j] = 0
		}
	}
	for j := nsing - 1; j >= 0; j-- {
		wa1[j] /= r[j*n+j]
		t := wa1[j]
		for i := range j {
			wa1[i] -= r[i*n+j] * t
		}
	}
	for j := range n {
		x[ipvt[j]] = wa1[j]
	}

	for j := range n {
		wa2[j] = diag[j] * x[j]
	}
	dxnorm := floats.Norm(wa2[:n], 2)
	fp := dxnorm - delta
	if fp <= p1*delta {
		return 0
	}

	// Lower bound parl from the Newton step when R is nonsingular.
	parl := 0.0
	if nsing >= n {
		for j := range n {
			l := ipvt[j]
			wa1[j] = diag[l] * (wa2[l] / dxnorm)
		}
		for j := range n {
			s := 0.0
			for i := range j {
				s += r[i*n+j] * wa1[i]
			}
			wa1[j] = (wa1[j] - s) / r[j*n+j]
		}
		t := floats.Norm(wa1[:n], 2)
		parl = ((fp / delta) / t) / t
	}

	// Upper bound paru.
	for j := range n {
		s := 0.0
		for i := 0; i <= j; i++ {
			s += r[i*n+j] * qtb[i]
		}
		wa1[j] = s / diag[ipvt[j]]
	}
	gnorm := floats.Norm(wa1[:n], 2)
	paru := gnorm / delta
	if paru == 0 {
		paru = dwarf / math.Min(delta, p1)
	}

	par = math.Max(par, parl)
	par = math.Min(par, paru)
	if par == 0 {
		par = gnorm / dxnorm
	}

	for iter := 1; ; iter++ {
		if par == 0 {
			par = math.Max(dwarf, p001*paru)
		}
		t := math.Sqrt(par)
		for j := range n {
			wa1[j] = t * diag[j]
		}
		w.qrsolv(wa1)
		for j := range n {
			wa2[j] = diag[j] * x[j]
		}
		dxnorm = floats.Norm(wa2[:n], 2)
		prev := fp
		fp = dxnorm - delta
		if math.Abs(fp) <= p1*delta || (parl == 0 && fp <= prev && prev < 0) || iter == 10 {
			return par
		}
		// Newton correction.
		for j := range n {
			l := ipvt[j]
			wa1[j] = diag[l] * (wa2[l] / dxnorm)
		}
		for j := range n {
			wa1[j] /= sdiag[j]
			t := wa1[j]
			for i := j + 1; i < n; i++ {
				wa1[i] -= r[i*n+j] * t
			}
		}
		t = floats.Norm(wa1[:n], 2)
		parc := ((fp / delta) / t) / t
		if fp > 0 {
			parl = math.Max(parl, par)
		}
		if fp < 0 {
			paru = math.Min(paru, par)
		}
		par = math.Max(parl, par+parc)
	}
}

// qrsolv solves the damped least-squares system
//
//	[ R    ] Pᵀx ≈ [ Qᵀr ]
//	[ PᵀDP ]       [  0  ]      with D = diag(d)
//
// by eliminating the diagonal rows with Givens rotations, which gives the
// upper-triangular S with SᵀS = RᵀR + PᵀD²P (Moré 1978, section 3). The
// strict lower triangle of w.r receives Sᵀ (the upper triangle, R, is kept),
// w.sdiag the diagonal of S and w.slocal the solution x. A singular S gives
// the least-squares solution with the trailing components set to zero.
func (w *work) qrsolv(d []float64) {
	n := w.nf
	r, ipvt, qtb := w.r, w.jpvt, w.qtb
	x, sdiag, wa := w.slocal, w.sdiag, w.wa3

	for j := range n {
		for i := j; i < n; i++ {
			r[i*n+j] = r[j*n+i]
		}
		x[j] = r[j*n+j]
		wa[j] = qtb[j]
	}
	for j := range n {
		l := ipvt[j]
		if d[l] != 0 {
			for k := j; k < n; k++ {
				sdiag[k] = 0
			}
			sdiag[j] = d[l]
			qtbpj := 0.0
			for k := j; k < n; k++ {
				if sdiag[k] == 0 {
					continue
				}
				var sin, cos float64
				rkk := r[k*n+k]
				if math.Abs(rkk) < math.Abs(sdiag[k]) {
					cotan := rkk / sdiag[k]
					sin = p5 / math.Sqrt(p25+p25*cotan*cotan)
					cos = sin * cotan
				} else {
					tan := sdiag[k] / rkk
					cos = p5 / math.Sqrt(p25+p25*tan*tan)
					sin = cos * tan
				}
				r[k*n+k] = cos*rkk + sin*sdiag[k]
				t := cos*wa[k] + sin*qtbpj
				qtbpj = -sin*wa[k] + cos*qtbpj
				wa[k] = t
				for i := k + 1; i < n; i++ {
					t := cos*r[i*n+k] + sin*sdiag[i]
					sdiag[i] = -sin*r[i*n+k] + cos*sdiag[i]
					r[i*n+k] = t
				}
			}
		}
		sdiag[j] = r[j*n+j]
		r[j*n+j] = x[j]
	}
	nsing := n
	for j := range n {
		if sdiag[j] == 0 && nsing == n {
			nsing = j
		}
		if nsing < n {
			wa[j] = 0
		}
	}
	for j := nsing - 1; j >= 0; j-- {
		s := 0.0
		for i := j + 1; i < nsing; i++ {
			s += r[i*n+j] * wa[i]
		}
		wa[j] = (wa[j] - s) / sdiag[j]
	}
	for j := range n {
		x[ipvt[j]] = wa[j]
	}
}

// run is the state a strategy ends in.
type run struct {
	strategy string
	x        []float64
	fvec     []float64
	ssr      float64
	status   optimize.Status
	err      error // the context's error after a cancellation

	// Set by assess.
	degenerate bool
	cov        *mat.SymDense
	stdErr     []float64
	cond       float64
	covErr     error
}

// lm runs the trust-region Levenberg–Marquardt iteration of Moré (1978) from
// x0 with strategy st. The trust-region radius Δ is updated from the gain
// ratio ρ = actual/predicted reduction: ρ ≤ ¼ shrinks Δ by a factor in
// [0.1, 0.5] chosen by Moré's quadratic interpolation (eq. 7.1 there),
// ρ ≥ ¾ (or λ = 0) sets Δ = 2‖D p‖; a step is accepted when ρ ≥ 10⁻⁴.
// Trial points are projected onto the box; the predicted reduction is then
// computed for the projected step. x0 and f0 = r(x0) are not modified.
func (w *work) lm(ctx context.Context, st strategy, x0, f0 []float64, cfg config) run {
	n := w.n
	x := append([]float64(nil), x0...)
	fvec := append([]float64(nil), f0...)
	res := run{strategy: st.name, x: x, fvec: fvec}

	fnorm := norm2(fvec)
	var delta, xnorm, par float64
	outer := 1
	trials := 0
	for {
		if err := ctx.Err(); err != nil {
			res.status, res.err = optimize.Failure, err
			break
		}
		if !w.jacobian(x, fvec) {
			res.status = optimize.Failure
			break
		}
		nf := w.factorize(fvec, x)
		if outer == 1 {
			for j := range n {
				w.diag[j] = 1
				if st.jacScaling && w.colnrm[j] != 0 {
					w.diag[j] = w.colnrm[j]
				}
			}
			for l := range nf {
				w.dloc[l] = w.diag[w.free[l]]
			}
			xnorm = scaledNorm(w.diag, x)
			delta = st.factor * xnorm
			if delta == 0 {
				delta = st.factor
			}
		}
		gnorm := 0.0
		if nf > 0 {
			gnorm = w.gradCosine(fnorm)
		}
		if gnorm <= cfg.gtol {
			res.status = optimize.GradientThreshold
			break
		}
		if st.jacScaling {
			for j := range n {
				w.diag[j] = math.Max(w.diag[j], w.colnrm[j])
			}
			for l := range nf {
				w.dloc[l] = w.diag[w.free[l]]
			}
		}

		status := optimize.NotTerminated
		for {
			if err := ctx.Err(); err != nil {
				res.status, res.err = optimize.Failure, err
				return w.finish(res, fvec)
			}
			if trials >= cfg.maxIter {
				status = optimize.IterationLimit
				break
			}
			trials++
			w.stats.MajorIterations++

			par = w.lmpar(delta, par)
			for j := range n {
				w.step[j] = 0
			}
			for l := range nf {
				w.step[w.free[l]] = -w.slocal[l]
			}
			for j := range n {
				w.xTry[j] = x[j] + w.step[j]
			}
			clipped := w.clip(w.xTry)
			if clipped {
				for j := range n {
					w.step[j] = w.xTry[j] - x[j]
				}
			}
			pnorm := scaledNorm(w.diag, w.step)
			if outer == 1 {
				delta = math.Min(delta, pnorm)
			}
			fnorm1 := math.Inf(1)
			if ss, ok := w.eval(w.fTry, w.xTry); ok {
				fnorm1 = normFromSS(w.fTry, ss)
			}
			actred := -1.0
			if p1*fnorm1 < fnorm {
				q := fnorm1 / fnorm
				actred = 1 - q*q
			}
			// u = R·Pᵀ·s over the free columns: J s = Q u.
			u := w.wa4[:nf]
			for j := range nf {
				u[j] = 0
			}
			for j := range nf {
				t := w.step[w.free[w.jpvt[j]]]
				for i := 0; i <= j; i++ {
					u[i] += w.r[i*nf+j] * t
				}
			}
			var prered, dirder float64
			if !clipped {
				t1 := floats.Norm(u, 2) / fnorm
				t2 := math.Sqrt(par) * pnorm / fnorm
				prered = t1*t1 + t2*t2/p5
				dirder = -(t1*t1 + t2*t2)
			} else {
				dot := floats.Dot(u, w.qtb[:nf]) / fnorm
				un := floats.Norm(u, 2) / fnorm
				prered = -(2*dot + un*un)
				dirder = dot
			}
			ratio := 0.0
			if prered != 0 {
				ratio = actred / prered
			}
			if ratio <= p25 {
				t := p5
				if actred < 0 {
					t = p5 * dirder / (dirder + p5*actred)
				}
				if p1*fnorm1 >= fnorm || t < p1 || math.IsNaN(t) {
					t = p1
				}
				delta = t * math.Min(delta, pnorm/p1)
				par /= t
			} else if par == 0 || ratio >= p75 {
				delta = pnorm / p5
				par *= p5
			}
			accepted := ratio >= p0001
			if accepted {
				copy(x, w.xTry)
				copy(fvec, w.fTry)
				xnorm = scaledNorm(w.diag, x)
				fnorm = fnorm1
				outer++
			}

			// Convergence tests (Moré 1978, section 8).
			fconv := math.Abs(actred) <= cfg.ftol && prered <= cfg.ftol && p5*ratio <= 1
			xconv := delta <= cfg.xtol*xnorm
			switch {
			case fconv:
				status = optimize.FunctionConvergence
			case xconv:
				status = optimize.StepConvergence
			// No further progress is possible in float64: MINPACK's
			// info 6 and 7, reported as convergence at machine precision.
			case math.Abs(actred) <= epsilon && prered <= epsilon && p5*ratio <= 1:
				status = optimize.FunctionConvergence
			case delta <= epsilon*xnorm:
				status = optimize.StepConvergence
			case delta == 0:
				status = optimize.StepConvergence
			// The linear model predicts a relative reduction of the SSR
			// below its own rounding (4ε): no step can be confirmed or
			// rejected by evaluating the SSR any more, so the iteration
			// has converged to working precision (the polish then takes
			// the Gauss–Newton steps that need no such confirmation).
			case prered <= 4*epsilon && !math.IsNaN(prered):
				status = optimize.FunctionConvergence
			}
			if status != optimize.NotTerminated || accepted {
				break
			}
		}
		if status != optimize.NotTerminated {
			res.status = status
			break
		}
	}
	return w.finish(res, fvec)
}

// finish sets the SSR of a run.
func (w *work) finish(res run, fvec []float64) run {
	res.ssr = floats.Dot(fvec, fvec)
	return res
}

// scaledNorm returns ‖diag(d)·v‖₂.
func scaledNorm(d, v []float64) float64 {
	scale, ssq := 0.0, 1.0
	for j, vj := range v {
		t := math.Abs(d[j] * vj)
		if t == 0 {
			continue
		}
		if scale < t {
			ssq = 1 + ssq*(scale/t)*(scale/t)
			scale = t
		} else {
			ssq += (t / scale) * (t / scale)
		}
	}
	return scale * math.Sqrt(ssq)
}

// polish takes Gauss–Newton steps x ← x − (J_F)⁺ r from the end of a run,
// each the least-squares solution of J_F s = −r from the pivoted QR with the
// columns whose |R_jj| ≤ n·ε·|R_11| dropped (a basic solution). The
// Levenberg–Marquardt tests stop when the sum of squares stops changing,
// which leaves the parameters correct to about √FuncTol relative to their
// uncertainty; Gauss–Newton converges quadratically on small-residual
// problems and recovers the remaining digits. A step is kept only while it
// shrinks and the SSR does not grow beyond rounding (16ε relative); at
// most 10 steps. A step no larger than the rounding of x itself,
// ‖D s‖ ≤ ε·‖D x‖ (D the column norms), ends the polish before it is
// evaluated: it cannot change x by more than its last bits, and not taking
// it leaves the Jacobian and factorisation of the final x in place for the
// covariance (assess), one residual and one Jacobian evaluation fewer.
func (w *work) polish(ctx context.Context, res *run) {
	n := w.n
	x, fvec := res.x, res.fvec
	prev := math.Inf(1)
	for range 10 {
		if ctx.Err() != nil {
			return
		}
		if !w.jacobian(x, fvec) {
			return
		}
		nf := w.factorize(fvec, x)
		if nf == 0 {
			return
		}
		r := w.r
		tol := float64(nf) * epsilon * math.Abs(r[0])
		rank := 0
		for rank < nf && math.Abs(r[rank*nf+rank]) > tol {
			rank++
		}
		z := w.wa1
		for j := range nf {
			z[j] = 0
		}
		for j := rank - 1; j >= 0; j-- {
			s := w.qtb[j]
			for i := j + 1; i < rank; i++ {
				s -= r[j*nf+i] * z[i]
			}
			z[j] = s / r[j*nf+j]
		}
		for j := range n {
			w.step[j] = 0
		}
		for l := range nf {
			w.step[w.free[w.jpvt[l]]] = -z[l]
		}
		for j := range n {
			w.xTry[j] = x[j] + w.step[j]
			w.step[j] = w.xTry[j] - x[j]
		}
		if w.clip(w.xTry) {
			for j := range n {
				w.step[j] = w.xTry[j] - x[j]
			}
		}
		snorm := scaledNorm(w.colnrm, w.step)
		xnorm := scaledNorm(w.colnrm, x)
		if snorm == 0 {
			return
		}
		if snorm >= prev || snorm <= epsilon*xnorm {
			return
		}
		w.stats.MajorIterations++
		ssr, ok := w.eval(w.fTry, w.xTry)
		if !ok || ssr > res.ssr*(1+16*epsilon) {
			return
		}
		copy(x, w.xTry)
		copy(fvec, w.fTry)
		res.ssr = ssr
		prev = snorm
	}
}
