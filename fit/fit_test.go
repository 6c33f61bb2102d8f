package fit_test

import (
	"context"
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
	"gonum.org/v1/gonum/stat"

	"bandedge/fit"
	"bandedge/model"
)

// line is the straight line y = a + b·x with its analytic Jacobian.
type line struct{}

func (line) Name() string { return "line" }
func (line) Params() []model.Param {
	inf := math.Inf(1)
	return []model.Param{{Name: "a", Min: -inf, Max: inf}, {Name: "b", Min: -inf, Max: inf}}
}
func (line) Eval(dst, x, p []float64) {
	for i, xi := range x {
		dst[i] = p[0] + p[1]*xi
	}
}
func (line) Jacobian(dst *mat.Dense, x, p []float64) {
	for i, xi := range x {
		dst.Set(i, 0, 1)
		dst.Set(i, 1, xi)
	}
}

// sumSlope is y = (a + b)·x: a and b cannot be told apart, so JᵀJ is
// singular at every point.
type sumSlope struct{}

func (sumSlope) Name() string { return "sum-slope" }
func (sumSlope) Params() []model.Param {
	inf := math.Inf(1)
	return []model.Param{{Name: "a", Min: -inf, Max: inf}, {Name: "b", Min: -inf, Max: inf}}
}
func (sumSlope) Eval(dst, x, p []float64) {
	for i, xi := range x {
		dst[i] = (p[0] + p[1]) * xi
	}
}
func (sumSlope) Jacobian(dst *mat.Dense, x, p []float64) {
	for i, xi := range x {
		dst.Set(i, 0, xi)
		dst.Set(i, 1, xi)
	}
}

// nanModel returns NaN everywhere.
type nanModel struct{ line }

func (nanModel) Eval(dst, x, p []float64) {
	for i := range dst {
		dst[i] = math.NaN()
	}
}

// weightedLineData is a fixed data set for the closed-form checks: x = 0..9,
// y = 1.5 + 0.8x plus a fixed pattern of deviations, σ = 0.1, 0.2, 0.3, ...
func weightedLineData() (x, y, sigma []float64) {
	dev := []float64{0.1, -0.2, 0.05, 0.15, -0.1, 0, 0.2, -0.15, -0.05, 0.1}
	for i := range 10 {
		x = append(x, float64(i))
		y = append(y, 1.5+0.8*float64(i)+dev[i])
		sigma = append(sigma, 0.1*float64(1+i%3))
	}
	return x, y, sigma
}

// closedFormLine is the weighted straight-line fit in closed form (Press,
// Teukolsky, Vetterling and Flannery, Numerical Recipes, 3rd ed., Cambridge
// 2007, section 15.2, eqs. 15.2.4–15.2.10): estimates, their standard
// deviations for known σ, the covariance and the correlation r_ab.
func closedFormLine(x, y, sigma []float64) (a, b, sa, sb, cab, rab, chi2 float64) {
	var s, sx, sy, sxx, sxy float64
	for i := range x {
		w := 1 / (sigma[i] * sigma[i])
		s += w
		sx += w * x[i]
		sy += w * y[i]
		sxx += w * x[i] * x[i]
		sxy += w * x[i] * y[i]
	}
	d := s*sxx - sx*sx
	a = (sxx*sy - sx*sxy) / d
	b = (s*sxy - sx*sy) / d
	sa = math.Sqrt(sxx / d)
	sb = math.Sqrt(s / d)
	cab = -sx / d
	rab = -sx / math.Sqrt(s*sxx)
	for i := range x {
		r := (y[i] - a - b*x[i]) / sigma[i]
		chi2 += r * r
	}
	return
}

