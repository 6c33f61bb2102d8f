package main

import (
	"context"
	"errors"
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"bandedge/fit"
	"bandedge/fit/edge"
	"bandedge/fit/scan"
	"bandedge/io/specio"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// Parameter order of model.DirectUrbach.
const (
	iEg, iAmp, iEU = 0, 1, 2
	nPar           = 3
)

var parNames = [nPar]string{"E_g", "C", "E_U"}

// noiseKind says how a replica's noise is made and weighted.
type noiseKind int

const (
	// alphaGauss: α_i = α(E_i) + σ_i·N(0, 1) with σ_i the σ_α of the
	// noiseless scan, weights 1/σ_i². The textbook case the covariance
	// formula assumes; it isolates the estimator's own statistics.
	alphaGauss noiseKind = iota
	// tTrueWeights: Gaussian noise on T, converted with optics.ToAlpha, but
	// weighted with the noiseless σ_α (isolates the non-Gaussian α noise
	// of α = −ln x/d).
	tTrueWeights
	// tDataWeights: Gaussian noise on T, converted with optics.ToAlpha,
	// weights 1/σ_α² from the noisy T, as the tool does.
	tDataWeights
	// tModelWeights: as tDataWeights, then σ_α is recomputed at the
	// fitted model's T and the fit repeated (one reweighting pass), so the
	// weights no longer depend on the noise of the point itself.
	tModelWeights
	// tSpace: the model is fitted to T itself, T_i − T_slab(α(E_i; p)),
	// with the constant σ_T: the maximum-likelihood estimator for Gaussian
	// T noise (same mask and window as the α fits).
	tSpace
	// tSpaceTrueMask: as tSpace, but the mask is that of the noiseless
	// scan, so that no point is dropped because its own noise pushed it
	// below the 5σ_T or absorbance floor (isolates that selection).
	tSpaceTrueMask
	// tTool: Gaussian noise on T, converted by the tool's own path
	// (scan.Convert: optics.ToAlpha plus the transmission view) and fitted
	// by edge.Analyze, which fits in transmittance space with the
	// model-predicted floor. Fixed-window regimes force the window
	// (Options.Window) and skip the window budget; the start values are
	// the tool's own.
	tTool
)

func (k noiseKind) String() string {
	switch k {
	case alphaGauss:
		return "α Gaussian, true σ"
	case tTrueWeights:
		return "T noise, true σ"
	case tDataWeights:
		return "T noise, σ from data"
	case tModelWeights:
		return "T noise, σ from model"
	case tSpace:
		return "T noise, fit in T"
	case tSpaceTrueMask:
		return "T noise, fit in T, fixed mask"
	case tTool:
		return "T noise, tool (fit in T)"
	}
	return "?"
}

// regime is one configuration of the study.
type regime struct {
	name string
	// truth is [E_g, C, E_U].
	truth [nPar]float64
	// thick is the sample thickness in cm; sigmaT the transmittance noise.
	thick, sigmaT float64
	// The fixed window is [E_g − loTail·E_U, E_g + hiAbove] at the truth.
	loTail, hiAbove float64
	noise           noiseKind
	// analyze runs the whole edge.Analyze pipeline (automatic window, its
	// own start values) instead of a fixed-window fit at the true start.
	analyze bool
	// n is the number of replicas (0: the -n flag).
	n int
}

// setup is what a regime needs for every replica, computed once.
type setup struct {
	r       regime
	e       []float64 // the full grid (eV)
	refl    float64   // single-face reflectance
	alpha0  []float64 // noiseless α on the grid
	sigma0  []float64 // σ_α of the noiseless scan on the grid
	t0      []float64 // noiseless T
	mask0   []bool    // usable points of the noiseless scan
	win     [2]float64
	inWin   []int // grid indices in the window and usable when noiseless
	crb     *mat.SymDense
	crbErr  error
	corrEgU float64 // correlation of E_g and E_U from the CRB
	corrEgC float64
	// predBias is the first-order bias of each parameter predicted for
	// the regime's noise model (see predictedBias), in units of √CRB.
	predBias [nPar]float64
}

// gridStep is the wavelength step of the scan in nm (flag -step).
var gridStep = 0.3

// grid is the wavelength scan from 1000 nm down to 700 nm in gridStep
// steps: 1000 points (700.3–1000 nm) at the default 0.3 nm.
func grid() []float64 {
	lo := 700.0
	if gridStep == 0.3 {
		lo = 700.3
	}
	return synth.WavelengthGrid(lo, 1000, gridStep)
}

func newSetup(r regime) (*setup, error) {
	s := &setup{r: r, e: grid(), refl: optics.FresnelR(3.6, 0)}
	p := r.truth[:]
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: p, E: s.e, Thickness: r.thick, R: s.refl, SigmaT: r.sigmaT}, nil)
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, r.thick, &optics.Settings{RConst: s.refl, SigmaT: r.sigmaT})
	if err != nil {
		return nil, err
	}
	s.alpha0, s.sigma0, s.t0, s.mask0 = sc.Alpha, conv.Sigma, sc.T, conv.Mask
	s.win = [2]float64{p[iEg] - r.loTail*p[iEU], p[iEg] + r.hiAbove}
	floor := math.Pow(10, -optics.DefaultMaxAbsorbance)
	for i, e := range s.e {
		if !(e >= s.win[0] && e <= s.win[1]) {
			continue
		}
		// The tool's transmittance fit keeps every point whose absorbance
		// predicted at the estimate is within the floor (here: at the
		// truth); the α fits keep the noiseless scan's α mask.
		if r.noise == tTool && sc.T[i] >= floor || r.noise != tTool && s.mask0[i] {
			s.inWin = append(s.inWin, i)
		}
	}
	s.crb, s.crbErr = cramerRao(s.e, s.sigma0, s.inWin, p)
	if s.crbErr == nil {
		c := s.crb
		s.corrEgU = c.At(iEg, iEU) / math.Sqrt(c.At(iEg, iEg)*c.At(iEU, iEU))
		s.corrEgC = c.At(iEg, iAmp) / math.Sqrt(c.At(iEg, iEg)*c.At(iAmp, iAmp))
		s.predBias = s.predictedBias()
	}
	return s, nil
}

