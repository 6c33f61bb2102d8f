package fit

import (
	"context"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack/lapack64"
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

// work holds every buffer of one LeastSquares call. It is allocated once per
// call, so the iterations themselves do not allocate.
type work struct {
	m, n      int
	f         Func
	lower     []float64 // length n; -Inf where open
	upper     []float64 // length n; +Inf where open
	hasBounds bool
	typ       []float64 // finite-difference typical scales

	jac    *mat.Dense // m×n Jacobian at jacX
	jacRaw []float64  // jac's backing data, stride n
	jacX   []float64  // the point jac was evaluated at
	jacOK  bool       // jac holds a finite J(jacX)

	// jt is Jᵀ (n×m row-major); factorize overwrites it with the LQ
	// factorisation of its free rows.
	jt    []float64
	tau   []float64
	tau2  []float64 // reflectors of the pivoted QR of R₀
	jpvt  []int
	lwork int
	lwk   []float64
	qtb   []float64 // Qᵀr, length m (first nf entries used)

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

	diag  []float64 // global scaling diagonal D
	step  []float64 // global step
	grad  []float64 // Jᵀr, used for the active set
	xfd   []float64 // finite differences: perturbed point
	fp    []float64 // finite differences: residuals
	fm    []float64 // finite differences: residuals
	xTry  []float64
	fTry  []float64
	stats optimize.Stats
}

func newWork(f Func, init []float64, typ []float64) *work {
	m, n := f.M, len(init)
	w := &work{m: m, n: n, f: f}
	w.lower = make([]float64, n)
	w.upper = make([]float64, n)
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
	w.typ = make([]float64, n)
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
	w.jac = mat.NewDense(m, n, nil)
	w.jacRaw = w.jac.RawMatrix().Data
	w.tau = make([]float64, n)
	w.tau2 = make([]float64, n)
	w.jt = make([]float64, n*m)
	w.jpvt = make([]int, n)
	w.qtb = make([]float64, m)
	w.jacX = make([]float64, n)

	// Workspace queries at the largest sizes used.
	var q [1]float64
	at := blas64.General{Rows: n, Cols: m, Stride: m, Data: w.jt}
	lapack64.Gelqf(at, w.tau, q[:], -1)
	lw := int(q[0])
	lapack64.Ormlq(blas.Left, blas.NoTrans, at, w.tau, blas64.General{Rows: m, Cols: 1, Stride: 1, Data: w.qtb}, q[:], -1)
	lw = max(lw, int(q[0]))
	sq := blas64.General{Rows: n, Cols: n, Stride: n, Data: make([]float64, n*n)}
	lapack64.Geqp3(sq, w.jpvt, w.tau2, q[:], -1)
	lw = max(lw, int(q[0]))
	lapack64.Ormqr(blas.Left, blas.Trans, sq, w.tau2, blas64.General{Rows: n, Cols: 1, Stride: 1, Data: w.qtb[:n]}, q[:], -1)
	lw = max(lw, int(q[0]), 3*n+1, m)
	w.lwork = lw
	w.lwk = make([]float64, lw)

	w.r = make([]float64, n*n)
	w.free = make([]int, n)
	vecs := make([]float64, 16*n)
	next := func() []float64 { v := vecs[:n:n]; vecs = vecs[n:]; return v }
	w.colnrm = next()
	w.dloc = next()
	w.cnloc = next()
	w.slocal = next()
	w.sdiag = next()
	w.wa1 = next()
	w.wa2 = next()
	w.wa3 = next()
	w.wa4 = next()
	w.diag = next()
	w.step = next()
	w.grad = next()
	w.xfd = next()
	w.xTry = next()
	w.fp = make([]float64, m)
	w.fm = make([]float64, m)
	w.fTry = make([]float64, m)
	return w
}

// eval fills dst with r(x) and reports whether every residual is finite.
func (w *work) eval(dst, x []float64) bool {
	w.stats.FuncEvaluations++
	w.f.Residuals(dst, x)
	for _, v := range dst {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// jacobian fills w.jac with J(x), analytically or by finite differences
// (fx = r(x) is needed by the one-sided formula at a bound), and reports
// whether every entry is finite.
//
// J depends on x alone, so a second call at the same x reuses the first.
func (w *work) jacobian(x, fx []float64) bool {
	if w.jacOK && floats.Equal(x, w.jacX) {
		return true
	}
	w.jacOK = false
	w.stats.GradEvaluations++
	if w.f.Jacobian != nil {
		w.jac.Zero() // a Jacobian may set only its nonzero entries
		w.f.Jacobian(w.jac, x)
	} else if !w.fdJacobian(x, fx) {
		return false
	}
	for _, v := range w.jacRaw {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	copy(w.jacX, x)
	w.jacOK = true
	return true
}

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
// parameter is free. It sets w.colnrm for all columns and returns nf.
//
// The factorisation is done in two gonum steps, because J is tall and
// narrow (m ≫ n) and stored row-major, where a pivoted QR
// (lapack64.Geqp3) works on strided columns and is several times slower
// than the rest of an iteration:
//
//  1. the LQ factorisation of Jᵀ, Jᵀ = L·Q₁ (lapack64.Gelqf, whose
//     reflectors run along the rows of Jᵀ, i.e. the contiguous columns of
//     J), so J = Q₁ᵀ·R₀ with R₀ = Lᵀ, and Q₁·r by lapack64.Ormlq;
//  2. the column-pivoted QR of the small n×n matrix R₀·P = Q₂·R
//     (lapack64.Geqp3) and Q₂ᵀ(Q₁r) by lapack64.Ormqr.
//
// Then J·P = (Q₁ᵀQ₂)·R is a pivoted QR of J. Orthogonal transformations
// keep the column norms, so step 2 picks the same pivots as a pivoted QR of
// J itself would. Only the damped solve (qrsolv) is our own, because LAPACK
// has no routine for updating R by a diagonal.
func (w *work) factorize(fx []float64, x []float64) int {
	m, n := w.m, w.n
	// Jᵀ into w.jt: row j is column j of J, contiguous.
	jt := w.jt
	for j := range n {
		blas64.Copy(blas64.Vector{N: m, Inc: n, Data: w.jacRaw[j:]}, blas64.Vector{N: m, Inc: 1, Data: jt[j*m:]})
	}
	for j := range n {
		col := jt[j*m : j*m+m]
		ss := floats.Dot(col, col)
		if ss > 0x1p-900 && ss < 0x1p900 {
			w.colnrm[j] = math.Sqrt(ss)
		} else {
			w.colnrm[j] = floats.Norm(col, 2) // overflow- and underflow-safe
		}
		w.grad[j] = floats.Dot(col, fx)
	}
	nf := 0
	for j := range n {
		if w.hasBounds && ((x[j] <= w.lower[j] && w.grad[j] > 0) || (x[j] >= w.upper[j] && w.grad[j] < 0)) {
			continue
		}
		w.free[nf] = j
		nf++
	}
	w.nf = nf
	if nf == 0 {
		return 0
	}
	// Step 1: Jᵀ_F = L·Q₁, on the rows of Jᵀ of the free parameters,
	// moved to the front in place (free[l] ≥ l).
	at := jt[:nf*m]
	for l := range nf {
		if j := w.free[l]; j != l {
			copy(at[l*m:l*m+m], jt[j*m:j*m+m])
		}
	}
	ga := blas64.General{Rows: nf, Cols: m, Stride: m, Data: at}
	lapack64.Gelqf(ga, w.tau[:nf], w.lwk, w.lwork)
	copy(w.qtb, fx)
	lapack64.Ormlq(blas.Left, blas.NoTrans, ga, w.tau[:nf],
		blas64.General{Rows: m, Cols: 1, Stride: 1, Data: w.qtb}, w.lwk, w.lwork)
	// Step 2: R₀·P = Q₂·R with R₀ = Lᵀ.
	r := w.r[:nf*nf]
	for i := range nf {
		for j := range nf {
			if j >= i {
				r[i*nf+j] = at[j*m+i]
			} else {
				r[i*nf+j] = 0
			}
		}
	}
	for l := range nf {
		w.jpvt[l] = -1
		w.dloc[l] = w.diag[w.free[l]]
		w.cnloc[l] = w.colnrm[w.free[l]]
	}
	gr := blas64.General{Rows: nf, Cols: nf, Stride: nf, Data: r}
	lapack64.Geqp3(gr, w.jpvt[:nf], w.tau2[:nf], w.lwk, w.lwork)
	lapack64.Ormqr(blas.Left, blas.Trans, gr, w.tau2[:nf],
		blas64.General{Rows: nf, Cols: 1, Stride: 1, Data: w.qtb[:nf]}, w.lwk, w.lwork)
	for i := range nf {
		for j := range i {
			r[i*nf+j] = 0
		}
	}
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

	fnorm := floats.Norm(fvec, 2)
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
			if w.eval(w.fTry, w.xTry) {
				fnorm1 = floats.Norm(w.fTry, 2)
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
// most 10 steps.
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
		if snorm >= prev {
			return
		}
		w.stats.MajorIterations++
		if !w.eval(w.fTry, w.xTry) {
			return
		}
		ssr := floats.Dot(w.fTry, w.fTry)
		if ssr > res.ssr*(1+16*epsilon) {
			return
		}
		copy(x, w.xTry)
		copy(fvec, w.fTry)
		res.ssr = ssr
		prev = snorm
		if snorm <= epsilon*xnorm {
			return
		}
	}
	return
}