// TestCovarianceModes checks both scales of the covariance, s² = SSR/DoF
// and s² = 1, on a weighted straight line against the closed form of
// Numerical Recipes section 15.2. The fit is linear, so both computations
// are exact to rounding: relTol 1e-9.
func TestCovarianceModes(t *testing.T) {
	x, y, sigma := weightedLineData()
	w := make([]float64, len(x))
	for i, s := range sigma {
		w[i] = 1 / (s * s)
	}
	a, b, sa, sb, cab, rab, chi2 := closedFormLine(x, y, sigma)
	dof := float64(len(x) - 2)
	const tol = 1e-9
	tests := []struct {
		name     string
		absolute bool
		scale    float64 // s: the standard errors are s times those for known σ
	}{
		{"AbsoluteSigma/s²=1", true, 1},
		{"relative/s²=SSR/DoF", false, math.Sqrt(chi2 / dof)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := fit.Fit(context.Background(), fit.Problem{
				E: x, Alpha: y, Weights: w, Model: line{}, Init: []float64{0, 0},
			}, &fit.Settings{AbsoluteSigma: tc.absolute})
			if err != nil {
				t.Fatal(err)
			}
			if !floats.EqualApprox(res.Params, []float64{a, b}, tol) {
				t.Errorf("params %v, closed form %v", res.Params, []float64{a, b})
			}
			if !scalar.EqualWithinAbsOrRel(res.SSR, chi2, tol, tol) {
				t.Errorf("SSR %v, closed-form χ² %v", res.SSR, chi2)
			}
			want := []float64{tc.scale * sa, tc.scale * sb}
			for j := range want {
				if !scalar.EqualWithinAbsOrRel(res.StdErr[j], want[j], 0, tol) {
					t.Errorf("StdErr[%d] = %v, want %v", j, res.StdErr[j], want[j])
				}
			}
			if got := res.Cov.At(0, 1); !scalar.EqualWithinAbsOrRel(got, tc.scale*tc.scale*cab, 0, tol) {
				t.Errorf("Cov[0,1] = %v, want %v", got, tc.scale*tc.scale*cab)
			}
			corr := res.Correlation()
			if got := corr.At(0, 1); !scalar.EqualWithinAbsOrRel(got, rab, 0, tol) {
				t.Errorf("correlation %v, want r_ab = %v", got, rab)
			}
			if corr.At(0, 0) != 1 || corr.At(1, 1) != 1 {
				t.Errorf("correlation diagonal %v, %v, want 1", corr.At(0, 0), corr.At(1, 1))
			}
			if !scalar.EqualWithinAbsOrRel(res.RedChi2(), chi2/dof, 0, tol) {
				t.Errorf("RedChi2 %v, want %v", res.RedChi2(), chi2/dof)
			}
		})
	}
}

// TestCovarianceModesNIST checks the two scales on NIST StRD Misra1a: with
// s² = SSR/DoF the standard errors are the certified ones; with s² = 1 they
// are the certified ones divided by the certified residual SD. NIST
// certifies 11 digits; 1e-6 is the float64 solver bar (common practice).
func TestCovarianceModesNIST(t *testing.T) {
	s := loadNIST(t, "Misra1a")
	for _, absolute := range []bool{false, true} {
		res, err := fit.Fit(context.Background(), fit.Problem{E: s.X, Alpha: s.Y, Model: newMisra1a(), Init: s.start(2)},
			&fit.Settings{AbsoluteSigma: absolute})
		if err != nil {
			t.Fatal(err)
		}
		for j, c := range s.CertifiedStdDev {
			want := c
			if absolute {
				want = c / s.CertifiedResidualSD
			}
			if !scalar.EqualWithinAbsOrRel(res.StdErr[j], want, 0, 1e-6) {
				t.Errorf("AbsoluteSigma=%v: StdErr[%d] = %v, want %v", absolute, j, res.StdErr[j], want)
			}
		}
		if !scalar.EqualWithinAbsOrRel(res.RedChi2(), s.CertifiedResidualSD*s.CertifiedResidualSD, 0, 1e-6) {
			t.Errorf("RedChi2 = %v, want certified residual SD² %v", res.RedChi2(), s.CertifiedResidualSD*s.CertifiedResidualSD)
		}
	}
}

