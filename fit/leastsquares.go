package fit

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// LeastSquares minimises ½‖r(p)‖² from init (which it does not modify).
// A nil s means default Settings.
//
// Method. A trust-region Levenberg–Marquardt iteration after Moré (1978,
// see the package comment): each trial step solves
//
//	min ‖J s + r‖²   subject to   ‖D s‖ ≤ Δ
//
// through the damped system [J; √λ D] s ≈ [−r; 0], with J factorised once
// per iteration by a column-pivoted QR and the diagonal rows eliminated by
// Givens rotations (the normal equations JᵀJ are never formed for the step).
// D is the running maximum of the Jacobian column norms (Moré's eq. 6.3),
// which makes the iteration invariant to the units of the parameters. With
// bounds, trial points are projected onto the box and parameters held on a
// bound by the gradient are frozen for the iteration. After convergence up
// to ten Gauss–Newton steps polish the last digits (see polish).
//
// Termination (Result.Status): GradientThreshold when the cosine test of
// Settings.GradTol holds; FunctionConvergence when the actual and the
// predicted relative reductions of the SSR are both ≤ Settings.FuncTol
// (Moré's test), or the predicted relative reduction is below 4ε, so that
// float64 can no longer tell a better point from a worse one;
// StepConvergence when the trust-region radius Δ ≤ Settings.StepTol·‖D p‖;
// IterationLimit after Settings.MaxIterations trial steps; Failure when the
// context is done or J stops being finite at an accepted point.
//
// Fallback (unless Settings.NoFallback). The primary strategy
// (StrategyJacobianScaling) fails in two generic ways: it does not converge,
// or it stops on a degenerate plateau, where a parameter has run off to a
// value at which the residuals no longer depend on it (an exponential rate
// so large that exp(−b·x) underflows, say) or J is numerically rank
// deficient. Such an end is recognised by
//
//	|p_j|·‖J_j‖ ≤ √ε · max_k |p_k|·‖J_k‖   for a p_j not on a bound, or
//	D⁻¹JᵀJD⁻¹ (D = √diag JᵀJ) not positive definite to working precision,
//
// and then LeastSquares reruns from the same start with identity scaling
// (StrategyIdentityScaling), whose round trust region does not take the
// long first steps along weakly determined parameters, and, if that also
// fails, with Jacobian scaling and a small first trust region
// (StrategyCautiousStep). Of the runs that converged, the one with the
// lowest SSR is returned (the primary on a tie); if none converged, the
// lowest SSR overall. Result.Fallback and Result.Strategy say which.
//
// Errors. Failing to start is an error, with a nil *Result: ErrNoModel,
// ErrNoParams, ErrNoData (M ≤ 0), ErrTooFewPoints (M < len(init)),
// ErrLength (Lower or Upper of the wrong length), ErrNonFinite (init,
// r(init) or J(init) not finite), ErrBounds (init outside the bounds, or a
// lower bound above an upper one). A run that started returns a non-nil
// *Result; its error is nil, or wraps ErrSingular or ErrZeroDoF when only
// the covariance is unavailable, or wraps ctx.Err() when ctx was cancelled
// (then Status is optimize.Failure and Params the last accepted iterate).
func LeastSquares(ctx context.Context, f Func, init []float64, s *Settings) (*Result, error) {
	if err := validateFunc(f, init, s); err != nil {
		return nil, err
	}
	w := getWork(f.M, len(init))
	defer putWork(w)
	return solve(ctx, w, f, init, s, f.M-len(init))
}

