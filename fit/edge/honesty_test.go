package edge_test

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"testing"

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

// The statistical-honesty study (issue 7). Over many noisy replicas of a
// realistic scan it checks that
//
//	(a) the standard deviation of the fitted parameters is within 10 % of
//	    the Cramér–Rao bound √[(JᵀWJ)⁻¹]_jj at the true parameters (Kay,
//	    Fundamentals of Statistical Signal Processing: Estimation Theory,
//	    1993, ch. 3), J the Jacobian of what is fitted and W = diag(1/σ²);
//	(b) the nominal 68.3 % and 95 % intervals (Student's t with the fit's
//	    DoF) and ±1, ±1.96 standard errors contain the truth at rates within
//	    ±2 and ±1.5 percentage points of nominal;
//	(c) the mean bias is below a tenth of the (mean reported) standard
//	    error.
//
// The longer study with the regimes where these fail is bench/honesty.
//
// Realistic scan: a GaAs-like slab (honestyTruth), 2 µm unless stated,
// measured 700–1000 nm in 1 nm steps (301 points), σ_T = 0.002, reflection
// from n = 3.6. The tool's path is the one a real scan takes: the noisy T
// goes through scan.Convert (optics.ToAlpha plus the transmission view)
// and edge.Analyze, which fits in transmittance space. The fixed window is
// the automatic rule placed at the truth, E_g − 6·E_U to E_g + 0.25 eV,
// forced with Options.Window (the start values stay the tool's own);
// TestHonestyAnalyze runs the automatic window as well.
const (
	honestySeed   = 20240607
	honestyThick  = 2e-4 // cm
	honestySigmaT = 0.002
	honestyIndex  = 3.6
)

// honestyTruth is [E_g, C, E_U]: E_g = 1.424 eV (room-temperature GaAs, from
// memory), C from E_P = 28.8 eV, n = 3.6, m_e = 0.067, m_h = 0.51 (from
// memory: Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815, 2001),
// E_U = 8 meV (typical of good epitaxial GaAs, from memory).
func honestyTruth() []float64 {
	return []float64{1.424, model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51)), 0.008}
}

var honestyNames = []string{"E_g", "C", "E_U"}

// honestyScan holds the noiseless scan and what every replica shares.
type honestyScan struct {
	truth         []float64
	thick, sigmaT float64
	stream        uint64    // noise stream of the tool replicas (see rng)
	e             []float64 // 301 energies, ascending
	refl          float64
	t0            []float64 // noiseless T
	alpha0        []float64 // noiseless α
	sigma0        []float64 // σ_α = |∂α/∂T|·σ_T of the noiseless scan
	mask0         []bool    // α mask of the noiseless scan
	win           [2]float64
	// crbAlpha is (JᵀWJ)⁻¹ at the truth over the window points of the
	// noiseless α mask (the α fit's points); crbT over the points a
	// transmittance fit keeps at the truth: predicted absorbance within
	// the default floor of 3.5.
	crbAlpha, crbT *mat.SymDense
}

func newHonestyScan(t *testing.T, thick, sigmaT float64) *honestyScan {
	t.Helper()
	s := &honestyScan{truth: honestyTruth(), thick: thick, sigmaT: sigmaT, e: synth.WavelengthGrid(700, 1000, 1), refl: optics.FresnelR(honestyIndex, 0)}
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: s.truth, E: s.e,
		Thickness: thick, R: s.refl, SigmaT: sigmaT}, nil)
	conv, err := optics.ToAlpha(s.e, sc.T, optics.Transmittance, thick, &optics.Settings{RConst: s.refl, SigmaT: sigmaT})
	if err != nil {
		t.Fatal(err)
	}
	s.t0, s.alpha0, s.sigma0, s.mask0 = sc.T, sc.Alpha, conv.Sigma, conv.Mask
	eg, eu := s.truth[0], s.truth[2]
	s.win = [2]float64{eg - edge.DefaultTailWidth*eu, eg + edge.DefaultAboveGap}
	floor := math.Pow(10, -optics.DefaultMaxAbsorbance)
	var ea, sa, et, st []float64
	for i, e := range s.e {
		if e < s.win[0] || e > s.win[1] {
			continue
		}
		if s.mask0[i] {
			ea = append(ea, e)
			sa = append(sa, s.sigma0[i])
		}
		if s.t0[i] >= floor {
			et = append(et, e)
			st = append(st, s.sigma0[i])
		}
	}
	if len(ea) < 20 || len(et) < 20 {
		t.Fatalf("only %d (α) and %d (T) points in the window %v: the scan is not the one described", len(ea), len(et), s.win)
	}
	s.crbAlpha = cramerRao(t, ea, sa, s.truth)
	s.crbT = cramerRao(t, et, st, s.truth)
	return s
}

