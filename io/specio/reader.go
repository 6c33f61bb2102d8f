package specio

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Default limits, used when the Reader's limit fields are zero.
const (
	DefaultMaxBytes  = 64 << 20  // 64 MiB
	DefaultMaxLines  = 1_000_000 // lines of text
	DefaultMaxPoints = 1_000_000 // data points
	// DefaultMaxLineBytes bounds one line: 4096 cells of 30 characters
	// are 120 KiB, so a longer line is not a spectrum row or a preamble a
	// person wrote (common practice; no standard sets it).
	DefaultMaxLineBytes = 1 << 20 // 1 MiB
)

// Plausible x ranges per unit, used only when the header names no unit.
// Common practice (no single source): UV–vis–NIR spectrophotometers cover
// roughly 175–3300 nm, FTIR instruments 400–50 000 cm⁻¹; the bounds are
// wide on purpose.
var plausibleX = []struct {
	unit   XUnit
	lo, hi float64
}{
	{Nanometre, 100, 5000},
	{Micrometre, 0.1, 50},
	{ElectronVolt, 0.02, 20},
	{Wavenumber, 50, 100000},
}

// Noise allowances for transmittance and reflectance (common practice:
// a spectrophotometer's photometric noise and baseline error near 0 % and
// 100 % are a few tenths of a percent; these bounds are deliberately loose).
const (
	fracMin      = -0.05 // −5 %
	fracMax      = 1.10  // 110 %
	looksPercent = 1.5   // a "fraction" whose largest value is above this is percent
)

// A Reader reads one spectrum from a delimited-text spectrophotometer
// export. Set the exported fields after NewReader and before Read; every
// zero value is a useful default. Invalid option values come back from Read
// as an error wrapping ErrOption.
type Reader struct {
	// Comment is the comment character: lines whose first non-blank
	// character it is are skipped (but "key: value" comments go into Meta).
	// Zero means '#'. It must not be a digit, sign, '.', quote, blank or
	// line break.
	Comment rune

	// Comma is the cell separator: ',', ';', '\t', or ' ' for any run of
	// spaces and tabs. Zero means detect (see the package documentation).
	Comma rune

	// XUnit overrides the unit of the x column. Zero (XAuto) means detect
	// from the header; a file without a header needs it.
	XUnit XUnit

	// YKind overrides the kind of the y column. Zero (YAuto) means detect
	// from the header; a file without a header needs it. When a header has
	// several possible y columns, YKind also selects the one of that kind.
	YKind YKind

	// XColumn, YColumn and RColumn choose the x, y and reflectance columns
	// by header name (case-insensitive) or 1-based index ("2"). Empty means
	// detect. The reflectance column is optional: empty RColumn with no
	// reflectance header means there is none.
	XColumn, YColumn, RColumn string

	// MaxBytes is the largest input accepted, in bytes (after which Read
	// returns ErrTooLarge). Zero means DefaultMaxBytes.
	MaxBytes int64

	// MaxLines is the largest number of lines accepted. Zero means
	// DefaultMaxLines.
	MaxLines int

	// MaxPoints is the largest number of data points accepted. Zero means
	// DefaultMaxPoints.
	MaxPoints int

	// MaxLineBytes is the longest line accepted, in bytes of UTF-8 text.
	// Zero means DefaultMaxLineBytes.
	MaxLineBytes int

	r    io.Reader
	name string
	done bool
}

// NewReader returns a Reader that reads from r. The name (usually the file
// name) is used only in error messages and Spectrum.Name.
func NewReader(r io.Reader, name string) *Reader {
	return &Reader{r: r, name: name}
}

// Read reads the whole input and returns its spectrum. Data errors are
// *ParseError values wrapping one of the sentinel errors; invalid options
// give an error wrapping ErrOption; errors from the underlying reader are
// returned wrapped. Read consumes the input: later calls return io.EOF.
func (r *Reader) Read() (*Spectrum, error) {
	if r.done {
		return nil, io.EOF
	}
	r.done = true
	p := &parser{r: r, name: r.name}
	if err := p.options(); err != nil {
		return nil, err
	}
	raw, err := io.ReadAll(io.LimitReader(r.r, p.maxBytes+1))
	if err != nil {
		return nil, fmt.Errorf("read %s: %w", p.displayName(), err)
	}
	if int64(len(raw)) > p.maxBytes {
		return nil, &ParseError{File: r.name, Err: ErrTooLarge,
			Detail: fmt.Sprintf("input larger than %d bytes (MaxBytes)", p.maxBytes)}
	}
	return p.parse(raw)
}

// parser holds the state of one Read.
type parser struct {
	r    *Reader
	name string

	comment   rune
	maxBytes  int64
	maxLines  int
	maxPoints int
	maxLine   int

	text  string
	lines []string // without '\n'; may end in '\r'
	mode  mode

	dataStart int     // index in lines of the first data row
	dataEnd   int     // index in lines just past the last data row (a trailing block starts there)
	ncols     int     // cells in the first data row (trailing empties dropped)
	header    []field // header cells, nil if none
	headerLn  int     // 1-based header line (lower line of a two-line header), 0 if none
	headerTop int     // index in lines of the first header line, or dataStart

	cols       []column
	xi, yi, ri int // chosen columns, -1 if none

	notes []string
	meta  map[string]string
	buf   []field
}

func (p *parser) displayName() string {
	if p.name == "" {
		return "<input>"
	}
	return p.name
}

