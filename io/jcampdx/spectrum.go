package jcampdx

import (
	"math"
	"slices"
	"strings"

	"bandedge/io/specio"
)

// Transmittance range checks, the same as specio's (its package
// documentation: −5 % to 110 % kept as read; a "fraction" whose largest
// value is above 1.5 is percent). Common practice: photometric noise and
// baseline error near 0 % and 100 % are a few tenths of a percent; the
// bounds are deliberately loose.
const (
	fracMin      = -0.05
	fracMax      = 1.10
	looksPercent = 1.5
)

// unitKey is the comparison form of a unit string: upper case, without
// blanks, '_' and '.'.
func unitKey(s string) string {
	s = strings.ToUpper(s)
	return strings.Map(func(r rune) rune {
		switch r {
		case ' ', '\t', '_', '.':
			return -1
		}
		return r
	}, s)
}

// xUnits maps ##XUNITS= values (unitKey form) to units.
var xUnits = map[string]specio.XUnit{
	"NANOMETERS": specio.Nanometre, "NANOMETRES": specio.Nanometre, "NANOMETER": specio.Nanometre,
	"NANOMETRE": specio.Nanometre, "NM": specio.Nanometre,
	"MICROMETERS": specio.Micrometre, "MICROMETRES": specio.Micrometre, "MICROMETER": specio.Micrometre,
	"MICROMETRE": specio.Micrometre, "MICRONS": specio.Micrometre, "MICRON": specio.Micrometre,
	"UM":   specio.Micrometre,
	"ΜM":   specio.Micrometre, // Greek capital mu: the upper case of both µ (micro sign) and μ
	"1/CM": specio.Wavenumber, "CM-1": specio.Wavenumber, "CM^-1": specio.Wavenumber,
	"CM**-1": specio.Wavenumber, "WAVENUMBERS": specio.Wavenumber, "WAVENUMBER": specio.Wavenumber,
	"EV": specio.ElectronVolt, "ELECTRONVOLTS": specio.ElectronVolt, "ELECTRONVOLT": specio.ElectronVolt,
}

// yUnits maps ##YUNITS= values (unitKey form) to kinds. Transmittance means
// "fraction or percent, decided by the values".
var yUnits = map[string]specio.YKind{
	"TRANSMITTANCE": specio.Transmittance, "TRANSMISSION": specio.Transmittance, "T": specio.Transmittance,
	"%T": specio.TransmittancePercent, "T%": specio.TransmittancePercent,
	"PERCENTTRANSMITTANCE": specio.TransmittancePercent, "TRANSMITTANCE(%)": specio.TransmittancePercent,
	"TRANSMITTANCE%": specio.TransmittancePercent, "%TRANSMITTANCE": specio.TransmittancePercent,
	"PERCENTTRANSMISSION": specio.TransmittancePercent, "TRANSMISSION(%)": specio.TransmittancePercent,
	"ABSORBANCE": specio.Absorbance, "ABS": specio.Absorbance, "A": specio.Absorbance,
	"OPTICALDENSITY": specio.Absorbance, "OD": specio.Absorbance,
	"1/CM": specio.Alpha, "CM-1": specio.Alpha, "CM^-1": specio.Alpha,
	"ABSORPTIONCOEFFICIENT": specio.Alpha, "ABSORPTIONCOEFFICIENT(1/CM)": specio.Alpha,
}

// xQuantity names what unit u measures; yQuantity what kind k is.
func xQuantity(u specio.XUnit) string {
	switch u {
	case specio.Nanometre:
		return "wavelength in nm"
	case specio.Micrometre:
		return "wavelength in µm"
	case specio.ElectronVolt:
		return "photon energy in eV"
	case specio.Wavenumber:
		return "wavenumber in cm⁻¹"
	}
	return u.String()
}

