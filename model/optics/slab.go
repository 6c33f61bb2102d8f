// Package optics converts spectrophotometer quantities into the absorption
// coefficient α(E): the thick-slab inversion with multiple incoherent
// reflections, normal-incidence Fresnel reflectance, refractive-index
// dispersion laws, a robust estimate of the point-to-point noise, and the
// conversion of a whole spectrum (ToAlpha) with its uncertainties and
// masked points.
//
// Everything here is a pure function: no I/O, logging or global state.
// Units: photon energy E in eV, thickness d in cm, α in cm⁻¹, transmittance
// and reflectance as fractions (percent is converted at the edge, in
// io/specio).
package optics

import "math"

// SlabAlpha inverts the transmittance of a thick, plane-parallel slab with
// equal faces and incoherent multiple reflections (Pankove, Optical
// Processes in Semiconductors, 1971),
//
//	T = (1 − R)² x / (1 − R² x²),   x = exp(−α d),
//
// for α (cm⁻¹), given the transmittance t (fraction), the single-face
// reflectance r (fraction) and the thickness dcm (cm). The positive root of
// R²T x² + (1 − R)² x − T = 0 is used in the cancellation-free form
//
//	x = 2T / [(1 − R)² + √((1 − R)⁴ + 4R²T²)],   α = −ln(x)/d,
//
// which is exact for every R ∈ [0, 1) and reduces to x = T (α = −ln T/d)
// at R = 0.
//
// A transmittance above the slab maximum (1 − R)/(1 + R), e.g. noise on a
// transparent region, gives x > 1 and a negative α: it is returned as data,
// with ok = true. ok is false, and α is NaN, when t ≤ 0 (α undefined) or
// t is not finite, when r is outside [0, 1), or when dcm is not positive
// and finite.
func SlabAlpha(t, r, dcm float64) (alpha float64, ok bool) {
	if !slabArgsOK(t, r, dcm) {
		return math.NaN(), false
	}
	a := (1 - r) * (1 - r)
	x := 2 * t / (a + math.Hypot(a, 2*r*t))
	return -math.Log(x) / dcm, true
}

// SlabAlphaGrad returns SlabAlpha(t, r, dcm) and its partial derivatives
// ∂α/∂T and ∂α/∂R (cm⁻¹ per unit fraction). With a = (1 − R)²,
// s = √(a² + 4R²T²) and α = −[ln 2T − ln(a + s)]/d,
//
//	∂α/∂T = −(1/d) [1/T − 4R²T / (s (a + s))],
//	∂α/∂R =  (1/d) (a' + s') / (a + s),   a' = −2(1 − R),
//	                                      s' = (a a' + 4RT²)/s.
//
// At R = 0 these are −1/(T d) and −2/d. ok is as for SlabAlpha; all three
// values are NaN when ok is false.
func SlabAlphaGrad(t, r, dcm float64) (alpha, dT, dR float64, ok bool) {
	if !slabArgsOK(t, r, dcm) {
		nan := math.NaN()
		return nan, nan, nan, false
	}
	a := (1 - r) * (1 - r)
	s := math.Hypot(a, 2*r*t)
	x := 2 * t / (a + s)
	alpha = -math.Log(x) / dcm
	dT = -(1/t - 4*r*r*t/(s*(a+s))) / dcm
	da := -2 * (1 - r)
	ds := (a*da + 4*r*t*t) / s
	dR = (da + ds) / (a + s) / dcm
	return alpha, dT, dR, true
}

func slabArgsOK(t, r, dcm float64) bool {
	return t > 0 && !math.IsInf(t, 1) && r >= 0 && r < 1 && dcm > 0 && !math.IsInf(dcm, 1)
}

// SlabTransmittance is the forward model of SlabAlpha,
//
//	T = (1 − R)² x / (1 − R² x²),   x = exp(−α d),
//
// for α (cm⁻¹), the single-face reflectance r (fraction) and the thickness
// dcm (cm) (Pankove 1971). It returns NaN when r is outside [0, 1), dcm is
// not positive, or R·x ≥ 1 (a negative α so large that the series of
// internal reflections diverges).
func SlabTransmittance(alpha, r, dcm float64) float64 {
	if !(r >= 0 && r < 1 && dcm > 0) {
		return math.NaN()
	}
	x := math.Exp(-alpha * dcm)
	if r*x >= 1 || math.IsNaN(x) {
		return math.NaN()
	}
	return (1 - r) * (1 - r) * x / (1 - r*r*x*x)
}

// SlabTransmittanceGrad returns SlabTransmittance(alpha, r, dcm) and its
// derivative with respect to α (in cm, i.e. per cm⁻¹): with
// a = (1 − R)² and x = exp(−α d),
//
//	T = a x / (1 − R² x²),
//	dT/dα = −d · a x (1 + R² x²) / (1 − R² x²)²
//
// (dT/dx = a(1 + R²x²)/(1 − R²x²)² and dx/dα = −d x). It is the chain-rule
// factor of a fit in transmittance space, ∂T/∂p = (dT/dα)·∂α/∂p. Both
// values are NaN where SlabTransmittance is.
func SlabTransmittanceGrad(alpha, r, dcm float64) (t, dTdAlpha float64) {
	if !(r >= 0 && r < 1 && dcm > 0) {
		return math.NaN(), math.NaN()
	}
	x := math.Exp(-alpha * dcm)
	q := r * x
	if q >= 1 || math.IsNaN(x) {
		return math.NaN(), math.NaN()
	}
	a := (1 - r) * (1 - r)
	den := 1 - r*r*x*x
	t = a * x / den // the expression of SlabTransmittance, bit for bit
	dTdAlpha = -dcm * a * x * (1 + q*q) / (den * den)
	return t, dTdAlpha
}
