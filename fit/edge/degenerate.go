package edge

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// The policy for near-degenerate fits and for the curvature bias, measured
// with bench/honesty (bench/results/honesty-20000.txt: the "T" and "P"
// rows are the tool's own path, fitted in transmittance).
const (
	// withholdCorr is the |corr(E_g, amplitude)| above which the
	// statistical terms of E_g and the amplitude are withheld. In the
	// study the regimes whose fits report a median |corr| of 0.9956
	// (30 µm slab) or less have honest intervals (E_g covered 68.8 % and
	// 95.9 % at nominal 68.3/95), while those at a median of 0.9992 (40 µm)
	// and above do not: the reported standard error is 2.5 to 5 times the
	// actual spread of E_g and yet the 95 % interval covers only 92 % and
	// 85 % (50 µm), because the estimates wander along the E_g–C ridge
	// the linearised covariance cannot describe. The boundary lies
	// between, at 0.999. (The 0.995 warning of warnCorr stays: there the
	// gap is poorly separated from the amplitude, but its interval holds.)
	withholdCorr = 0.999
	// withholdCond is the condition number of the equilibrated JᵀJ
	// (fit.Result.Cond) above which the statistical terms of the
	// parameters along the nearly undetermined directions are withheld:
	// the Cholesky inverse then keeps fewer than 4 of float64's 16
	// digits, and every study regime with such fits (the α fits of 40 and
	// 50 µm slabs, a window ending at the gap) fails its coverage. The
	// engine itself declares a covariance singular only above 10¹⁶.
	withholdCond = 1e12
	// warnCurvBias is the predicted curvature bias, in standard errors,
	// above which a parameter's intervals are said to undercover. A shift
	// b of a normal estimate lowers the coverage of ±1 SE from 68.3 % to
	// Φ(1 − b) − Φ(−1 − b): 66.1 % at b = 0.3, more than the 2 points the
	// honesty criteria allow (95 % falls to 93.9 %). The study validates
	// the prediction where the linearisation holds: for a 30 µm slab it
	// predicts +0.075 (E_g) and +0.102 (C) standard errors against the
	// +0.082 and +0.109 observed over 20,000 replicas, for 20 µm +0.017
	// and +0.027 against +0.025 and +0.036.
	warnCurvBias = 0.3
)

// withhold decides, for each parameter, whether its statistical standard
// error may be presented, and says why not in a warning.
//
//   - |corr(E_g, amplitude)| > withholdCorr: E_g and the amplitude are
//     withheld (StdErr and CI95 NaN, StatWithheld).
//   - The covariance is singular, or the condition number of the
//     equilibrated JᵀJ exceeds withholdCond: the directions with
//     eigenvalue below λ_max/withholdCond are taken as undetermined. A
//     parameter whose unit vector lies in the determined subspace (its
//     squared projection on the undetermined one, η_j, at most
//     estimableEta) is estimable: its standard error is that of the
//     pseudo-inverse over the determined directions (the variance of an
//     estimable function, Seber & Wild 1989, §3.4). The others are
//     withheld. In a tail-only spectrum this keeps E_U, which the tail
//     measures, and withholds E_g and C, which trade off exactly there.
//
// j is the weighted residual Jacobian at the estimate (nil if not
// available: then only the correlation rule applies, and a singular fit
// keeps its NaN standard errors).
func (r *Result) withhold(j *mat.Dense, ieg, iamp int, absolute bool) {
	k := len(r.Params)
	mark := make([]bool, k)
	var why []string
	if r.Correlation != nil {
		if c := math.Abs(r.Correlation[ieg][iamp]); c > withholdCorr {
			mark[ieg], mark[iamp] = true, true
			why = append(why, fmt.Sprintf("|corr(E_g, %s)| = %.5f > %g", r.Params[iamp].Symbol, c, withholdCorr))
		}
	}
	singular := r.Fit.Cov == nil
	if (singular || r.Cond > withholdCond) && j != nil {
		s2 := 1.0
		if !absolute && r.Fit.DoF > 0 {
			s2 = r.Fit.SSR / float64(r.Fit.DoF)
		}
		se, eta := pseudoStdErr(j, s2)
		for a := range k {
			// A standard error that overflows (s² = SSR/DoF of a fit
			// whose residuals overflow; found by FuzzAnalyze, input
			// eb92e490f3fed983) is withheld too.
			if se == nil || !(eta[a] <= estimableEta) || !isFinite(se[a]) {
				mark[a] = true
				continue
			}
			if singular && !mark[a] {
				r.setStdErr(a, se[a])
			}
		}
		if singular {
			why = append(why, "singular covariance")
		} else {
			why = append(why, fmt.Sprintf("condition number %.2g > %g", r.Cond, withholdCond))
		}
	}
	var names []string
	for a, m := range mark {
		if !m {
			continue
		}
		p := &r.Params[a]
		p.StatWithheld = true
		p.StdErr = math.NaN()
		p.CI95 = [2]float64{math.NaN(), math.NaN()}
		names = append(names, p.Symbol)
	}
	if len(names) > 0 {
		msg := fmt.Sprintf("near-degenerate fit (%s): the standard errors of %s are not reliable and are withheld, so their combined uncertainties are not available; these data do not separate them",
			strings.Join(why, ", "), strings.Join(names, ", "))
		if singular && len(names) < k {
			msg += "; the others come from the directions the data determine (pseudo-inverse)"
		}
		r.Warnings = append(r.Warnings, msg)
	}
}