func yQuantity(k specio.YKind) string {
	switch k {
	case specio.Transmittance:
		return "transmittance as a fraction"
	case specio.TransmittancePercent:
		return "transmittance in percent"
	case specio.Absorbance:
		return "decadic absorbance"
	case specio.Alpha:
		return "absorption coefficient in cm⁻¹"
	}
	return k.String()
}

// units decides the x unit and the y kind from the records and options.
// The y kind may still be Transmittance-or-percent (decided later).
func (p *parser) units() (specio.XUnit, specio.YKind, error) {
	xl, yl := p.core["XUNITS"], p.core["YUNITS"]
	var xu specio.XUnit
	if xl != nil {
		xu = xUnits[unitKey(xl.value)]
	}
	switch {
	case p.r.XUnit != specio.XAuto:
		if xl != nil && xu != p.r.XUnit {
			p.note("##XUNITS= %s, but the XUnit option (--x-unit %s) wins", xl.value, p.r.XUnit)
		}
		xu = p.r.XUnit
		p.note("x: %s (XUnit option)", xQuantity(xu))
	case xl == nil:
		return 0, 0, p.errf(p.data.line, 0, specio.ErrUnit, "no ##XUNITS= record: pass --x-unit (nm, um, ev, cm-1)")
	case xu == specio.XAuto:
		return 0, 0, p.errf(xl.line, xl.col, specio.ErrUnit,
			"##XUNITS= %q is not a wavelength, wavenumber or photon energy unit (NANOMETERS, MICROMETERS, 1/CM, EV); if x is one of those, pass --x-unit (nm, um, ev, cm-1)", xl.value)
	default:
		p.note("x: ##XUNITS= %s, %s", xl.value, xQuantity(xu))
	}
	var yk specio.YKind
	if yl != nil {
		yk = yUnits[unitKey(yl.value)]
	}
	switch {
	case p.r.YKind != specio.YAuto:
		if yl != nil && yk != p.r.YKind && !(yk == specio.Transmittance && p.r.YKind == specio.TransmittancePercent) {
			p.note("##YUNITS= %s, but the YKind option (--y-kind %s) wins", yl.value, p.r.YKind)
		}
		yk = p.r.YKind
	case yl == nil:
		return 0, 0, p.errf(p.data.line, 0, specio.ErrUnit, "no ##YUNITS= record: pass --y-kind (T, T%%, A, alpha)")
	case yk == specio.YAuto:
		return 0, 0, p.errf(yl.line, yl.col, specio.ErrUnit,
			"##YUNITS= %q is not transmittance, absorbance or absorption coefficient; if the values are one of those, pass --y-kind (T, T%%, A, alpha)", yl.value)
	}
	return xu, yk, nil
}

