// Package fit is the weighted nonlinear least-squares engine of bandedge.
//
// Two entry points share one solver:
//
//   - LeastSquares minimises ½‖r(p)‖² for a general residual function r
//     (used by the NIST StRD reference suite and by anything that is not a
//     curve y = f(x; p));
//   - Fit fits a model.Model to data (E_i, α_i) with weights w_i, i.e.
//     r_i(p) = √w_i · (α_i − f(E_i; p)).
//
// The split follows gonum/optimize: an error means the fit could not run
// (no data, fewer points than parameters, non-finite residuals at the start);
// Result.Status says how a run that did start ended. An Early() status is
// never a clean fit. Two errors come back together with a usable *Result:
// one wrapping ErrSingular or ErrZeroDoF (the estimates are valid, the
// covariance is not) and one wrapping the context's error after a
// cancellation (the estimates are the last accepted iterate).
//
// The solver is a trust-region Levenberg–Marquardt method after
//
//	J. J. Moré, "The Levenberg–Marquardt algorithm: implementation and
//	theory", in Numerical Analysis, Lecture Notes in Mathematics 630,
//	Springer, 1978, pp. 105–116
//
// (scaled trust region, the damping parameter found by Moré's safeguarded
// Newton iteration on ‖D·p(λ)‖ = Δ, the damped subproblem solved from a
// column-pivoted QR factorisation of J with Givens rotations, gain-ratio
// update of Δ), extended by projection onto box bounds, a Gauss–Newton polish
// and a generic fallback strategy; see LeastSquares.
package fit

import (
	"errors"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"bandedge/model"
)

// Sentinel errors. Test with errors.Is.
var (
	ErrNoData       = errors.New("fit: no data points")
	ErrTooFewPoints = errors.New("fit: fewer points than parameters")
	ErrLength       = errors.New("fit: slice length mismatch")
	ErrNonFinite    = errors.New("fit: non-finite value")
	ErrSingular     = errors.New("fit: singular covariance")
	ErrBounds       = errors.New("fit: start outside the parameter bounds")

	// ErrNoParams: the parameter vector is empty.
	ErrNoParams = errors.New("fit: no parameters")
	// ErrNoModel: Problem.Model or Func.Residuals is nil.
	ErrNoModel = errors.New("fit: no model or residual function")
	// ErrNegativeWeight: a weight is below zero.
	ErrNegativeWeight = errors.New("fit: negative weight")
	// ErrZeroDoF: the covariance needs s² = SSR/DoF but DoF is 0.
	ErrZeroDoF = errors.New("fit: no degrees of freedom left for the covariance")
)

// Func is a least-squares problem in residual form: minimise ½‖r(p)‖².
type Func struct {
	// M is the number of residuals.
	M int
	// Residuals fills dst (length M) with r(p). It must not modify p.
	Residuals func(dst, p []float64)
	// Jacobian, when not nil, fills dst (M × len(p), zeroed before each
	// call) with ∂r_i/∂p_j. dst is recycled between calls and runs: it
	// must not be kept.
	// When nil, LeastSquares uses central finite differences with a step
	// scaled to each parameter.
	Jacobian func(dst *mat.Dense, p []float64)
	// Lower and Upper, when not nil, bound the parameters (length len(p));
	// use ±Inf for an open side.
	Lower, Upper []float64
}