func (p *parser) errf(line, col int, sentinel error, format string, args ...any) *ParseError {
	return &ParseError{File: p.name, Line: line, Column: col, Err: sentinel, Detail: fmt.Sprintf(format, args...)}
}

func (p *parser) note(format string, args ...any) {
	p.notes = append(p.notes, fmt.Sprintf(format, args...))
}

// options validates the Reader's fields and fills in defaults.
func (p *parser) options() error {
	r := p.r
	bad := func(format string, args ...any) error {
		return fmt.Errorf("%w: %s", ErrOption, fmt.Sprintf(format, args...))
	}
	p.comment = r.Comment
	if p.comment == 0 {
		p.comment = '#'
	}
	c := p.comment
	if !utf8.ValidRune(c) || c == utf8.RuneError || unicode.IsSpace(c) || unicode.IsDigit(c) ||
		strings.ContainsRune(`.+-"`, c) || unicode.IsControl(c) {
		return bad("Comment %q cannot be a comment character", c)
	}
	switch r.Comma {
	case 0, ',', ';', '\t', ' ':
	default:
		return bad("Comma %q: want ',', ';', '\\t' or ' '", r.Comma)
	}
	if r.Comma != 0 && r.Comma == c {
		return bad("Comment and Comma are both %q", c)
	}
	if r.XUnit < XAuto || r.XUnit > Wavenumber {
		return bad("XUnit %d out of range", int(r.XUnit))
	}
	if r.YKind < YAuto || r.YKind > Alpha {
		return bad("YKind %d out of range", int(r.YKind))
	}
	for _, o := range []struct{ name, v string }{{"XColumn", r.XColumn}, {"YColumn", r.YColumn}, {"RColumn", r.RColumn}} {
		if n, err := strconv.Atoi(strings.TrimSpace(o.v)); err == nil && n < 1 {
			return bad("%s %q: column indices start at 1", o.name, o.v)
		}
	}
	if r.MaxBytes < 0 || r.MaxLines < 0 || r.MaxPoints < 0 || r.MaxLineBytes < 0 {
		return bad("negative limit (MaxBytes %d, MaxLines %d, MaxPoints %d, MaxLineBytes %d)", r.MaxBytes, r.MaxLines, r.MaxPoints, r.MaxLineBytes)
	}
	p.maxBytes, p.maxLines, p.maxPoints, p.maxLine = r.MaxBytes, r.MaxLines, r.MaxPoints, r.MaxLineBytes
	if p.maxLine == 0 {
		p.maxLine = DefaultMaxLineBytes
	}
	if p.maxBytes == 0 {
		p.maxBytes = DefaultMaxBytes
	}
	if p.maxLines == 0 {
		p.maxLines = DefaultMaxLines
	}
	if p.maxPoints == 0 {
		p.maxPoints = DefaultMaxPoints
	}
	return nil
}

func (p *parser) parse(raw []byte) (*Spectrum, error) {
	text, encNote, err := decode(raw, p.name)
	if err != nil {
		return nil, err
	}
	if encNote != "" {
		p.note("%s", encNote)
	}
	if n := strings.Count(text, "\n") + 1; n > p.maxLines && !(n == p.maxLines+1 && strings.HasSuffix(text, "\n")) {
		return nil, p.errf(p.maxLines+1, 0, ErrTooLarge, "more than %d lines (MaxLines)", p.maxLines)
	}
	p.text = text
	p.lines = strings.Split(text, "\n")
	for i, l := range p.lines {
		if len(l) > p.maxLine {
			return nil, p.errf(i+1, 0, ErrTooLarge, "line of %d bytes, longer than %d (MaxLineBytes): not a spectrum export", len(l), p.maxLine)
		}
	}
	p.dataEnd = len(p.lines)
	p.meta = map[string]string{}
	if err := p.layout(); err != nil {
		return nil, err
	}
	p.readMeta()
	if err := p.chooseColumns(); err != nil {
		return nil, err
	}
	d, err := p.readData()
	if err != nil {
		return nil, err
	}
	return p.finish(d)
}

// isComment reports whether line is a comment line.
func (p *parser) isComment(line string) bool {
	t := strings.TrimLeft(line, " \t")
	r, _ := utf8.DecodeRuneInString(t)
	return t != "" && r == p.comment
}

func isBlank(line string) bool {
	for i := 0; i < len(line); i++ {
		if !isBlankByte(line[i]) {
			return false
		}
	}
	return true
}

// content reports whether line i is neither blank nor a comment.
func (p *parser) content(i int) bool {
	return !isBlank(p.lines[i]) && !p.isComment(p.lines[i])
}

func (p *parser) split(line string) []field {
	p.buf = splitLine(p.buf, line, p.mode.sep)
	return p.buf
}