// spectrum decodes the data table and builds the Spectrum.
func (p *parser) spectrum() (*specio.Spectrum, error) {
	if v := p.core["JCAMPDX"]; v == nil {
		p.note("no ##JCAMP-DX= record: read as version 4.24")
	} else if f := strings.Fields(v.value); len(f) == 0 || f[0] != "4.24" {
		p.note("##JCAMP-DX= %s: read with the version 4.24 rules", v.value)
	}
	xu, yk, err := p.units()
	if err != nil {
		return nil, err
	}
	xf, err := p.factor("XFACTOR")
	if err != nil {
		return nil, err
	}
	yf, err := p.factor("YFACTOR")
	if err != nil {
		return nil, err
	}
	var x, y []float64
	var lines []int
	form := strings.ToUpper(strings.Join(strings.Fields(p.data.value), ""))
	switch p.data.norm {
	case "XYDATA":
		if form != "(X++(Y..Y))" {
			return nil, p.errf(p.data.line, p.data.col, ErrUnsupported, "##XYDATA= %s is not supported: only (X++(Y..Y))", p.data.value)
		}
		x, y, lines, err = p.xyData(xf)
	default: // XYPOINTS
		if form != "(XY..XY)" {
			return nil, p.errf(p.data.line, p.data.col, ErrUnsupported, "##XYPOINTS= %s is not supported: only (XY..XY)", p.data.value)
		}
		x, y, lines, err = p.xyPointsData(xf)
	}
	if err != nil {
		return nil, err
	}
	for i := range y {
		y[i] *= yf
		if !finite(y[i]) {
			return nil, p.errf(lines[i], 0, specio.ErrRange, "ordinate times YFACTOR overflows")
		}
	}
	if err := p.checkFirstY(y[0]); err != nil {
		return nil, err
	}
	src, err := p.yKind(yk, y, lines)
	if err != nil {
		return nil, err
	}
	s := &specio.Spectrum{Name: p.name, SourceXUnit: xu, SourceYKind: src, Meta: p.meta}
	if l := p.core["XUNITS"]; l != nil {
		s.XHeader = l.value
	}
	if l := p.core["YUNITS"]; l != nil {
		s.YHeader = l.value
	}
	s.Kind = src
	if src == specio.TransmittancePercent {
		s.Kind = specio.Transmittance
		for i := range y {
			y[i] /= 100
		}
	}
	if s.Kind == specio.Transmittance {
		for _, n := range specio.TransmittanceNoiseNotes(y) {
			p.note("%s", n)
		}
	}
	n := len(x)
	e := make([]float64, n)
	for i, v := range x {
		ev := xu.Energy(v)
		if !(ev > 0) || math.IsInf(ev, 0) {
			return nil, p.errf(lines[i], 0, specio.ErrRange, "x = %s %s gives a photon energy of %s eV", fmtG(v), xu, fmtG(ev))
		}
		e[i] = ev
	}
	if i := specio.ImplausibleEnergy(e); i >= 0 {
		return nil, p.errf(lines[i], 0, specio.ErrUnit, "x = %s read as %s gives a photon energy of %.4g eV, outside %g–%g eV (far infrared to vacuum ultraviolet): ##XUNITS= (or --x-unit) is wrong for these values",
			fmtG(x[i]), xu, e[i], float64(specio.MinPhotonEV), float64(specio.MaxPhotonEV))
	}
	if n > 1 && e[0] > e[n-1] {
		slices.Reverse(e)
		slices.Reverse(y)
		slices.Reverse(lines)
		p.note("energy descending in the file; reversed to ascending energy")
	}
	for i := 1; i < n; i++ {
		if !(e[i] > e[i-1]) {
			return nil, p.errf(lines[i], 0, specio.ErrNotMonotonic,
				"the points at lines %d and %d are not in strictly monotonic x order (photon energies %s and %s eV)",
				lines[i-1], lines[i], fmtG(e[i-1]), fmtG(e[i]))
		}
	}
	s.E, s.Y, s.Lines = e, y, lines
	s.Notes = p.notes
	return s, nil
}

