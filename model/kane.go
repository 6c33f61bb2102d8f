package model

import "math"

// Physical constants, CODATA 2018 (Tiesinga, Mohr, Newell & Taylor, Rev.
// Mod. Phys. 93, 025010, 2021). e, h and c are exact by the 2019 SI; m₀ and
// μ₀ are measured (values from memory, checked in the tests against the
// relation μ₀ε₀c² = 1 and the tabulated η₀).
const (
	// ElementaryCharge is e in C (exact).
	ElementaryCharge = 1.602176634e-19
	// Planck is h in J·s (exact).
	Planck = 6.62607015e-34
	// Hbar is ħ = h/(2π) in J·s.
	Hbar = Planck / (2 * math.Pi)
	// SpeedOfLight is c in m/s (exact).
	SpeedOfLight = 299792458
	// ElectronMass is the electron rest mass m₀ in kg.
	ElectronMass = 9.1093837015e-31
	// VacuumPermeability is μ₀ in N/A².
	VacuumPermeability = 1.25663706212e-6
	// Eta0 is the impedance of free space η₀ = μ₀c in Ω (≈ 376.730313668).
	Eta0 = VacuumPermeability * SpeedOfLight
	// HCeVnm is hc/e in eV·nm (≈ 1239.841984): E [eV] = HCeVnm / λ [nm].
	HCeVnm = Planck * SpeedOfLight / ElementaryCharge * 1e9
)

// ReducedMass returns the reduced effective mass
//
//	m_r = (1/m_e + 1/m_h)⁻¹ = m_e·m_h / (m_e + m_h)
//
// of an electron of mass me and a hole of mass mh, all in units of the
// electron rest mass m₀. It returns NaN unless both masses are positive.
func ReducedMass(me, mh float64) float64 {
	if !(me > 0 && mh > 0) {
		return math.NaN()
	}
	return me * mh / (me + mh)
}

// KaneAP returns the optical prefactor of the direct allowed edge,
//
//	A_P = π q² η₀ ħ E_P / (6 n m₀),
//
// in cm²·eV², for the Kane energy ep = E_P (eV) and the refractive index n
// near the edge. It follows from the Kane k·p momentum matrix element
// |M|² = m₀E_P/6 (Chuang, Physics of Photonic Devices, 2nd ed., 2009). The
// SI value (J²·m²) is divided by q² and multiplied by 10⁴.
//
// It returns NaN unless n > 0.
func KaneAP(ep, n float64) float64 {
	if !(n > 0) {
		return math.NaN()
	}
	const q = ElementaryCharge
	apSI := math.Pi * q * q * Eta0 * Hbar * (ep * q) / (6 * n * ElectronMass) // J²·m²
	return apSI / (q * q) * 1e4
}

// JointDOSFactor returns the prefactor of the joint density of states of
// two parabolic bands,
//
//	ρ_r(E) / √(E − E_g) = (1/2π²) (2 m_r m₀ / ħ²)^{3/2},
//
// in eV^{−3/2}·cm^{−3}, for the reduced mass mr in units of m₀ (Chuang
// 2009). It returns NaN unless mr > 0.
func JointDOSFactor(mr float64) float64 {
	if !(mr > 0) {
		return math.NaN()
	}
	k := 2 * mr * ElectronMass / (Hbar * Hbar) // 1/(J·m²)
	k *= ElementaryCharge * 1e-4               // 1/(eV·cm²)
	return k * math.Sqrt(k) / (2 * math.Pi * math.Pi)
}

// AmplitudeFromKane returns the amplitude C (cm⁻¹·eV^½) of the Direct
// model α = C√(E − E_g)/E implied by the Kane energy ep = E_P (eV), the
// refractive index n and the reduced mass mr (units of m₀):
//
//	C = A_P · (1/2π²) (2 m_r/ħ²)^{3/2} = KaneAP(ep, n) · JointDOSFactor(mr).
//
// Source: α(E) = A_P ρ_r(E)/E (Chuang 2009). It returns NaN unless n > 0
// and mr > 0.
func AmplitudeFromKane(ep, n, mr float64) float64 {
	return KaneAP(ep, n) * JointDOSFactor(mr)
}

// KaneFromAmplitude is the inverse of AmplitudeFromKane: the Kane energy
// E_P (eV) implied by the fitted amplitude c (cm⁻¹·eV^½), the refractive
// index n and the reduced mass mr (units of m₀),
//
//	E_P = 6 n m₀ C / [π q² η₀ ħ · (1/2π²)(2 m_r/ħ²)^{3/2}],
//
// i.e. E_P ∝ n·C·m_r^{−3/2}. It returns NaN unless n > 0 and mr > 0.
func KaneFromAmplitude(c, n, mr float64) float64 {
	return c / (KaneAP(1, n) * JointDOSFactor(mr))
}

// KaneRelErr returns the relative standard uncertainty of E_P from the
// relative standard uncertainties of C, n and m_r, by first-order
// propagation through E_P ∝ n·C·m_r^{−3/2}, root-sum-square, assuming the
// three are independent:
//
//	u(E_P)/E_P = √[(u_C/C)² + (u_n/n)² + (3/2 · u_m/m_r)²].
//
// The sample thickness d enters through C (C ∝ 1/d): include u_d/d in relC.
// When n also sets the reflection correction that produced α, an error in
// n moves C as well and the two terms are correlated; that case needs an
// explicit propagation (e.g. refitting at n ± u_n) instead of this sum.
func KaneRelErr(relC, relN, relMr float64) float64 {
	return math.Hypot(math.Hypot(relC, relN), 1.5*relMr)
}