// layout finds the separator, the first data row and the header.
func (p *parser) layout() error {
	var cands []mode
	for _, m := range modes {
		if p.r.Comma != 0 && m.sep != p.r.Comma || m.sep == p.comment {
			continue
		}
		cands = append(cands, m)
	}
	// The first line that any mode reads as a numeric row.
	window := -1
	for i := 0; i < len(p.lines) && window < 0; i++ {
		if !p.content(i) {
			continue
		}
		for _, m := range cands {
			p.buf = splitLine(p.buf, p.lines[i], m.sep)
			if numericRow(p.buf, m.decimalComma) {
				window = i
				break
			}
		}
	}
	if window < 0 {
		return p.noDataError()
	}
	// Score every mode on the same lines from there on.
	best, bestScore := mode{}, 0
	for _, m := range cands {
		if score := p.score(m, window); score > bestScore {
			best, bestScore = m, score
		}
	}
	bestStart := p.firstRow(best, window)
	if bestStart < 0 {
		return p.noDataError()
	}
	p.mode = best
	p.note("%s", best)

	// Lines just above the first clean pair of rows that start with a
	// number and have no more cells are data rows with bad cells: include
	// them, so that their errors are reported where they are.
	fs := trimTrailingEmpty(p.split(p.lines[bestStart]))
	p.ncols = len(fs)
	start := bestStart
	for i := start - 1; i >= 0; i-- {
		if !p.content(i) {
			continue
		}
		fs := trimTrailingEmpty(p.split(p.lines[i]))
		if len(fs) == 0 || len(fs) > p.ncols || scanNumber(fs[0].s, p.mode.decimalComma) == numNo {
			break
		}
		start = i
	}
	p.dataStart = start
	p.headerTop = start
	p.findHeader()
	p.findTrailer()
	return p.checkCellCount()
}

// findTrailer ends the data before a trailing block: the content lines
// after the last numeric row, if none of them starts like a data row
// (instrument software writes statistics or a "scan end" stamp there). A
// damaged row at the end (a number, then too few cells) is not a trailer:
// it stays data, so that its error is reported where it is.
func (p *parser) findTrailer() {
	last, first := -1, -1
	for i := len(p.lines) - 1; i >= p.dataStart; i-- {
		// Rows of empty cells (",,,") and the DOS end-of-file mark are
		// skipped by the data reader too.
		if !p.content(i) || strings.Trim(p.lines[i], " \t\r\x1a,;") == "" {
			continue
		}
		fs := trimTrailingEmpty(p.split(p.lines[i]))
		if numericRow(fs, p.mode.decimalComma) {
			last = i
			break
		}
		if startsLikeData(p.lines[i], fs, p.mode.decimalComma) {
			return
		}
		first = i
	}
	if last < 0 || first < 0 {
		return
	}
	p.dataEnd = last + 1
	end := len(p.lines)
	for end > first && isBlank(p.lines[end-1]) {
		end--
	}
	head := strings.TrimSpace(strings.TrimRight(p.lines[first], "\r"))
	if utf8.RuneCountInString(head) > 40 {
		head = string([]rune(head)[:40]) + "…"
	}
	p.note("lines %d–%d after the data (from %q) are a trailing block, not data: kept as metadata", first+1, end, head)
}

// startsLikeData reports whether a line that is not a numeric row still
// looks like a data row: its first cell is a number, NaN or empty, or the
// line starts with a digit (or a sign or decimal mark and a digit), as a
// row with another separator does.
func startsLikeData(line string, fs []field, dc bool) bool {
	if len(fs) == 0 || fs[0].s == "" || scanNumber(fs[0].s, dc) != numNo {
		return true
	}
	t := strings.TrimLeft(line, " \t\"")
	if t == "" {
		return true
	}
	if t[0] >= '0' && t[0] <= '9' {
		return true
	}
	return len(t) > 1 && strings.IndexByte("+-.,", t[0]) >= 0 && t[1] >= '0' && t[1] <= '9'
}

// checkCellCount catches a decimal comma in a comma-separated file
// ("1000,0,51,670"): the rows then have exactly twice as many cells as
// the header names, and the columns would be read as whole and fractional
// parts.
func (p *parser) checkCellCount() error {
	if p.mode.sep != ',' || p.header == nil {
		return nil
	}
	k := 0
	for _, f := range p.header {
		if f.s != "" {
			k++
		}
	}
	if k < 2 || p.ncols != 2*k || len(p.header) > k {
		return nil
	}
	row := strings.TrimSpace(strings.TrimRight(p.lines[p.dataStart], "\r"))
	return p.errf(p.dataStart+1, 0, ErrSyntax, "the header names %d columns but the rows have %d cells (%q): is the decimal separator a comma in a comma-separated file? Export with ';' or tabs as the separator, or '.' as the decimal mark", k, p.ncols, row)
}

// nextContent returns the index of the first content line after line i,
// or -1.
func (p *parser) nextContent(i int) int {
	for j := i + 1; j < len(p.lines); j++ {
		if p.content(j) {
			return j
		}
	}
	return -1
}

// firstRow returns the first data row for mode m at or after line from: the
// first numeric row followed by another numeric row or by the end of the
// input, else the first numeric row. The caller knows there is one.
func (p *parser) firstRow(m mode, from int) int {
	saved := p.mode
	p.mode = m
	defer func() { p.mode = saved }()
	first := -1
	for i := from; i < len(p.lines); i++ {
		if !p.content(i) || !numericRow(p.split(p.lines[i]), m.decimalComma) {
			continue
		}
		if first < 0 {
			first = i
		}
		j := p.nextContent(i)
		if j < 0 || numericRow(p.split(p.lines[j]), m.decimalComma) {
			return i
		}
	}
	return first
}

