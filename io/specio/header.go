package specio

import (
	"strings"
)

// role is what a header field says its column holds.
type role int

const (
	roleNone     role = iota // empty or not recognised
	roleX                    // wavelength, energy or wavenumber
	roleY                    // transmittance, absorbance or alpha
	roleR                    // reflectance
	roleXOrAlpha             // a bare "cm-1": wavenumber or alpha
)

// percentness of a transmittance or reflectance column.
type percentness int

const (
	pctUnknown  percentness = iota // decide from the values
	pctFraction                    // 0…1
	pctPercent                     // 0…100
)

// column is one column of the export as the header describes it.
type column struct {
	index   int    // 0-based
	name    string // header text, "" if none
	col     int    // 1-based byte column of the header field, 0 if none
	role    role
	xQuant  string      // for roleX: "wavelength", "energy" or "wavenumber"
	xUnit   XUnit       // for roleX: unit written in the header, XAuto if none
	yKind   YKind       // for roleY: Transmittance, Absorbance or Alpha
	pct     percentness // for transmittance and reflectance
	badUnit string      // a unit the header names that is not supported
}

// headerReplacer normalises header spellings before tokenising: Greek
// letters, micro signs, superscript and caret exponents, 1/cm.
var headerReplacer = strings.NewReplacer(
	"µ", "u", "μ", "u", "λ", " lambda ", "α", " alpha ", "ν", " nu ",
	"−", "-", "⁻¹", "-1", "^-1", "-1", "^(-1)", "-1", "**-1", "-1", "^{-1}", "-1",
	"1/cm", "cm-1", "1/mm", "mm-1", "1/m", "m-1", "1/um", "um-1", "1/nm", "nm-1", "cm -1", "cm-1",
	"[%]", " % ", "(%)", " % ",
)

// headerTokens splits a header field into lower-case words and units:
// "Wavelength (nm)" gives [wavelength nm], "%T" gives [% t],
// "Abs. coeff. [cm^-1]" gives [abs coeff cm-1], "a.u." stays one token.
func headerTokens(s string) []string {
	s = headerReplacer.Replace(strings.ToLower(s))
	var toks []string
	isTok := func(r rune) bool {
		return r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || r == '%' || r == '.' || r == '-' || r >= 0x80
	}
	start := -1
	flush := func(end int) {
		if start < 0 {
			return
		}
		t := strings.Trim(s[start:end], ".-")
		start = -1
		if t == "" {
			return
		}
		switch {
		case t == "%":
			toks = append(toks, t)
		case strings.HasPrefix(t, "%"):
			toks = append(toks, "%", strings.Trim(t[1:], ".-"))
		case strings.HasSuffix(t, "%"):
			toks = append(toks, strings.Trim(t[:len(t)-1], ".-"), "%")
		default:
			toks = append(toks, t)
		}
	}
	for i, r := range s {
		if isTok(r) {
			if start < 0 {
				start = i
			}
			continue
		}
		flush(i)
	}
	flush(len(s))
	return toks
}

// Word lists for classify. They are matched against whole tokens.
var (
	wWavelength = []string{"wavelength", "wavelengths", "lambda", "wl", "wavelen"}
	wWavenumber = []string{"wavenumber", "wavenumbers", "wavenum", "nu"}
	wEnergy     = []string{"energy", "photon", "hv", "hnu", "e"}
	wTrans      = []string{"t", "transmittance", "transmission", "trans", "transm", "transmissivity"}
	wAbsorbance = []string{"a", "abs", "absorbance", "absorbances", "od"}
	wAbsorption = []string{"absorption", "abs", "absorptivity"}
	wCoeff      = []string{"coefficient", "coefficients", "coeff", "coef"}
	wRefl       = []string{"r", "reflectance", "reflection", "refl", "reflectivity"}
	wPercent    = []string{"%", "percent", "pct"}
	wFraction   = []string{"fraction", "frac"}
	uNm         = []string{"nm", "nanometer", "nanometre", "nanometers", "nanometres"}
	uUm         = []string{"um", "micron", "microns", "micrometer", "micrometre", "micrometers", "micrometres"}
	uEV         = []string{"ev"}
	uCm1        = []string{"cm-1"}
	// Units that name a quantity we recognise but do not convert.
	uUnsupported = []string{"mev", "kev", "m-1", "mm-1", "um-1", "nm-1", "hz", "khz", "mhz", "ghz", "thz", "angstrom", "angstroms", "å", "mm", "j"}
)

