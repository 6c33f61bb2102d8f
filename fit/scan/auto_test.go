package scan

import (
	"bytes"
	"context"
	"math/rand/v2"
	"testing"

	"bandedge/io/export"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// TestAutoPicksGeneratingModel: on synthetic films made from each of four
// models (invented test data: GaAs-like parameters, 2 µm, 0.2 %T noise,
// 1 nm steps — a realistic scan), --model auto over those four candidates
// recommends the generating model in most trials. The fraction per model is
// logged; the test asserts more than half. A miss is not a bug: with an
// Akaike weight below about 0.7 the data really cannot tell the models
// apart, and the model-choice term of the budget says so.
func TestAutoPicksGeneratingModel(t *testing.T) {
	trials := 6
	if testing.Short() {
		trials = 2
	}
	c := truth[1]
	cands := []string{"direct+urbach", "direct+gauss", "direct+urbach+const", "exciton+urbach"}
	gen := []struct {
		name string
		p    []float64
	}{
		{"direct+urbach", []float64{1.424, c, 0.008}},
		{"direct+gauss", []float64{1.424, c, 0.020}},
		{"direct+urbach+const", []float64{1.424, c, 0.008, 150}},
		{"exciton+urbach", []float64{1.430, c, 0.006, 0.0045}},
	}
	e := synth.WavelengthGrid(700, 1000, 1)
	for gi, g := range gen {
		m, err := model.Lookup(g.name)
		if err != nil {
			t.Fatal(err)
		}
		hits := 0
		for k := 0; k < trials; k++ {
			seed := uint64(100*gi + k)
			sc := synth.Transmittance(synth.Spec{Model: m, Params: g.p, E: e, Thickness: thick,
				R: optics.FresnelR(index, 0), SigmaT: sigmaT}, rand.New(rand.NewPCG(seed, seed)))
			var buf bytes.Buffer
			if err := export.Write(&buf, export.Style{Header: []string{"Energy (eV)", "T"}, Digits: []int{6, 6}}, sc.E, sc.T); err != nil {
				t.Fatal(err)
			}
			o, err := Analyze(context.Background(), "auto.csv", buf.Bytes(), Settings{Thickness: thick, Index: index, Model: Auto, Candidates: cands})
			if err != nil {
				t.Fatalf("%s seed %d: %v", g.name, seed, err)
			}
			rec := o.Comparison.Candidates[o.Comparison.Recommended]
			if rec.Model == g.name {
				hits++
			} else {
				t.Logf("%s seed %d: recommended %s (weight %.2f)", g.name, seed, rec.Model, rec.Weight)
			}
		}
		t.Logf("%s: generating model recommended in %d of %d trials", g.name, hits, trials)
		if 2*hits <= trials {
			t.Errorf("%s recommended in only %d of %d trials", g.name, hits, trials)
		}
	}
}
