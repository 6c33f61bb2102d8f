package optics

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/model"
)

// synthetic returns an energy grid and α from the direct+Urbach model
// (E_g = 1.5 eV, C = 2e4 cm⁻¹·eV^½, E_U = 15 meV), an invented edge.
func synthetic(n int) (e, alpha []float64) {
	e = make([]float64, n)
	for i := range e {
		e[i] = 1.2 + 0.5*float64(i)/float64(n-1)
	}
	alpha = make([]float64, n)
	model.DirectUrbach{}.Eval(alpha, e, []float64{1.5, 2e4, 0.015})
	return e, alpha
}

// TestToAlphaRoundTrip generates T and A from a known α with the slab
// formula and checks that ToAlpha recovers α at every usable point (1e-10
// relative: the slab inversion is accurate to ~1e-14 in αd here, and
// 10^(−A) adds a few roundings), and that the mask agrees with the rules
// evaluated independently here on T.
func TestToAlphaRoundTrip(t *testing.T) {
	const d, r, sigmaT = 0.02, 0.3, 1e-4
	e, alpha := synthetic(400)
	tr := make([]float64, len(e))
	ab := make([]float64, len(e))
	for i, a := range alpha {
		tr[i] = SlabTransmittance(a, r, d)
		ab[i] = -math.Log10(tr[i])
	}
	for _, tc := range []struct {
		name string
		kind Kind
		y    []float64
		s    *Settings
	}{
		{"transmittance, RConst", Transmittance, tr, &Settings{RConst: r, SigmaT: sigmaT}},
		{"absorbance, RConst", Absorbance, ab, &Settings{RConst: r, SigmaT: sigmaT}},
		{"transmittance, per-point R", Transmittance, tr, &Settings{R: constSlice(len(e), r), SigmaT: sigmaT}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, err := ToAlpha(e, tc.y, tc.kind, d, tc.s)
			if err != nil {
				t.Fatal(err)
			}
			want := map[Reason]int{}
			for i := range e {
				var reason Reason
				switch {
				case tr[i] < math.Pow(10, -DefaultMaxAbsorbance):
					reason = BelowFloor
				case tr[i] < 5*sigmaT:
					reason = BelowNoise
				}
				want[reason]++
				if res.Reason[i] != reason || res.Mask[i] != (reason == Usable) {
					t.Errorf("E=%v T=%.3g: reason %v (mask %v), want %v", e[i], tr[i], res.Reason[i], res.Mask[i], reason)
				}
				if res.Mask[i] && !scalar.EqualWithinAbsOrRel(res.Alpha[i], alpha[i], 1e-10, 1e-10) {
					t.Errorf("E=%v: α = %.15g, want %.15g", e[i], res.Alpha[i], alpha[i])
				}
			}
			for _, q := range Reasons() {
				if res.Counts[q] != want[q] {
					t.Errorf("Counts[%v] = %d, want %d", q, res.Counts[q], want[q])
				}
			}
			if want[BelowFloor] == 0 || want[BelowNoise] == 0 || want[Usable] < 100 {
				t.Fatalf("synthetic spectrum does not exercise the rules: %v", want)
			}
			if res.SigmaT != sigmaT || res.SigmaTEstimated || res.MaxAbsorbance != DefaultMaxAbsorbance {
				t.Errorf("SigmaT %v estimated %v MaxAbsorbance %v", res.SigmaT, res.SigmaTEstimated, res.MaxAbsorbance)
			}
		})
	}
}

func constSlice(n int, v float64) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = v
	}
	return s
}