// score rates mode m on the 32 content lines from line from on: 2 for a
// numeric row whose every cell is a number, 1 for a numeric row with other
// cells too.
func (p *parser) score(m mode, from int) int {
	saved := p.mode
	p.mode = m
	defer func() { p.mode = saved }()
	score := 0
	for i, n := from, 0; i >= 0 && n < 32; i, n = p.nextContent(i), n+1 {
		fs := trimTrailingEmpty(p.split(p.lines[i]))
		if !numericRow(fs, m.decimalComma) {
			continue
		}
		score++
		clean := true
		for _, f := range fs {
			if f.s != "" && scanNumber(f.s, m.decimalComma) == numNo {
				clean = false
				break
			}
		}
		if clean {
			score++
		}
	}
	return score
}

// noDataError explains why no data rows were found.
func (p *parser) noDataError() error {
	last := -1
	for i := range p.lines {
		if p.content(i) {
			last = i
		}
	}
	if last < 0 {
		if isBlank(p.text) {
			return p.errf(0, 0, ErrNoData, "empty input: no text at all (did the export or the copy fail?)")
		}
		return p.errf(0, 0, ErrNoData, "no data: only comments and blank lines")
	}
	// One column of numbers? (Looking at the first 1000 content lines.)
	for i, n := 0, 0; i < len(p.lines) && n < 1000; i++ {
		if !p.content(i) {
			continue
		}
		n++
		if s := strings.Trim(p.lines[i], " \t\r\x1a,;"); scanNumber(s, false) == numOK || scanNumber(s, true) == numOK {
			return p.errf(i+1, 0, ErrNoData, "only one column of numbers: need an x and a y column")
		}
	}
	for _, m := range modes {
		fs := splitLine(nil, p.lines[last], m.sep)
		n := 0
		for _, f := range fs {
			if classify(f.s).role != roleNone {
				n++
			}
		}
		if n >= 2 {
			return p.errf(last+1, 0, ErrNoData, "a header but no data rows")
		}
	}
	return p.errf(0, 0, ErrNoData, "no data rows: no line has two or more numeric columns")
}

// headerCells cuts a candidate header line into cells. For comment lines
// the comment character is removed first; columns stay those of the line.
func (p *parser) headerCells(line string, comment bool) []field {
	off := 0
	if comment {
		off = strings.IndexRune(line, p.comment) + utf8.RuneLen(p.comment)
	}
	body := strings.TrimRight(line[off:], "\r")
	var fs []field
	if p.mode.sep == ' ' {
		fs = splitHeaderWS(body, p.ncols)
	} else {
		cr := csv.NewReader(strings.NewReader(body))
		cr.Comma = p.mode.sep
		cr.LazyQuotes = true
		cr.FieldsPerRecord = -1
		cr.TrimLeadingSpace = true
		var rec []string
		err := ErrTooLarge
		if strings.Count(body, string(p.mode.sep)) < maxCells {
			rec, err = cr.Read()
		}
		if err == nil {
			for i, s := range rec {
				_, c := cr.FieldPos(i)
				fs = append(fs, field{s: strings.TrimSpace(s), col: c})
			}
		} else {
			fs = splitLine(nil, body, p.mode.sep)
		}
	}
	for i := range fs {
		fs[i].col += off
	}
	return trimTrailingEmpty(fs)
}

// headerScore returns how many cells of fs have a recognised role, and
// whether fs can be a header at all.
func (p *parser) headerScore(fs []field, comment bool) (recognised int, ok bool) {
	nonEmpty := 0
	for _, f := range fs {
		if f.s == "" {
			continue
		}
		nonEmpty++
		if scanNumber(f.s, p.mode.decimalComma) == numOK {
			return 0, false
		}
		if classify(f.s).role != roleNone {
			recognised++
		}
	}
	if nonEmpty < 2 || strings.ContainsAny(fs[0].s, ":=") {
		return recognised, false
	}
	if comment {
		return recognised, recognised >= 1 && nonEmpty == p.ncols
	}
	return recognised, recognised >= 1 || nonEmpty == p.ncols
}

// findHeader looks for the header: the nearest content line above the data,
// else the nearest comment line above the data that reads as a header.
func (p *parser) findHeader() {
	var comments []int
	hc := -1
	for i := p.dataStart - 1; i >= 0; i-- {
		if isBlank(p.lines[i]) {
			continue
		}
		if p.isComment(p.lines[i]) {
			comments = append(comments, i)
			continue
		}
		hc = i
		break
	}
	if hc >= 0 {
		fs := p.headerCells(p.lines[hc], false)
		if n, ok := p.headerScore(fs, false); ok {
			p.setHeader(hc, fs)
			// A units line under a names line: "Wavelength;T" over "nm;%".
			if n < 2 && hc > 0 && p.content(hc-1) {
				up := p.headerCells(p.lines[hc-1], false)
				if len(up) == len(fs) {
					if _, ok := p.headerScore(up, false); ok {
						merged := make([]field, len(fs))
						for i := range fs {
							merged[i] = field{s: strings.TrimSpace(up[i].s + " " + fs[i].s), col: fs[i].col}
						}
						if m, _ := p.headerScore(merged, false); m > n {
							p.setHeader(hc, merged)
							p.headerTop = hc - 1
							p.note("two-line header, lines %d-%d", hc, hc+1)
						}
					}
				}
			}
			return
		}
	}
	// Only the comment lines nearest the data can be its header.
	for _, i := range comments[:min(len(comments), 3)] {
		fs := p.headerCells(p.lines[i], true)
		if _, ok := p.headerScore(fs, true); ok {
			p.setHeader(i, fs)
			p.note("header taken from comment line %d", i+1)
			return
		}
	}
}