// cramerRao returns (JᵀWJ)⁻¹ at the true parameters over the points idx,
// with J the model's analytic Jacobian and W = diag(1/σ²): the Cramér–Rao
// bound of an unbiased estimator from Gaussian data with these σ (e.g.
// Kay, Fundamentals of Statistical Signal Processing: Estimation Theory,
// 1993, ch. 3). For T data with Gaussian σ_T the Fisher information is the
// same, since α_i is a one-to-one function of T_i and σ_α = |∂α/∂T|σ_T.
func cramerRao(e, sigma []float64, idx []int, p []float64) (*mat.SymDense, error) {
	if len(idx) < nPar {
		return nil, errors.New("too few points for the Fisher information")
	}
	ew := make([]float64, len(idx))
	for k, i := range idx {
		ew[k] = e[i]
	}
	j := mat.NewDense(len(idx), nPar, nil)
	model.DirectUrbach{}.Jacobian(j, ew, p)
	for k, i := range idx {
		row := j.RawRowView(k)
		for c := range row {
			row[c] /= sigma[i]
		}
	}
	var fisher mat.SymDense
	fisher.SymOuterK(1, j.T())
	// Equilibrate before the Cholesky factorisation: the parameters differ
	// by seven orders of magnitude.
	d := make([]float64, nPar)
	for a := range nPar {
		d[a] = math.Sqrt(fisher.At(a, a))
	}
	for a := range nPar {
		for b := a; b < nPar; b++ {
			fisher.SetSym(a, b, fisher.At(a, b)/(d[a]*d[b]))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(&fisher) {
		return nil, errors.New("Fisher information not positive definite")
	}
	inv := mat.NewSymDense(nPar, nil)
	if err := ch.InverseTo(inv); err != nil {
		return nil, err
	}
	for a := range nPar {
		for b := a; b < nPar; b++ {
			inv.SetSym(a, b, inv.At(a, b)/(d[a]*d[b]))
		}
	}
	return inv, nil
}

// predictedBias returns the first-order bias of the estimates in units of
// √CRB for the regime's noise model, from the expected value of the
// estimating equation Σ w̃_i J_i (α̃_i − f_i) = 0 at the truth. With
// α = g(T), g ≈ −ln(T/(1 − R)²)/d, T̃ = T + ε, ε ~ N(0, σ_T²):
//
//	α̃ − α ≈ g'ε + ½g''ε²,   w̃ = 1/(g'(T̃)σ_T)² ≈ w·(1 + 2ε/T)   (σ from data),
//
// so E[w̃(α̃ − α)] = w·δ with δ_i = k·(σ_T/T_i)·σ_α,i, k = −3/2 for σ from
// the noisy T (−2 from the weights, +½ from the curvature of ln) and
// k = +½ for weights that do not depend on the point's own noise (true or
// model σ). The parameter bias is b = (JᵀWJ)⁻¹JᵀWδ. α-Gaussian noise and
// the fit in T have no such O(σ_T/T) term (k = 0). Not included: the
// selection by the mask (points whose noise pushes T under 5σ_T or the
// absorbance floor are dropped), which adds to it in thick samples.
func (s *setup) predictedBias() [nPar]float64 {
	var k float64
	switch s.r.noise {
	case tDataWeights:
		k = -1.5
	case tTrueWeights, tModelWeights:
		k = 0.5
	}
	var b [nPar]float64
	if k == 0 {
		return b
	}
	ew := make([]float64, len(s.inWin))
	for a, i := range s.inWin {
		ew[a] = s.e[i]
	}
	j := mat.NewDense(len(ew), nPar, nil)
	model.DirectUrbach{}.Jacobian(j, ew, s.r.truth[:])
	var g [nPar]float64 // JᵀWδ
	for a, i := range s.inWin {
		delta := k * s.r.sigmaT / s.t0[i] * s.sigma0[i]
		w := 1 / (s.sigma0[i] * s.sigma0[i])
		for c := range nPar {
			g[c] += j.At(a, c) * w * delta
		}
	}
	for c := range nPar {
		var v float64
		for d := range nPar {
			v += s.crb.At(c, d) * g[d]
		}
		b[c] = v / math.Sqrt(s.crb.At(c, c))
	}
	return b
}

// outcome is one replica's result.
type outcome struct {
	status  int // 0 ok, else a failure class
	est, se [nPar]float64
	dof     int
	// uc are the combined standard uncertainties of edge.Analyze (NaN for
	// fixed-window fits).
	uc [nPar]float64
	// tailOnly and warned record edge.Analyze's verdicts.
	tailOnly bool
	warned   bool
	// corr is the fit's own corr(E_g, C) and cond the condition number
	// it reports; curv is edge.Result.PredictedBias in units of each
	// parameter's standard error (NaN for the α fits).
	corr, cond float64
	curv       [nPar]float64
	// statNaN is true when edge.Analyze withheld the statistical term of
	// E_g (near-degenerate fit).
	statNaN bool
	// undetermined is true when edge.Analyze reported E_g as not
	// determined.
	undetermined bool
}

// Failure classes of an outcome.
const (
	okFit = iota
	failErr
	failEarly
	failSingular
	failBound
	// failNearSingular: the engine returned standard errors, but from an
	// equilibrated JᵀJ with condition number above nearSingularCond, so
	// they carry fewer than about 4 significant digits (the inverse loses
	// log10(cond) of float64's 16) and mean nothing.
	failNearSingular
)

// nearSingularCond is the condition number above which a fit's standard
// errors are treated as meaningless here (fit itself accepts up to 1e16).
const nearSingularCond = 1e12

// draw makes the noisy α, σ_α and mask of one replica.
func (s *setup) draw(rng *rand.Rand) (alpha, sigma []float64, mask []bool, err error) {
	r := s.r
	n := len(s.e)
	switch r.noise {
	case alphaGauss:
		alpha = make([]float64, n)
		for k := range alpha {
			alpha[k] = s.alpha0[k] + s.sigma0[k]*rng.NormFloat64()
		}
		return alpha, s.sigma0, s.mask0, nil
	}
	t := make([]float64, n)
	for k := range t {
		t[k] = s.t0[k] + r.sigmaT*rng.NormFloat64()
	}
	conv, err := optics.ToAlpha(s.e, t, optics.Transmittance, r.thick, &optics.Settings{RConst: s.refl, SigmaT: r.sigmaT})
	if err != nil {
		return nil, nil, nil, err
	}
	switch r.noise {
	case tTrueWeights:
		return conv.Alpha, s.sigma0, conv.Mask, nil
	case tSpace, tSpaceTrueMask:
		// The "α" handed on is T itself, with σ_T.
		sig := make([]float64, n)
		for k := range sig {
			sig[k] = r.sigmaT
		}
		if r.noise == tSpaceTrueMask {
			return t, sig, s.mask0, nil
		}
		return t, sig, conv.Mask, nil
	}
	return conv.Alpha, conv.Sigma, conv.Mask, nil
}

// windowed returns the usable points of the fixed window with weights
// 1/σ².
func (s *setup) windowed(alpha, sigma []float64, mask []bool) (e, a, w []float64) {
	for k, ek := range s.e {
		if mask[k] && ek >= s.win[0] && ek <= s.win[1] {
			e = append(e, ek)
			a = append(a, alpha[k])
			w = append(w, 1/(sigma[k]*sigma[k]))
		}
	}
	return e, a, w
}

// rng returns replica i's generator: PCG(seed, stream·2³² + i), with the
// stream a hash of the regime's name, so that a regime's replicas do not
// change when regimes are added or removed, or with the number of workers.
func (s *setup) rng(seed uint64, stream uint64, i int) *rand.Rand {
	return rand.New(rand.NewPCG(seed, stream<<32|uint64(i)))
}

// streamOf hashes a name to a 32-bit stream number (FNV-1a).
func streamOf(name string) uint64 {
	h := fnv.New32a()
	h.Write([]byte(name))
	return uint64(h.Sum32())
}

// replica makes replica i of the regime and fits it.
func (s *setup) replica(ctx context.Context, seed uint64, i int) outcome {
	if s.r.noise == tTool {
		return s.tool(ctx, s.rng(seed, streamOf(s.r.name), i))
	}
	alpha, sigma, mask, err := s.draw(s.rng(seed, streamOf(s.r.name), i))
	if err != nil {
		return outcome{status: failErr}
	}
	if s.r.analyze {
		return s.analyze(ctx, alpha, sigma, mask)
	}
	e, a, w := s.windowed(alpha, sigma, mask)
	var m model.Model = model.DirectUrbach{}
	if s.r.noise == tSpace || s.r.noise == tSpaceTrueMask {
		m = slabT{r: s.refl, d: s.r.thick}
	}
	set := &fit.Settings{AbsoluteSigma: true}
	res, err := fit.Fit(ctx, fit.Problem{E: e, Alpha: a, Weights: w, Model: m, Init: s.r.truth[:]}, set)
	if s.r.noise == tModelWeights && res != nil && err == nil {
		// Reweight: σ_α = |∂α/∂T|·σ_T at the model's T.
		f := make([]float64, len(e))
		m.Eval(f, e, res.Params)
		for k := range f {
			tm := optics.SlabTransmittance(f[k], s.refl, s.r.thick)
			_, dT, _, ok := optics.SlabAlphaGrad(tm, s.refl, s.r.thick)
			if ok {
				w[k] = 1 / (dT * dT * s.r.sigmaT * s.r.sigmaT)
			}
		}
		res, err = fit.Fit(ctx, fit.Problem{E: e, Alpha: a, Weights: w, Model: m, Init: res.Params}, set)
	}
	return classify(res, err)
}

// slabT is model.DirectUrbach seen through the thick-slab transmittance,
// T(E; p) = T_slab(α(E; p)) (optics.SlabTransmittance), for fitting T
// directly. Its Jacobian is the chain rule ∂T/∂p = (dT/dα)·∂α/∂p with
//
//	dT/dα = −d·x·(1 − R)²(1 + R²x²)/(1 − R²x²)²,   x = exp(−αd).
type slabT struct{ r, d float64 }

func (slabT) Name() string          { return "direct+urbach in T" }
func (slabT) Params() []model.Param { return model.DirectUrbach{}.Params() }
func (m slabT) Eval(dst, e, p []float64) {
	model.DirectUrbach{}.Eval(dst, e, p)
	for i, a := range dst {
		dst[i] = optics.SlabTransmittance(a, m.r, m.d)
	}
}

func (m slabT) Jacobian(dst *mat.Dense, e, p []float64) {
	a := make([]float64, len(e))
	model.DirectUrbach{}.Eval(a, e, p)
	model.DirectUrbach{}.Jacobian(dst, e, p)
	r2 := m.r * m.r
	for i := range e {
		x := math.Exp(-a[i] * m.d)
		q := 1 - r2*x*x
		dTdA := -m.d * x * (1 - m.r) * (1 - m.r) * (1 + r2*x*x) / (q * q)
		row := dst.RawRowView(i)
		for j := range row {
			row[j] *= dTdA
		}
	}
}

func classify(res *fit.Result, err error) outcome {
	o := outcome{corr: math.NaN(), cond: math.NaN(), curv: [nPar]float64{math.NaN(), math.NaN(), math.NaN()}}
	switch {
	case res == nil:
		o.status = failErr
		return o
	case errors.Is(err, fit.ErrSingular):
		o.status = failSingular
	case err != nil:
		o.status = failErr
	case res.Status.Early():
		o.status = failEarly
	}
	for _, b := range res.AtBound {
		if b && o.status == okFit {
			o.status = failBound
		}
	}
	if o.status == okFit && res.Cond > nearSingularCond {
		o.status = failNearSingular
	}
	copy(o.est[:], res.Params)
	copy(o.se[:], res.StdErr)
	o.dof = res.DoF
	for j := range o.uc {
		o.uc[j] = math.NaN()
	}
	return o
}

func (s *setup) analyze(ctx context.Context, alpha, sigma []float64, mask []bool) outcome {
	d := edge.Data{E: s.e, Alpha: alpha, Sigma: sigma, Mask: mask, SigmaKnown: true}
	return s.analyzed(edge.Analyze(ctx, d, edge.Options{}))
}

// tool makes a replica's noisy T and runs it through the tool: the
// spectrum is converted by scan.Convert (σ_T given, R from n = 3.6) and
// fitted by edge.Analyze.
func (s *setup) tool(ctx context.Context, rng *rand.Rand) outcome {
	n := len(s.e)
	t := make([]float64, n)
	for k := range t {
		t[k] = s.t0[k] + s.r.sigmaT*rng.NormFloat64()
	}
	sp := &specio.Spectrum{E: s.e, Y: t, Kind: specio.Transmittance}
	set := scan.Settings{Thickness: s.r.thick, TNoise: s.r.sigmaT, Index: 3.6}
	d, _, _, err := scan.Convert(sp, set, set.Index)
	if err != nil {
		return outcome{status: failErr}
	}
	var opt edge.Options
	if !s.r.analyze {
		opt.Window, opt.NoWindowBudget = s.win, true
	}
	return s.analyzed(edge.Analyze(ctx, d, opt))
}

func (s *setup) analyzed(res *edge.Result, err error) outcome {
	if err != nil || res == nil || res.Fit == nil {
		return outcome{status: failErr}
	}
	o := classify(res.Fit, nil)
	if res.Correlation != nil {
		o.corr = res.Correlation[iEg][iAmp]
	}
	o.cond = res.Fit.Cond
	for j := range nPar {
		o.curv[j] = res.PredictedBias[j] / res.Fit.StdErr[j]
	}
	if st, ok := res.Budgets["eg"].Term("statistical"); ok {
		o.statNaN = math.IsNaN(st.U)
	}
	o.undetermined = res.TailOnly
	if res.Fit.Cov == nil {
		o.status = failSingular
	}
	for j, key := range []string{"eg", "amp", "eu"} {
		o.uc[j] = res.Budgets[key].Combined
	}
	o.tailOnly = res.TailOnly
	o.warned = len(res.Warnings) > 0
	return o
}

// run fits n replicas of the regime on a bounded pool of workers; results
// are indexed by replica, so they do not depend on scheduling.
func (s *setup) run(ctx context.Context, seed uint64, n, workers int) []outcome {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	out := make([]outcome, n)
	idx := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			for i := range idx {
				out[i] = s.replica(ctx, seed, i)
			}
		})
	}
	for i := range n {
		idx <- i
	}
	close(idx)
	wg.Wait()
	return out
}

