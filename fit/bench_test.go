package fit_test

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"bandedge/fit"
	"bandedge/model"
)

// decay is y = A·exp(−x/τ) + c, a three-parameter model with an analytic
// Jacobian, used to time the engine.
type decay struct{}

func (decay) Name() string { return "decay" }
func (decay) Params() []model.Param {
	inf := math.Inf(1)
	return []model.Param{{Name: "A", Min: 0, Max: inf}, {Name: "tau", Min: 1e-6, Max: inf}, {Name: "c", Min: -inf, Max: inf}}
}
func (decay) Eval(dst, x, p []float64) {
	for i, xi := range x {
		dst[i] = p[0]*math.Exp(-xi/p[1]) + p[2]
	}
}
func (decay) Jacobian(dst *mat.Dense, x, p []float64) {
	for i, xi := range x {
		e := math.Exp(-xi / p[1])
		dst.Set(i, 0, e)
		dst.Set(i, 1, p[0]*e*xi/(p[1]*p[1]))
		dst.Set(i, 2, 1)
	}
}

// evalOnly hides a model's Jacobian, so Fit uses finite differences.
type evalOnly struct{ m model.Model }

func (e evalOnly) Name() string             { return e.m.Name() }
func (e evalOnly) Params() []model.Param    { return e.m.Params() }
func (e evalOnly) Eval(dst, x, p []float64) { e.m.Eval(dst, x, p) }

// decayProblem is 1000 points of A = 5, τ = 2, c = 0.5 on x ∈ [0, 10) with
// Gaussian noise σ = 0.01 (seed 1), started at (1, 1, 0).
func decayProblem(m model.Model) fit.Problem {
	rng := rand.New(rand.NewPCG(1, 1))
	const n = 1000
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range n {
		x[i] = 10 * float64(i) / n
		y[i] = 5*math.Exp(-x[i]/2) + 0.5 + 0.01*rng.NormFloat64()
	}
	return fit.Problem{E: x, Alpha: y, Model: m, Init: []float64{1, 1, 0}}
}

// BenchmarkFit1000x3 times a three-parameter fit of 1000 points with an
// analytic Jacobian (target: about 10× faster than SciPy's least_squares on
// the same problem).
func BenchmarkFit1000x3(b *testing.B) {
	p := decayProblem(decay{})
	b.ReportAllocs()
	for b.Loop() {
		if _, err := fit.Fit(context.Background(), p, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFit1000x3FD is BenchmarkFit1000x3 with finite differences.
func BenchmarkFit1000x3FD(b *testing.B) {
	p := decayProblem(evalOnly{decay{}})
	b.ReportAllocs()
	for b.Loop() {
		if _, err := fit.Fit(context.Background(), p, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// TestDecayProblem checks the benchmark problem itself: the fit converges
// to within 5 standard errors of the true values (seeded noise, seed 1),
// so the benchmark times a real fit.
func TestDecayProblem(t *testing.T) {
	for _, m := range []model.Model{decay{}, evalOnly{decay{}}} {
		res, err := fit.Fit(context.Background(), decayProblem(m), nil)
		if err != nil {
			t.Fatal(err)
		}
		truth := []float64{5, 2, 0.5}
		for j := range truth {
			if math.Abs(res.Params[j]-truth[j]) > 5*res.StdErr[j] {
				t.Errorf("%T: p[%d] = %v ± %v, truth %v", m, j, res.Params[j], res.StdErr[j], truth[j])
			}
		}
		t.Logf("%T: %d iterations, %d residual and %d Jacobian evaluations", m, res.Stats.MajorIterations, res.Stats.FuncEvaluations, res.Stats.GradEvaluations)
	}
}