func (p *parser) setHeader(i int, fs []field) {
	p.header = fs
	p.headerLn = i + 1
	p.headerTop = i
}

// readMeta collects key/value pairs from the lines above the data: content
// lines above the header and comment lines, and from the trailing block
// after the data.
func (p *parser) readMeta() {
	values := map[string][]string{}
	var order []string
	// add takes one line (CR removed): a comment's text after its marker,
	// split into key and value, within the bounds on Meta.
	add := func(line string) {
		if p.isComment(line) {
			line = line[strings.IndexRune(line, p.comment)+utf8.RuneLen(p.comment):]
		}
		k, v, ok := keyValue(line, p.mode.sep)
		if !ok {
			return
		}
		if _, seen := values[k]; !seen && len(order) >= maxMetaKeys {
			return
		} else if !seen {
			order = append(order, k)
		}
		if len(values[k]) < maxMetaValues {
			values[k] = append(values[k], v)
		}
	}
	for i := 0; i < p.dataStart; i++ {
		line := strings.TrimRight(p.lines[i], "\r")
		if isBlank(line) || !p.isComment(line) && i >= p.headerTop {
			continue
		}
		if p.header != nil && i == p.headerLn-1 {
			continue
		}
		add(line)
	}
	for i := p.dataEnd; i < len(p.lines); i++ {
		if line := strings.TrimRight(p.lines[i], "\r"); !isBlank(line) {
			add(line)
		}
	}
	for _, k := range order {
		p.meta[k] = strings.Join(values[k], "; ")
	}
}

// Bounds on Meta, so that a preamble of a million lines stays small.
const (
	maxMetaKeys   = 1000 // keys kept; later new keys are dropped
	maxMetaValues = 100  // values joined for one key; later ones are dropped
)

// keyValue splits a preamble line at the first ':', '=' or separator:
// "Instrument: UV-1", "Sample,W07", "Date;2026-03-01". The key must not be
// empty or start with a digit.
func keyValue(line string, sep rune) (k, v string, ok bool) {
	seps := ":=\t"
	switch sep {
	case ',':
		seps = ":=,"
	case ';':
		seps = ":=;"
	}
	i := strings.IndexAny(line, seps)
	if i <= 0 {
		return "", "", false
	}
	k = strings.Trim(strings.TrimSpace(line[:i]), `"`)
	v = strings.TrimSpace(line[i+1:])
	switch sep {
	case ',':
		v = strings.TrimRight(v, ", \t\r")
	case ';':
		v = strings.TrimRight(v, "; \t\r")
	}
	v = strings.TrimSpace(strings.Trim(v, `"`))
	if k == "" || len(k) > 80 || k[0] >= '0' && k[0] <= '9' || strings.HasPrefix(k, "[") {
		return "", "", false
	}
	return k, v, true
}

// describe names column i for messages: `column 2 "Signal"`.
func (p *parser) describe(i int) string {
	if i < len(p.cols) && p.cols[i].name != "" {
		return fmt.Sprintf("column %d %q", i+1, p.cols[i].name)
	}
	return fmt.Sprintf("column %d", i+1)
}

// pos returns the line and column to point at for column i: its header
// cell, or the first data row.
func (p *parser) pos(i int) (line, col int) {
	if p.header != nil {
		if i >= 0 && i < len(p.cols) && p.cols[i].col > 0 {
			return p.headerLn, p.cols[i].col
		}
		return p.headerLn, 0
	}
	return p.dataStart + 1, 0
}

// findColumn resolves an XColumn/YColumn/RColumn option.
func (p *parser) findColumn(opt, what string) (int, error) {
	opt = strings.TrimSpace(opt)
	if opt == "" {
		return -1, nil
	}
	line, _ := p.pos(-1)
	if n, err := strconv.Atoi(opt); err == nil {
		if n > len(p.cols) {
			return -1, p.errf(line, 0, ErrOption, "%s %d: the file has %d columns", what, n, len(p.cols))
		}
		return n - 1, nil
	}
	found := -1
	for i, c := range p.cols {
		if strings.EqualFold(strings.TrimSpace(c.name), opt) {
			if found >= 0 {
				return -1, p.errf(line, c.col, ErrAmbiguous, "%s %q: two columns have that name (%d and %d); give its index", what, opt, found+1, i+1)
			}
			found = i
		}
	}
	if found < 0 {
		if p.header == nil {
			return -1, p.errf(line, 0, ErrOption, "%s %q: the file has no header line; give the column's index", what, opt)
		}
		return -1, p.errf(line, 0, ErrOption, "%s %q: no column of that name in the header", what, opt)
	}
	return found, nil
}

