package fit

import (
	"context"
	"fmt"
	"math"
)

// Fit fits p.Model to the data (p.E, p.Alpha) with weights p.Weights by
// minimising
//
//	Σ_i r_i²,   r_i = √w_i · (α_i − f(E_i; p)),
//
// from p.Init within the bounds [Min, Max] of p.Model.Params(). The model's
// analytic Jacobian is used when it implements model.Jacobianer, else
// central finite differences (see Settings.TypicalScale). A nil s means
// default Settings; the method, the fallback and the meaning of the
// returned error are those of LeastSquares.
//
// Fit validates its input first and returns, with a nil *Result:
// ErrNoModel (nil Model), ErrNoParams (a model without parameters),
// ErrNoData (no points, or every weight zero),
// ErrLength (Alpha, Weights or Init of the wrong length), ErrNonFinite (an
// E, α, weight or start value, or α(E; Init), not finite),
// ErrNegativeWeight, ErrTooFewPoints (fewer points with w_i > 0 than
// parameters) and ErrBounds (Init outside the bounds). Points with w_i = 0
// take no part and are not counted in Result.DoF; Result.Residuals keeps
// one entry per point (zero for them). Fit reads p.E, p.Alpha, p.Weights
// and p.Init without modifying them; they must not change during the call.
func Fit(ctx context.Context, p Problem, s *Settings) (*Result, error) {
	if p.Model == nil {
		return nil, ErrNoModel
	}
	params := p.Model.Params()
	n := len(params)
	m := len(p.E)
	switch {
	case n == 0:
		return nil, ErrNoParams
	case m == 0:
		return nil, ErrNoData
	case len(p.Alpha) != m:
		return nil, fmt.Errorf("len(Alpha) = %d, len(E) = %d: %w", len(p.Alpha), m, ErrLength)
	case p.Weights != nil && len(p.Weights) != m:
		return nil, fmt.Errorf("len(Weights) = %d, len(E) = %d: %w", len(p.Weights), m, ErrLength)
	case len(p.Init) != n:
		return nil, fmt.Errorf("len(Init) = %d, model %s has %d parameters: %w", len(p.Init), p.Model.Name(), n, ErrLength)
	}
	w := getWork(m, n)
	defer putWork(w)
	w.sqrtw = grow(w.sqrtw, m)
	sqrtw := w.sqrtw
	mEff := 0
	for i := range m {
		if !isFinite(p.E[i]) {
			return nil, fmt.Errorf("E[%d] = %g: %w", i, p.E[i], ErrNonFinite)
		}
		if !isFinite(p.Alpha[i]) {
			return nil, fmt.Errorf("Alpha[%d] = %g: %w", i, p.Alpha[i], ErrNonFinite)
		}
		wi := 1.0
		if p.Weights != nil {
			wi = p.Weights[i]
		}
		if !isFinite(wi) {
			return nil, fmt.Errorf("Weights[%d] = %g: %w", i, wi, ErrNonFinite)
		}
		if wi < 0 {
			return nil, fmt.Errorf("Weights[%d] = %g: %w", i, wi, ErrNegativeWeight)
		}
		sqrtw[i] = math.Sqrt(wi)
		if wi > 0 {
			mEff++
		}
	}
	if mEff == 0 {
		return nil, fmt.Errorf("every weight is zero: %w", ErrNoData)
	}
	if mEff < n {
		return nil, fmt.Errorf("%d points with weight > 0 for %d parameters: %w", mEff, n, ErrTooFewPoints)
	}
	w.bounds = grow(w.bounds, 2*n)
	lower, upper := w.bounds[:n], w.bounds[n:]
	for j, q := range params {
		lower[j], upper[j] = q.Min, q.Max
	}

	e, alpha := p.E, p.Alpha
	ev := &w.ev
	ev.Reset(p.Model, e)
	f := Func{
		M:     m,
		Lower: lower,
		Upper: upper,
		// r_i = √w_i·(α_i − f(E_i)), with the model evaluated into dst.
		Residuals: func(dst, q []float64) {
			ev.Eval(dst, q)
			dst = dst[:len(alpha)]
			for i, v := range dst {
				dst[i] = sqrtw[i] * (alpha[i] - v)
			}
		},
	}
	if ev.HasJacobian() {
		// ∂r_i/∂p_j = −√w_i·∂f/∂p_j: the solver applies the row factors
		// −√w_i while it transposes J (work.rowScale).
		f.Jacobian = ev.Jacobian
		w.negsw = grow(w.negsw, m)
		for i, v := range sqrtw {
			w.negsw[i] = -v
		}
	}
	if err := validateFunc(f, p.Init, s); err != nil {
		return nil, err
	}
	init := append([]float64(nil), p.Init...)
	if f.Jacobian != nil {
		w.rowScale = w.negsw
	}
	return solve(ctx, w, f, init, s, mEff-n)
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
