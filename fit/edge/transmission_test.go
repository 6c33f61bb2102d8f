package edge

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"bandedge/fit"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// synthTData is synthData with the transmission view, as scan.Convert
// fills it, so that Analyze fits in transmittance space.
func synthTData(t *testing.T, p []float64, d, sigmaT float64, seed uint64) Data {
	t.Helper()
	e := synth.WavelengthGrid(700, 1000, 1)
	r := optics.FresnelR(3.6, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: p, E: e, Thickness: d, R: r, SigmaT: sigmaT},
		rand.New(rand.NewPCG(seed, seed)))
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, d, &optics.Settings{RConst: r, SigmaT: sigmaT})
	if err != nil {
		t.Fatal(err)
	}
	return Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true,
		Transmission: &Transmission{T: conv.T, R: conv.R, SigmaT: conv.SigmaT, Thickness: d, MaxAbsorbance: conv.MaxAbsorbance}}
}

// TestTransmissionJacobian checks the chain-rule Jacobian of the
// transmittance residuals, ∂r_i/∂p = −(dT/dα)·(∂α/∂p)_i/σ_T, against
// gonum's central differences (fd.Central, step 1e-7 relative to each
// parameter through a rescaled argument) for two models (with and without
// a baseline), constant and per-point R, at the truth and away from it.
// Tolerance 1e-6 of the column's largest entry: the central-difference
// truncation error is ~(1e-7)²·|∂³r| and its rounding ~1e-16/1e-7 relative.
func TestTransmissionJacobian(t *testing.T) {
	base, err := model.Lookup("direct+urbach+const")
	if err != nil {
		t.Fatal(err)
	}
	p0 := gaAsLike()
	for _, tc := range []struct {
		name    string
		m       model.Model
		p       []float64
		perR    bool
		thick   float64
		shifted bool
	}{
		{name: "direct+urbach", m: model.DirectUrbach{}, p: p0, thick: 2e-4},
		{name: "direct+urbach/per-point-R/thick", m: model.DirectUrbach{}, p: p0, perR: true, thick: 20e-4},
		{name: "direct+urbach/shifted", m: model.DirectUrbach{}, p: []float64{1.43, 0.9 * p0[1], 0.011}, thick: 2e-4, shifted: true},
		{name: "direct+urbach+const", m: base, p: append(append([]float64(nil), p0...), 40), thick: 2e-4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := synthTData(t, p0, tc.thick, 0.002, 3)
			if tc.perR {
				for i := range d.Transmission.R {
					d.Transmission.R[i] = 0.28 + 0.04*float64(i)/float64(len(d.E))
				}
			}
			in, _ := fitMask(d, tc.m, [2]float64{1.37, 1.68}, tc.p)
			pr := newProblem(d, tc.m, in)
			if pr.f.Jacobian == nil {
				t.Fatal("no analytic Jacobian")
			}
			k := len(tc.p)
			got := mat.NewDense(pr.f.M, k, nil)
			pr.f.Jacobian(got, tc.p)
			// Differentiate in u = p/p0 so that one step suits every
			// parameter (they differ by seven orders of magnitude).
			want := mat.NewDense(pr.f.M, k, nil)
			x := make([]float64, k)
			fd.Jacobian(want, func(y, u []float64) {
				for j := range u {
					x[j] = u[j] * tc.p[j]
				}
				pr.f.Residuals(y, x)
			}, onesLike(k), &fd.JacobianSettings{Formula: fd.Central, Step: 1e-7})
			for j := range k {
				var scale float64
				for i := range pr.f.M {
					scale = math.Max(scale, math.Abs(got.At(i, j)))
				}
				for i := range pr.f.M {
					w := want.At(i, j) / tc.p[j]
					if !scalar.EqualWithinAbs(got.At(i, j), w, 1e-6*scale) {
						t.Fatalf("∂r_%d/∂p_%d = %.10g, central difference %.10g", i, j, got.At(i, j), w)
					}
				}
			}
		})
	}
}

func onesLike(k int) []float64 {
	u := make([]float64, k)
	for i := range u {
		u[i] = 1
	}
	return u
}

