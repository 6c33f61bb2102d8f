package edge

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"bandedge/fit"
)

// predictedBias returns the first-order bias of the least-squares
// estimates that the curvature of the model causes (Box, "Bias in
// nonlinear estimation", J. R. Stat. Soc. B 33, 171, 1971), computed from
// the fit itself: with r(p) the weighted residuals, J = ∂r/∂p and H_i the
// Hessian of r_i at the estimate, and Cov the covariance s²(JᵀJ)⁻¹ the fit
// reports,
//
//	b = −½ (JᵀJ)⁻¹ Jᵀ h,   h_i = tr(Cov·H_i).
//
// h is evaluated without second derivatives: with Cov = L Lᵀ (Cholesky) and
// l_k the columns of L,
//
//	h_i = Σ_k [r_i(p + l_k) + r_i(p − l_k) − 2 r_i(p)],
//
// central second differences one standard deviation along each principal
// axis, exact for residuals quadratic in p. (JᵀJ)⁻¹ = Cov/s², with
// s² = 1 for absolute weights and SSR/DoF otherwise; j is J at the
// estimate. It returns nil when the covariance or j is missing or an
// evaluation is not finite.
//
// In transmittance space (Gaussian T noise, constant σ_T) this is the whole
// first-order bias; in α space with weights from the measured T it is not
// (see Transmission).
func predictedBias(pr problem, fr *fit.Result, j *mat.Dense) []float64 {
	if fr == nil || fr.Cov == nil || j == nil || len(fr.Residuals) != pr.f.M {
		return nil
	}
	k := len(fr.Params)
	m := pr.f.M
	// Cholesky of the equilibrated covariance, then L = D·L̃.
	dsc := make([]float64, k)
	eq := mat.NewSymDense(k, nil)
	for a := range k {
		dsc[a] = math.Sqrt(fr.Cov.At(a, a))
		if !(dsc[a] > 0) || math.IsInf(dsc[a], 1) {
			return nil
		}
	}
	for a := range k {
		for b := a; b < k; b++ {
			eq.SetSym(a, b, fr.Cov.At(a, b)/(dsc[a]*dsc[b]))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(eq) {
		return nil
	}
	var lt mat.TriDense
	ch.LTo(&lt)
	h := make([]float64, m)
	rp := make([]float64, m)
	rm := make([]float64, m)
	x := make([]float64, k)
	for c := range k {
		for sgn, dst := range [2][]float64{rp, rm} {
			s := 1.0
			if sgn == 1 {
				s = -1
			}
			for a := range k {
				x[a] = fr.Params[a] + s*dsc[a]*lt.At(a, c)
			}
			pr.f.Residuals(dst, x)
		}
		for i := range h {
			h[i] += rp[i] + rm[i] - 2*fr.Residuals[i]
		}
	}
	for _, v := range h {
		if !isFinite(v) {
			return nil
		}
	}
	// g = Jᵀh, b = −½·(Cov/s²)·g.
	g := make([]float64, k)
	for i := range m {
		for a := range k {
			g[a] += j.At(i, a) * h[i]
		}
	}
	s2 := 1.0
	if !pr.set.AbsoluteSigma {
		if fr.DoF <= 0 {
			return nil
		}
		s2 = fr.SSR / float64(fr.DoF)
	}
	b := make([]float64, k)
	for a := range k {
		var v float64
		for c := range k {
			v += fr.Cov.At(a, c) * g[c]
		}
		b[a] = -0.5 * v / s2
		if !isFinite(b[a]) {
			return nil
		}
	}
	return b
}

// residualJacobian returns ∂r/∂p of the problem at p (analytic, or the
// engine's finite differences; fit.JacobianAt), or nil when an entry is
// not finite.
func residualJacobian(pr problem, p []float64) *mat.Dense {
	j, ok := fit.JacobianAt(pr.f, p)
	if !ok {
		return nil
	}
	return j
}
