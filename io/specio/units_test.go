package specio

import (
	"errors"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestConstants(t *testing.T) {
	// CODATA 2018 exact h, c, e (see codataHC). HC is rounded to 10
	// significant digits, so it must agree to better than 5e-10 relative.
	if !scalar.EqualWithinAbsOrRel(HC, codataHC, 0, 5e-10) {
		t.Errorf("HC = %.12g, CODATA 2018 hc/e = %.12g eV nm", HC, codataHC)
	}
	if !scalar.EqualWithinAbsOrRel(HCWavenumber, codataHC*1e-7, 0, 5e-10) {
		t.Errorf("HCWavenumber = %.12g, CODATA 2018 hc/e = %.12g eV cm", HCWavenumber, codataHC*1e-7)
	}
}

func TestConversions(t *testing.T) {
	for _, tc := range []struct {
		name string
		got  float64
		want float64
	}{
		// 1 eV ↔ 1239.84198 nm and 8065.54394 cm⁻¹: CODATA 2018 exact
		// constants (hc/e; 1/(hc/e) in cm⁻¹ = 8065.543937...).
		{"EnergyFromWavelength(1239.84198433)", EnergyFromWavelength(1239.8419843320026), 1},
		{"EnergyFromWavelength(500)", EnergyFromWavelength(500), codataHC / 500},
		{"WavelengthFromEnergy(1.424)", WavelengthFromEnergy(1.424), codataHC / 1.424},
		{"EnergyFromWavenumber(8065.543937)", EnergyFromWavenumber(8065.543937349212), 1},
		{"WavenumberFromEnergy(1)", WavenumberFromEnergy(1), 1e7 / codataHC},
		{"Micrometre.Energy(0.5)", Micrometre.Energy(0.5), codataHC / 500},
		{"Nanometre.Energy(870)", Nanometre.Energy(870), codataHC / 870},
		{"ElectronVolt.Energy(1.5)", ElectronVolt.Energy(1.5), 1.5},
		{"Wavenumber.Energy(10000)", Wavenumber.Energy(10000), codataHC * 1e-3},
	} {
		// 1e-9 relative: HC's 10-digit rounding (see TestConstants).
		if !scalar.EqualWithinAbsOrRel(tc.got, tc.want, 0, 1e-9) {
			t.Errorf("%s = %.12g, want %.12g", tc.name, tc.got, tc.want)
		}
	}
	if v := XAuto.Energy(1); v == v {
		t.Errorf("XAuto.Energy(1) = %v, want NaN", v)
	}
}

func TestParseXUnit(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want XUnit
		err  error
	}{
		{"", XAuto, nil}, {"auto", XAuto, nil}, {"nm", Nanometre, nil}, {"NM", Nanometre, nil},
		{"um", Micrometre, nil}, {"µm", Micrometre, nil}, {"ev", ElectronVolt, nil}, {"eV", ElectronVolt, nil},
		{"cm-1", Wavenumber, nil}, {"1/cm", Wavenumber, nil}, {"cm^-1", Wavenumber, nil},
		{"mev", XAuto, ErrUnit}, {"angstrom", XAuto, ErrUnit},
	} {
		got, err := ParseXUnit(tc.in)
		if got != tc.want || !errors.Is(err, tc.err) || (tc.err == nil) != (err == nil) {
			t.Errorf("ParseXUnit(%q) = %v, %v, want %v, %v", tc.in, got, err, tc.want, tc.err)
		}
	}
	for u := XAuto; u <= Wavenumber; u++ {
		if got, err := ParseXUnit(u.String()); got != u || err != nil {
			t.Errorf("ParseXUnit(%v.String()) = %v, %v", u, got, err)
		}
	}
	if s := XUnit(42).String(); s != "XUnit(42)" {
		t.Errorf("XUnit(42).String() = %q", s)
	}
}

func TestParseYKind(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want YKind
		err  error
	}{
		{"", YAuto, nil}, {"auto", YAuto, nil}, {"T", Transmittance, nil}, {"t", Transmittance, nil},
		{"T%", TransmittancePercent, nil}, {"%T", TransmittancePercent, nil},
		{"A", Absorbance, nil}, {"abs", Absorbance, nil}, {"alpha", Alpha, nil}, {"α", Alpha, nil},
		{"R", YAuto, ErrUnit}, {"signal", YAuto, ErrUnit},
	} {
		got, err := ParseYKind(tc.in)
		if got != tc.want || !errors.Is(err, tc.err) || (tc.err == nil) != (err == nil) {
			t.Errorf("ParseYKind(%q) = %v, %v, want %v, %v", tc.in, got, err, tc.want, tc.err)
		}
	}
	for k := YAuto; k <= Alpha; k++ {
		if got, err := ParseYKind(k.String()); got != k || err != nil {
			t.Errorf("ParseYKind(%v.String()) = %v, %v", k, got, err)
		}
	}
}