// TestConfInt checks the Student-t interval on Misra1a (DoF = 12): the
// half-width over the standard error is t_{0.975,12} = 2.179, from the table
// of critical values of Student's t (NIST/SEMATECH e-Handbook of
// Statistical Methods, section 1.3.6.7.2), printed to 3 decimals, hence
// absTol 5e-4.
func TestConfInt(t *testing.T) {
	s := loadNIST(t, "Misra1a")
	res, err := fit.Fit(context.Background(), fit.Problem{E: s.X, Alpha: s.Y, Model: newMisra1a(), Init: s.start(1)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.DoF != 12 {
		t.Fatalf("DoF = %d, want 12", res.DoF)
	}
	ci := res.ConfInt(0.95)
	for j, iv := range ci {
		half := (iv[1] - iv[0]) / 2
		if !scalar.EqualWithinAbsOrRel(half/res.StdErr[j], 2.179, 5e-4, 0) {
			t.Errorf("parameter %d: half-width/StdErr = %v, want 2.179", j, half/res.StdErr[j])
		}
		if !scalar.EqualWithinAbsOrRel((iv[0]+iv[1])/2, res.Params[j], 0, 1e-12) {
			t.Errorf("parameter %d: interval %v not centred on %v", j, iv, res.Params[j])
		}
	}
	for _, level := range []float64{0, 1, -0.5, math.NaN()} {
		for _, iv := range res.ConfInt(level) {
			if !math.IsNaN(iv[0]) || !math.IsNaN(iv[1]) {
				t.Errorf("level %v: interval %v, want NaN", level, iv)
			}
		}
	}
}

// TestBounds fits Misra1a with a bound that cuts off the certified optimum
// (b1 = 238.94 > 200, b2 = 5.50e-4 < 6e-4) and checks the first-order
// (KKT) conditions of a box-constrained minimum (Nocedal and Wright,
// Numerical Optimization, 2nd ed., Springer 2006, theorem 12.1): the bound
// parameter sits exactly on its bound with the gradient of ½SSR pushing
// outwards, and the gradient component of the free parameter vanishes
// (cosine ≤ 1e-8, far below the 1e-2-ish cosine of any non-optimal point
// here). The finite-difference path, which must take one-sided differences
// at the bound, must agree with the analytic one to LRE ≥ 6.
func TestBounds(t *testing.T) {
	s := loadNIST(t, "Misra1a")
	inf := math.Inf(1)
	tests := []struct {
		name    string
		lo, hi  [2]float64
		init    []float64
		bound   int  // index of the parameter that must end on a bound
		atUpper bool // which bound
	}{
		{"b1≤200", [2]float64{-inf, -inf}, [2]float64{200, inf}, []float64{150, 1e-4}, 0, true},
		{"b1≤200/start on bound", [2]float64{-inf, -inf}, [2]float64{200, inf}, []float64{200, 1e-4}, 0, true},
		{"b2≥6e-4", [2]float64{-inf, 6e-4}, [2]float64{inf, inf}, []float64{500, 1e-3}, 1, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := misra1a{lo: tc.lo, hi: tc.hi}
			res, err := fit.Fit(context.Background(), fit.Problem{E: s.X, Alpha: s.Y, Model: m, Init: tc.init}, nil)
			if err != nil {
				t.Fatal(err)
			}
			if res.Status.Early() {
				t.Fatalf("status %v", res.Status)
			}
			want := tc.lo[tc.bound]
			if tc.atUpper {
				want = tc.hi[tc.bound]
			}
			if res.Params[tc.bound] != want || !res.AtBound[tc.bound] {
				t.Fatalf("p[%d] = %v (AtBound %v), want exactly the bound %v", tc.bound, res.Params[tc.bound], res.AtBound[tc.bound], want)
			}
			free := 1 - tc.bound
			if res.AtBound[free] {
				t.Errorf("p[%d] reported at a bound", free)
			}
			// Gradient of ½SSR: g = Jᵀr with J = ∂r/∂p = −∂f/∂p.
			jac := mat.NewDense(len(s.X), 2, nil)
			m.Jacobian(jac, s.X, res.Params)
			var g [2]float64
			for i := range s.X {
				for j := range 2 {
					g[j] -= jac.At(i, j) * res.Residuals[i]
				}
			}
			if tc.atUpper && !(g[tc.bound] < 0) || !tc.atUpper && !(g[tc.bound] > 0) {
				t.Errorf("gradient %v at the bound does not point outwards", g[tc.bound])
			}
			cos := math.Abs(g[free]) / (mat.Norm(jac.ColView(free), 2) * floats.Norm(res.Residuals, 2))
			if cos > 1e-8 {
				t.Errorf("free gradient cosine %v > 1e-8", cos)
			}
			fdRes, err := fit.Fit(context.Background(), fit.Problem{E: s.X, Alpha: s.Y, Model: misra1aFD{m}, Init: tc.init}, nil)
			if err != nil {
				t.Fatal(err)
			}
			if l := minLRE(fdRes.Params, res.Params); l < 6 {
				t.Errorf("finite-difference path: %v, analytic %v (LRE %.1f < 6)", fdRes.Params, res.Params, l)
			}
		})
	}
}

// TestFallback drives the primary strategy into its two generic failures on
// NIST StRD BoxBOD, y = b1(1 − exp(−b2 x)), and checks that the fallback
// recovers the certified optimum (LRE ≥ 6). From (1, 10) the primary run
// sends b2 to a value where exp(−b2 x) underflows for every x: the model
// is the constant b1 and the run stops at its least-squares value, b1 = ȳ,
// SSR = Σ(y − ȳ)² (computed here from the data), a degenerate plateau. From
// (2, 5) it creeps along that plateau until the iteration limit. From
// (20000, 0.05), b1 a hundred times too large, identity scaling fails as
// well and the small first trust region of the third strategy is needed.
func TestFallback(t *testing.T) {
	s := loadNIST(t, "BoxBOD")
	ybar := stat.Mean(s.Y, nil)
	plateau := 0.0
	for _, y := range s.Y {
		plateau += (y - ybar) * (y - ybar)
	}
	tests := []struct {
		name          string
		init          []float64
		primaryStatus func(optimize.Status) bool
		onPlateau     bool
		wantStrategy  string
	}{
		{"plateau", []float64{1, 10}, func(st optimize.Status) bool { return !st.Early() }, true, fit.StrategyIdentityScaling},
		{"iteration limit", []float64{2, 5}, func(st optimize.Status) bool { return st == optimize.IterationLimit }, false, fit.StrategyIdentityScaling},
		{"far start", []float64{20000, 0.05}, func(optimize.Status) bool { return true }, false, fit.StrategyCautiousStep},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			f := boxbodFunc(s)
			prim, err := fit.LeastSquares(context.Background(), f, tc.init, &fit.Settings{NoFallback: true})
			if err != nil && !errors.Is(err, fit.ErrSingular) {
				t.Fatal(err)
			}
			if !tc.primaryStatus(prim.Status) {
				t.Errorf("primary status %v", prim.Status)
			}
			if tc.onPlateau {
				if !scalar.EqualWithinAbsOrRel(prim.SSR, plateau, 0, 1e-9) || !scalar.EqualWithinAbsOrRel(prim.Params[0], ybar, 0, 1e-9) {
					t.Errorf("primary ended at b = %v, SSR %v; want the plateau b1 = ȳ = %v, SSR = %v", prim.Params, prim.SSR, ybar, plateau)
				}
			}
			if l := minLRE(prim.Params, s.Certified); l >= 6 {
				t.Fatalf("primary already solved it (LRE %.1f): the test no longer exercises the fallback", l)
			}
			res, err := fit.LeastSquares(context.Background(), f, tc.init, nil)
			if err != nil {
				t.Fatal(err)
			}
			if !res.Fallback || res.Strategy != tc.wantStrategy {
				t.Errorf("Fallback %v, Strategy %q: want %q", res.Fallback, res.Strategy, tc.wantStrategy)
			}
			if l := minLRE(res.Params, s.Certified); l < 6 {
				t.Errorf("fallback params %v, certified %v (LRE %.1f < 6)", res.Params, s.Certified, l)
			}
			if res.Stats.MajorIterations <= prim.Stats.MajorIterations {
				t.Errorf("Stats.MajorIterations %d do not include the primary run's %d", res.Stats.MajorIterations, prim.Stats.MajorIterations)
			}
		})
	}
}

