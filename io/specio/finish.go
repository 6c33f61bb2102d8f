package specio

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// finish decides the units that depend on the values, checks the values,
// converts to energy and sorts.
func (p *parser) finish(d *data) (*Spectrum, error) {
	xc, yc := p.cols[p.xi], p.cols[p.yi]
	unit, err := p.xUnit(d)
	if err != nil {
		return nil, err
	}
	src, err := p.yKind(d)
	if err != nil {
		return nil, err
	}
	s := &Spectrum{
		Name:        p.name,
		SourceXUnit: unit,
		SourceYKind: src,
		XHeader:     xc.name,
		YHeader:     yc.name,
		Meta:        p.meta,
	}
	switch src {
	case Transmittance, TransmittancePercent:
		s.Kind = Transmittance
	default:
		s.Kind = src
	}
	if src == TransmittancePercent {
		for i := range d.y {
			d.y[i] /= 100
		}
	}
	if s.Kind == Transmittance {
		for _, n := range TransmittanceNoiseNotes(d.y) {
			p.note("%s", n)
		}
	}
	if p.ri >= 0 {
		s.RHeader = p.cols[p.ri].name
		percent, err := p.rPercent(d)
		if err != nil {
			return nil, err
		}
		if percent {
			for i := range d.r {
				d.r[i] /= 100
			}
		}
	}

	n := len(d.x)
	e := make([]float64, n)
	for i, x := range d.x {
		v := unit.Energy(x)
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, p.errf(d.lines[i], 0, ErrRange, "x = %s %s gives a photon energy of %s eV", fmtG(x), unit, fmtG(v))
		}
		e[i] = v
	}
	if err := p.checkEnergies(d, e, unit); err != nil {
		return nil, err
	}
	if n > 1 && e[0] > e[n-1] {
		slices.Reverse(e)
		slices.Reverse(d.y)
		slices.Reverse(d.r)
		slices.Reverse(d.lines)
		dir := "ascending"
		if d.x[0] > d.x[n-1] {
			dir = "descending"
		}
		p.note("x %s in the file, so energy descending; reversed to ascending energy", dir)
	}
	for i := 1; i < n; i++ {
		if !(e[i] > e[i-1]) {
			return nil, p.errf(d.lines[i], 0, ErrNotMonotonic, "x at lines %d and %d give the same photon energy %s eV", d.lines[i-1], d.lines[i], fmtG(e[i]))
		}
	}
	s.E, s.Y, s.R, s.Lines = e, d.y, d.r, d.lines
	s.Notes = p.notes
	return s, nil
}

// checkEnergies rejects an x unit that puts the photon energies outside
// [MinPhotonEV, MaxPhotonEV], naming the units the values do fit.
func (p *parser) checkEnergies(d *data, e []float64, unit XUnit) error {
	bad := ImplausibleEnergy(e)
	if bad < 0 {
		return nil
	}
	xlo, xhi := d.x[0], d.x[len(d.x)-1]
	if xlo > xhi {
		xlo, xhi = xhi, xlo
	}
	var fits []string
	for _, r := range plausibleX {
		if r.unit != unit && xlo >= r.lo && xhi <= r.hi {
			fits = append(fits, r.unit.String())
		}
	}
	hint := "pass --x-unit (nm, um, ev, cm-1)"
	if len(fits) > 0 {
		hint = "the values fit " + strings.Join(fits, " or ") + "; pass --x-unit " + fits[0]
	}
	src := "the header"
	if p.r.XUnit != XAuto {
		src = "--x-unit"
	}
	return p.errf(d.lines[bad], p.xCol(), ErrUnit, "x = %s read as %s (from %s) gives a photon energy of %.4g eV, outside %g–%g eV (far infrared to vacuum ultraviolet): the unit is wrong; %s",
		fmtG(d.x[bad]), unit.quantity(), src, e[bad], float64(MinPhotonEV), float64(MaxPhotonEV), hint)
}

// xCol is the byte column of the x header cell, 0 if not known.
func (p *parser) xCol() int {
	if p.header != nil && p.xi < len(p.cols) {
		return p.cols[p.xi].col
	}
	return 0
}