// chooseColumns decides which columns are x, y and R.
func (p *parser) chooseColumns() error {
	n := max(p.ncols, len(p.header))
	p.cols = make([]column, n)
	for i := range p.cols {
		if i < len(p.header) {
			p.cols[i] = classify(p.header[i].s)
			p.cols[i].col = p.header[i].col
		}
		p.cols[i].index = i
	}
	var err error
	if p.xi, err = p.findColumn(p.r.XColumn, "XColumn"); err != nil {
		return err
	}
	if p.yi, err = p.findColumn(p.r.YColumn, "YColumn"); err != nil {
		return err
	}
	if p.ri, err = p.findColumn(p.r.RColumn, "RColumn"); err != nil {
		return err
	}
	line, _ := p.pos(-1)
	if p.xi >= 0 && (p.xi == p.yi || p.xi == p.ri) || p.yi >= 0 && p.yi == p.ri {
		return p.errf(line, 0, ErrOption, "the same column is chosen twice (x %d, y %d, R %d)", p.xi+1, p.yi+1, p.ri+1)
	}
	free := func(i int) bool { return i != p.xi && i != p.yi && i != p.ri }
	pick := func(keep func(c column) bool) []int {
		var out []int
		for i, c := range p.cols {
			if free(i) && keep(c) {
				out = append(out, i)
			}
		}
		return out
	}
	list := func(idx []int) string {
		var b []string
		for _, i := range idx[:min(len(idx), 3)] {
			b = append(b, p.describe(i))
		}
		if len(idx) > 3 {
			b = append(b, fmt.Sprintf("%d more", len(idx)-3))
		}
		return strings.Join(b, " and ")
	}
	if p.xi < 0 {
		c := pick(func(c column) bool { return c.role == roleX })
		if len(c) > 1 {
			l, col := p.pos(c[1])
			return p.errf(l, col, ErrAmbiguous, "two possible x columns, %s; pass --columns X,Y (e.g. --columns %s)", list(c), p.columnsExample(c[0], -1))
		}
		if len(c) == 1 {
			p.xi = c[0]
		}
	}
	if p.yi < 0 {
		c := pick(func(c column) bool { return c.role == roleY })
		if len(c) > 1 && p.r.YKind != YAuto {
			var k []int
			for _, i := range c {
				if compatible(p.cols[i].yKind, p.r.YKind) {
					k = append(k, i)
				}
			}
			if len(k) >= 1 {
				c = k
			}
		}
		if len(c) > 1 {
			l, col := p.pos(c[1])
			return p.errf(l, col, ErrAmbiguous, "%d possible y columns, %s; pass --columns X,Y (e.g. --columns %s) or --y-kind (T, T%%, A, alpha)", len(c), list(c), p.columnsExample(p.xi, c[0]))
		}
		if len(c) == 1 {
			p.yi = c[0]
		}
	}
	if p.ri < 0 && strings.TrimSpace(p.r.RColumn) == "" {
		c := pick(func(c column) bool { return c.role == roleR })
		if len(c) > 1 {
			l, col := p.pos(c[1])
			return p.errf(l, col, ErrAmbiguous, "two possible reflectance columns, %s; pass --columns X,Y,R", list(c))
		}
		if len(c) == 1 {
			p.ri = c[0]
		}
	}
	// A bare "cm-1" is x if nothing else is, else alpha if nothing else is.
	if c := pick(func(c column) bool { return c.role == roleXOrAlpha }); len(c) == 1 {
		switch {
		case p.xi < 0:
			p.xi = c[0]
			p.cols[c[0]].role, p.cols[c[0]].xQuant, p.cols[c[0]].xUnit = roleX, "wavenumber", Wavenumber
		case p.yi < 0:
			p.yi = c[0]
			p.cols[c[0]].role, p.cols[c[0]].yKind = roleY, Alpha
		}
	}
	// Columns the header says nothing about.
	rest := pick(func(c column) bool { return c.role == roleNone && c.index < p.ncols })
	switch {
	case p.xi < 0 && p.yi < 0:
		if len(rest) == 2 && p.ncols == 2 {
			p.xi, p.yi = rest[0], rest[1]
		} else {
			return p.errf(line, 0, ErrAmbiguous, "cannot tell which columns are x and y (%d columns); pass --columns X,Y", p.ncols)
		}
	case p.xi < 0:
		if len(rest) != 1 {
			return p.errf(line, 0, ErrAmbiguous, "cannot tell which column is x; pass --columns X,Y (e.g. --columns 1,%d)", p.yi+1)
		}
		p.xi = rest[0]
	case p.yi < 0:
		if len(rest) != 1 {
			return p.errf(line, 0, ErrAmbiguous, "cannot tell which column is y; pass --columns X,Y (e.g. --columns %d,2)", p.xi+1)
		}
		p.yi = rest[0]
	}

	// Units and kinds that need no values.
	xc, yc := &p.cols[p.xi], &p.cols[p.yi]
	if p.header == nil {
		var missing []string
		if p.r.XUnit == XAuto {
			missing = append(missing, "--x-unit (nm, um, ev, cm-1)")
		}
		if p.r.YKind == YAuto {
			missing = append(missing, "--y-kind (T, T%, A, alpha)")
		}
		if len(missing) > 0 {
			return p.errf(p.dataStart+1, 0, ErrUnit, "no header line, so the units are unknown; pass %s", strings.Join(missing, " and "))
		}
		p.note("no header line; x unit and y kind from the options")
	}
	if p.r.XUnit == XAuto && xc.badUnit != "" {
		l, col := p.pos(p.xi)
		return p.errf(l, col, ErrUnit, "%s: unit %q is not supported; convert to nm, um, eV or cm-1, or pass --x-unit", p.describe(p.xi), xc.badUnit)
	}
	if p.r.YKind == YAuto {
		switch {
		case yc.role != roleY:
			l, col := p.pos(p.yi)
			return p.errf(l, col, ErrAmbiguous, "cannot tell what %s holds; pass --y-kind (T, T%%, A, alpha)", p.describe(p.yi))
		case yc.badUnit != "":
			l, col := p.pos(p.yi)
			return p.errf(l, col, ErrUnit, "%s: unit %q is not supported; alpha must be in cm-1", p.describe(p.yi), yc.badUnit)
		}
	}
	return nil
}