func boxbodFunc(s nistSet) fit.Func {
	return fit.Func{
		M: len(s.X),
		Residuals: func(dst, b []float64) {
			for i, x := range s.X {
				dst[i] = s.Y[i] - b[0]*(1-math.Exp(-b[1]*x))
			}
		},
		Jacobian: func(dst *mat.Dense, b []float64) {
			for i, x := range s.X {
				e := math.Exp(-b[1] * x)
				dst.Set(i, 0, -(1 - e))
				dst.Set(i, 1, -b[0]*x*e)
			}
		},
	}
}

// TestCancel checks that a cancelled context stops the run with
// Status Failure, an error wrapping the context's error and a usable
// Result (the last accepted iterate, never worse than the start).
func TestCancel(t *testing.T) {
	s := loadNIST(t, "Misra1a")
	init := s.start(1)
	ssr0 := 0.0
	for i, x := range s.X {
		r := s.Y[i] - init[0]*(1-math.Exp(-init[1]*x))
		ssr0 += r * r
	}
	tests := []struct {
		name    string
		ctx     func() (context.Context, context.CancelFunc)
		after   int // cancel after this many residual evaluations (0: before the call)
		wantErr error
	}{
		{"before", func() (context.Context, context.CancelFunc) { return context.WithCancel(context.Background()) }, 0, context.Canceled},
		{"during", func() (context.Context, context.CancelFunc) { return context.WithCancel(context.Background()) }, 6, context.Canceled},
		{"deadline", func() (context.Context, context.CancelFunc) { return context.WithTimeout(context.Background(), 0) }, 0, context.DeadlineExceeded},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ctx, cancel := tc.ctx()
			defer cancel()
			if tc.after == 0 {
				cancel()
			}
			n := 0
			m := newMisra1a()
			f := fit.Func{
				M: len(s.X),
				Residuals: func(dst, b []float64) {
					n++
					if n == tc.after {
						cancel()
					}
					m.Eval(dst, s.X, b)
					for i := range dst {
						dst[i] = s.Y[i] - dst[i]
					}
				},
			}
			res, err := fit.LeastSquares(ctx, f, init, nil)
			if !errors.Is(err, tc.wantErr) {
				t.Fatalf("error %v, want %v", err, tc.wantErr)
			}
			if res == nil {
				t.Fatal("nil Result")
			}
			if res.Status != optimize.Failure {
				t.Errorf("status %v, want Failure", res.Status)
			}
			if !(res.SSR <= ssr0) {
				t.Errorf("SSR %v worse than at the start, %v", res.SSR, ssr0)
			}
			if tc.after == 0 && !floats.Equal(res.Params, init) {
				t.Errorf("params %v, want the start %v", res.Params, init)
			}
		})
	}
}