// summary is the statistics of one parameter over a regime's replicas.
type summary struct {
	n, failed        int
	failedBy         [6]int
	bias, sd         float64 // of the estimates (ok fits)
	meanSE           float64 // mean reported standard error
	crbSD            float64 // √CRB
	covT68, covT95   float64 // coverage of the Student-t intervals (fractions)
	covZ1, covZ196   float64 // coverage of ±1 and ±1.96 SE
	covU1, covU2     float64 // coverage of ±u_c and ±2u_c (Analyze only)
	tailOnly, warned int
	// curv is the mean of edge.Result.PredictedBias/SE over the ok fits
	// (tool rows only; NaN otherwise).
	curv float64
}

func summarize(s *setup, out []outcome, j int) summary {
	var sm summary
	truth := s.r.truth[j]
	if s.crbErr == nil {
		sm.crbSD = math.Sqrt(s.crb.At(j, j))
	} else {
		sm.crbSD = math.NaN()
	}
	var sum, sum2, sumSE, sumCurv float64
	var t68, t95, z1, z196, u1, u2 int
	for _, o := range out {
		if o.tailOnly {
			sm.tailOnly++
		}
		if o.warned {
			sm.warned++
		}
		if o.status != okFit {
			sm.failed++
			sm.failedBy[o.status]++
			continue
		}
		sm.n++
		sumCurv += o.curv[j]
		d := o.est[j] - truth
		sum += d
		sum2 += d * d
		sumSE += o.se[j]
		tq68 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(o.dof)}.Quantile((1 + 0.683) / 2)
		tq95 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(o.dof)}.Quantile((1 + 0.95) / 2)
		ad := math.Abs(d)
		if ad <= tq68*o.se[j] {
			t68++
		}
		if ad <= tq95*o.se[j] {
			t95++
		}
		if ad <= o.se[j] {
			z1++
		}
		if ad <= 1.96*o.se[j] {
			z196++
		}
		if ad <= o.uc[j] {
			u1++
		}
		if ad <= 2*o.uc[j] {
			u2++
		}
	}
	if sm.n == 0 {
		nan := math.NaN()
		sm.bias, sm.sd, sm.meanSE = nan, nan, nan
		sm.covT68, sm.covT95, sm.covZ1, sm.covZ196, sm.covU1, sm.covU2 = nan, nan, nan, nan, nan, nan
		sm.curv = nan
		return sm
	}
	n := float64(sm.n)
	sm.bias = sum / n
	sm.sd = math.Sqrt((sum2 - n*sm.bias*sm.bias) / (n - 1))
	sm.meanSE = sumSE / n
	sm.curv = sumCurv / n
	sm.covT68, sm.covT95 = float64(t68)/n, float64(t95)/n
	sm.covZ1, sm.covZ196 = float64(z1)/n, float64(z196)/n
	sm.covU1, sm.covU2 = float64(u1)/n, float64(u2)/n
	return sm
}

// binomSE is the standard error of a coverage rate q estimated from n
// replicas, √(q(1−q)/n).
func binomSE(q float64, n int) float64 { return math.Sqrt(q * (1 - q) / float64(n)) }

func failText(sm summary) string {
	if sm.failed == 0 {
		return "0"
	}
	return fmt.Sprintf("%d (err %d, early %d, singular %d, near-singular %d, bound %d)", sm.failed, sm.failedBy[failErr], sm.failedBy[failEarly],
		sm.failedBy[failSingular], sm.failedBy[failNearSingular], sm.failedBy[failBound])
}