// TestToAlphaSigma checks σ_α against finite differences of the inversion:
// σ_α = √[(∂α/∂T σ_T)² + (∂α/∂R σ_R)²] with central differences of
// relative step 1e-6 (tolerance 1e-6 relative), and the R = 0 closed form
// σ_α = σ_T/(T d) (PHYSICS.md 2), exact up to rounding (1e-14).
func TestToAlphaSigma(t *testing.T) {
	const d, sT, sR = 0.05, 2e-3, 0.01
	e := []float64{1, 1.1, 1.2, 1.3, 1.4, 1.5}
	tr := []float64{0.6, 0.5, 0.3, 0.1, 0.05, 0.02}
	for _, r := range []float64{0, 0.25} {
		res, err := ToAlpha(e, tr, Transmittance, d, &Settings{RConst: r, SigmaT: sT, SigmaR: sR})
		if err != nil {
			t.Fatal(err)
		}
		for i, tv := range tr {
			h := 1e-6 * tv
			ap, _ := SlabAlpha(tv+h, r, d)
			am, _ := SlabAlpha(tv-h, r, d)
			dT := (ap - am) / (2 * h)
			rp, _ := SlabAlpha(tv, r+1e-6, d)
			var dR float64
			if r > 0 {
				rm, _ := SlabAlpha(tv, r-1e-6, d)
				dR = (rp - rm) / 2e-6
			} else {
				r2, _ := SlabAlpha(tv, 2e-6, d)
				a0, _ := SlabAlpha(tv, 0, d)
				dR = (-3*a0 + 4*rp - r2) / 2e-6
			}
			want := math.Hypot(dT*sT, dR*sR)
			if !scalar.EqualWithinRel(res.Sigma[i], want, 1e-6) {
				t.Errorf("R=%v T=%v: σ_α = %.10g, finite differences %.10g", r, tv, res.Sigma[i], want)
			}
		}
	}
	res, err := ToAlpha(e, tr, Transmittance, d, &Settings{SigmaT: sT})
	if err != nil {
		t.Fatal(err)
	}
	for i, tv := range tr {
		if want := sT / (tv * d); !scalar.EqualWithinRel(res.Sigma[i], want, 1e-14) {
			t.Errorf("R=0 T=%v: σ_α = %.17g, σ_T/(T d) = %.17g", tv, res.Sigma[i], want)
		}
	}
}

// TestToAlphaMaskRules checks each masking rule on a single point, with
// σ_T = 1e-3 given (so the noise rule masks T < 5e-3) and R = 0.3.
func TestToAlphaMaskRules(t *testing.T) {
	const d = 0.05
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name      string
		kind      Kind
		y         float64
		want      Reason
		wantAlpha string // "nan", "neg", "pos"
	}{
		{"T NaN", Transmittance, nan, NonFinite, "nan"},
		{"T +Inf", Transmittance, inf, NonFinite, "nan"},
		{"T -Inf", Transmittance, -inf, NonFinite, "nan"},
		{"T zero", Transmittance, 0, NonPositive, "nan"},
		{"T slightly negative", Transmittance, -0.001, NonPositive, "nan"},
		{"T 1e-5: A = 5 above floor", Transmittance, 1e-5, BelowFloor, "pos"},
		{"T 3e-3: below 5 sigma_T", Transmittance, 3e-3, BelowNoise, "pos"},
		{"T 6e-3: usable", Transmittance, 6e-3, Usable, "pos"},
		// slab maximum (1 − R)/(1 + R) = 0.53846 at R = 0.3; 5σ_T = 0.005
		{"T slightly above slab maximum", Transmittance, 0.542, Usable, "neg"},
		{"T far above slab maximum", Transmittance, 0.6, AboveMaximum, "neg"},
		{"T above 1", Transmittance, 1.02, AboveMaximum, "neg"},
		{"A NaN", Absorbance, nan, NonFinite, "nan"},
		{"A +Inf", Absorbance, inf, NonFinite, "nan"},
		{"A 3.6 above floor", Absorbance, 3.6, BelowFloor, "pos"},
		{"A 500 (T underflows)", Absorbance, 500, BelowFloor, "nan"},
		{"A 1", Absorbance, 1, Usable, "pos"},
		{"A slightly negative", Absorbance, -0.01, AboveMaximum, "neg"},
		{"A -84.9 (T = 8e84)", Absorbance, -84.9, AboveMaximum, "neg"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			e := []float64{1, 2}
			y := []float64{tc.y, 0.5}
			if tc.kind == Absorbance {
				y[1] = 0.3
			}
			res, err := ToAlpha(e, y, tc.kind, d, &Settings{RConst: 0.3, SigmaT: 1e-3})
			if err != nil {
				t.Fatal(err)
			}
			if res.Reason[0] != tc.want || res.Mask[0] != (tc.want == Usable) {
				t.Errorf("reason %v mask %v, want %v", res.Reason[0], res.Mask[0], tc.want)
			}
			a := res.Alpha[0]
			switch tc.wantAlpha {
			case "nan":
				if !math.IsNaN(a) || !math.IsNaN(res.Sigma[0]) {
					t.Errorf("α, σ = %v, %v; want NaN", a, res.Sigma[0])
				}
			case "neg": // σ_α → 0 far above the maximum, where α saturates at ln(R)/d
				if !(a < 0) || (tc.want == Usable && !(res.Sigma[0] > 0)) {
					t.Errorf("α, σ = %v, %v; want α < 0 kept as data", a, res.Sigma[0])
				}
			case "pos":
				if !(a > 0) || !(res.Sigma[0] > 0) {
					t.Errorf("α, σ = %v, %v; want α > 0", a, res.Sigma[0])
				}
			}
			total := 0
			for _, q := range Reasons() {
				total += res.Counts[q]
			}
			if res.Counts[tc.want] < 1 || total != 2 {
				t.Errorf("counts %v", res.Counts)
			}
		})
	}
}