// xyData decodes an (X++(Y..Y)) table and returns x (file units), y (before
// YFACTOR) and lines.
func (p *parser) xyData(xf float64) (x, y []float64, lines []int, err error) {
	need := func(key string) (*ldr, error) {
		l := p.core[key]
		if l == nil {
			return nil, p.errf(p.data.line, 0, specio.ErrSyntax, "##XYDATA= needs a ##%s= record", key)
		}
		return l, nil
	}
	for _, k := range []string{"FIRSTX", "LASTX", "NPOINTS"} {
		if _, err := need(k); err != nil {
			return nil, nil, nil, err
		}
	}
	first, _, _, err := p.optNumber("FIRSTX", 0)
	if err != nil {
		return nil, nil, nil, err
	}
	last, lastRes, _, err := p.optNumber("LASTX", 0)
	if err != nil {
		return nil, nil, nil, err
	}
	n, _, err := p.npoints()
	if err != nil {
		return nil, nil, nil, err
	}
	g := grid{first: first, xfactor: xf, n: n}
	if n > 1 {
		g.step = (last - first) / float64(n-1)
		if g.step == 0 || !finite(g.step) {
			l := p.core["LASTX"]
			return nil, nil, nil, p.errf(l.line, l.col, specio.ErrNotMonotonic, "##FIRSTX= and ##LASTX= give a step of %s with %d points", fmtG(g.step), n)
		}
	} else if math.Abs(last-first) > lastRes+1e-9*math.Abs(first) {
		l := p.core["LASTX"]
		return nil, nil, nil, p.errf(l.line, l.col, ErrCheck, "##NPOINTS= 1 but ##FIRSTX= %s and ##LASTX= %s differ", fmtG(first), fmtG(last))
	}
	if dl := p.core["DELTAX"]; dl != nil {
		dx, _, err := p.number(dl)
		if err != nil {
			return nil, nil, nil, err
		}
		if n > 1 && !(math.Abs(dx-g.step) <= 0.01*math.Abs(g.step)) {
			return nil, nil, nil, p.errf(dl.line, dl.col, ErrCheck,
				"##DELTAX= %s disagrees with (LASTX − FIRSTX)/(NPOINTS − 1) = %s", dl.value, fmtG(g.step))
		}
	}
	d, err := p.decodeXYData(p.data, g)
	if err != nil {
		return nil, nil, nil, err
	}
	var forms []string
	for k, name := range []string{"AFFN", "SQZ", "DIF", "DUP"} {
		if d.forms[k] > 0 {
			forms = append(forms, name)
		}
	}
	p.note("##XYDATA=(X++(Y..Y)) at line %d: %d points, forms %s, %d Y check values verified",
		p.data.line, n, strings.Join(forms, "+"), d.checks)
	if d.coarse {
		p.note("abscissas are written more coarsely than the step %s: the abscissa check cannot catch a one-point slip", fmtG(g.step))
	}
	x = make([]float64, n)
	for i := range x {
		x[i] = g.x(i)
	}
	return x, d.y, d.lines, nil
}

// xyPointsData reads an (XY..XY) table and checks it against NPOINTS,
// FIRSTX and LASTX where given.
func (p *parser) xyPointsData(xf float64) (x, y []float64, lines []int, err error) {
	n, haveN, err := p.npoints()
	if err != nil {
		return nil, nil, nil, err
	}
	x, y, lines, res, err := p.xyPoints(p.data, n)
	if err != nil {
		return nil, nil, nil, err
	}
	if len(x) == 0 {
		return nil, nil, nil, p.errf(p.data.line, 0, specio.ErrNoData, "##XYPOINTS= table without points")
	}
	if haveN && len(x) != n {
		return nil, nil, nil, p.errf(lines[len(lines)-1], 0, ErrCheck, "##NPOINTS= %d (line %d) but the table holds %d pairs", n, p.core["NPOINTS"].line, len(x))
	}
	for i := range x {
		x[i] *= xf
		if !finite(x[i]) {
			return nil, nil, nil, p.errf(lines[i], 0, specio.ErrRange, "abscissa times XFACTOR overflows")
		}
	}
	for k, key := range []string{"FIRSTX", "LASTX"} {
		l := p.core[key]
		if l == nil {
			continue
		}
		want, wres, err := p.number(l)
		if err != nil {
			return nil, nil, nil, err
		}
		i := 0
		if k == 1 {
			i = len(x) - 1
		}
		tol := wres + res[k]*math.Abs(xf) + 1e-9*math.Abs(want)
		if !(math.Abs(x[i]-want) <= tol) {
			return nil, nil, nil, p.errf(l.line, l.col, ErrCheck, "##%s= %s but the table's %s x is %s", l.label, l.value, []string{"first", "last"}[k], fmtG(x[i]))
		}
	}
	p.note("##XYPOINTS=(XY..XY) at line %d: %d points", p.data.line, len(x))
	return x, y, lines, nil
}

