package edge_test

import (
	"context"
	"math/rand/v2"
	"testing"

	"bandedge/fit/edge"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// benchData is a 1000-point scan (700.3–1000 nm in 0.3 nm steps) of the
// 2 µm GaAs-like slab of the honesty study (honestyTruth), σ_T = 0.002,
// seed 1, converted by optics.ToAlpha: the same spectrum as problem 0 of
// bench/scipycmp.
func benchData(b *testing.B) edge.Data {
	b.Helper()
	e := synth.WavelengthGrid(700.3, 1000, 0.3)
	if len(e) != 1000 {
		b.Fatalf("grid has %d points, want 1000", len(e))
	}
	r := optics.FresnelR(honestyIndex, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: honestyTruth(), E: e,
		Thickness: honestyThick, R: r, SigmaT: honestySigmaT}, rand.New(rand.NewPCG(1, 0)))
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, honestyThick, &optics.Settings{RConst: r, SigmaT: honestySigmaT})
	if err != nil {
		b.Fatal(err)
	}
	return edge.Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true}
}

// BenchmarkAnalyze1000 times the whole analysis of one 1000-point scan:
// start values (Tauc, Urbach plot, linear amplitude), the automatic window
// iterated to its fixed point, the fit, and the window-family refits of
// the uncertainty budget.
func BenchmarkAnalyze1000(b *testing.B) {
	d := benchData(b)
	ctx := context.Background()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := edge.Analyze(ctx, d, edge.Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkAnalyze1000NoWindowBudget is BenchmarkAnalyze1000 without the
// eight window-family refits.
func BenchmarkAnalyze1000NoWindowBudget(b *testing.B) {
	d := benchData(b)
	ctx := context.Background()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := edge.Analyze(ctx, d, edge.Options{NoWindowBudget: true}); err != nil {
			b.Fatal(err)
		}
	}
}