// validateFunc checks a Func and a start before anything is evaluated.
func validateFunc(f Func, init []float64, s *Settings) error {
	n := len(init)
	switch {
	case f.Residuals == nil:
		return ErrNoModel
	case n == 0:
		return ErrNoParams
	case f.M <= 0:
		return ErrNoData
	case f.M < n:
		return fmt.Errorf("%d residuals for %d parameters: %w", f.M, n, ErrTooFewPoints)
	case f.Lower != nil && len(f.Lower) != n:
		return fmt.Errorf("len(Lower) = %d, want %d: %w", len(f.Lower), n, ErrLength)
	case f.Upper != nil && len(f.Upper) != n:
		return fmt.Errorf("len(Upper) = %d, want %d: %w", len(f.Upper), n, ErrLength)
	case s != nil && s.TypicalScale != nil && len(s.TypicalScale) != n:
		return fmt.Errorf("len(TypicalScale) = %d, want %d: %w", len(s.TypicalScale), n, ErrLength)
	}
	for j, v := range init {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("start p[%d] = %g: %w", j, v, ErrNonFinite)
		}
		lo, hi := math.Inf(-1), math.Inf(1)
		if f.Lower != nil {
			lo = f.Lower[j]
		}
		if f.Upper != nil {
			hi = f.Upper[j]
		}
		if math.IsNaN(lo) || math.IsNaN(hi) || lo > hi {
			return fmt.Errorf("bounds of p[%d] are [%g, %g]: %w", j, lo, hi, ErrBounds)
		}
		if v < lo || v > hi {
			return fmt.Errorf("start p[%d] = %g outside [%g, %g]: %w", j, v, lo, hi, ErrBounds)
		}
	}
	return nil
}

// solve runs the strategies in w (from getWork(f.M, len(init)); w.rowScale
// may be set) and assembles the Result; dof is the degrees of freedom to
// report (Fit discounts zero-weight points).
func solve(ctx context.Context, w *work, f Func, init []float64, s *Settings, dof int) (*Result, error) {
	start := time.Now()
	n := len(init)
	cfg := newConfig(s, n)
	var typ []float64
	if s != nil {
		typ = s.TypicalScale
	}
	w.init(f, init, typ)

	f0 := w.f0
	if _, ok := w.eval(f0, init); !ok {
		return nil, fmt.Errorf("residuals at the start: %w", ErrNonFinite)
	}
	if !w.jacobian(init, f0) {
		return nil, fmt.Errorf("Jacobian at the start: %w", ErrNonFinite)
	}

	var runsBuf [3]run
	runs := runsBuf[:0]
	var best *run
	for k, st := range strategies {
		if k > 0 && (cfg.noFallback || !best.degenerate) {
			break
		}
		rn := w.lm(ctx, st, init, f0, cfg)
		if rn.err == nil && !rn.status.Early() && !cfg.noPolish {
			w.polish(ctx, &rn)
			if err := ctx.Err(); err != nil {
				rn.status, rn.err = optimize.Failure, err
			}
		}
		if rn.err == nil {
			w.assess(&rn, dof, cfg.absoluteSigma)
		}
		runs = append(runs, rn)
		if rn.err != nil {
			best = &runs[len(runs)-1]
			break
		}
		best = pick(runs)
	}

	res := &Result{
		Params:    best.x,
		Residuals: best.fvec,
		SSR:       best.ssr,
		DoF:       dof,
		Status:    best.status,
		Strategy:  best.strategy,
		Fallback:  best.strategy != strategies[0].name,
		AtBound:   make([]bool, n),
		Cov:       best.cov,
		StdErr:    best.stdErr,
		Cond:      best.cond,
	}
	if res.Cond == 0 { // not assessed: the run was cancelled
		res.Cond = math.Inf(1)
	}
	for j, v := range res.Params {
		res.AtBound[j] = v == w.lower[j] || v == w.upper[j]
	}
	if res.StdErr == nil {
		res.StdErr = make([]float64, n)
		for j := range res.StdErr {
			res.StdErr[j] = math.NaN()
		}
	}
	err := best.covErr
	if best.err != nil {
		err = fmt.Errorf("fit: cancelled: %w", best.err)
	}
	w.stats.Runtime = time.Since(start)
	res.Stats = w.stats
	return res, err
}

// pick returns the run with the lowest SSR among the converged ones (the
// earliest on a tie), or among all if none converged.
func pick(runs []run) *run {
	var best *run
	for _, conv := range []bool{true, false} {
		for i := range runs {
			rn := &runs[i]
			if conv && rn.status.Early() {
				continue
			}
			if best == nil || rn.ssr < best.ssr {
				best = rn
			}
		}
		if best != nil {
			return best
		}
	}
	return best
}