// TestTransmissionPoints: in transmittance space a measured T ≤ 0 or
// below 5σ_T is data (Transmission), and which points enter is decided by
// the model's prediction, not by the measured value: replacing the
// measured T of the band by noise around zero changes neither the α mask's
// verdict (masked) nor the T fit's set of points (kept where the predicted
// absorbance is within the floor), and points predicted above the floor
// are left out whatever was measured.
func TestTransmissionPoints(t *testing.T) {
	p := gaAsLike()
	d := synthTData(t, p, 10e-4, 0.002, 5)
	w := [2]float64{1.376, 1.674}
	in, left := fitMask(d, model.DirectUrbach{}, w, p)
	floor := math.Pow(10, -optics.DefaultMaxAbsorbance)
	a := make([]float64, len(d.E))
	model.DirectUrbach{}.Eval(a, d.E, p)
	var nonPos, belowNoise int
	for i, e := range d.E {
		if e < w[0] || e > w[1] {
			if in[i] {
				t.Fatalf("point %d at %.4f eV outside the window", i, e)
			}
			continue
		}
		tm := optics.SlabTransmittance(a[i], d.Transmission.R[i], d.Transmission.Thickness)
		if want := tm >= floor; in[i] != want {
			t.Errorf("point %d: in = %v, predicted T %.3g against the floor %.3g", i, in[i], tm, floor)
		}
		if in[i] && d.Transmission.T[i] <= 0 {
			nonPos++
		}
		if in[i] && d.Transmission.T[i] < 5*d.Transmission.SigmaT {
			belowNoise++
		}
	}
	if nonPos == 0 || belowNoise < 10 || left == 0 {
		t.Errorf("the scan should have measured T ≤ 0 (%d) and T < 5σ_T (%d) points among the fitted ones, and points left out by the floor (%d)", nonPos, belowNoise, left)
	}
	// The measured values of the points do not matter.
	d2 := d
	d2.Transmission = &Transmission{T: append([]float64(nil), d.Transmission.T...), R: d.Transmission.R, SigmaT: d.Transmission.SigmaT, Thickness: d.Transmission.Thickness}
	for i := range d2.Transmission.T {
		if d2.Transmission.T[i] < 0.05 {
			d2.Transmission.T[i] = -d2.Transmission.T[i]
		}
	}
	in2, _ := fitMask(d2, model.DirectUrbach{}, w, p)
	if !equalMask(in, in2) {
		t.Error("the set of points depends on the measured T of the points")
	}
	res, err := Analyze(context.Background(), d, Options{Window: w})
	if err != nil {
		t.Fatal(err)
	}
	if res.Space != SpaceTransmittance || res.FloorExcluded == 0 {
		t.Errorf("space %q, %d points left out by the floor", res.Space, res.FloorExcluded)
	}
}

// TestTransmissionValidate: malformed transmission views are ErrData.
func TestTransmissionValidate(t *testing.T) {
	good := synthTData(t, gaAsLike(), 2e-4, 0.002, 1)
	for _, tc := range []struct {
		name string
		edit func(tr *Transmission)
	}{
		{"short T", func(tr *Transmission) { tr.T = tr.T[:10] }},
		{"short R", func(tr *Transmission) { tr.R = tr.R[:10] }},
		{"zero σ_T", func(tr *Transmission) { tr.SigmaT = 0 }},
		{"NaN σ_T", func(tr *Transmission) { tr.SigmaT = math.NaN() }},
		{"zero thickness", func(tr *Transmission) { tr.Thickness = 0 }},
		{"negative floor", func(tr *Transmission) { tr.MaxAbsorbance = -1 }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := good
			tr := *good.Transmission
			tc.edit(&tr)
			d.Transmission = &tr
			if _, err := Analyze(context.Background(), d, Options{}); !errors.Is(err, ErrData) {
				t.Errorf("err = %v, want ErrData", err)
			}
		})
	}
	// With relative weights (α input) the view is ignored.
	d := good
	d.RelativeSigma = true
	d.Transmission = &Transmission{}
	if err := d.Validate(); err != nil {
		t.Errorf("relative weights: %v", err)
	}
}

