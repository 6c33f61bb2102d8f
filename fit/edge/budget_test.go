package edge

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"

	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// baselineData is a GaAs-like 2 µm film (invented test data) with a
// sub-gap background of b cm⁻¹ that the direct+urbach model lacks; rng nil
// gives the noiseless spectrum.
func baselineData(t *testing.T, b, sigmaT float64, rng *rand.Rand) Data {
	t.Helper()
	e := synth.WavelengthGrid(700, 1000, 1)
	r := optics.FresnelR(3.6, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: gaAsLike(), E: e, Thickness: 2e-4, R: r,
		SigmaT: sigmaT, Baseline: func(float64) float64 { return b }}, rng)
	st := sigmaT
	if rng == nil {
		st = 1e-4 // noiseless: weights as for a 0.01 %T instrument
	}
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, 2e-4, &optics.Settings{RConst: r, SigmaT: st})
	if err != nil {
		t.Fatal(err)
	}
	return Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true}
}

// TestWindowTermKnownByConstruction: a sub-gap background of 150 cm⁻¹ that
// the model lacks makes the fitted gap depend on where the window starts.
// The size of that dependence is known by construction: it is the spread
// of E_g over the same family of windows on the noiseless spectrum, where
// no statistics enter. On a scan with 0.05 %T noise the budget's window
// term must be the dominant line and match that spread within 30 % (the
// noise moves each refit a little; the family has nine windows).
func TestWindowTermKnownByConstruction(t *testing.T) {
	const b = 150
	clean := baselineData(t, b, 5e-4, nil)
	ref, err := Analyze(context.Background(), clean, Options{NoWindowBudget: true})
	if err != nil {
		t.Fatal(err)
	}
	m := model.DirectUrbach{}
	var gaps []float64
	for _, w := range append(windowFamily(m, ref.Fit.Params, ref.Window), ref.Window) {
		in, _ := fitMask(clean, m, w, ref.Fit.Params)
		fr, err := fitWindow(context.Background(), clean, m, in, ref.Fit.Params)
		if err != nil {
			t.Fatal(err)
		}
		gaps = append(gaps, fr.Params[0])
	}
	want := stat.StdDev(gaps[:len(gaps)-1], nil)

	noisy := baselineData(t, b, 5e-4, rand.New(rand.NewPCG(8, 8)))
	res, err := Analyze(context.Background(), noisy, Options{Window: ref.Window})
	if err != nil {
		t.Fatal(err)
	}
	bud := res.Budgets["eg"]
	win, _ := bud.Term("fit window")
	st, _ := bud.Term("statistical")
	t.Logf("noiseless window spread %.3g eV; budget: window %.3g eV, statistical %.3g eV", want, win.U, st.U)
	if bud.Dominant()[0].Source != "fit window" {
		t.Errorf("dominant term %q, want the fit window", bud.Dominant()[0].Source)
	}
	if math.Abs(win.U-want) > 0.3*want {
		t.Errorf("window term %.3g eV, expected %.3g eV ± 30 %%", win.U, want)
	}
}