// TestFitErrors checks that every invalid input of Fit comes back as the
// documented sentinel (errors.Is) with a nil Result, and never a panic.
func TestFitErrors(t *testing.T) {
	x := []float64{1, 2, 3, 4}
	y := []float64{2, 3, 5, 6}
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name    string
		p       fit.Problem
		wantErr error
	}{
		{"nil model", fit.Problem{E: x, Alpha: y, Init: []float64{0, 1}}, fit.ErrNoModel},
		{"no data", fit.Problem{Model: line{}, Init: []float64{0, 1}}, fit.ErrNoData},
		{"alpha length", fit.Problem{E: x, Alpha: y[:3], Model: line{}, Init: []float64{0, 1}}, fit.ErrLength},
		{"weights length", fit.Problem{E: x, Alpha: y, Weights: []float64{1}, Model: line{}, Init: []float64{0, 1}}, fit.ErrLength},
		{"init length", fit.Problem{E: x, Alpha: y, Model: line{}, Init: []float64{0}}, fit.ErrLength},
		{"NaN alpha", fit.Problem{E: x, Alpha: []float64{2, nan, 5, 6}, Model: line{}, Init: []float64{0, 1}}, fit.ErrNonFinite},
		{"Inf energy", fit.Problem{E: []float64{1, inf, 3, 4}, Alpha: y, Model: line{}, Init: []float64{0, 1}}, fit.ErrNonFinite},
		{"NaN weight", fit.Problem{E: x, Alpha: y, Weights: []float64{1, nan, 1, 1}, Model: line{}, Init: []float64{0, 1}}, fit.ErrNonFinite},
		{"Inf weight", fit.Problem{E: x, Alpha: y, Weights: []float64{1, inf, 1, 1}, Model: line{}, Init: []float64{0, 1}}, fit.ErrNonFinite},
		{"negative weight", fit.Problem{E: x, Alpha: y, Weights: []float64{1, -1, 1, 1}, Model: line{}, Init: []float64{0, 1}}, fit.ErrNegativeWeight},
		{"all weights zero", fit.Problem{E: x, Alpha: y, Weights: []float64{0, 0, 0, 0}, Model: line{}, Init: []float64{0, 1}}, fit.ErrNoData},
		{"one weighted point", fit.Problem{E: x, Alpha: y, Weights: []float64{0, 1, 0, 0}, Model: line{}, Init: []float64{0, 1}}, fit.ErrTooFewPoints},
		{"too few points", fit.Problem{E: x[:1], Alpha: y[:1], Model: line{}, Init: []float64{0, 1}}, fit.ErrTooFewPoints},
		{"NaN start", fit.Problem{E: x, Alpha: y, Model: line{}, Init: []float64{nan, 1}}, fit.ErrNonFinite},
		{"start outside bounds", fit.Problem{E: x, Alpha: y, Model: misra1a{hi: [2]float64{1, 1}, lo: [2]float64{0, 0}}, Init: []float64{2, 0.5}}, fit.ErrBounds},
		{"model NaN at start", fit.Problem{E: x, Alpha: y, Model: nanModel{}, Init: []float64{0, 1}}, fit.ErrNonFinite},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := fit.Fit(context.Background(), tc.p, nil)
			if !errors.Is(err, tc.wantErr) {
				t.Fatalf("error %v, want %v", err, tc.wantErr)
			}
			if res != nil {
				t.Errorf("non-nil Result with a start error")
			}
		})
	}
}

