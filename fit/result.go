package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Correlation returns the correlation matrix of the estimates,
//
//	ρ_jk = Cov_jk / √(Cov_jj·Cov_kk),
//
// or nil when Cov is nil (singular covariance).
func (r *Result) Correlation() *mat.SymDense {
	if r.Cov == nil {
		return nil
	}
	n := r.Cov.SymmetricDim()
	c := mat.NewSymDense(n, nil)
	for j := range n {
		for k := j; k < n; k++ {
			c.SetSym(j, k, r.Cov.At(j, k)/math.Sqrt(r.Cov.At(j, j)*r.Cov.At(k, k)))
		}
	}
	return c
}

// ConfInt returns the two-sided confidence interval of each parameter at
// the given level (0.95 for 95 %),
//
//	p_j ± t_{(1+level)/2, ν} · StdErr_j,
//
// with t the quantile of Student's t distribution with ν = DoF degrees of
// freedom (distuv.StudentsT). This is the usual linearised interval
// (Seber and Wild, Nonlinear Regression, Wiley 1989, section 5.1). The
// bounds are NaN when StdErr is NaN, when DoF ≤ 0 or when level is not in
// (0, 1).
func (r *Result) ConfInt(level float64) [][2]float64 {
	out := make([][2]float64, len(r.Params))
	t := math.NaN()
	if level > 0 && level < 1 && r.DoF > 0 {
		t = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(r.DoF)}.Quantile((1 + level) / 2)
	}
	for j, p := range r.Params {
		se := math.NaN()
		if j < len(r.StdErr) {
			se = r.StdErr[j]
		}
		out[j] = [2]float64{p - t*se, p + t*se}
	}
	return out
}

// RedChi2 returns the reduced chi-square SSR/DoF (NaN when DoF ≤ 0). With
// weights 1/σ_i² it should be near 1 for an adequate model; it is also the
// s² of the relative-weight covariance.
func (r *Result) RedChi2() float64 {
	if r.DoF <= 0 {
		return math.NaN()
	}
	return r.SSR / float64(r.DoF)
}