// TestToAlphaReflectanceSources checks that the three ways of giving R
// agree: RConst, a constant Index with the same Fresnel R, and a measured
// per-point R; and that a dispersive index gives R(E) = FresnelR(n(E), 0).
func TestToAlphaReflectanceSources(t *testing.T) {
	const d = 0.05
	e := []float64{1.0, 1.2, 1.4, 1.6, 1.8}
	tr := []float64{0.5, 0.4, 0.2, 0.05, 0.01}
	rf := FresnelR(3.5, 0)
	a, err := ToAlpha(e, tr, Transmittance, d, &Settings{RConst: rf, SigmaT: 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	b, err := ToAlpha(e, tr, Transmittance, d, &Settings{Index: ConstIndex(3.5), SigmaT: 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	c, err := ToAlpha(e, tr, Transmittance, d, &Settings{R: constSlice(len(e), rf), SigmaT: 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	for i := range e {
		if a.Alpha[i] != b.Alpha[i] || a.Alpha[i] != c.Alpha[i] || a.R[i] != rf || b.R[i] != rf {
			t.Errorf("point %d: α %v %v %v, R %v %v", i, a.Alpha[i], b.Alpha[i], c.Alpha[i], a.R[i], b.R[i])
		}
	}
	cy := Cauchy{A: 3.4, B: 0.05}
	r, err := ToAlpha(e, tr, Transmittance, d, &Settings{Index: cy, SigmaT: 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	for i := range e {
		if want := FresnelR(cy.N(e[i]), 0); r.R[i] != want {
			t.Errorf("E=%v: R used %v, want %v", e[i], r.R[i], want)
		}
	}
	if !(r.R[4] > r.R[0]) {
		t.Errorf("normal dispersion must raise R with E: %v", r.R)
	}
	// a measured R that is NaN masks only its point
	rm := constSlice(len(e), 0.3)
	rm[2] = math.NaN()
	m, err := ToAlpha(e, tr, Transmittance, d, &Settings{R: rm, SigmaT: 1e-3})
	if err != nil {
		t.Fatal(err)
	}
	if m.Reason[2] != NonFinite || m.Counts[NonFinite] != 1 {
		t.Errorf("NaN measured R: reasons %v", m.Reason)
	}
}

// TestToAlphaEstimatedNoise checks σ_T estimated from the spectrum: white
// noise σ = 2e-3 (seeded PCG, seed 7) on a synthetic transmittance of 2000
// points; tolerance 10 % (the estimate's relative standard deviation at
// this size is 3.2 %, measured over 200 seeds).
func TestToAlphaEstimatedNoise(t *testing.T) {
	const seed, sigma, d = 7, 2e-3, 0.02
	rng := rand.New(rand.NewPCG(seed, seed))
	e, alpha := synthetic(2000)
	tr := make([]float64, len(e))
	for i, a := range alpha {
		tr[i] = SlabTransmittance(a, 0.3, d) + sigma*rng.NormFloat64()
	}
	res, err := ToAlpha(e, tr, Transmittance, d, &Settings{RConst: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if !res.SigmaTEstimated || !scalar.EqualWithinRel(res.SigmaT, sigma, 0.10) {
		t.Errorf("seed %d: SigmaT = %.4g (estimated %v), want %.4g", seed, res.SigmaT, res.SigmaTEstimated, sigma)
	}
	// noisy negative T in the opaque region are masked, not errors
	if res.Counts[NonPositive] == 0 {
		t.Errorf("seed %d: expected some T ≤ 0 from noise in the opaque region", seed)
	}
}

// TestToAlphaAlphaInput checks the α pass-through: relative weights, the
// relative noise from ln α (5 % white noise, seeded PCG seed 11: within
// 10 %), the 1 % floor on a noiseless α, and masking of α ≤ 0 and NaN.
func TestToAlphaAlphaInput(t *testing.T) {
	const seed = 11
	rng := rand.New(rand.NewPCG(seed, seed))
	e, alpha := synthetic(2000)
	noisy := make([]float64, len(alpha))
	for i, a := range alpha {
		noisy[i] = a * math.Exp(0.05*rng.NormFloat64())
	}
	res, err := ToAlpha(e, noisy, AlphaInput, 0, nil) // d is ignored
	if err != nil {
		t.Fatal(err)
	}
	if !res.RelativeWeights || !scalar.EqualWithinRel(res.RelNoise, 0.05, 0.1) {
		t.Errorf("seed %d: RelNoise %v RelativeWeights %v", seed, res.RelNoise, res.RelativeWeights)
	}
	for i := range e {
		if res.Sigma[i] != res.RelNoise*noisy[i] || res.Alpha[i] != noisy[i] {
			t.Fatalf("point %d: σ %v α %v", i, res.Sigma[i], res.Alpha[i])
		}
	}
	smooth, err := ToAlpha(e, alpha, AlphaInput, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if smooth.RelNoise != MinRelNoise {
		t.Errorf("noiseless α: RelNoise %v, want the floor %v", smooth.RelNoise, MinRelNoise)
	}
	bad, err := ToAlpha([]float64{1, 2, 3}, []float64{-5, math.NaN(), 100}, AlphaInput, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if bad.Reason[0] != NonPositive || bad.Reason[1] != NonFinite || bad.Reason[2] != Usable {
		t.Errorf("reasons %v", bad.Reason)
	}
}

func TestToAlphaErrors(t *testing.T) {
	e := []float64{1, 1.1, 1.2, 1.3, 1.4, 1.5}
	tr := []float64{0.5, 0.4, 0.3, 0.2, 0.1, 0.05}
	ok := &Settings{SigmaT: 1e-3}
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name    string
		e, y    []float64
		kind    Kind
		d       float64
		s       *Settings
		wantErr error
	}{
		{"zero thickness", e, tr, Transmittance, 0, ok, ErrThickness},
		{"negative thickness", e, tr, Absorbance, -0.1, ok, ErrThickness},
		{"NaN thickness", e, tr, Transmittance, nan, ok, ErrThickness},
		{"Inf thickness", e, tr, Transmittance, inf, ok, ErrThickness},
		{"no data", nil, nil, Transmittance, 0.1, ok, ErrNoData},
		{"length", e, tr[:3], Transmittance, 0.1, ok, ErrLength},
		{"R length", e, tr, Transmittance, 0.1, &Settings{R: []float64{0.3}}, ErrLength},
		{"kind zero", e, tr, 0, 0.1, ok, ErrKind},
		{"kind unknown", e, tr, 99, 0.1, ok, ErrKind},
		{"E descending", []float64{1, 1.2, 1.1, 1.3, 1.4, 1.5}, tr, Transmittance, 0.1, ok, ErrEnergy},
		{"E repeated", []float64{1, 1.1, 1.1, 1.3, 1.4, 1.5}, tr, Transmittance, 0.1, ok, ErrEnergy},
		{"E NaN", []float64{1, nan, 1.2, 1.3, 1.4, 1.5}, tr, Transmittance, 0.1, ok, ErrEnergy},
		{"E Inf", []float64{1, 1.1, 1.2, 1.3, 1.4, inf}, tr, Transmittance, 0.1, ok, ErrEnergy},
		{"E zero", []float64{0, 1.1, 1.2, 1.3, 1.4, 1.5}, tr, Transmittance, 0.1, ok, ErrEnergy},
		{"two R sources", e, tr, Transmittance, 0.1, &Settings{RConst: 0.3, Index: ConstIndex(3)}, ErrReflectance},
		{"RConst 1", e, tr, Transmittance, 0.1, &Settings{RConst: 1}, ErrReflectance},
		{"RConst negative", e, tr, Transmittance, 0.1, &Settings{RConst: -0.1}, ErrReflectance},
		{"RConst NaN", e, tr, Transmittance, 0.1, &Settings{RConst: nan}, ErrReflectance},
		{"measured R above 1", e, tr, Transmittance, 0.1, &Settings{R: []float64{0.3, 0.3, 1.2, 0.3, 0.3, 0.3}, SigmaT: 1e-3}, ErrReflectance},
		{"index NaN", e, tr, Transmittance, 0.1, &Settings{Index: Sellmeier{Terms: []SellmeierTerm{{B: 1, C: 1}}}, SigmaT: 1e-3}, ErrReflectance},
		{"index zero", e, tr, Transmittance, 0.1, &Settings{Index: ConstIndex(0), SigmaT: 1e-3}, ErrReflectance},
		{"SigmaT negative", e, tr, Transmittance, 0.1, &Settings{SigmaT: -1}, ErrSettings},
		{"SigmaT NaN", e, tr, Transmittance, 0.1, &Settings{SigmaT: nan}, ErrSettings},
		{"SigmaR Inf", e, tr, Transmittance, 0.1, &Settings{SigmaR: inf}, ErrSettings},
		{"MaxAbsorbance negative", e, tr, Transmittance, 0.1, &Settings{MaxAbsorbance: -1}, ErrSettings},
		{"noise: too few points", e[:4], tr[:4], Transmittance, 0.1, nil, ErrNoise},
		{"noise: smooth T", e, tr, Transmittance, 0.1, nil, ErrNoise},
		{"noise: constant T", e, constSlice(6, 0.4), Transmittance, 0.1, nil, ErrNoise},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := ToAlpha(tc.e, tc.y, tc.kind, tc.d, tc.s)
			if !errors.Is(err, tc.wantErr) {
				t.Errorf("err = %v, want %v", err, tc.wantErr)
			}
			if res != nil {
				t.Errorf("non-nil result with error")
			}
		})
	}
}

// FuzzToAlpha asserts, for arbitrary ordinates, thickness, reflectance and
// noise: no panic; either an error wrapping one of the package's sentinels,
// or a result of the input's length whose usable points all have a finite
// α and a finite, positive σ, and whose counts add up.
func FuzzToAlpha(f *testing.F) {
	f.Add(0.5, 0.4, 0.3, 0.2, 0.1, 0.05, 0.05, 0.3, 1e-3, uint8(1))
	f.Add(math.NaN(), 0.0, -0.01, 1.2, 1e-9, math.Inf(1), 0.0, 0.0, 0.0, uint8(1))
	f.Add(0.1, 1.0, 2.0, 3.0, 4.0, 5.0, 0.01, 0.5, 0.0, uint8(2))
	f.Add(1e3, 1e4, -1.0, 0.0, math.NaN(), 1e300, 1.0, 0.0, 0.0, uint8(3))
	f.Add(0.5, 0.4, 0.3, 0.2, 0.1, 0.05, -1.0, 0.3, 1e-3, uint8(1))
	f.Add(0.5, 0.4, 0.3, 0.2, 0.1, 0.05, math.Inf(1), 1.0, math.NaN(), uint8(0))
	f.Fuzz(func(t *testing.T, y0, y1, y2, y3, y4, y5, d, r, sT float64, kind uint8) {
		e := []float64{1, 1.1, 1.2, 1.3, 1.4, 1.5}
		y := []float64{y0, y1, y2, y3, y4, y5}
		res, err := ToAlpha(e, y, Kind(kind), d, &Settings{RConst: r, SigmaT: sT})
		if err != nil {
			for _, s := range []error{ErrNoData, ErrLength, ErrEnergy, ErrThickness, ErrKind, ErrReflectance, ErrSettings, ErrNoise} {
				if errors.Is(err, s) {
					return
				}
			}
			t.Fatalf("error %v wraps no sentinel", err)
		}
		if len(res.Alpha) != 6 || len(res.Sigma) != 6 || len(res.Mask) != 6 || len(res.Reason) != 6 {
			t.Fatal("result lengths")
		}
		total := 0
		for _, c := range res.Counts {
			total += c
		}
		if total != 6 {
			t.Fatalf("counts %v", res.Counts)
		}
		for i, m := range res.Mask {
			if !m {
				continue
			}
			a, s := res.Alpha[i], res.Sigma[i]
			if math.IsNaN(a) || math.IsInf(a, 0) || math.IsNaN(s) || math.IsInf(s, 0) || !(s > 0) {
				t.Fatalf("usable point %d: α %v σ %v (y %v)", i, a, s, y[i])
			}
		}
	})
}