// checkFirstY compares ##FIRSTY= with the first ordinate (after YFACTOR).
func (p *parser) checkFirstY(y0 float64) error {
	l := p.core["FIRSTY"]
	if l == nil {
		return nil
	}
	fy, _, err := p.number(l)
	if err != nil {
		return err
	}
	yf, _, _, _ := p.optNumber("YFACTOR", 1)
	tol := math.Max(math.Abs(yf), 1e-3*math.Max(math.Abs(fy), math.Abs(y0)))
	if !(math.Abs(fy-y0) <= tol) {
		return p.errf(l.line, l.col, ErrCheck, "##FIRSTY= %s but the first ordinate times YFACTOR is %s", l.value, fmtG(y0))
	}
	return nil
}

// yKind decides percent or fraction for transmittance and checks the
// range, as specio does.
func (p *parser) yKind(k specio.YKind, y []float64, lines []int) (specio.YKind, error) {
	lo, hi := 0, 0
	for i, v := range y {
		if v < y[lo] {
			lo = i
		}
		if v > y[hi] {
			hi = i
		}
	}
	ymin, ymax := y[lo], y[hi]
	from := "##YUNITS="
	if p.r.YKind != specio.YAuto {
		from = "YKind option"
	}
	switch {
	case k == specio.Transmittance && p.r.YKind == specio.YAuto:
		switch {
		case ymax > looksPercent && ymax <= 100*fracMax:
			p.note("y: transmittance; largest value %s > %s, read as percent", fmtG(ymax), fmtG(looksPercent))
			k = specio.TransmittancePercent
		case ymax <= looksPercent:
			p.note("y: transmittance; largest value %s ≤ %s, read as a fraction", fmtG(ymax), fmtG(looksPercent))
		default:
			return 0, p.errf(lines[hi], 0, specio.ErrRange, "transmittance %s is too large for a fraction or a percentage", fmtG(ymax))
		}
	case k == specio.TransmittancePercent && ymax <= looksPercent:
		if p.r.YKind == specio.YAuto {
			return 0, p.errf(lines[hi], 0, specio.ErrRange,
				"##YUNITS= says percent but the largest transmittance is %s: looks like a fraction; pass --y-kind T (or --y-kind T%% to read it as percent)", fmtG(ymax))
		}
		p.note("y: every value is ≤ %s %%; read as percent as the YKind option (--y-kind T%%) says", fmtG(looksPercent))
	default:
		p.note("y: %s (%s)", yQuantity(k), from)
	}
	switch k {
	case specio.Absorbance:
		switch i, med, why := specio.ImplausibleAbsorbance(y); why {
		case "negative":
			return 0, p.errf(lines[i], 0, specio.ErrRange, "every absorbance value is negative (the largest, %s, is here): T > 1 at every point; were the sample and reference beams swapped, or the baseline taken on the sample?", fmtG(y[i]))
		case "median":
			return 0, p.errf(lines[i], 0, specio.ErrRange, "absorbance up to %s with a median of %s is beyond any spectrophotometer (at most about 6–8): is it %%T? pass --y-kind T%%", fmtG(y[i]), fmtG(med))
		}
	case specio.Transmittance:
		switch {
		case ymax > looksPercent:
			return 0, p.errf(lines[hi], 0, specio.ErrRange, "transmittance %s looks like percent; pass --y-kind T%%", fmtG(ymax))
		case ymax > fracMax:
			return 0, p.errf(lines[hi], 0, specio.ErrRange, "transmittance %s is above %s (%s %%)", fmtG(ymax), fmtG(fracMax), fmtG(100*fracMax))
		case ymin < fracMin:
			return 0, p.errf(lines[lo], 0, specio.ErrRange, "transmittance %s is below %s", fmtG(ymin), fmtG(fracMin))
		}
	case specio.TransmittancePercent:
		switch {
		case ymax > 100*fracMax:
			return 0, p.errf(lines[hi], 0, specio.ErrRange, "transmittance %s %% is above %s %%", fmtG(ymax), fmtG(100*fracMax))
		case ymin < 100*fracMin:
			return 0, p.errf(lines[lo], 0, specio.ErrRange, "transmittance %s %% is below %s %%", fmtG(ymin), fmtG(100*fracMin))
		}
	}
	return k, nil
}
