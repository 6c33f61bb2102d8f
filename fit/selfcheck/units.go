package selfcheck

import (
	"math/big"

	"bandedge/io/specio"
	"bandedge/model"
)

const codata = "CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010, 2021)"

// The exact SI defining constants (2019 SI; CODATA 2018), as decimal
// text so that hc/e can be formed exactly in rational arithmetic.
const (
	exactH = "6.62607015e-34"  // Planck constant h, J·s
	exactC = "299792458"       // speed of light c, m/s
	exactE = "1.602176634e-19" // elementary charge e, C
)

// Tolerances of the unit checks.
const (
	// ProductTol is for a constant computed in float64 from h, c and e
	// (three roundings, ≤ 3.3e-16 relative; 1e-15 leaves a margin).
	ProductTol = 1e-15
	// TenDigitTol is half a unit in the tenth significant digit of
	// 1239.841984 (5e-7 / 1239.841984), for constants rounded to 10
	// digits as CODATA prints hc in eV·m.
	TenDigitTol = 5e-7 / 1239.841984
)

// HCExact returns hc/e in eV·nm computed in exact rational arithmetic from
// the defining constants h, c and e, rounded once to float64
// (1239.84198433…).
func HCExact() float64 {
	h, _ := new(big.Rat).SetString(exactH)
	c, _ := new(big.Rat).SetString(exactC)
	e, _ := new(big.Rat).SetString(exactE)
	hc := new(big.Rat).Mul(h, c)
	hc.Quo(hc, e)
	hc.Mul(hc, big.NewRat(1_000_000_000, 1)) // J·m/C = eV·m → eV·nm
	f, _ := hc.Float64()
	return f
}

// Units returns the unit-constant checks: model.HCeVnm, specio.HC and
// specio.HCWavenumber against hc/e from the exact defining constants (the
// specio constants are rounded to 10 digits), and the photon energy at
// 1000 nm from specio.EnergyFromWavelength and from model.HCeVnm against
// CODATA's printed hc = 1.239841984…e-6 eV·m.
func Units() []Check {
	hc := HCExact()
	const e1000 = 1.239841984 // eV, CODATA 2018 hc in eV·m × 1e6, 10 digits
	return []Check{
		newCheck("hc/e model.HCeVnm", codata, "hc/e (eV·nm) vs exact h·c/e",
			model.HCeVnm, hc, ProductTol),
		newCheck("hc/e specio.HC", codata, "hc/e (eV·nm), 10 digits, vs exact h·c/e",
			specio.HC, hc, TenDigitTol),
		newCheck("hc/e specio.HCWavenumber", codata, "hc/e (eV·cm), 10 digits, vs exact h·c/e",
			specio.HCWavenumber, hc*1e-7, TenDigitTol),
		newCheck("E(1000 nm) specio", codata, "photon energy at 1000 nm (eV)",
			specio.EnergyFromWavelength(1000), e1000, TenDigitTol),
		newCheck("E(1000 nm) model", codata, "photon energy at 1000 nm (eV), HCeVnm/1000",
			model.HCeVnm/1000, e1000, TenDigitTol),
	}
}