// checkAbsorbance rejects an absorbance column whose values cannot be
// absorbance (ImplausibleAbsorbance).
func (p *parser) checkAbsorbance(d *data) error {
	st := d.ys
	_, med, why := ImplausibleAbsorbance(d.y)
	switch why {
	case "negative":
		return p.errf(st.maxLine, st.maxCol, ErrRange, "every absorbance value is negative (the largest, %s, is here): T > 1 at every point; were the sample and reference beams swapped, or the baseline taken on the sample?", fmtG(st.max))
	case "median":
		return p.errf(st.maxLine, st.maxCol, ErrRange, "absorbance up to %s with a median of %s is beyond any spectrophotometer (at most about 6–8): is this column %%T? pass --y-kind T%%", fmtG(st.max), fmtG(med))
	}
	return nil
}

// xUnit decides the unit of x: option, header unit, header quantity with
// the values, or the values alone.
func (p *parser) xUnit(d *data) (XUnit, error) {
	xc := p.cols[p.xi]
	where := p.describe(p.xi)
	lo, hi := d.x[0], d.x[len(d.x)-1]
	if lo > hi {
		lo, hi = hi, lo
	}
	span := fmtG(lo) + "–" + fmtG(hi)
	var fits []XUnit
	for _, r := range plausibleX {
		if lo >= r.lo && hi <= r.hi {
			fits = append(fits, r.unit)
		}
	}
	l, col := p.pos(p.xi)
	switch {
	case p.r.XUnit != XAuto:
		u := p.r.XUnit
		if xc.xUnit != XAuto && xc.xUnit != u {
			p.note("x %s: the header says %s but --x-unit %s wins", where, xc.xUnit, u)
		}
		p.note("x %s: %s (from --x-unit)", where, u.quantity())
		return u, nil
	case xc.xUnit != XAuto:
		p.note("x %s: %s", where, xc.xUnit.quantity())
		if !slices.Contains(fits, xc.xUnit) {
			p.note("x values %s are unusual for %s", span, xc.xUnit)
		}
		return xc.xUnit, nil
	case xc.xQuant == "wavenumber":
		p.note("x %s: wavenumber without a unit, read as cm⁻¹", where)
		return Wavenumber, nil
	case xc.xQuant == "wavelength":
		for _, u := range fits {
			if u == Nanometre || u == Micrometre {
				p.note("x %s: wavelength without a unit; values %s read as %s", where, span, u)
				return u, nil
			}
		}
		return 0, p.errf(l, col, ErrUnit, "%s: wavelength without a unit and values %s fit neither nm nor um; pass --x-unit (nm, um)", where, span)
	case xc.xQuant == "energy":
		if slices.Contains(fits, ElectronVolt) {
			p.note("x %s: energy without a unit; values %s read as eV", where, span)
			return ElectronVolt, nil
		}
		return 0, p.errf(l, col, ErrUnit, "%s: energy without a unit and values %s do not look like eV; pass --x-unit", where, span)
	}
	switch len(fits) {
	case 1:
		p.note("x %s: no unit in the header; values %s fit only %s", where, span, fits[0])
		return fits[0], nil
	case 0:
		return 0, p.errf(l, col, ErrUnit, "cannot tell the unit of x (%s, values %s); pass --x-unit (nm, um, ev, cm-1)", where, span)
	}
	names := make([]string, len(fits))
	for i, u := range fits {
		names[i] = u.String()
	}
	return 0, p.errf(l, col, ErrAmbiguous, "cannot tell the unit of x (%s): values %s fit %s; pass --x-unit (nm, um, ev, cm-1)", where, span, strings.Join(names, " or "))
}