// Settings configures LeastSquares and Fit. A nil *Settings means defaults;
// a zero field means the default stated in its comment.
type Settings struct {
	// MaxIterations bounds the major iterations of one solver strategy; a
	// major iteration is one trial step (one solve of the damped subproblem
	// and one evaluation of the residuals), accepted or not.
	// Default 200·(len(p)+1).
	MaxIterations int
	// GradTol stops when the cosine of the angle between r and every column
	// of J is small, max_j |J_jᵀr| / (‖J_j‖·‖r‖) ≤ GradTol (MINPACK's gtol
	// test, invariant to the units of p and r; over the free parameters
	// when bounds are active). Default 1e-15.
	GradTol float64
	// StepTol stops when the trust-region radius Δ, which bounds the scaled
	// step ‖D s‖, is ≤ StepTol·‖D p‖ (MINPACK's xtol test). Default 1e-15.
	StepTol float64
	// FuncTol stops when both the actual and the predicted relative
	// reduction of ‖r‖² are ≤ FuncTol (and the actual is at most twice the
	// predicted; MINPACK's ftol test). Default 1e-15.
	FuncTol float64
	// AbsoluteSigma selects the covariance scale s² in Cov = s²·(JᵀJ)⁻¹:
	// false (default) uses s² = SSR/DoF, right when the weights are only
	// relative; true uses s² = 1, right when the weights are 1/σ² with σ the
	// known standard deviations of the data.
	AbsoluteSigma bool
	// NoFallback disables the fallback strategy (for tests and for
	// measuring how often it is needed). Default false: fallback enabled.
	NoFallback bool
	// NoPolish disables the final Gauss–Newton polish (for tests).
	// Default false: polish enabled.
	NoPolish bool
	// TypicalScale, when not nil (length len(p)), is the typical magnitude
	// typ_j of each parameter, used only for the finite-difference step
	// h_j = ε^⅓·max(|p_j|, typ_j). Default (nil, or an entry ≤ 0):
	// typ_j = |init_j|, or 1 where init_j = 0.
	TypicalScale []float64
}

// Result is the outcome of a run that started.
type Result struct {
	// Params are the estimates.
	Params []float64
	// StdErr are the standard errors √diag(Cov); NaN when Cov is nil.
	StdErr []float64
	// Cov is the covariance of the estimates, s²·(JᵀJ)⁻¹ at the optimum
	// (see Settings.AbsoluteSigma); nil when JᵀJ is singular, when s² =
	// SSR/DoF with DoF = 0, or after a cancellation (the error says which).
	Cov *mat.SymDense
	// Residuals are r(Params), weighted as the solver saw them.
	Residuals []float64
	// SSR is Σ r_i², the weighted residual sum of squares.
	SSR float64
	// DoF is the degrees of freedom, M − len(p); for Fit, M counts only the
	// points with a weight above zero.
	DoF int
	// Cond is the condition number of the equilibrated matrix
	// D⁻¹JᵀJD⁻¹, D = √diag(JᵀJ), at the optimum, from its Cholesky
	// factorisation (mat.Cholesky.Cond); equilibrating makes it independent
	// of the units of the parameters. +Inf when singular.
	Cond float64
	// AtBound[j] is true when Params[j] ended on one of its bounds.
	AtBound []bool
	// Fallback is true when the primary strategy failed and the result
	// comes from a fallback strategy.
	Fallback bool
	// Strategy names the strategy that produced the result: one of
	// StrategyJacobianScaling, StrategyIdentityScaling,
	// StrategyCautiousStep.
	Strategy string
	// Status says how the run ended; Status.Early() means not converged.
	Status optimize.Status
	// Stats counts major iterations (trial steps, including those of the
	// polish), residual evaluations (including those made for
	// finite-difference Jacobians), Jacobian evaluations (GradEvaluations)
	// and the run time, summed over every strategy that ran.
	Stats optimize.Stats
}

// Problem is a curve fit of a model to data.
type Problem struct {
	// E are the photon energies in eV.
	E []float64
	// Alpha are the measured values α(E) in cm⁻¹.
	Alpha []float64
	// Weights are w_i, usually 1/σ_i²; nil means all 1. Each must be finite
	// and ≥ 0; a zero weight drops the point (it counts in neither the fit
	// nor DoF).
	Weights []float64
	// Model is the model fitted.
	Model model.Model
	// Init is the starting parameter vector; it is not modified. It must lie
	// within the bounds of Model.Params().
	Init []float64
}