// estimableEta is the largest squared projection of a parameter's unit
// vector (equilibrated coordinates) on the undetermined directions for
// which it still counts as estimable: 10⁻⁴, i.e. within 0.01 rad of the
// determined subspace.
const estimableEta = 1e-4

// setStdErr sets parameter a's standard error and 95 % interval (Student's
// t with the fit's DoF, as fit.Result.ConfInt).
func (r *Result) setStdErr(a int, se float64) {
	p := &r.Params[a]
	p.StdErr = se
	p.CI95 = [2]float64{math.NaN(), math.NaN()}
	if r.DoF > 0 {
		t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(r.DoF)}.Quantile(0.975)
		p.CI95 = [2]float64{p.Value - t*se, p.Value + t*se}
	}
}

// pseudoStdErr returns the standard errors s·√[(JᵀJ)⁺]_jj over the
// determined directions and η_j, the squared norm of the projection of
// parameter j's unit vector on the undetermined ones, both in the
// equilibrated coordinates of A = D⁻¹JᵀJD⁻¹ (D = √diag JᵀJ): with
// A = V Λ Vᵀ (gonum's mat.EigenSym) and K the eigenvalues at or above
// λ_max/withholdCond,
//
//	(JᵀJ)⁺ = D⁻¹ (Σ_{k∈K} v_k v_kᵀ/λ_k) D⁻¹,   η_j = Σ_{k∉K} V_jk².
//
// It returns nil slices when the factorisation fails.
func pseudoStdErr(j *mat.Dense, s2 float64) (se, eta []float64) {
	_, k := j.Dims()
	var a mat.SymDense
	a.SymOuterK(1, j.T())
	d := make([]float64, k)
	for i := range k {
		d[i] = math.Sqrt(a.At(i, i))
		if !(d[i] > 0) || math.IsInf(d[i], 1) {
			return nil, nil
		}
	}
	for i := range k {
		for c := i; c < k; c++ {
			a.SetSym(i, c, a.At(i, c)/(d[i]*d[c]))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(&a, true) {
		return nil, nil
	}
	lam := es.Values(nil)
	var v mat.Dense
	es.VectorsTo(&v)
	lmax := 0.0
	for _, l := range lam {
		lmax = math.Max(lmax, l)
	}
	se = make([]float64, k)
	eta = make([]float64, k)
	for i := range k {
		var vv float64
		for c, l := range lam {
			x := v.At(i, c) * v.At(i, c)
			if l >= lmax/withholdCond && l > 0 {
				vv += x / l
			} else {
				eta[i] += x
			}
		}
		se[i] = math.Sqrt(s2*vv) / d[i]
	}
	return se, eta
}

// warnBias warns about every parameter whose predicted curvature bias
// (PredictedBias) exceeds warnCurvBias standard errors.
func (r *Result) warnBias() {
	for a, p := range r.Params {
		if a >= len(r.PredictedBias) || p.StatWithheld {
			continue
		}
		b := r.PredictedBias[a]
		if z := b / p.StdErr; isFinite(z) && math.Abs(z) > warnCurvBias {
			r.Warnings = append(r.Warnings, fmt.Sprintf("the curvature of the model biases %s by about %+.2g %s (%+.2f standard errors, after Box 1971): its intervals cover the truth less often than stated",
				p.Symbol, b, p.Unit, z))
		}
	}
}