// cramerRao returns (JᵀWJ)⁻¹ with J the analytic Jacobian of DirectUrbach
// at p and W = diag(1/σ²), equilibrated before the Cholesky factorisation
// (the parameters differ by seven orders of magnitude). For T data with
// Gaussian σ_T the Fisher information of point i is
// (∂T_i/∂p)ᵀ(∂T_i/∂p)/σ_T² = (∂α_i/∂p)ᵀ(∂α_i/∂p)/σ_α,i² with
// σ_α = |∂α/∂T|·σ_T, so the same function serves both fits; they differ in
// the points. It returns nil when the information is singular.
func cramerRao(t *testing.T, e, sigma, p []float64) *mat.SymDense {
	t.Helper()
	n := len(p)
	j := mat.NewDense(len(e), n, nil)
	model.DirectUrbach{}.Jacobian(j, e, p)
	for i := range e {
		row := j.RawRowView(i)
		for k := range row {
			row[k] /= sigma[i]
		}
	}
	var f mat.SymDense
	f.SymOuterK(1, j.T())
	d := make([]float64, n)
	for a := range n {
		d[a] = math.Sqrt(f.At(a, a))
	}
	for a := range n {
		for b := a; b < n; b++ {
			f.SetSym(a, b, f.At(a, b)/(d[a]*d[b]))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(&f) {
		return nil // degenerate scans: checkHonesty refuses a nil bound
	}
	inv := mat.NewSymDense(n, nil)
	if err := ch.InverseTo(inv); err != nil {
		return nil
	}
	for a := range n {
		for b := a; b < n; b++ {
			inv.SetSym(a, b, inv.At(a, b)/(d[a]*d[b]))
		}
	}
	return inv
}

// rng returns replica i's generator: PCG(honestySeed, k·2³² + i), stream
// k = 0 for the α replicas and 1 + the case number for the tool replicas,
// so that the cases do not share their noise.
func (s *honestyScan) rng(k uint64, i int) *rand.Rand {
	return rand.New(rand.NewPCG(honestySeed, k<<32|uint64(i)))
}

// alphaReplica is the textbook case: α_i = α(E_i) + σ_i·N(0, 1) with the
// true σ_i as weights, fitted with fit.Fit from the truth over the fixed
// window (the α mask of the noiseless scan).
func (s *honestyScan) alphaReplica(i int) estimate {
	rng := s.rng(0, i)
	var e, a, w []float64
	for k, ek := range s.e {
		v := s.alpha0[k] + s.sigma0[k]*rng.NormFloat64()
		if s.mask0[k] && ek >= s.win[0] && ek <= s.win[1] {
			e = append(e, ek)
			a = append(a, v)
			w = append(w, 1/(s.sigma0[k]*s.sigma0[k]))
		}
	}
	r, err := fit.Fit(context.Background(), fit.Problem{E: e, Alpha: a, Weights: w, Model: model.DirectUrbach{}, Init: s.truth},
		&fit.Settings{AbsoluteSigma: true})
	if err != nil {
		return estimate{}
	}
	e2 := estimate{ok: !r.Status.Early() && r.Cov != nil, p: r.Params, se: r.StdErr, dof: r.DoF}
	for _, b := range r.AtBound {
		if b {
			e2.ok = false
		}
	}
	return e2
}

// toolReplica adds Gaussian noise σ_T to the noiseless T and analyses it
// the way the tool analyses a real scan: scan.Convert (σ_T given, R from
// n = 3.6) and edge.Analyze with opt.
func (s *honestyScan) toolReplica(t *testing.T, i int, opt edge.Options) estimate {
	rng := s.rng(s.stream, i)
	tr := make([]float64, len(s.e))
	for k := range tr {
		tr[k] = s.t0[k] + s.sigmaT*rng.NormFloat64()
	}
	set := scan.Settings{Thickness: s.thick, TNoise: s.sigmaT, Index: honestyIndex}
	d, _, _, err := scan.Convert(&specio.Spectrum{E: s.e, Y: tr, Kind: specio.Transmittance}, set, set.Index)
	if err != nil {
		t.Errorf("replica %d: %v", i, err)
		return estimate{}
	}
	res, err := edge.Analyze(context.Background(), d, opt)
	if err != nil {
		if !errors.Is(err, fit.ErrSingular) {
			t.Errorf("replica %d: %v", i, err)
		}
		return estimate{}
	}
	return fromResult(res)
}

// estimate is one replica's estimates and standard errors, as presented.
type estimate struct {
	ok       bool
	p, se    []float64
	dof      int
	budgetU  []float64 // edge.Analyze's combined standard uncertainties
	tailOnly bool
	withheld bool // a statistical term was withheld (near-degenerate)
	warned   bool // edge.Analyze gave at least one warning
	space    string
}

// fromResult returns what edge.Analyze presents. It is not ok when the
// fit stopped early, a parameter ended on its bound, or a standard error
// is not available (singular or withheld); each of these carries a
// warning.
func fromResult(res *edge.Result) estimate {
	e := estimate{ok: res.Converged, dof: res.DoF, tailOnly: res.TailOnly, warned: len(res.Warnings) > 0, space: res.Space}
	for _, p := range res.Params {
		e.p = append(e.p, p.Value)
		e.se = append(e.se, p.StdErr)
		if p.AtBound || !(p.StdErr > 0) {
			e.ok = false
		}
		if p.StatWithheld {
			e.withheld = true
		}
	}
	for _, key := range []string{"eg", "amp", "eu"} {
		e.budgetU = append(e.budgetU, res.Budgets[key].Combined)
	}
	return e
}

// honestyCount returns the replica count full, or reduced under -short and
// under the race detector. Under -race (what CI runs) the fits are about
// eight times slower, and the full counts cost about 90 s of CPU in this
// package alone; the reduced counts keep it near 15 s and still resolve
// every failure the study documented before the transmittance fit (the
// tolerances widen to 3 sampling standard errors, see tolerance). The
// full counts run in plain `go test`.
func honestyCount(full, reduced int) int {
	if testing.Short() || raceEnabled {
		return reduced
	}
	return full
}

// parallel runs f(i) for i < n on GOMAXPROCS workers; results are stored
// by index, so they do not depend on scheduling.
func parallel(n int, f func(i int) estimate) []estimate {
	out := make([]estimate, n)
	idx := make(chan int)
	var wg sync.WaitGroup
	for range runtime.GOMAXPROCS(0) {
		wg.Go(func() {
			for i := range idx {
				out[i] = f(i)
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

// tolerance returns the larger of the tolerance spec and three
// sampling standard errors se of the checked statistic: with the full
// replica counts the spec is the binding one; with the -short counts the
// sampling error is, and a correct estimator then still passes with
// probability ≈ 99.7 %.
func tolerance(spec, se float64) float64 { return math.Max(spec, 3*se) }

// honestyCheck is the set of checks applied to one parameter.
type honestyCheck struct {
	param      int
	efficiency bool // (a)
	coverage   bool // (b)
	bias       bool // (c)
}

// checkHonesty applies (a)–(c) to the estimates; maxFailed is the largest
// number of replicas allowed to have no usable estimate.
func checkHonesty(t *testing.T, crb *mat.SymDense, truth []float64, est []estimate, checks []honestyCheck, maxFailed int) {
	t.Helper()
	if crb == nil {
		t.Fatal("no Cramér–Rao bound: the Fisher information of this scan is singular")
	}
	var ok []estimate
	for _, e := range est {
		if e.ok {
			ok = append(ok, e)
		}
	}
	n := len(ok)
	if len(est)-n > maxFailed {
		t.Errorf("%d of %d fits failed, did not converge or ended on a bound; want at most %d", len(est)-n, len(est), maxFailed)
	}
	if n < 100 {
		t.Fatalf("only %d usable fits", n)
	}
	fn := float64(n)
	// Binomial standard errors of a coverage rate q from n replicas,
	// √(q(1 − q)/n): for n = 6000 they are 0.60 points at 68.3 % and 0.28
	// points at 95 %, so the ±2 and ±1.5 point tolerances are 3.3 and 5.3
	// binomial standard errors; for the -short n = 600 they are 1.90 and
	// 0.89 points and the tolerance becomes 3 of them (see tolerance).
	se68 := math.Sqrt(0.683 * 0.317 / fn)
	se95 := math.Sqrt(0.95 * 0.05 / fn)
	tol68, tol95 := tolerance(0.02, se68), tolerance(0.015, se95)
	// The standard deviation of n Gaussian estimates has a relative
	// standard error of 1/√(2(n − 1)) (0.9 % at n = 6000); the mean of
	// n estimates has a standard error of sd/√n (0.013 sd at n = 6000).
	tolEff := tolerance(0.10, 1/math.Sqrt(2*(fn-1)))
	tolBias := tolerance(0.10, 1/math.Sqrt(fn))
	for _, c := range checks {
		j := c.param
		name := honestyNames[j]
		truth := truth[j]
		var sum, sum2, sumSE float64
		var t68, t95, z1, z196 int
		for _, e := range ok {
			d := e.p[j] - truth
			sum += d
			sum2 += d * d
			sumSE += e.se[j]
			st := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(e.dof)}
			if math.Abs(d) <= st.Quantile((1+0.683)/2)*e.se[j] {
				t68++
			}
			if math.Abs(d) <= st.Quantile((1+0.95)/2)*e.se[j] {
				t95++
			}
			if math.Abs(d) <= e.se[j] {
				z1++
			}
			if math.Abs(d) <= 1.96*e.se[j] {
				z196++
			}
		}
		bias := sum / fn
		sd := math.Sqrt((sum2 - fn*bias*bias) / (fn - 1))
		meanSE := sumSE / fn
		crb := math.Sqrt(crb.At(j, j))
		t.Logf("%s: n %d, sd/√CRB %.4f, mean SE/sd %.4f, bias/SE %+.4f, coverage t68.3 %.2f %%, t95 %.2f %%, ±1SE %.2f %%, ±1.96SE %.2f %%",
			name, n, sd/crb, meanSE/sd, bias/meanSE, 100*float64(t68)/fn, 100*float64(t95)/fn, 100*float64(z1)/fn, 100*float64(z196)/fn)
		if c.efficiency && math.Abs(sd/crb-1) > tolEff {
			t.Errorf("(a) %s: sd %.4g is %.4f × the Cramér–Rao bound %.4g, want within ±%.3g", name, sd, sd/crb, crb, tolEff)
		}
		if c.coverage {
			for _, cv := range []struct {
				what     string
				hits     int
				nom, tol float64
			}{
				{"Student-t 68.3 %", t68, 0.683, tol68},
				{"Student-t 95 %", t95, 0.95, tol95},
				{"±1 SE", z1, 0.683, tol68},
				{"±1.96 SE", z196, 0.95, tol95},
			} {
				if q := float64(cv.hits) / fn; math.Abs(q-cv.nom) > cv.tol {
					t.Errorf("(b) %s: %s covers the truth in %.2f %% of %d replicas, want %.1f ± %.2f %%", name, cv.what, 100*q, n, 100*cv.nom, 100*cv.tol)
				}
			}
		}
		if c.bias && math.Abs(bias) > tolBias*meanSE {
			t.Errorf("(c) %s: mean bias %.3g is %.3f standard errors, want below %.3g", name, bias, bias/meanSE, tolBias)
		}
	}
}

// TestHonestyFixedWindow runs (a)–(c) on every parameter over a fixed
// window, for the textbook case and for the tool's own path.
//
// "alpha-gaussian" is the textbook case: Gaussian α noise with the true σ
// as weights, fitted with fit.Fit from the truth.
//
// The "tool" cases put Gaussian noise on T and run scan.Convert and
// edge.Analyze (window forced at the truth, no window budget), which fit
// in transmittance space. Before that fix the tool fitted α with σ_α from
// the noisy T and a noise-dependent mask, and these very cases failed (c)
// and, for the thick slab, (b): on this 301-point scan C was biased by
// −0.26 standard errors at 2 µm; bench/honesty (1000 points) measured
// −0.45 (2 µm), −1.1 (σ_T = 0.005) and, for a 10 µm slab, E_g at −1.25
// with 39 %/76 % coverage, without a warning. Every check is on for every
// parameter; no failure is allowed, since none of these fits is
// near-degenerate.
//
// Replica counts: 6,000 for the α case; for the tool cases, which run the
// whole conversion and the constructions per replica, 2,000: there (b) at
// 68.3 % is checked to 3 binomial standard errors (3.1 points) rather than
// the ±2 of the spec, (b) at 95 % to the spec's ±1.5 (3 binomial standard
// errors are 1.46), (c) to the spec's 0.1 standard errors (3/√2000 =
// 0.067) and (a) to the spec's 10 %. Under -short and -race (honestyCount)
// 1,000 and 500: for 500, (b) to 6.2 and 2.9 points, (c) to 0.134 standard
// errors, (a) to the spec, which still fails each of the documented
// failures of the α fit (C at −0.26 SE here, E_g at −1.25 SE and 39 %
// coverage for 10 µm). bench/results/honesty-20000.txt holds the same
// regimes (1000-point scan) with 20,000 replicas, all within the spec.
func TestHonestyFixedWindow(t *testing.T) {
	all := []honestyCheck{{0, true, true, true}, {1, true, true, true}, {2, true, true, true}}
	tests := []struct {
		name          string
		thick, sigmaT float64
		tool          bool
		n, nShort     int
	}{
		{name: "alpha-gaussian", thick: honestyThick, sigmaT: honestySigmaT, n: 6000, nShort: 1000},
		{name: "tool/2um", thick: honestyThick, sigmaT: honestySigmaT, tool: true, n: 2000, nShort: 500},
		{name: "tool/2um-sigmaT0.005", thick: honestyThick, sigmaT: 0.005, tool: true, n: 2000, nShort: 500},
		{name: "tool/10um", thick: 10e-4, sigmaT: honestySigmaT, tool: true, n: 2000, nShort: 500},
	}
	for k, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			n := honestyCount(tc.n, tc.nShort)
			s := newHonestyScan(t, tc.thick, tc.sigmaT)
			s.stream = uint64(1 + k)
			if !tc.tool {
				checkHonesty(t, s.crbAlpha, s.truth, parallel(n, s.alphaReplica), all, 0)
				return
			}
			opt := edge.Options{Window: s.win, NoWindowBudget: true}
			est := parallel(n, func(i int) estimate { return s.toolReplica(t, i, opt) })
			for i, e := range est {
				if e.space != edge.SpaceTransmittance && e.p != nil {
					t.Fatalf("replica %d fitted in %q, want %q", i, e.space, edge.SpaceTransmittance)
				}
			}
			checkHonesty(t, s.crbT, s.truth, est, all, 0)
		})
	}
}

// TestHonestyAnalyze runs the whole tool (scan.Convert, then edge.Analyze
// with its start values, automatic window and budgets) on 400 replicas
// (100 under -short) of the 2 µm scan and checks (a)–(c) for every
// parameter, with the tolerance widened to three sampling standard errors
// where 400 replicas cannot resolve the spec (e.g. 7.0 points at 68.3 %,
// 3.3 at 95 %). It also checks that the combined budget, which adds the
// spread over the window family to the statistical term, covers at least
// as often as nominal at k = 1 and 2 (one-sided: the window term is a Type
// B allowance and may over-cover), and that no replica of this clean scan
// is flagged as tail-only or near-degenerate. A replica that fails must
// say so in a warning.
func TestHonestyAnalyze(t *testing.T) {
	n := honestyCount(400, 100)
	s := newHonestyScan(t, honestyThick, honestySigmaT)
	s.stream = 10
	est := parallel(n, func(i int) estimate { return s.toolReplica(t, i, edge.Options{}) })
	// A fit may end in a local minimum from a poor start (bench/honesty:
	// none in 2,000 pipeline replicas of this scan after the fix, 4 in
	// 1,000 before it). Allow 1 %, each with a warning.
	checkHonesty(t, s.crbT, s.truth, est, []honestyCheck{{0, true, true, true}, {1, true, true, true}, {2, true, true, true}}, n/100)
	var ok int
	for i, e := range est {
		if !e.ok && e.p != nil && !e.warned {
			t.Errorf("replica %d: the fit failed without a warning", i)
		}
		if e.tailOnly || e.withheld {
			t.Errorf("replica %d of a 2 µm scan flagged (tail only %v, statistics withheld %v)", i, e.tailOnly, e.withheld)
		}
		if e.ok {
			ok++
		}
	}
	fn := float64(ok)
	for _, j := range []int{0, 1, 2} {
		var k1, k2 int
		for _, e := range est {
			if !e.ok {
				continue
			}
			d := math.Abs(e.p[j] - s.truth[j])
			if d <= e.budgetU[j] {
				k1++
			}
			if d <= 2*e.budgetU[j] {
				k2++
			}
		}
		q1, q2 := float64(k1)/fn, float64(k2)/fn
		t.Logf("%s: budget coverage ±u_c %.2f %%, ±2u_c %.2f %%", honestyNames[j], 100*q1, 100*q2)
		if tol := tolerance(0.02, math.Sqrt(0.683*0.317/fn)); q1 < 0.683-tol {
			t.Errorf("%s: ±u_c covers %.2f %%, want at least %.1f %%", honestyNames[j], 100*q1, 100*(0.683-tol))
		}
		if tol := tolerance(0.015, math.Sqrt(0.95*0.05/fn)); q2 < 0.95-tol {
			t.Errorf("%s: ±2u_c covers %.2f %%, want at least %.1f %%", honestyNames[j], 100*q2, 100*(0.95-tol))
		}
	}
}

// TestHonestyDegenerate checks the rules that keep the tool from
// presenting a gap its data do not determine, on the tool's path
// (automatic window), against the regimes of bench/honesty:
//
//   - 40 and 50 µm slabs show only the tail: the study's intervals there
//     are not honest (reported SE 2.5–5 times the spread, 95 % intervals
//     covering 92 % and 85 %), and the tail-only rule flags 99.7 % and
//     97.9 % of the replicas, the rest being singular or withheld
//     (|corr(E_g, C)| > 0.999). No replica may be presented with a
//     combined uncertainty of E_g, and each must carry a warning.
//   - A 20 µm slab still shows enough of the band after the fix in
//     transmittance: the study finds E_g honest there (66.5/95.2 %
//     coverage, bias +0.03 SE over 2,000 replicas) and flags none, so
//     none of these replicas may be flagged (the α fit before the fix
//     flagged all 2,000 as tail-only).
//
// 40 replicas of each (12 under -short): a rule that fires in 97.9 % of
// cases fails on all 40 with probability 0.979⁴⁰ ≈ 0.43, so "every replica
// flagged" counts singular fits and withheld statistics too.
func TestHonestyDegenerate(t *testing.T) {
	n := honestyCount(40, 12)
	for k, tc := range []struct {
		name    string
		thick   float64
		flagged bool
	}{
		{"20um", 20e-4, false},
		{"40um", 40e-4, true},
		{"50um", 50e-4, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := newHonestyScan(t, tc.thick, honestySigmaT)
			s.stream = uint64(20 + k)
			est := parallel(n, func(i int) estimate { return s.toolReplica(t, i, edge.Options{}) })
			for i, e := range est {
				presented := e.p != nil && !e.tailOnly && !e.withheld && !math.IsNaN(e.budgetU[0])
				switch {
				case tc.flagged && presented:
					t.Errorf("replica %d: E_g = %.5g ± %.2g presented as determined", i, e.p[0], e.budgetU[0])
				case tc.flagged && !e.warned:
					t.Errorf("replica %d: flagged without a warning", i)
				case !tc.flagged && !presented:
					t.Errorf("replica %d: E_g not presented (tail only %v, withheld %v, fit ok %v)", i, e.tailOnly, e.withheld, e.ok)
				}
			}
		})
	}
}
