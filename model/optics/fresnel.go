package optics

import (
	"math"

	"bandedge/model"
)

// FresnelR returns the normal-incidence reflectance of a single interface
// between vacuum (or air) and a medium of complex index n + ik,
//
//	R = ((n − 1)² + k²) / ((n + 1)² + k²)
//
// (Fresnel; e.g. Born & Wolf, Principles of Optics). n and k are
// dimensionless; near the absorption edge k ≪ n and R ≈ ((n−1)/(n+1))².
func FresnelR(n, k float64) float64 {
	num := (n-1)*(n-1) + k*k
	den := (n+1)*(n+1) + k*k
	return num / den
}

// FresnelDRDn returns ∂R/∂n of FresnelR,
//
//	∂R/∂n = 4 (n² − 1 − k²) / ((n + 1)² + k²)²,
//
// which is 4(n − 1)/(n + 1)³ for k = 0. It converts an uncertainty of the
// refractive index into one of R.
func FresnelDRDn(n, k float64) float64 {
	den := (n+1)*(n+1) + k*k
	return 4 * (n*n - 1 - k*k) / (den * den)
}

// Index is a refractive index as a function of photon energy e (eV).
type Index interface {
	N(e float64) float64
}

// ConstIndex is a refractive index independent of energy.
type ConstIndex float64

// N returns the constant index.
func (c ConstIndex) N(float64) float64 { return float64(c) }

// hcEVum is hc/e in eV·µm: λ [µm] = hcEVum / E [eV].
const hcEVum = model.HCeVnm / 1000

// Cauchy is the Cauchy dispersion law
//
//	n(λ) = A + B/λ² + C/λ⁴,
//
// with λ the vacuum wavelength in µm, A dimensionless, B in µm², C in µm⁴
// (Cauchy 1836). It suits transparent media away from absorption bands.
type Cauchy struct {
	A, B, C float64
}

// N returns n at the photon energy e (eV), λ = 1.239841984/e µm. It
// returns NaN for e ≤ 0.
func (c Cauchy) N(e float64) float64 {
	if !(e > 0) {
		return math.NaN()
	}
	l := hcEVum / e
	l2 := l * l
	return c.A + c.B/l2 + c.C/(l2*l2)
}

// SellmeierTerm is one resonance of a Sellmeier law: B is dimensionless,
// C is the squared resonance wavelength in µm².
type SellmeierTerm struct {
	B, C float64
}

// Sellmeier is the Sellmeier dispersion law (Sellmeier 1871)
//
//	n²(λ) = 1 + Σᵢ Bᵢ λ² / (λ² − Cᵢ),
//
// with λ the vacuum wavelength in µm and Cᵢ in µm².
type Sellmeier struct {
	Terms []SellmeierTerm
}

// N returns n at the photon energy e (eV), λ = 1.239841984/e µm. It
// returns NaN for e ≤ 0, at a pole λ² = Cᵢ, and where n² ≤ 0 (inside an
// absorption band, where the law does not apply).
func (s Sellmeier) N(e float64) float64 {
	if !(e > 0) {
		return math.NaN()
	}
	l := hcEVum / e
	l2 := l * l
	n2 := 1.0
	for _, t := range s.Terms {
		n2 += t.B * l2 / (l2 - t.C)
	}
	if !(n2 > 0) || math.IsInf(n2, 1) {
		return math.NaN()
	}
	return math.Sqrt(n2)
}