// TestLeastSquaresErrors is TestFitErrors for the residual form.
func TestLeastSquaresErrors(t *testing.T) {
	res2 := func(dst, p []float64) {
		for i := range dst {
			dst[i] = p[0] - float64(i)
		}
	}
	nanJac := func(dst *mat.Dense, p []float64) { dst.Set(0, 0, math.NaN()) }
	tests := []struct {
		name    string
		f       fit.Func
		init    []float64
		s       *fit.Settings
		wantErr error
	}{
		{"nil residuals", fit.Func{M: 3}, []float64{1}, nil, fit.ErrNoModel},
		{"no parameters", fit.Func{M: 3, Residuals: res2}, nil, nil, fit.ErrNoParams},
		{"no residuals", fit.Func{M: 0, Residuals: res2}, []float64{1}, nil, fit.ErrNoData},
		{"M < len(p)", fit.Func{M: 1, Residuals: res2}, []float64{1, 2}, nil, fit.ErrTooFewPoints},
		{"Lower length", fit.Func{M: 3, Residuals: res2, Lower: []float64{0, 0}}, []float64{1}, nil, fit.ErrLength},
		{"Upper length", fit.Func{M: 3, Residuals: res2, Upper: []float64{}}, []float64{1}, nil, fit.ErrLength},
		{"TypicalScale length", fit.Func{M: 3, Residuals: res2}, []float64{1}, &fit.Settings{TypicalScale: []float64{1, 1}}, fit.ErrLength},
		{"Lower > Upper", fit.Func{M: 3, Residuals: res2, Lower: []float64{2}, Upper: []float64{1}}, []float64{1.5}, nil, fit.ErrBounds},
		{"NaN bound", fit.Func{M: 3, Residuals: res2, Lower: []float64{math.NaN()}}, []float64{1}, nil, fit.ErrBounds},
		{"Inf start", fit.Func{M: 3, Residuals: res2}, []float64{math.Inf(-1)}, nil, fit.ErrNonFinite},
		{"NaN Jacobian at start", fit.Func{M: 3, Residuals: res2, Jacobian: nanJac}, []float64{1}, nil, fit.ErrNonFinite},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := fit.LeastSquares(context.Background(), tc.f, tc.init, tc.s)
			if !errors.Is(err, tc.wantErr) {
				t.Fatalf("error %v, want %v", err, tc.wantErr)
			}
			if res != nil {
				t.Errorf("non-nil Result with a start error")
			}
		})
	}
}