// assess computes the covariance of a finished run at its end point and
// decides whether it needs the fallback (rn.degenerate): it did not
// converge, or it ended where a free parameter no longer affects the
// residuals, or where J is numerically rank deficient (see LeastSquares).
func (w *work) assess(rn *run, dof int, absolute bool) {
	rn.degenerate = true
	if !w.jacobian(rn.x, rn.fvec) {
		rn.covErr = fmt.Errorf("Jacobian at the optimum: %w: %w", ErrNonFinite, ErrSingular)
		return
	}
	r := Result{SSR: rn.ssr, DoF: dof, Cond: math.Inf(1)}
	rn.covErr = r.covariance(w.jt, w.m, w.n, absolute)
	rn.cov, rn.stdErr, rn.cond = r.Cov, r.StdErr, r.Cond
	if rn.status.Early() || math.IsNaN(rn.ssr) || errors.Is(rn.covErr, ErrSingular) {
		return
	}
	sens := w.wa1
	smax := 0.0
	for j := range w.n {
		sens[j] = math.Abs(rn.x[j]) * w.colnrm[j] // ‖J_j‖ at rn.x
		smax = math.Max(smax, sens[j])
	}
	for j := range w.n {
		if rn.x[j] == w.lower[j] || rn.x[j] == w.upper[j] {
			continue
		}
		if sens[j] <= math.Sqrt(epsilon)*smax {
			return
		}
	}
	rn.degenerate = false
}

// covariance sets Cov, StdErr and Cond from the Jacobian at the optimum,
// given transposed (jt, n×m row-major: column j of J is jt[j*m:j*m+m]):
//
//	Cov = s²·(JᵀJ)⁻¹,   s² = SSR/DoF (absolute false) or 1 (absolute true).
//
// JᵀJ is equilibrated, A = D⁻¹JᵀJD⁻¹ with D = √diag(JᵀJ), before the
// Cholesky factorisation, so that the factorisation and the condition number
// do not depend on the units of the parameters (van der Sluis, Numer. Math.
// 14, 14, 1969: this diagonal scaling is within a factor √n of the best).
// A failed factorisation, a condition number above mat.ConditionTolerance
// (10¹⁶), a zero column or a variance that overflows leave Cov nil and StdErr NaN and return an error
// wrapping ErrSingular; Cond stays +Inf when the factorisation failed.
func (res *Result) covariance(jt []float64, m, n int, absolute bool) error {
	jtj := mat.NewSymDense(n, nil)
	for i := range n {
		ci := jt[i*m : i*m+m]
		for k := i; k < n; k++ {
			jtj.SetSym(i, k, floats.Dot(ci, jt[k*m:k*m+m]))
		}
	}
	d := make([]float64, n)
	for i := range n {
		v := jtj.At(i, i)
		if !(v > 0) || math.IsInf(v, 1) {
			return fmt.Errorf("column %d of J is zero or not finite: %w", i, ErrSingular)
		}
		d[i] = math.Sqrt(v)
	}
	for i := range n {
		for k := i; k < n; k++ {
			jtj.SetSym(i, k, jtj.At(i, k)/(d[i]*d[k]))
		}
	}
	var chol mat.Cholesky
	if ok := chol.Factorize(jtj); !ok {
		return fmt.Errorf("JᵀJ is not positive definite: %w", ErrSingular)
	}
	res.Cond = chol.Cond()
	inv := mat.NewSymDense(n, nil)
	if err := chol.InverseTo(inv); err != nil {
		return fmt.Errorf("%w: %w", ErrSingular, err)
	}
	s2 := 1.0
	if !absolute {
		if res.DoF <= 0 {
			return ErrZeroDoF
		}
		s2 = res.SSR / float64(res.DoF)
	}
	for i := range n {
		for k := i; k < n; k++ {
			inv.SetSym(i, k, s2*inv.At(i, k)/(d[i]*d[k]))
		}
	}
	for i := range n { // scaled back, a variance can overflow (an amplitude run to 1e135)
		if v := inv.At(i, i); !(v >= 0) || math.IsInf(v, 1) {
			return fmt.Errorf("variance of parameter %d is %v: %w", i, v, ErrSingular)
		}
	}
	res.Cov = inv
	if res.StdErr == nil {
		res.StdErr = make([]float64, n)
	}
	for i := range n {
		res.StdErr[i] = math.Sqrt(inv.At(i, i))
	}
	return nil
}
