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

// BenchmarkAnalyze1000Transmittance is BenchmarkAnalyze1000 (same scan,
// seed 1) with the transmission view that scan.Convert attaches to a
// transmittance scan, so that every fit runs in transmittance space, the
// tool's path for transmittance and absorbance input.
func BenchmarkAnalyze1000Transmittance(b *testing.B) {
	e := synth.WavelengthGrid(700.3, 1000, 0.3)
	r := optics.FresnelR(honestyIndex, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: honestyTruth(), E: e,
		Thickness: honestyThick, R: r, SigmaT: honestySigmaT}, rand.New(rand.NewPCG(1, 0)))
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, honestyThick, &optics.Settings{RConst: r, SigmaT: honestySigmaT})
	if err != nil {
		b.Fatal(err)
	}
	d := edge.Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true,
		Transmission: &edge.Transmission{T: conv.T, R: conv.R, SigmaT: conv.SigmaT, Thickness: honestyThick}}
	ctx := context.Background()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := edge.Analyze(ctx, d, edge.Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
