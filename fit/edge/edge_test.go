package edge

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// gaAsLike are GaAs-like edge parameters: E_g = 1.424 eV (room-temperature
// GaAs, from memory: Sze & Ng, Physics of Semiconductor Devices, 3rd ed.),
// C from E_P = 28.8 eV, n = 3.6, m_e = 0.067, m_h = 0.51 (from memory:
// Vurgaftman et al., J. Appl. Phys. 89, 5815, 2001), E_U = 8 meV (a typical
// value for good epitaxial GaAs, from memory).
func gaAsLike() []float64 {
	c := model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51))
	return []float64{1.424, c, 0.008}
}

// synthData makes α data from a noisy slab transmittance scan, converted
// the way the tool converts real scans.
func synthData(t *testing.T, p []float64, d, sigmaT float64, seed uint64) Data {
	t.Helper()
	e := synth.WavelengthGrid(700, 1000, 1)
	r := optics.FresnelR(3.6, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: p, E: e, Thickness: d, R: r, SigmaT: sigmaT},
		rand.New(rand.NewPCG(seed, seed)))
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, d, &optics.Settings{RConst: r, SigmaT: sigmaT})
	if err != nil {
		t.Fatal(err)
	}
	return Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true}
}

// TestAnalyzeRecovers: on a synthetic film with 0.2 %T noise the fitted
// parameters lie within 3 combined standard uncertainties of the truth
// (a 3σ bound fails by chance in about 0.3 % of cases per parameter; the
// seeds are fixed, so the test is deterministic).
func TestAnalyzeRecovers(t *testing.T) {
	truth := gaAsLike()
	for _, seed := range []uint64{1, 2, 3, 4, 5} {
		d := synthData(t, truth, 2e-4, 0.002, seed)
		res, err := Analyze(context.Background(), d, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if !res.Converged || res.TailOnly {
			t.Fatalf("seed %d: converged %v, tail only %v", seed, res.Converged, res.TailOnly)
		}
		for i, key := range []string{"eg", "amp", "eu"} {
			p, _ := res.Param(key)
			u := res.Budgets[key].Combined
			if !(u > 0) || math.Abs(p.Value-truth[i]) > 3*u {
				t.Errorf("seed %d: %s = %.6g ± %.2g, truth %.6g", seed, key, p.Value, u, truth[i])
			}
		}
		if res.Chi2Red < 0.7 || res.Chi2Red > 1.4 {
			t.Errorf("seed %d: χ²_red = %.3g with the true noise level, want ≈ 1", seed, res.Chi2Red)
		}
		if len(res.Warnings) != 0 {
			t.Errorf("seed %d: warnings on clean data: %q", seed, res.Warnings)
		}
	}
}

// TestTaucExactOnParabolicData: the direct Tauc construction on noiseless
// parabolic data, (αE)² = C²(E − E_g) exactly (Tauc, Grigorovici & Vancu
// 1966), returns the model's E_g to rounding.
func TestTaucExactOnParabolicData(t *testing.T) {
	m := model.Direct{}
	p := []float64{1.424, 2.9e4}
	var e []float64
	for x := 1.30; x < 1.80; x += 0.002 {
		e = append(e, x)
	}
	a := make([]float64, len(e))
	m.Eval(a, e, p)
	sig := make([]float64, len(e))
	for i := range sig {
		sig[i] = 0.01*a[i] + 1
	}
	c, err := Tauc(Data{E: e, Alpha: a, Sigma: sig}, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbs(c.Value, p[0], 1e-9) {
		t.Errorf("Tauc gap %.12f, want %.12f", c.Value, p[0])
	}
}

// TestTailOnly: a 350 µm substrate shows only the tail; E_g and C must be
// reported as not determined (NaN combined uncertainty), E_U as measured
// within 3 combined standard uncertainties, whether the data are fitted in
// α or in transmittance.
func TestTailOnly(t *testing.T) {
	truth := gaAsLike()
	truth[2] = 0.007
	for _, tc := range []struct {
		name  string
		synth func(*testing.T, []float64, float64, float64, uint64) Data
	}{
		{"alpha", synthData},
		{"transmittance", synthTData},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := tc.synth(t, truth, 350e-4, 0.002, 7)
			res, err := Analyze(context.Background(), d, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if !res.TailOnly {
				t.Fatalf("tail-only data not recognised (window %v)", res.Window)
			}
			if !math.IsNaN(res.Budgets["eg"].Combined) || !math.IsNaN(res.Budgets["amp"].Combined) {
				t.Errorf("E_g u_c = %g, C u_c = %g: want NaN (not determined)", res.Budgets["eg"].Combined, res.Budgets["amp"].Combined)
			}
			eu, _ := res.Param("eu")
			if u := res.Budgets["eu"].Combined; !(u > 0) || math.Abs(eu.Value-truth[2]) > 3*u {
				t.Errorf("E_U = %.5g ± %.2g, truth %.5g", eu.Value, u, truth[2])
			}
		})
	}
}

func TestForcedWindow(t *testing.T) {
	d := synthData(t, gaAsLike(), 2e-4, 0.002, 11)
	res, err := Analyze(context.Background(), d, Options{Window: [2]float64{1.38, 1.55}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Window[0] < 1.38 || res.Window[1] > 1.55 {
		t.Errorf("window %v outside the forced 1.38:1.55", res.Window)
	}
	n := 0
	for i, in := range res.InWindow {
		if in {
			n++
			if d.E[i] < 1.38 || d.E[i] > 1.55 {
				t.Errorf("point at %.4f eV used outside the forced window", d.E[i])
			}
		}
	}
	if n != res.Points {
		t.Errorf("Points = %d, counted %d", res.Points, n)
	}
}

func TestAnalyzeErrors(t *testing.T) {
	d := synthData(t, gaAsLike(), 2e-4, 0.002, 1)
	if _, err := Analyze(context.Background(), d, Options{Window: [2]float64{1.300, 1.303}}); !errors.Is(err, ErrTooFewPoints) {
		t.Errorf("narrow window: err = %v, want ErrTooFewPoints", err)
	}
	bad := d
	bad.Alpha = bad.Alpha[:10]
	if _, err := Analyze(context.Background(), bad, Options{}); !errors.Is(err, ErrData) {
		t.Errorf("length mismatch: err = %v, want ErrData", err)
	}
	rev := Data{E: []float64{2, 1, 3}, Alpha: []float64{1, 1, 1}, Sigma: []float64{1, 1, 1}}
	if _, err := Analyze(context.Background(), rev, Options{}); !errors.Is(err, ErrData) {
		t.Errorf("unsorted energies: err = %v, want ErrData", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Analyze(ctx, d, Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled context: err = %v, want context.Canceled", err)
	}
}

// TestBudgetGUM checks the combination against a hand computation in the
// manner of JCGM 100:2008 (GUM), eq. (10) and §6.2.1: independent inputs
// with sensitivities c_i and standard uncertainties u(x_i) give
// u_c = √Σ(c_i u_i)², and U = k·u_c.
func TestBudgetGUM(t *testing.T) {
	// Hand computation: 0.3² + 0.4² + (2·0.6)² = 0.09 + 0.16 + 1.44 = 1.69,
	// so u_c = 1.3 and U = 2.6 for k = 2.
	b := NewBudget("x", "eV", 2,
		Term{Source: "a", Type: TypeA, U: 0.3},
		Term{Source: "b", Type: TypeB, U: 0.4},
		Term{Source: "c", Type: TypeB, Input: 0.6, Sensitivity: 2, U: 1.2},
	)
	if !scalar.EqualWithinAbsOrRel(b.Combined, 1.3, 0, 1e-15) || !scalar.EqualWithinAbsOrRel(b.Expanded, 2.6, 0, 1e-15) {
		t.Errorf("u_c = %v, U = %v; want 1.3, 2.6", b.Combined, b.Expanded)
	}
	if got := b.Dominant()[0].Source; got != "c" {
		t.Errorf("dominant term %q, want c", got)
	}
	if b2 := NewBudget("x", "eV", 0, Term{U: 1}); b2.K != DefaultCoverage {
		t.Errorf("default k = %v, want %v", b2.K, DefaultCoverage)
	}
	if b3 := NewBudget("x", "eV", 2, Term{U: 1}, Term{U: math.NaN()}); !math.IsNaN(b3.Combined) {
		t.Errorf("an unknown term must make u_c unknown, got %v", b3.Combined)
	}
}

// TestTemperatureTerm: u(T) = 2 K with dE_g/dT = −0.4523 meV/K (GaAs at
// 300 K from the Varshni parameters of Vurgaftman et al. 2001, from
// memory) adds 0.905 meV to the gap's budget (GUM sensitivity
// coefficient times input uncertainty, JCGM 100:2008 §5.1.3).
func TestTemperatureTerm(t *testing.T) {
	d := synthData(t, gaAsLike(), 2e-4, 0.002, 3)
	res, err := Analyze(context.Background(), d, Options{TemperatureErr: 2, DGapDT: -4.523e-4, DGapDTSource: "test"})
	if err != nil {
		t.Fatal(err)
	}
	term, ok := res.Budgets["eg"].Term("sample temperature")
	if !ok || !scalar.EqualWithinAbsOrRel(term.U, 9.046e-4, 0, 1e-12) || term.Input != 2 || term.Type != TypeB {
		t.Errorf("temperature term %+v", term)
	}
	if _, ok := res.Budgets["eu"].Term("sample temperature"); ok {
		t.Error("the temperature term must enter E_g only")
	}
}