// TestSingular fits y = (a + b)·x, whose JᵀJ is singular: the fit must
// still return the estimates (a + b equal to the least-squares slope
// through the origin, from gonum's stat.LinearRegression, relTol 1e-10),
// with StdErr NaN, Cov nil and an error wrapping ErrSingular.
func TestSingular(t *testing.T) {
	x, y, _ := weightedLineData()
	res, err := fit.Fit(context.Background(), fit.Problem{E: x, Alpha: y, Model: sumSlope{}, Init: []float64{1, 1}}, nil)
	if !errors.Is(err, fit.ErrSingular) {
		t.Fatalf("error %v, want ErrSingular", err)
	}
	if res == nil {
		t.Fatal("nil Result: the estimates must survive a singular covariance")
	}
	_, slope := stat.LinearRegression(x, y, nil, true)
	if got := res.Params[0] + res.Params[1]; !scalar.EqualWithinAbsOrRel(got, slope, 0, 1e-10) {
		t.Errorf("a + b = %v, want slope %v", got, slope)
	}
	if res.Cov != nil || res.Correlation() != nil {
		t.Error("Cov or Correlation not nil")
	}
	for j, se := range res.StdErr {
		if !math.IsNaN(se) {
			t.Errorf("StdErr[%d] = %v, want NaN", j, se)
		}
	}
	if !math.IsNaN(res.ConfInt(0.95)[0][0]) {
		t.Error("ConfInt not NaN")
	}
	if res.Status.Early() {
		t.Errorf("status %v: the estimates converged", res.Status)
	}
}

// TestZeroDoF: with as many points as parameters the relative-weight
// covariance (s² = SSR/DoF) is undefined and reported as ErrZeroDoF, while
// the absolute one (s² = 1) exists and equals the closed form (Numerical
// Recipes 15.2.9, relTol 1e-9).
func TestZeroDoF(t *testing.T) {
	x, y, sigma := []float64{1, 3}, []float64{2, 7}, []float64{0.5, 0.25}
	w := []float64{1 / (sigma[0] * sigma[0]), 1 / (sigma[1] * sigma[1])}
	p := fit.Problem{E: x, Alpha: y, Weights: w, Model: line{}, Init: []float64{0, 0}}
	res, err := fit.Fit(context.Background(), p, nil)
	if !errors.Is(err, fit.ErrZeroDoF) || res == nil || res.DoF != 0 {
		t.Fatalf("relative: error %v, result %v; want ErrZeroDoF with DoF 0", err, res)
	}
	if !floats.EqualApprox(res.Params, []float64{-0.5, 2.5}, 1e-12) {
		t.Errorf("params %v, want the line through both points (-0.5, 2.5)", res.Params)
	}
	res, err = fit.Fit(context.Background(), p, &fit.Settings{AbsoluteSigma: true})
	if err != nil {
		t.Fatal(err)
	}
	_, _, sa, sb, _, _, _ := closedFormLine(x, y, sigma)
	if !floats.EqualApprox(res.StdErr, []float64{sa, sb}, 1e-9) {
		t.Errorf("StdErr %v, want %v", res.StdErr, []float64{sa, sb})
	}
}

