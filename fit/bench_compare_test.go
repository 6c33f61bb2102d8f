package fit_test

import (
	"context"
	"math/rand/v2"
	"testing"

	"bandedge/fit"
	"bandedge/fit/edge"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// directUrbach1000 is problem 0 of bench/scipycmp (seed 1): a 1000-point
// scan (700.3–1000 nm in 0.3 nm steps) of a 2 µm GaAs-like slab
// (E_g = 1.424 eV, C from E_P = 28.8 eV, n = 3.6, m_e = 0.067, m_h = 0.51,
// E_U = 8 meV; values from memory, Vurgaftman et al., J. Appl. Phys. 89,
// 5815, 2001), σ_T = 0.002, converted by optics.ToAlpha; all 1000 points,
// weights 1/σ_α², started from edge.Analyze's start values (Tauc, Urbach
// plot, linear amplitude).
func directUrbach1000(tb testing.TB) fit.Problem {
	tb.Helper()
	const d, sigmaT = 2e-4, 0.002
	truth := []float64{1.424, model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51)), 0.008}
	e := synth.WavelengthGrid(700.3, 1000, 0.3)
	r := optics.FresnelR(3.6, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: truth, E: e, Thickness: d, R: r, SigmaT: sigmaT},
		rand.New(rand.NewPCG(1, 0)))
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, d, &optics.Settings{RConst: r, SigmaT: sigmaT})
	if err != nil {
		tb.Fatal(err)
	}
	ar, err := edge.Analyze(context.Background(), edge.Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true},
		edge.Options{NoWindowBudget: true})
	if err != nil {
		tb.Fatal(err)
	}
	p := fit.Problem{Model: model.DirectUrbach{}, Init: ar.Start}
	for i := range e {
		if conv.Mask[i] {
			p.E = append(p.E, e[i])
			p.Alpha = append(p.Alpha, conv.Alpha[i])
			p.Weights = append(p.Weights, 1/(conv.Sigma[i]*conv.Sigma[i]))
		}
	}
	if len(p.E) != 1000 {
		tb.Fatalf("%d usable points, want 1000", len(p.E))
	}
	return p
}

// BenchmarkFitDirectUrbach1000 times one complete direct+Urbach fit of a
// 1000-point spectrum (the bandedge side of bench/scipycmp, whose target
// is at least 10× faster than scipy.optimize.least_squares).
func BenchmarkFitDirectUrbach1000(b *testing.B) {
	p := directUrbach1000(b)
	set := &fit.Settings{AbsoluteSigma: true}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := fit.Fit(context.Background(), p, set); err != nil {
			b.Fatal(err)
		}
	}
}

// TestDirectUrbach1000 checks the benchmark problem: the fit converges
// without the fallback and lands within 4 standard errors of the truth
// (seeded noise; a 4σ miss has probability 6e-5 per parameter), so the
// benchmark times a real fit.
func TestDirectUrbach1000(t *testing.T) {
	p := directUrbach1000(t)
	res, err := fit.Fit(context.Background(), p, &fit.Settings{AbsoluteSigma: true})
	if err != nil {
		t.Fatal(err)
	}
	if res.Status.Early() || res.Fallback {
		t.Fatalf("status %v, fallback %v", res.Status, res.Fallback)
	}
	truth := []float64{1.424, model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51)), 0.008}
	for j := range truth {
		if d := res.Params[j] - truth[j]; d > 4*res.StdErr[j] || d < -4*res.StdErr[j] {
			t.Errorf("p[%d] = %v ± %v, truth %v", j, res.Params[j], res.StdErr[j], truth[j])
		}
	}
	t.Logf("%d iterations, %d residual and %d Jacobian evaluations, χ²_red %.3f", res.Stats.MajorIterations, res.Stats.FuncEvaluations, res.Stats.GradEvaluations, res.RedChi2())
}