// TestClassify checks the header words of the task list one by one.
func TestClassify(t *testing.T) {
	for _, tc := range []struct {
		header string
		role   role
		unit   XUnit
		kind   YKind
		pct    percentness
	}{
		{"Wavelength (nm)", roleX, Nanometre, YAuto, pctUnknown},
		{"nm", roleX, Nanometre, YAuto, pctUnknown},
		{"lambda/um", roleX, Micrometre, YAuto, pctUnknown},
		{"λ [µm]", roleX, Micrometre, YAuto, pctUnknown},
		{"Energy [eV]", roleX, ElectronVolt, YAuto, pctUnknown},
		{"hv (eV)", roleX, ElectronVolt, YAuto, pctUnknown},
		{"Wavenumber (cm-1)", roleX, Wavenumber, YAuto, pctUnknown},
		{"cm^-1", roleXOrAlpha, XAuto, YAuto, pctUnknown},
		{"1/cm", roleXOrAlpha, XAuto, YAuto, pctUnknown},
		{"%T", roleY, XAuto, Transmittance, pctPercent},
		{"T%", roleY, XAuto, Transmittance, pctPercent},
		{"Transmittance (%)", roleY, XAuto, Transmittance, pctPercent},
		{"T", roleY, XAuto, Transmittance, pctUnknown},
		{"T (fraction)", roleY, XAuto, Transmittance, pctFraction},
		{"Abs", roleY, XAuto, Absorbance, pctUnknown},
		{"Absorbance (AU)", roleY, XAuto, Absorbance, pctUnknown},
		{"A", roleY, XAuto, Absorbance, pctUnknown},
		{"alpha (cm-1)", roleY, XAuto, Alpha, pctUnknown},
		{"Absorption coefficient", roleY, XAuto, Alpha, pctUnknown},
		{"Abs. coeff. [1/cm]", roleY, XAuto, Alpha, pctUnknown},
		{"R", roleR, XAuto, YAuto, pctUnknown},
		{"%R", roleR, XAuto, YAuto, pctPercent},
		{"Reflectance", roleR, XAuto, YAuto, pctUnknown},
		{"Signal", roleNone, XAuto, YAuto, pctUnknown},
		{"Intensity (a.u.)", roleNone, XAuto, YAuto, pctUnknown},
		{"", roleNone, XAuto, YAuto, pctUnknown},
	} {
		c := classify(tc.header)
		if c.role != tc.role || c.xUnit != tc.unit || c.yKind != tc.kind || c.pct != tc.pct || c.badUnit != "" {
			t.Errorf("classify(%q) = role %d unit %v kind %v pct %d bad %q, want role %d unit %v kind %v pct %d",
				tc.header, c.role, c.xUnit, c.yKind, c.pct, c.badUnit, tc.role, tc.unit, tc.kind, tc.pct)
		}
	}
}

func TestParseColumns(t *testing.T) {
	for _, tc := range []struct {
		in      string
		x, y, r string
		err     error
	}{
		{"1,2", "1", "2", "", nil},
		{" Wavelength (nm) , %T ", "Wavelength (nm)", "%T", "", nil},
		{"energy_eV,alpha_cm-1,3", "energy_eV", "alpha_cm-1", "3", nil},
		{"1", "", "", "", ErrOption},
		{"1,", "", "", "", ErrOption},
		{",2", "", "", "", ErrOption},
		{"1,2,3,4", "", "", "", ErrOption},
	} {
		x, y, r, err := ParseColumns(tc.in)
		if x != tc.x || y != tc.y || r != tc.r || !errors.Is(err, tc.err) || (tc.err == nil) != (err == nil) {
			t.Errorf("ParseColumns(%q) = %q, %q, %q, %v, want %q, %q, %q, %v", tc.in, x, y, r, err, tc.x, tc.y, tc.r, tc.err)
		}
	}
}