func hasAny(toks []string, words []string) bool {
	for _, t := range toks {
		for _, w := range words {
			if t == w {
				return true
			}
		}
	}
	return false
}

func firstOf(toks []string, words []string) string {
	for _, t := range toks {
		for _, w := range words {
			if t == w {
				return t
			}
		}
	}
	return ""
}

// maxHeaderCell is the longest header cell that classify reads; longer
// cells are not column names.
const maxHeaderCell = 256

// classify reads a header field. See the package documentation for the
// rules; in short, quantity words decide the role, units decide the x unit,
// and a bare unit decides the role when no word does.
func classify(name string) column {
	c := column{name: name}
	if len(name) > maxHeaderCell {
		return c
	}
	toks := headerTokens(name)
	if len(toks) == 0 {
		return c
	}
	var unit XUnit
	switch {
	case hasAny(toks, uNm):
		unit = Nanometre
	case hasAny(toks, uUm):
		unit = Micrometre
	case hasAny(toks, uEV):
		unit = ElectronVolt
	case hasAny(toks, uCm1):
		unit = Wavenumber
	}
	bad := firstOf(toks, uUnsupported)
	pct := pctUnknown
	switch {
	case hasAny(toks, wPercent):
		pct = pctPercent
	case hasAny(toks, wFraction):
		pct = pctFraction
	}

	switch {
	case hasAny(toks, []string{"alpha"}) ||
		hasAny(toks, wAbsorption) && hasAny(toks, wCoeff) ||
		hasAny(toks, []string{"absorption"}) && unit == Wavenumber:
		c.role, c.yKind = roleY, Alpha
		if unit != XAuto && unit != Wavenumber {
			c.badUnit = unitWord(unit)
		} else if bad != "" {
			c.badUnit = bad
		}
		return c
	case hasAny(toks, wWavelength) || hasAny(toks, []string{"wave"}) && hasAny(toks, []string{"length"}):
		c.role, c.xQuant = roleX, "wavelength"
		if unit == Nanometre || unit == Micrometre {
			c.xUnit = unit
		} else if unit != XAuto {
			c.badUnit = unitWord(unit)
		}
	case hasAny(toks, wWavenumber) || hasAny(toks, []string{"wave"}) && hasAny(toks, []string{"number"}):
		c.role, c.xQuant = roleX, "wavenumber"
		if unit == Wavenumber {
			c.xUnit = unit
		} else if unit != XAuto {
			c.badUnit = unitWord(unit)
		}
	case hasAny(toks, wEnergy):
		c.role, c.xQuant = roleX, "energy"
		if unit == ElectronVolt {
			c.xUnit = unit
		} else if unit != XAuto {
			c.badUnit = unitWord(unit)
		}
	case hasAny(toks, wTrans):
		c.role, c.yKind, c.pct = roleY, Transmittance, pct
		return c
	case hasAny(toks, wAbsorbance):
		c.role, c.yKind = roleY, Absorbance
		return c
	case hasAny(toks, wRefl):
		c.role, c.pct = roleR, pct
		return c
	case unit == Nanometre || unit == Micrometre || unit == ElectronVolt:
		c.role, c.xUnit = roleX, unit
		c.xQuant = map[XUnit]string{Nanometre: "wavelength", Micrometre: "wavelength", ElectronVolt: "energy"}[unit]
	case unit == Wavenumber:
		c.role = roleXOrAlpha
	case bad != "":
		// A bare unsupported unit ("meV", "Å") still says this is x.
		c.role, c.badUnit = roleX, bad
	}
	if c.role == roleX && c.xUnit == XAuto && c.badUnit == "" && bad != "" {
		c.badUnit = bad
	}
	return c
}

func unitWord(u XUnit) string {
	if u == Wavenumber {
		return "cm-1"
	}
	return u.String()
}