// TestPredictedBiasBox checks predictedBias against Box's (1971) worked
// case: n observations y_i = e^θ + ε_i, ε ~ N(0, σ²), whose least-squares
// estimate θ̂ = ln ȳ has the first-order bias −σ²/(2n e^{2θ}) (the
// second-order term of E[ln ȳ]). The sigma-point evaluation gives
// −(cosh l − 1) with l = √Cov, which equals it to a relative l²/12
// (1e-4 here); tolerance 1e-3.
func TestPredictedBiasBox(t *testing.T) {
	const n, sigma, theta = 10, 0.1, 0.3
	rng := rand.New(rand.NewPCG(1, 1))
	y := make([]float64, n)
	for i := range y {
		y[i] = math.Exp(theta) + sigma*rng.NormFloat64()
	}
	f := fit.Func{M: n, Residuals: func(dst, p []float64) {
		for i := range dst {
			dst[i] = (y[i] - math.Exp(p[0])) / sigma
		}
	}, Jacobian: func(dst *mat.Dense, p []float64) {
		for i := range n {
			dst.Set(i, 0, -math.Exp(p[0])/sigma)
		}
	}}
	pr := problem{f: f, set: &fit.Settings{AbsoluteSigma: true}}
	fr, err := fit.LeastSquares(context.Background(), f, []float64{0}, pr.set)
	if err != nil {
		t.Fatal(err)
	}
	b := predictedBias(pr, fr, residualJacobian(pr, fr.Params))
	if b == nil {
		t.Fatal("no bias")
	}
	want := -sigma * sigma / (2 * n * math.Exp(2*fr.Params[0])) // Box's formula at the estimate
	if !scalar.EqualWithinRel(b[0], want, 1e-3) {
		t.Errorf("predicted bias %.6g, Box %.6g", b[0], want)
	}
}

// TestWithhold: the statistical terms are withheld exactly when the fit
// is near-degenerate (withholdCorr, withholdCond, singular), for the
// parameters concerned only, and a singular fit keeps the standard error
// of an estimable parameter: that of the regression in which the exactly
// collinear pair is one column (Seber & Wild 1989, §3.4: an estimable
// function has the same variance under every generalised inverse).
func TestWithhold(t *testing.T) {
	mk := func(corr float64) *Result {
		return &Result{Params: []ParamValue{{Name: "eg", Symbol: "E_g", StdErr: 1e-4}, {Name: "amp", Symbol: "C", StdErr: 30}, {Name: "eu", Symbol: "E_U", StdErr: 1e-5}},
			Correlation: [][]float64{{1, corr, 0.5}, {corr, 1, 0.5}, {0.5, 0.5, 1}}, Cond: 1e4, DoF: 47,
			Fit: &fit.Result{Cov: mat.NewSymDense(3, nil), DoF: 47}}
	}
	r := mk(0.9985)
	r.withhold(nil, 0, 1, true)
	if r.Params[0].StatWithheld || len(r.Warnings) != 0 {
		t.Errorf("|corr| 0.9985 withheld: %+v", r.Params)
	}
	r = mk(-0.9995)
	r.withhold(nil, 0, 1, true)
	if !r.Params[0].StatWithheld || !r.Params[1].StatWithheld || r.Params[2].StatWithheld || !math.IsNaN(r.Params[0].StdErr) || len(r.Warnings) != 1 {
		t.Errorf("|corr| 0.9995: %+v, warnings %q", r.Params, r.Warnings)
	}
	// Condition number: columns 0 and 1 of J nearly collinear (δ = 1e-7,
	// cond of the equilibrated JᵀJ ~ 1/δ²), column 2 another shape, whose
	// unit vector lies within O(δ) of the determined subspace.
	const m = 50
	col := func(i int) (x, c0, c2 float64) {
		x = float64(i) / m
		return x, 1 + x, math.Cos(3 * x)
	}
	j := mat.NewDense(m, 3, nil)
	for i := range m {
		x, c0, c2 := col(i)
		j.Set(i, 0, c0)
		j.Set(i, 1, c0*(1+1e-7*math.Sin(7*x)))
		j.Set(i, 2, c2)
	}
	r = mk(0.5)
	r.Cond = 4e14
	r.withhold(j, 0, 1, true)
	if !r.Params[0].StatWithheld || !r.Params[1].StatWithheld || r.Params[2].StatWithheld || r.Params[2].StdErr != 1e-5 {
		t.Errorf("cond 4e14: %+v", r.Params)
	}
	// Singular: column 1 = 2·column 0 exactly.
	for i := range m {
		j.Set(i, 1, 2*j.At(i, 0))
	}
	r = mk(0.5)
	r.Correlation, r.Cond, r.Fit.Cov = nil, math.Inf(1), nil
	for a := range r.Params {
		r.Params[a].StdErr = math.NaN()
	}
	r.withhold(j, 0, 1, true)
	red := mat.NewDense(m, 2, nil)
	for i := range m {
		red.Set(i, 0, j.At(i, 0))
		red.Set(i, 1, j.At(i, 2))
	}
	var f, inv mat.Dense
	f.Mul(red.T(), red)
	if err := inv.Inverse(&f); err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(inv.At(1, 1))
	if !r.Params[0].StatWithheld || !r.Params[1].StatWithheld || r.Params[2].StatWithheld || !scalar.EqualWithinRel(r.Params[2].StdErr, want, 1e-9) {
		t.Errorf("singular: %+v, want the E_U standard error %.10g", r.Params, want)
	}
}

