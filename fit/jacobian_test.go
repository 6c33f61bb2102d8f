package fit

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// Misra1a data (NIST StRD, x = pressure, y = volume) and certified
// estimates b1 = 238.94212918, b2 = 5.5015643181e-4; copied from
// testdata/nist-strd/Misra1a.json so this internal test needs no loader.
var (
	misraX = []float64{77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0}
	misraY = []float64{10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78}
	misraB = []float64{238.94212918, 5.5015643181e-4}
)

func misraFunc(lower, upper []float64) Func {
	return Func{
		M:     len(misraX),
		Lower: lower,
		Upper: upper,
		Residuals: func(dst, b []float64) {
			for i, x := range misraX {
				dst[i] = misraY[i] - b[0]*(1-math.Exp(-b[1]*x))
			}
		},
	}
}

func misraJacobian(b []float64) *mat.Dense {
	j := mat.NewDense(len(misraX), 2, nil)
	for i, x := range misraX {
		e := math.Exp(-b[1] * x)
		j.Set(i, 0, -(1 - e))
		j.Set(i, 1, -b[0]*x*e)
	}
	return j
}

// jacOf returns the Jacobian held (transposed) in w.jt as an m×n matrix.
func jacOf(w *work) *mat.Dense {
	j := mat.NewDense(w.m, w.n, nil)
	j.Copy(mat.NewDense(w.n, w.m, w.jt).T())
	return j
}

// colRelErr returns max_i |got_ij − want_ij| / max_i |want_ij|.
func colRelErr(got, want *mat.Dense, j int) float64 {
	r, _ := want.Dims()
	num, den := 0.0, 0.0
	for i := range r {
		num = math.Max(num, math.Abs(got.At(i, j)-want.At(i, j)))
		den = math.Max(den, math.Abs(want.At(i, j)))
	}
	return num / den
}

// TestFDJacobian checks the per-parameter finite-difference Jacobian
// against the analytic one on NIST Misra1a at the certified estimates,
// where the parameters differ by six orders of magnitude. Expected error:
// the central difference with h_j = ε^⅓|b_j| has truncation error
// (h_j²/6)·|∂³r/∂b_j³|/|∂r/∂b_j| ≈ (h_j x)²/6 ≲ 10⁻¹¹ for b2 and rounding
// error ε|r|/h_j ≲ 10⁻¹⁰ of the column, so 1e-8 leaves a margin of 100;
// the one-sided formula at a bound has about three times both errors
// (1e-7). For contrast, gonum's fd.Jacobian with fd.Central and its single
// default step (ε^⅓ ≈ 6·10⁻⁶ for every coordinate, a 1 % step for b2)
// must be at least 100 times worse on the b2 column: that is why fit does
// not use it.
func TestFDJacobian(t *testing.T) {
	want := misraJacobian(misraB)
	tests := []struct {
		name         string
		lower, upper []float64
		tol          float64
	}{
		{"central", nil, nil, 1e-8},
		{"b2 at its upper bound", nil, []float64{math.Inf(1), misraB[1]}, 1e-7},
		{"b2 at its lower bound", []float64{math.Inf(-1), misraB[1]}, nil, 1e-7},
		{"b1 in a box narrower than 2h", []float64{misraB[0] - 1e-4, math.Inf(-1)}, []float64{misraB[0] + 1e-4, math.Inf(1)}, 1e-7},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			f := misraFunc(tc.lower, tc.upper)
			w := newWork(f, misraB, nil)
			fx := make([]float64, f.M)
			f.Residuals(fx, misraB)
			if !w.fdJacobian(misraB, fx) {
				t.Fatal("non-finite residuals")
			}
			for j := range 2 {
				if e := colRelErr(jacOf(w), want, j); !(e <= tc.tol) {
					t.Errorf("column %d: relative error %.3g > %g", j, e, tc.tol)
				}
			}
		})
	}

	f := misraFunc(nil, nil)
	w := newWork(f, misraB, nil)
	fx := make([]float64, f.M)
	f.Residuals(fx, misraB)
	w.fdJacobian(misraB, fx)
	ours := colRelErr(jacOf(w), want, 1)
	gj := mat.NewDense(f.M, 2, nil)
	fd.Jacobian(gj, f.Residuals, misraB, &fd.JacobianSettings{Formula: fd.Central})
	theirs := colRelErr(gj, want, 1)
	t.Logf("b2 column: per-parameter step %.2g, single step %.2g", ours, theirs)
	if !(theirs >= 100*ours) {
		t.Errorf("single-step error %.3g is not 100× the per-parameter error %.3g", theirs, ours)
	}
}