// yKind decides the kind of y and checks transmittance against it.
func (p *parser) yKind(d *data) (YKind, error) {
	yc := p.cols[p.yi]
	where := p.describe(p.yi)
	kind := p.r.YKind
	explicit := kind != YAuto
	if !explicit {
		kind = yc.yKind
		if kind == Transmittance {
			switch yc.pct {
			case pctPercent:
				kind = TransmittancePercent
			case pctUnknown:
				kind = YAuto // decided below from the values
			}
		}
	} else if yc.role == roleY && !compatible(yc.yKind, kind) {
		p.note("y %s: the header says %s but --y-kind %s wins", where, yc.yKind.quantity(), kind)
	}
	st := d.ys
	l, c := st.maxLine, st.maxCol
	switch kind {
	case YAuto:
		switch {
		case st.max > looksPercent && st.max <= 100*fracMax:
			kind = TransmittancePercent
			p.note("y %s: transmittance; largest value %s > %s, read as percent", where, fmtG(st.max), fmtG(looksPercent))
		case st.max <= looksPercent:
			kind = Transmittance
			p.note("y %s: transmittance; largest value %s ≤ %s, read as a fraction", where, fmtG(st.max), fmtG(looksPercent))
		default:
			return 0, p.errf(l, c, ErrRange, "transmittance %s is too large for a fraction or a percentage", fmtG(st.max))
		}
	default:
		src := "header"
		if explicit {
			src = "--y-kind"
		}
		p.note("y %s: %s (from the %s)", where, kind.quantity(), src)
	}
	switch kind {
	case Absorbance:
		if err := p.checkAbsorbance(d); err != nil {
			return 0, err
		}
	case Transmittance:
		switch {
		case st.max > looksPercent:
			return 0, p.errf(l, c, ErrRange, "transmittance %s looks like percent; pass --y-kind T%%", fmtG(st.max))
		case st.max > fracMax:
			return 0, p.errf(l, c, ErrRange, "transmittance %s is above %s (%s %%)", fmtG(st.max), fmtG(fracMax), fmtG(100*fracMax))
		case st.min < fracMin:
			return 0, p.errf(st.minLine, st.minCol, ErrRange, "transmittance %s is below %s", fmtG(st.min), fmtG(fracMin))
		}
	case TransmittancePercent:
		switch {
		case st.max <= looksPercent && !explicit:
			return 0, p.errf(l, c, ErrRange, "the header says percent but the largest transmittance is %s: looks like a fraction; pass --y-kind T (or --y-kind T%% to read it as percent)", fmtG(st.max))
		case st.max <= looksPercent:
			p.note("y %s: every value is ≤ %s %%; read as percent as --y-kind T%% says", where, fmtG(looksPercent))
		case st.max > 100*fracMax:
			return 0, p.errf(l, c, ErrRange, "transmittance %s %% is above %s %%", fmtG(st.max), fmtG(100*fracMax))
		}
		if st.min < 100*fracMin {
			return 0, p.errf(st.minLine, st.minCol, ErrRange, "transmittance %s %% is below %s %%", fmtG(st.min), fmtG(100*fracMin))
		}
	}
	return kind, nil
}

// rPercent decides whether the reflectance column is in percent and checks
// its values.
func (p *parser) rPercent(d *data) (bool, error) {
	rc := p.cols[p.ri]
	where := p.describe(p.ri)
	st := d.rs
	pct := rc.pct
	if pct == pctUnknown {
		if st.max > looksPercent {
			pct = pctPercent
			p.note("R %s: reflectance; largest value %s > %s, read as percent", where, fmtG(st.max), fmtG(looksPercent))
		} else {
			pct = pctFraction
			p.note("R %s: reflectance; largest value %s ≤ %s, read as a fraction", where, fmtG(st.max), fmtG(looksPercent))
		}
	} else if pct == pctPercent {
		p.note("R %s: reflectance in percent, converted to a fraction", where)
	} else {
		p.note("R %s: reflectance as a fraction", where)
	}
	scale := 1.0
	if pct == pctPercent {
		scale = 100
		if st.max <= looksPercent {
			return false, p.errf(st.maxLine, st.maxCol, ErrRange, "the header says percent but the largest reflectance is %s: looks like a fraction; write the header as R", fmtG(st.max))
		}
	} else if st.max > looksPercent {
		return false, p.errf(st.maxLine, st.maxCol, ErrRange, "reflectance %s looks like percent; write the header as %%R", fmtG(st.max))
	}
	switch {
	case st.max > scale*fracMax:
		return false, p.errf(st.maxLine, st.maxCol, ErrRange, "reflectance %s is above %s", fmtG(st.max), fmtG(scale*fracMax))
	case st.min < scale*fracMin:
		return false, p.errf(st.minLine, st.minCol, ErrRange, "reflectance %s is below %s", fmtG(st.min), fmtG(scale*fracMin))
	}
	return pct == pctPercent, nil
}

// TransmittanceNoiseNotes returns the notes that say how many values of a
// transmittance (fraction) are at or below zero or above one: instrument
// noise near zero and full transmission, kept as read. Readers of other
// formats use it so every reader says the same.
func TransmittanceNoiseNotes(t []float64) []string {
	var neg, over int
	for _, v := range t {
		if v <= 0 {
			neg++
		}
		if v > 1 {
			over++
		}
	}
	var notes []string
	if neg > 0 {
		notes = append(notes, fmt.Sprintf("%d transmittance values ≤ 0 kept as read (noise near zero transmission)", neg))
	}
	if over > 0 {
		notes = append(notes, fmt.Sprintf("%d transmittance values above 100 %% kept as read (noise near full transmission)", over))
	}
	return notes
}