// TestCompareSamePoints: every candidate of a comparison in transmittance
// space is fitted to the reference's points, so that their χ² are
// likelihoods of the same data.
func TestCompareSamePoints(t *testing.T) {
	d := synthTData(t, gaAsLike(), 10e-4, 0.002, 9)
	var cands []model.Model
	for _, n := range []string{"direct+urbach", "direct+gauss", "direct+urbach+const"} {
		m, err := model.Lookup(n)
		if err != nil {
			t.Fatal(err)
		}
		cands = append(cands, m)
	}
	c, err := Compare(context.Background(), d, cands, Options{NoWindowBudget: true})
	if err != nil {
		t.Fatal(err)
	}
	ref := c.Candidates[0].Result
	for _, cd := range c.Candidates[1:] {
		if cd.Result == nil {
			t.Fatalf("%s: %s", cd.Model, cd.Err)
		}
		if cd.Result.Space != SpaceTransmittance || !equalMask(cd.Result.InWindow, ref.InWindow) || cd.N != c.Candidates[0].N {
			t.Errorf("%s: space %q, %d points; the reference has %d", cd.Model, cd.Result.Space, cd.N, c.Candidates[0].N)
		}
		if want := cd.Result.Fit.SSR + 2*float64(cd.K); !scalar.EqualWithinRel(cd.AIC, want, 1e-12) {
			t.Errorf("%s: AIC %v, want χ² + 2k = %v", cd.Model, cd.AIC, want)
		}
	}
}

// TestAnalyzeRecoversTransmittance is TestAnalyzeRecovers on the
// transmission view: fitted in transmittance, the parameters lie within 3
// combined standard uncertainties of the truth (a 3σ bound fails by chance
// in about 0.3 % of cases per parameter; the seeds are fixed), χ²_red is
// near 1 with the true noise level (the 0.7–1.4 band holds χ² of ~160
// degrees of freedom with probability above 0.99), and there is no warning.
func TestAnalyzeRecoversTransmittance(t *testing.T) {
	truth := gaAsLike()
	for _, seed := range []uint64{1, 2, 3, 4, 5} {
		d := synthTData(t, truth, 2e-4, 0.002, seed)
		res, err := Analyze(context.Background(), d, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if res.Space != SpaceTransmittance || !res.Converged || res.TailOnly {
			t.Fatalf("seed %d: space %q, converged %v, tail only %v", seed, res.Space, res.Converged, res.TailOnly)
		}
		for i, key := range []string{"eg", "amp", "eu"} {
			p, _ := res.Param(key)
			u := res.Budgets[key].Combined
			if !(u > 0) || math.Abs(p.Value-truth[i]) > 3*u {
				t.Errorf("seed %d: %s = %.6g ± %.2g, truth %.6g", seed, key, p.Value, u, truth[i])
			}
			if b := res.PredictedBias[i]; !(math.Abs(b) < 0.05*p.StdErr) {
				t.Errorf("seed %d: %s predicted curvature bias %.3g, want below 0.05 SE (%.3g) on a 2 µm film", seed, key, b, 0.05*p.StdErr)
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