// columnsExample spells a --columns value from header names (or indices).
func (p *parser) columnsExample(x, y int) string {
	name := func(i, def int) string {
		if i < 0 {
			i = def
		}
		if i >= 0 && i < len(p.cols) && p.cols[i].name != "" && !strings.ContainsAny(p.cols[i].name, ", ") {
			return p.cols[i].name
		}
		return strconv.Itoa(i + 1)
	}
	yd := 1
	if x == 1 || x < 0 && y == 1 {
		yd = 0
	}
	if y < 0 {
		for _, c := range p.cols {
			if c.role == roleY {
				y = c.index
				break
			}
		}
	}
	return name(x, 0) + "," + name(y, yd)
}

// compatible reports whether a header kind fits a --y-kind value.
func compatible(header, opt YKind) bool {
	if header == Transmittance {
		return opt == Transmittance || opt == TransmittancePercent
	}
	return header == opt
}

// stat tracks the extreme values of a column with their positions.
type stat struct {
	max, min               float64
	maxLine, maxCol        int
	minLine, minCol        int
	below0, above1, points int
}

func (s *stat) add(v float64, line, col int) {
	if s.points == 0 || v > s.max {
		s.max, s.maxLine, s.maxCol = v, line, col
	}
	if s.points == 0 || v < s.min {
		s.min, s.minLine, s.minCol = v, line, col
	}
	s.points++
}

// data is what readData collects, in file order.
type data struct {
	x, y, r []float64
	lines   []int
	ys, rs  stat
}

// readData parses the rows from dataStart on.
func (p *parser) readData() (*data, error) {
	d := &data{}
	capHint := min(p.dataEnd-p.dataStart, p.maxPoints)
	d.x = make([]float64, 0, capHint)
	d.y = make([]float64, 0, capHint)
	d.lines = make([]int, 0, capHint)
	if p.ri >= 0 {
		d.r = make([]float64, 0, capHint)
	}
	rp := rowParser{p: p, d: d}
	if p.mode.sep == ' ' {
		var rec []string
		var cols []int
		for i := p.dataStart; i < p.dataEnd; i++ {
			line := p.lines[i]
			if isBlank(line) || p.isComment(line) {
				continue
			}
			fs := splitWS(p.buf[:0], line)
			p.buf = fs
			rec, cols = rec[:0], cols[:0]
			for _, f := range fs {
				rec = append(rec, f.s)
				cols = append(cols, f.col)
			}
			if err := rp.row(i+1, rec, cols, len(strings.TrimRight(line, "\r\x1a "))+1); err != nil {
				return nil, err
			}
		}
		return rp.end()
	}
	off := 0
	for i := 0; i < p.dataStart; i++ {
		off += len(p.lines[i]) + 1
	}
	end := off
	for i := p.dataStart; i < p.dataEnd; i++ {
		end += len(p.lines[i]) + 1
	}
	end = min(end, len(p.text))
	sep := string(p.mode.sep)
	for i := p.dataStart; i < p.dataEnd; i++ {
		if strings.Count(p.lines[i], sep) >= maxCells {
			return nil, p.errf(i+1, 0, ErrTooLarge, "more than %d cells on one line", maxCells)
		}
	}
	cr := csv.NewReader(strings.NewReader(p.text[off:end]))
	cr.Comma = p.mode.sep
	cr.Comment = p.comment
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	var cols []int
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, p.errf(pe.Line+p.dataStart, pe.Column, ErrSyntax, "%v", pe.Err)
			}
			return nil, fmt.Errorf("read %s: %w", p.displayName(), err)
		}
		cols = cols[:0]
		line := 0
		for i := range rec {
			l, c := cr.FieldPos(i)
			if i == 0 {
				line = l
			}
			cols = append(cols, c)
		}
		line += p.dataStart
		end := 0
		if line-1 < len(p.lines) {
			end = len(strings.TrimRight(p.lines[line-1], "\r\x1a ")) + 1
		}
		if err := rp.row(line, rec, cols, end); err != nil {
			return nil, err
		}
	}
	return rp.end()
}

// rowParser turns rows into points.
type rowParser struct {
	p          *parser
	d          *data
	dir        int // +1 ascending x, −1 descending, 0 not known yet
	pending    *ParseError
	seenFinite bool
	lastLine   int
}

