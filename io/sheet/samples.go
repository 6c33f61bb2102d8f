package sheet

import (
	"encoding/csv"
	"errors"
	"io"
	"math"
	"path"
	"strings"

	"bandedge/io/specio"
)

// Sample is one row of a sample sheet. Pointer fields are nil, and string
// fields "", when the cell is empty or the column absent: "not given, use
// the command line", as distinct from zero.
type Sample struct {
	// File is the scan file as written in the sheet (a base name or a
	// relative path); rows are matched to scans by its base name.
	File string
	// Line is the 1-based line of the row.
	Line int

	// ThicknessCM is the sample thickness in cm (converted from the unit
	// in the cell or the header).
	ThicknessCM *float64
	// ThicknessErr is the standard uncertainty of the thickness: absolute
	// in cm, or relative to the thickness.
	ThicknessErr *Uncertainty
	// Index is the refractive index (dimensionless, positive).
	Index *float64
	// IndexErr is the standard uncertainty of the index: absolute, or
	// relative to the index.
	IndexErr *Uncertainty

	// Wafer and Lot identify the sample.
	Wafer, Lot string
	// XMM and YMM are the measurement position on the wafer in mm.
	XMM, YMM *float64
	// TemperatureK is the sample temperature in K.
	TemperatureK *float64
	// Notes is free text.
	Notes string

	// Extra holds the cells of the columns the sheet does not know, in
	// column order, one per such column (Value "" for an empty cell).
	Extra []KV
}

// KV is a column name (the header as written) and a cell.
type KV struct {
	Key, Value string
}

// Uncertainty is a standard uncertainty given absolutely (in the unit of
// its quantity: cm for a thickness) or relative to the nominal value
// ("2%" is Value 0.02, Relative true).
type Uncertainty struct {
	Value    float64
	Relative bool
}

// Rel returns the relative uncertainty u/|nominal|. ok is false when u is
// absolute and nominal is zero or not finite.
func (u Uncertainty) Rel(nominal float64) (rel float64, ok bool) {
	if u.Relative {
		return u.Value, true
	}
	if a := abs(nominal); a > 0 && a <= maxFloat {
		return u.Value / a, true
	}
	return 0, false
}

// Abs returns the absolute uncertainty for the nominal value.
func (u Uncertainty) Abs(nominal float64) float64 {
	if u.Relative {
		return u.Value * abs(nominal)
	}
	return u.Value
}

const maxFloat = 1.7976931348623157e308

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// Samples is a parsed sample sheet.
type Samples struct {
	// Name is the name given to ReadSamples.
	Name string
	// Rows are the sample rows in file order.
	Rows []Sample
	// ExtraColumns are the headers of the unknown columns, in order: the
	// keys of every row's Extra.
	ExtraColumns []string
	// Notes says what was decided (separator, units taken from headers).
	Notes []string

	byBase map[string]int
}

// Lookup returns the row for a scan file, matched by base name (the part
// after the last '/' or '\'), case-sensitively.
func (s *Samples) Lookup(file string) (Sample, bool) {
	if s == nil {
		return Sample{}, false
	}
	i, ok := s.byBase[baseName(file)]
	if !ok {
		return Sample{}, false
	}
	return s.Rows[i], true
}

