package specio

import (
	"fmt"
	"math"
	"strings"
)

// Photon-energy conversion constants.
//
// HC is hc/e expressed in eV·nm, from the exact SI defining constants of
// CODATA 2018 (h = 6.62607015e-34 J s, c = 299792458 m/s,
// e = 1.602176634e-19 C; Tiesinga, Mohr, Newell & Taylor, Rev. Mod. Phys. 93,
// 025010, 2021; citation from memory), rounded to 10 significant digits
// (exact value 1239.84198433…). HCWavenumber is the same product in eV·cm.
//
//	E [eV] = HC / λ [nm]
//	E [eV] = HCWavenumber × ν̃ [cm⁻¹]
const (
	HC           = 1239.841984    // eV·nm
	HCWavenumber = 1.239841984e-4 // eV·cm
)

// EnergyFromWavelength returns the photon energy in eV of light with
// vacuum wavelength nm in nanometres: E = HC / nm.
func EnergyFromWavelength(nm float64) float64 { return HC / nm }

// WavelengthFromEnergy returns the vacuum wavelength in nm of a photon of
// energy eV: λ = HC / E. It is the inverse of EnergyFromWavelength.
func WavelengthFromEnergy(eV float64) float64 { return HC / eV }

// EnergyFromWavenumber returns the photon energy in eV for the wavenumber
// cm1 in cm⁻¹: E = HCWavenumber × ν̃.
func EnergyFromWavenumber(cm1 float64) float64 { return HCWavenumber * cm1 }

// WavenumberFromEnergy returns the wavenumber in cm⁻¹ of a photon of energy
// eV. It is the inverse of EnergyFromWavenumber.
func WavenumberFromEnergy(eV float64) float64 { return eV / HCWavenumber }

// XUnit is the unit of the x column of an export. The zero value XAuto
// means "detect from the header (and, where the header says too little,
// from the values)".
type XUnit int

// X units. Their String values are the spellings accepted by ParseXUnit and
// used by the command-line flag --x-unit.
const (
	XAuto        XUnit = iota // detect
	Nanometre                 // wavelength in nm ("nm")
	Micrometre                // wavelength in µm ("um")
	ElectronVolt              // photon energy in eV ("ev")
	Wavenumber                // wavenumber in cm⁻¹ ("cm-1")
)

// String returns the flag spelling of u: "auto", "nm", "um", "ev" or "cm-1".
func (u XUnit) String() string {
	switch u {
	case XAuto:
		return "auto"
	case Nanometre:
		return "nm"
	case Micrometre:
		return "um"
	case ElectronVolt:
		return "ev"
	case Wavenumber:
		return "cm-1"
	}
	return fmt.Sprintf("XUnit(%d)", int(u))
}

// Energy converts x, given in unit u, to photon energy in eV. It returns NaN
// for XAuto and for values outside the XUnit constants.
func (u XUnit) Energy(x float64) float64 {
	switch u {
	case Nanometre:
		return EnergyFromWavelength(x)
	case Micrometre:
		return EnergyFromWavelength(x * 1e3)
	case ElectronVolt:
		return x
	case Wavenumber:
		return EnergyFromWavenumber(x)
	}
	return math.NaN()
}

// quantity is the plain-words name of what a column in unit u holds.
func (u XUnit) quantity() string {
	switch u {
	case Nanometre:
		return "wavelength in nm"
	case Micrometre:
		return "wavelength in µm"
	case ElectronVolt:
		return "photon energy in eV"
	case Wavenumber:
		return "wavenumber in cm⁻¹"
	}
	return "unknown x"
}

// ParseXUnit parses a --x-unit flag value. It accepts, case-insensitively,
// "nm"; "um", "µm" or "micron"; "ev"; "cm-1", "cm^-1", "1/cm" or "cm⁻¹";
// and "" or "auto" for XAuto. Any other value gives an error wrapping
// ErrUnit.
func ParseXUnit(s string) (XUnit, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "auto":
		return XAuto, nil
	case "nm":
		return Nanometre, nil
	case "um", "µm", "μm", "micron":
		return Micrometre, nil
	case "ev":
		return ElectronVolt, nil
	case "cm-1", "cm^-1", "1/cm", "cm⁻¹":
		return Wavenumber, nil
	}
	return XAuto, fmt.Errorf("%w: x unit %q (want nm, um, ev or cm-1)", ErrUnit, s)
}

// YKind is what the y column of an export holds. The zero value YAuto means
// "detect from the header (and, for transmittance without a unit, from the
// values)".
type YKind int

// Y kinds. Their String values are the spellings accepted by ParseYKind and
// used by the command-line flag --y-kind. A Spectrum's Kind is always
// Transmittance, Absorbance or Alpha: percent is converted to a fraction.
const (
	YAuto                YKind = iota // detect
	Transmittance                     // transmittance as a fraction, 0…1 ("T")
	TransmittancePercent              // transmittance in percent, 0…100 ("T%")
	Absorbance                        // decadic absorbance A = −log₁₀ T ("A")
	Alpha                             // absorption coefficient α in cm⁻¹ ("alpha")
)

// String returns the flag spelling of k: "auto", "T", "T%", "A" or "alpha".
func (k YKind) String() string {
	switch k {
	case YAuto:
		return "auto"
	case Transmittance:
		return "T"
	case TransmittancePercent:
		return "T%"
	case Absorbance:
		return "A"
	case Alpha:
		return "alpha"
	}
	return fmt.Sprintf("YKind(%d)", int(k))
}

// quantity is the plain-words name of k.
func (k YKind) quantity() string {
	switch k {
	case Transmittance:
		return "transmittance as a fraction"
	case TransmittancePercent:
		return "transmittance in percent"
	case Absorbance:
		return "decadic absorbance"
	case Alpha:
		return "absorption coefficient in cm⁻¹"
	}
	return "unknown y"
}

// ParseYKind parses a --y-kind flag value. It accepts, case-insensitively,
// "T"; "T%" or "%T"; "A", "abs" or "absorbance"; "alpha" or "α"; and "" or
// "auto" for YAuto. Any other value gives an error wrapping ErrUnit.
func ParseYKind(s string) (YKind, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "auto":
		return YAuto, nil
	case "t":
		return Transmittance, nil
	case "t%", "%t":
		return TransmittancePercent, nil
	case "a", "abs", "absorbance":
		return Absorbance, nil
	case "alpha", "α":
		return Alpha, nil
	}
	return YAuto, fmt.Errorf("%w: y kind %q (want T, T%%, A or alpha)", ErrUnit, s)
}

// ParseColumns parses a --columns flag value "X,Y" or "X,Y,R" into the
// XColumn, YColumn and RColumn options: each part is a header name or a
// 1-based index, blanks around it are dropped, and R may be left out. A
// name that contains a comma cannot be given this way: use its index. A
// value with fewer than two or more than three parts, or an empty X or Y,
// gives an error wrapping ErrOption.
func ParseColumns(s string) (x, y, r string, err error) {
	parts := strings.Split(s, ",")
	for i := range parts {
		parts[i] = strings.TrimSpace(parts[i])
	}
	if len(parts) < 2 || len(parts) > 3 || parts[0] == "" || parts[1] == "" {
		return "", "", "", fmt.Errorf("%w: --columns %q: want X,Y or X,Y,R (header names or 1-based indices)", ErrOption, s)
	}
	if len(parts) == 3 {
		r = parts[2]
	}
	return parts[0], parts[1], r, nil
}