// row handles one record: cells rec at byte columns cols of line; end is
// the column just past the line's last character.
func (rp *rowParser) row(line int, rec []string, cols []int, end int) error {
	p, d := rp.p, rp.d
	allEmpty := true
	for _, s := range rec {
		if strings.Trim(s, " \t\r\x1a") != "" {
			allEmpty = false
			break
		}
	}
	if allEmpty {
		return nil
	}
	if p.isComment(rec[0]) {
		return nil
	}
	short := func(i int, what string) error {
		cells := "cells"
		if len(rec) == 1 {
			cells = "cell"
		}
		return rp.fail(p.errf(line, end, ErrSyntax, "the row has %d %s; no %s (%s)", len(rec), cells, what, p.describe(i)))
	}
	if p.xi >= len(rec) {
		return short(p.xi, "x")
	}
	x, err := rp.cell(line, rec, cols, p.xi, "x")
	if err != nil {
		if err.Err == errMissing {
			err.Err = ErrSyntax
		}
		return rp.fail(err)
	}
	if x <= 0 {
		return rp.fail(p.errf(line, cols[p.xi], ErrRange, "x = %s is not positive (%s must be > 0)", fmtG(x), p.describe(p.xi)))
	}
	if p.yi >= len(rec) {
		return short(p.yi, "y")
	}
	if p.ri >= len(rec) {
		return short(p.ri, "R")
	}
	y, yerr := rp.cell(line, rec, cols, p.yi, "y")
	var r float64
	var rerr *ParseError
	if p.ri >= 0 {
		r, rerr = rp.cell(line, rec, cols, p.ri, "R")
	}
	if yerr != nil {
		if yerr.Err == errMissing {
			yerr.Err = ErrSyntax
			if !rp.seenFinite {
				// Keep going: if no y cell is finite the file has no data.
				if rp.pending == nil {
					rp.pending = yerr
				}
				return nil
			}
		}
		return rp.fail(yerr)
	}
	if rerr != nil {
		if rerr.Err == errMissing {
			rerr.Err = ErrSyntax
		}
		return rp.fail(rerr)
	}
	if rp.pending != nil {
		return rp.pending
	}
	rp.seenFinite = true
	if n := len(d.x); n > 0 {
		prev := d.x[n-1]
		if x == prev {
			return p.errf(line, cols[p.xi], ErrNotMonotonic, "x = %s repeats the value at line %d", rec[p.xi], d.lines[n-1])
		}
		dir := 1
		if x < prev {
			dir = -1
		}
		if rp.dir == 0 {
			rp.dir = dir
		} else if dir != rp.dir {
			order := "ascending"
			if rp.dir < 0 {
				order = "descending"
			}
			return p.errf(line, cols[p.xi], ErrNotMonotonic, "x = %s breaks the %s order of x (x = %s at line %d); x must be strictly ascending or descending", fmtG(x), order, fmtG(prev), d.lines[n-1])
		}
	}
	if len(d.x) >= p.maxPoints {
		return p.errf(line, 0, ErrTooLarge, "more than %d data points (MaxPoints)", p.maxPoints)
	}
	d.x = append(d.x, x)
	d.y = append(d.y, y)
	d.lines = append(d.lines, line)
	d.ys.add(y, line, cols[p.yi])
	if p.ri >= 0 {
		d.r = append(d.r, r)
		d.rs.add(r, line, cols[p.ri])
	}
	return nil
}

// fail returns err, or the pending NaN error if that came first.
func (rp *rowParser) fail(err *ParseError) error {
	if rp.pending != nil {
		return rp.pending
	}
	return err
}

func (rp *rowParser) end() (*data, error) {
	p := rp.p
	if rp.pending != nil {
		return nil, p.errf(rp.pending.Line, rp.pending.Column, ErrNoData, "no finite y values: every y cell (%s) is NaN or empty", p.describe(p.yi))
	}
	if len(rp.d.x) == 0 {
		return nil, p.errf(p.dataStart+1, 0, ErrNoData, "no data rows")
	}
	return rp.d, nil
}

// errMissing marks an empty or NaN cell until the caller decides.
var errMissing = errors.New("specio: missing value")

// cell parses rec[i].
func (rp *rowParser) cell(line int, rec []string, cols []int, i int, what string) (float64, *ParseError) {
	p := rp.p
	s := strings.TrimSpace(rec[i])
	dc := p.mode.decimalComma
	switch scanNumber(s, dc) {
	case numOK:
		v, err := parseNumber(s, dc)
		if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
			return 0, p.errf(line, cols[i], ErrRange, "%q is out of range", s)
		}
		return v, nil
	case numNaN:
		return 0, &ParseError{File: p.name, Line: line, Column: cols[i], Err: errMissing,
			Detail: fmt.Sprintf("%q in the %s column is not a finite number", s, what)}
	}
	if s == "" {
		return 0, &ParseError{File: p.name, Line: line, Column: cols[i], Err: errMissing,
			Detail: fmt.Sprintf("empty %s cell (%s)", what, p.describe(i))}
	}
	hint := ""
	switch {
	case !dc && strings.IndexByte(s, ',') >= 0 && scanNumber(s, true) == numOK:
		hint = " (is the decimal separator a comma?)"
	case dc && strings.IndexByte(s, '.') >= 0 && scanNumber(s, false) == numOK:
		hint = " (the file uses a decimal comma elsewhere)"
	default:
		if c, ok := otherSeparator(s, p.mode.sep); ok {
			hint = fmt.Sprintf(" (this line is separated by %q, the file by %q: two exports pasted together?)", c, p.mode.sep)
		}
	}
	return 0, p.errf(line, cols[i], ErrSyntax, "%q is not a number%s", s, hint)
}

// otherSeparator reports whether s is a row cut by another separator than
// sep: two or more numbers separated by ';', ',' or a tab.
func otherSeparator(s string, sep rune) (rune, bool) {
	for _, c := range []rune{';', '\t', ','} {
		if c == sep || !strings.ContainsRune(s, c) {
			continue
		}
		parts := strings.Split(s, string(c))
		if len(parts) < 2 {
			continue
		}
		ok := true
		for _, q := range parts {
			q = strings.TrimSpace(q)
			if scanNumber(q, false) != numOK && scanNumber(q, true) != numOK {
				ok = false
				break
			}
		}
		if ok {
			return c, true
		}
	}
	return 0, false
}

func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