// baseName returns the base name of a path written with '/' or '\'.
func baseName(p string) string {
	return path.Base(strings.ReplaceAll(strings.TrimSpace(p), `\`, "/"))
}

// colKind is what a sheet column holds.
type colKind int

const (
	colNone colKind = iota // empty header: must have empty cells
	colExtra
	colFile
	colThickness
	colThicknessErr
	colIndex
	colIndexErr
	colWafer
	colLot
	colX
	colY
	colTemperature
	colNotes
)

var colNames = [...]string{colFile: "file", colThickness: "thickness", colThicknessErr: "thickness_err",
	colIndex: "index", colIndexErr: "index_err", colWafer: "wafer", colLot: "lot", colX: "x_mm", colY: "y_mm",
	colTemperature: "temperature_k", colNotes: "notes"}

// synonyms maps normalised header names (see normHeader) to columns.
var synonyms = map[string]colKind{
	"file": colFile, "filename": colFile, "file_name": colFile, "scan": colFile, "scan_file": colFile, "path": colFile,

	"thickness": colThickness, "d": colThickness, "film_thickness": colThickness, "layer_thickness": colThickness,

	"thickness_err": colThicknessErr, "thickness_unc": colThicknessErr, "thickness_u": colThicknessErr,
	"thickness_uncertainty": colThicknessErr, "u_thickness": colThicknessErr, "d_err": colThicknessErr, "u_d": colThicknessErr,

	"index": colIndex, "n": colIndex, "refractive_index": colIndex,

	"index_err": colIndexErr, "index_unc": colIndexErr, "index_u": colIndexErr, "u_index": colIndexErr,
	"n_err": colIndexErr, "u_n": colIndexErr, "refractive_index_err": colIndexErr,

	"wafer": colWafer, "wafer_id": colWafer, "wafer_no": colWafer,
	"lot": colLot, "lot_id": colLot, "lot_no": colLot, "batch": colLot,

	"x": colX, "x_pos": colX, "pos_x": colX, "y": colY, "y_pos": colY, "pos_y": colY,

	"temperature": colTemperature, "temp": colTemperature, "t_sample": colTemperature,

	"notes": colNotes, "note": colNotes, "comment": colNotes, "comments": colNotes, "remarks": colNotes,
}

// Length units, in cm, as suffixes of cells ("1.2um") and headers
// ("thickness_um"). Exact SI prefixes (BIPM, The International System of
// Units, 9th edition, 2019).
var lengthUnits = []struct {
	name string
	cm   float64
}{
	{"nm", 1e-7}, {"um", 1e-4}, {"µm", 1e-4}, {"μm", 1e-4}, {"mm", 0.1}, {"cm", 1},
}

// normHeader lower-cases a header and turns every run of blanks and
// "-./()[]" into one '_', trimming '_' at both ends: "Thickness (µm)" is
// "thickness_µm".
func normHeader(s string) string {
	var b strings.Builder
	under := false
	for _, r := range strings.ToLower(strings.TrimSpace(s)) {
		switch r {
		case ' ', '\t', '-', '.', '/', '(', ')', '[', ']', '_':
			under = true
			continue
		}
		if under && b.Len() > 0 {
			b.WriteByte('_')
		}
		under = false
		b.WriteRune(r)
	}
	return b.String()
}

// column is one classified header cell.
type column struct {
	kind   colKind
	header string  // as written, trimmed
	col    int     // 1-based byte column of the header cell
	unitCM float64 // length columns: the unit of plain numbers (0: none)
	unitMM float64 // position columns: mm per unit of plain numbers
	unitT  byte    // temperature: 'K', 'C', or 0 (cells carry the unit)
	unit   string  // the unit name from the header, for notes
}

// classify reads one header cell.
func classify(h string) column {
	n := normHeader(h)
	c := column{header: strings.TrimSpace(h)}
	if n == "" {
		c.kind = colNone
		return c
	}
	if k, ok := synonyms[n]; ok {
		c.kind = k
		if k == colX || k == colY {
			c.unitMM, c.unit = 1, "mm"
		}
		return c
	}
	if i := strings.LastIndexByte(n, '_'); i > 0 {
		stem, unit := n[:i], n[i+1:]
		k := synonyms[stem]
		switch k {
		case colThickness, colThicknessErr, colX, colY:
			for _, u := range lengthUnits {
				if unit == u.name {
					c.kind, c.unit = k, u.name
					if k == colX || k == colY {
						c.unitMM = u.cm * 10
					} else {
						c.unitCM = u.cm
					}
					return c
				}
			}
		case colTemperature:
			switch unit {
			case "k":
				c.kind, c.unitT, c.unit = k, 'K', "K"
				return c
			case "c", "°c", "degc":
				c.kind, c.unitT, c.unit = k, 'C', "°C"
				return c
			}
		}
	}
	c.kind = colExtra
	if i := strings.LastIndexByte(n, '_'); i > 0 && len(n[:i]) > 1 {
		if k := synonyms[n[:i]]; k == colThickness || k == colThicknessErr || k == colTemperature || k == colX || k == colY {
			c.unit = n[i+1:] // not a unit this package knows: noted by header
		}
	}
	return c
}

// ReadSamples reads a sample sheet (see the package documentation). Data
// errors are *specio.ParseError values with the file, 1-based line and
// byte column, wrapping a specio sentinel or ErrDuplicate.
func ReadSamples(r io.Reader, name string) (*Samples, error) {
	text, err := readText(r, name, MaxSheetBytes)
	if err != nil {
		return nil, err
	}
	s := &Samples{Name: name, byBase: map[string]int{}}
	comma := sniffComma(text)
	if comma == ';' {
		s.Notes = append(s.Notes, "cells separated by ';' (a ',' inside a number is a decimal comma)")
	}
	cr := csv.NewReader(strings.NewReader(text))
	cr.Comma, cr.Comment, cr.FieldsPerRecord = comma, '#', -1
	rec, err := cr.Read()
	if err == io.EOF {
		return nil, perr(name, 0, 0, specio.ErrNoData, "empty sample sheet: want a header row, then one row per scan file")
	}
	if err != nil {
		return nil, csvError(name, err)
	}
	hl, _ := cr.FieldPos(0)
	cols, err := s.header(cr, rec, hl)
	if err != nil {
		return nil, err
	}
	first := map[string]int{} // base name -> line
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvError(name, err)
		}
		ln, _ := cr.FieldPos(0)
		smp, err := s.row(cr, rec, cols, comma == ';')
		if err != nil {
			return nil, err
		}
		if smp == nil {
			continue // blank row
		}
		smp.Line = ln
		base := baseName(smp.File)
		if prev, ok := first[base]; ok {
			_, c := cr.FieldPos(fileIndex(cols))
			return nil, perr(name, ln, c, ErrDuplicate, "scan file %s is listed twice (lines %d and %d)", base, prev, ln)
		}
		first[base] = ln
		s.byBase[base] = len(s.Rows)
		s.Rows = append(s.Rows, *smp)
	}
	if len(s.Rows) == 0 {
		return nil, perr(name, hl, 0, specio.ErrNoData, "no sample rows under the header")
	}
	return s, nil
}

// sniffComma picks ';' if the first non-comment line has more semicolons
// than commas outside quotes, else ','.
func sniffComma(text string) rune {
	for line := range strings.Lines(text) {
		if strings.TrimSpace(line) == "" || strings.HasPrefix(line, "#") {
			continue
		}
		var commas, semis int
		quoted := false
		for _, r := range line {
			switch {
			case r == '"':
				quoted = !quoted
			case quoted:
			case r == ',':
				commas++
			case r == ';':
				semis++
			}
		}
		if semis > commas {
			return ';'
		}
		return ','
	}
	return ','
}

// csvError turns an encoding/csv error into a *specio.ParseError at the
// same position.
func csvError(name string, err error) error {
	var ce *csv.ParseError
	if errors.As(err, &ce) {
		return perr(name, ce.Line, ce.Column, specio.ErrSyntax, "%v", ce.Err)
	}
	return perr(name, 0, 0, specio.ErrSyntax, "%v", err)
}

func fileIndex(cols []column) int {
	for i, c := range cols {
		if c.kind == colFile {
			return i
		}
	}
	return 0
}

// header classifies the header row.
func (s *Samples) header(cr *csv.Reader, rec []string, line int) ([]column, error) {
	if len(rec) > MaxSheetColumns {
		_, col := cr.FieldPos(MaxSheetColumns)
		return nil, perr(s.Name, line, col, specio.ErrTooLarge, "more than %d columns", MaxSheetColumns)
	}
	cols := make([]column, len(rec))
	seen := map[colKind]int{}
	extra := map[string]int{}
	var thickUnit column
	for i, h := range rec {
		c := classify(h)
		_, c.col = cr.FieldPos(i)
		cols[i] = c
		switch c.kind {
		case colNone:
		case colExtra:
			key := normHeader(h)
			if j, ok := extra[key]; ok {
				return nil, perr(s.Name, line, c.col, ErrDuplicate, "column %q repeats column %d %q", c.header, j+1, rec[j])
			}
			extra[key] = i
			s.ExtraColumns = append(s.ExtraColumns, c.header)
			if c.unit != "" {
				s.Notes = append(s.Notes, "column "+quote(c.header)+" kept as an extra column: "+quote(c.unit)+
					" is not a unit of the known column (lengths nm, um, µm, mm, cm; temperatures k, c)")
			}
		default:
			if j, ok := seen[c.kind]; ok {
				return nil, perr(s.Name, line, c.col, ErrDuplicate, "columns %d %q and %d %q are both %s", j+1, rec[j], i+1, c.header, colNames[c.kind])
			}
			seen[c.kind] = i
			if c.kind == colThickness {
				thickUnit = c
			}
			if c.unit != "" {
				s.Notes = append(s.Notes, "column "+quote(c.header)+": "+colNames[c.kind]+" in "+c.unit+" where a cell has no unit")
			}
		}
	}
	if _, ok := seen[colFile]; !ok {
		return nil, perr(s.Name, line, 0, specio.ErrSyntax, "no file column in the header: name one column file (or filename, scan, path)")
	}
	if j, ok := seen[colThicknessErr]; ok && cols[j].unitCM == 0 && thickUnit.unitCM != 0 {
		cols[j].unitCM = thickUnit.unitCM
		s.Notes = append(s.Notes, "column "+quote(cols[j].header)+": a length without a unit is in "+thickUnit.unit+", as in column "+quote(thickUnit.header))
	}
	return cols, nil
}

func quote(s string) string { return `"` + s + `"` }

// row parses one data row; nil for a row of empty cells.
func (s *Samples) row(cr *csv.Reader, rec []string, cols []column, dc bool) (*Sample, error) {
	empty := true
	for _, v := range rec {
		if strings.TrimSpace(v) != "" {
			empty = false
			break
		}
	}
	if empty {
		return nil, nil
	}
	smp := &Sample{}
	for i := range cols {
		if cols[i].kind == colExtra {
			smp.Extra = append(smp.Extra, KV{Key: cols[i].header})
		}
	}
	nextExtra := 0
	for i, raw := range rec {
		v := strings.TrimSpace(raw)
		ln, col := cr.FieldPos(i)
		if i >= len(cols) {
			if v != "" {
				return nil, perr(s.Name, ln, col, specio.ErrSyntax, "cell %q is beyond the last header column (%d)", v, len(cols))
			}
			continue
		}
		c := cols[i]
		if c.kind == colExtra {
			smp.Extra[nextExtra].Value = v
			nextExtra++
			continue
		}
		if v == "" {
			continue
		}
		bad := func(sentinel error, format string, args ...any) error {
			return perr(s.Name, ln, col, sentinel, format, args...)
		}
		switch c.kind {
		case colNone:
			return nil, bad(specio.ErrSyntax, "cell %q is in column %d, which has no header", v, i+1)
		case colFile:
			smp.File = v
		case colWafer:
			smp.Wafer = v
		case colLot:
			smp.Lot = v
		case colNotes:
			smp.Notes = v
		case colThickness:
			d, err := length(v, c.unitCM, dc)
			if err != "" {
				return nil, bad(specio.ErrUnit, "thickness %q %s", v, err)
			}
			if !(d > 0) {
				return nil, bad(specio.ErrRange, "thickness %q must be positive", v)
			}
			smp.ThicknessCM = &d
		case colThicknessErr:
			u, isPct, ok := percent(v, dc)
			switch {
			case isPct && !ok:
				return nil, bad(specio.ErrSyntax, "thickness uncertainty %q is not a percentage such as 2%%", v)
			case !isPct:
				d, err := length(v, c.unitCM, dc)
				if err != "" {
					return nil, bad(specio.ErrUnit, "thickness uncertainty %q %s, or a percentage such as 2%%", v, err)
				}
				u = Uncertainty{Value: d}
			}
			if u.Value < 0 {
				return nil, bad(specio.ErrRange, "thickness uncertainty %q must not be negative", v)
			}
			smp.ThicknessErr = &u
		case colIndex:
			n, ok := parseNumber(v, dc)
			if !ok {
				return nil, bad(specio.ErrSyntax, "refractive index %q is not a number", v)
			}
			if !(n > 0) {
				return nil, bad(specio.ErrRange, "refractive index %q must be positive", v)
			}
			smp.Index = &n
		case colIndexErr:
			u, isPct, ok := percent(v, dc)
			switch {
			case isPct && !ok:
				return nil, bad(specio.ErrSyntax, "index uncertainty %q is not a percentage such as 1%%", v)
			case !isPct:
				n, ok := parseNumber(v, dc)
				if !ok {
					return nil, bad(specio.ErrSyntax, "index uncertainty %q is not a number or a percentage such as 1%%", v)
				}
				u = Uncertainty{Value: n}
			}
			if u.Value < 0 {
				return nil, bad(specio.ErrRange, "index uncertainty %q must not be negative", v)
			}
			smp.IndexErr = &u
		case colX, colY:
			p, err := position(v, c.unitMM, dc)
			if err != "" {
				return nil, bad(specio.ErrSyntax, "position %q %s", v, err)
			}
			if math.IsInf(p, 0) {
				return nil, bad(specio.ErrRange, "position %q is too large", v)
			}
			if c.kind == colX {
				smp.XMM = &p
			} else {
				smp.YMM = &p
			}
		case colTemperature:
			k, err := temperature(v, c.unitT, dc)
			if err != "" {
				return nil, bad(specio.ErrUnit, "temperature %q %s", v, err)
			}
			if !(k > 0) {
				return nil, bad(specio.ErrRange, "temperature %q is not above absolute zero", v)
			}
			smp.TemperatureK = &k
		}
	}
	if smp.File == "" {
		_, col := cr.FieldPos(min(fileIndex(cols), len(rec)-1))
		ln, _ := cr.FieldPos(0)
		return nil, perr(s.Name, ln, col, specio.ErrSyntax, "row without a file name")
	}
	return smp, nil
}

// length parses a length with a unit suffix, or a plain number in unitCM
// (if non-zero). It returns cm, or a reason.
func length(v string, unitCM float64, dc bool) (float64, string) {
	for _, u := range lengthUnits {
		if strings.HasSuffix(v, u.name) {
			x, ok := parseNumber(strings.TrimSpace(strings.TrimSuffix(v, u.name)), dc)
			if !ok {
				return 0, "is not a number with a unit"
			}
			return x * u.cm, ""
		}
	}
	x, ok := parseNumber(v, dc)
	switch {
	case !ok:
		return 0, "is not a length: want a number with a unit nm, um (µm), mm or cm, e.g. 1.2um"
	case unitCM == 0:
		return 0, "has no unit: write e.g. 1.2um, or put the unit in the header (thickness_um)"
	}
	return x * unitCM, ""
}

// percent parses "2%" as a relative uncertainty. isPct reports a '%'
// suffix; ok that the rest is a number.
func percent(v string, dc bool) (u Uncertainty, isPct, ok bool) {
	t, isPct := strings.CutSuffix(v, "%")
	if !isPct {
		return Uncertainty{}, false, false
	}
	x, ok := parseNumber(strings.TrimSpace(t), dc)
	return Uncertainty{Value: x / 100, Relative: true}, true, ok
}

// position parses a position in mm: a plain number in the header's unit
// or a number with a length unit.
func position(v string, unitMM float64, dc bool) (float64, string) {
	for _, u := range lengthUnits {
		if strings.HasSuffix(v, u.name) {
			x, ok := parseNumber(strings.TrimSpace(strings.TrimSuffix(v, u.name)), dc)
			if !ok {
				return 0, "is not a number with a unit"
			}
			return x * u.cm * 10, ""
		}
	}
	x, ok := parseNumber(v, dc)
	if !ok {
		return 0, "is not a number (mm)"
	}
	return x * unitMM, ""
}

// temperature parses a temperature in K: "300", "300K", "26.85C",
// "26.85 °C"; a plain number takes the header's unit. T/K = t/°C + 273.15
// (exact by definition of the Celsius scale, BIPM SI Brochure, 9th ed.,
// 2019).
func temperature(v string, unit byte, dc bool) (float64, string) {
	t := v
	switch {
	case strings.HasSuffix(t, "°C"):
		t, unit = strings.TrimSuffix(t, "°C"), 'C'
	case strings.HasSuffix(t, "C") || strings.HasSuffix(t, "c"):
		t, unit = t[:len(t)-1], 'C'
	case strings.HasSuffix(t, "K") || strings.HasSuffix(t, "k"):
		t, unit = t[:len(t)-1], 'K'
	}
	x, ok := parseNumber(strings.TrimSpace(t), dc)
	switch {
	case !ok:
		return 0, "is not a number"
	case unit == 'C':
		return x + 273.15, ""
	case unit == 'K':
		return x, ""
	}
	return 0, "has no unit: write 300K or 26.85C, or name the column temperature_k"
}