// TestZeroWeights: a point with weight 0 takes no part: same estimates as
// without it (relTol 1e-10) and one degree of freedom fewer.
func TestZeroWeights(t *testing.T) {
	x, y, _ := weightedLineData()
	w := make([]float64, len(x))
	for i := range w {
		w[i] = 1
	}
	w[3] = 0
	y3 := append([]float64(nil), y...)
	y3[3] = 1e6 // would dominate the fit if it counted
	res, err := fit.Fit(context.Background(), fit.Problem{E: x, Alpha: y3, Weights: w, Model: line{}, Init: []float64{0, 0}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	xs := append(append([]float64(nil), x[:3]...), x[4:]...)
	ys := append(append([]float64(nil), y[:3]...), y[4:]...)
	ref, err := fit.Fit(context.Background(), fit.Problem{E: xs, Alpha: ys, Model: line{}, Init: []float64{0, 0}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.DoF != len(x)-1-2 {
		t.Errorf("DoF = %d, want %d", res.DoF, len(x)-3)
	}
	if !floats.EqualApprox(res.Params, ref.Params, 1e-10) || !floats.EqualApprox(res.StdErr, ref.StdErr, 1e-10) {
		t.Errorf("with zero weight %v ± %v, without the point %v ± %v", res.Params, res.StdErr, ref.Params, ref.StdErr)
	}
}

// TestEvaluationCounts checks that Fit uses a model's analytic Jacobian
// (one residual evaluation per trial step plus the start) and otherwise
// central differences (2 evaluations per parameter per Jacobian, no
// bounds here).
func TestEvaluationCounts(t *testing.T) {
	s := loadNIST(t, "Misra1a")
	for _, tc := range []struct {
		name string
		m    model.Model
		perJ int
	}{
		{"analytic", newMisra1a(), 0},
		{"finite differences", misra1aFD{newMisra1a()}, 4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, err := fit.Fit(context.Background(), fit.Problem{E: s.X, Alpha: s.Y, Model: tc.m, Init: s.start(2)}, nil)
			if err != nil {
				t.Fatal(err)
			}
			st := res.Stats
			want := st.MajorIterations + 1 + tc.perJ*st.GradEvaluations
			if st.FuncEvaluations != want {
				t.Errorf("FuncEvaluations %d, want %d (iterations %d, Jacobians %d)", st.FuncEvaluations, want, st.MajorIterations, st.GradEvaluations)
			}
			if st.Runtime <= 0 {
				t.Errorf("Runtime %v", st.Runtime)
			}
		})
	}
}

// TestTestJacobians checks the analytic Jacobians of the hand-written test
// models against gonum's fd.Jacobian with fd.Central (STYLE.md), at the
// NIST start 1; relTol 1e-6 allows for the central difference's error with
// fd's default step.
func TestTestJacobians(t *testing.T) {
	for _, tc := range []struct {
		name string
		f    fit.Func
		p    []float64
	}{
		{"Thurber", thurberFunc(loadNIST(t, "Thurber")), loadNIST(t, "Thurber").start(1)},
		{"MGH09", mgh09Func(loadNIST(t, "MGH09"), true), loadNIST(t, "MGH09").start(2)},
		{"BoxBOD", boxbodFunc(loadNIST(t, "BoxBOD")), loadNIST(t, "BoxBOD").start(1)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			n := len(tc.p)
			got := mat.NewDense(tc.f.M, n, nil)
			tc.f.Jacobian(got, tc.p)
			want := mat.NewDense(tc.f.M, n, nil)
			fd.Jacobian(want, func(y, x []float64) { tc.f.Residuals(y, x) }, tc.p, &fd.JacobianSettings{Formula: fd.Central})
			for i := range tc.f.M {
				for j := range n {
					if !scalar.EqualWithinAbsOrRel(got.At(i, j), want.At(i, j), 1e-8, 1e-6) {
						t.Errorf("J[%d,%d] = %v, fd %v", i, j, got.At(i, j), want.At(i, j))
					}
				}
			}
		})
	}
}