// TestFDJacobianFixed: a parameter with Lower = Upper gets a zero column.
func TestFDJacobianFixed(t *testing.T) {
	f := misraFunc([]float64{misraB[0], math.Inf(-1)}, []float64{misraB[0], math.Inf(1)})
	w := newWork(f, misraB, nil)
	fx := make([]float64, f.M)
	f.Residuals(fx, misraB)
	w.fdJacobian(misraB, fx)
	for i := range f.M {
		if v := jacOf(w).At(i, 0); v != 0 {
			t.Fatalf("J[%d,0] = %v, want 0", i, v)
		}
	}
}

// TestNoAllocPerIteration checks that the solver's iteration does not
// allocate: two converged fits of NIST Misra1a that take different numbers
// of iterations (from NIST start 2, about 11; from start 1, about 28) must
// allocate the same amount.
func TestNoAllocPerIteration(t *testing.T) {
	if raceEnabled {
		t.Skip("allocation counts are not reliable under the race detector")
	}
	f := misraFunc(nil, nil)
	f.Jacobian = func(dst *mat.Dense, b []float64) {
		for i, x := range misraX {
			e := math.Exp(-b[1] * x)
			dst.Set(i, 0, -(1 - e))
			dst.Set(i, 1, -b[0]*x*e)
		}
	}
	run := func(init []float64) (iters int, allocs float64) {
		res, err := LeastSquares(t.Context(), f, init, nil)
		if err != nil || res.Status.Early() {
			t.Fatalf("start %v: %v, %v", init, err, res.Status)
		}
		return res.Stats.MajorIterations, testing.AllocsPerRun(20, func() { _, _ = LeastSquares(t.Context(), f, init, nil) })
	}
	shortIt, short := run([]float64{250, 5e-4})
	longIt, long := run([]float64{500, 1e-4})
	t.Logf("%d iterations: %v allocations; %d iterations: %v", shortIt, short, longIt, long)
	if longIt <= shortIt {
		t.Fatalf("iterations %d and %d: the test needs runs of different length", shortIt, longIt)
	}
	if long != short {
		t.Errorf("%v allocations in %d iterations, %v in %d: the iteration allocates", long, longIt, short, shortIt)
	}
}

// TestJacobianAt: for r_i = p₀·exp(−p₁·t_i) − y_i (an exponential decay,
// J_i0 = exp(−p₁t_i), J_i1 = −p₀t_i·exp(−p₁t_i) by hand), JacobianAt gives
// the analytic Jacobian exactly when f has one and the engine's finite
// differences within 1e-8 relative when not, and reports a residual that
// is not finite.
func TestJacobianAt(t *testing.T) {
	ts := []float64{0, 0.5, 1, 2, 4}
	res := func(dst, p []float64) {
		for i, ti := range ts {
			dst[i] = p[0]*math.Exp(-p[1]*ti) - 1
		}
	}
	jac := func(dst *mat.Dense, p []float64) {
		for i, ti := range ts {
			e := math.Exp(-p[1] * ti)
			dst.Set(i, 0, e)
			dst.Set(i, 1, -p[0]*ti*e)
		}
	}
	p := []float64{2.5, 0.7}
	want := mat.NewDense(len(ts), 2, nil)
	jac(want, p)
	for _, tc := range []struct {
		name string
		f    Func
		tol  float64
	}{
		{"analytic", Func{M: len(ts), Residuals: res, Jacobian: jac}, 0},
		{"finite differences", Func{M: len(ts), Residuals: res}, 1e-8},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, ok := JacobianAt(tc.f, p)
			if !ok {
				t.Fatal("not ok")
			}
			if !mat.EqualApprox(got, want, tc.tol) {
				t.Errorf("J = %v, want %v", mat.Formatted(got), mat.Formatted(want))
			}
		})
	}
	nan := Func{M: len(ts), Residuals: func(dst, p []float64) { res(dst, p); dst[2] = math.NaN() }}
	if _, ok := JacobianAt(nan, p); ok {
		t.Error("a NaN residual reported ok")
	}
}
