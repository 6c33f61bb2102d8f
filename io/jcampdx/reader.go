package jcampdx

import (
	"bytes"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode/utf8"

	"bandedge/io/specio"
)

// Sentinel errors of this package. Each wraps specio.ErrSyntax, so that
// errors.Is(err, specio.ErrSyntax) holds for them too.
var (
	// ErrCheck: a value the file gives twice disagrees with itself: a Y
	// check value, a line's abscissa, NPOINTS, DELTAX or FIRSTY.
	ErrCheck = fmt.Errorf("jcampdx: check value mismatch: %w", specio.ErrSyntax)
	// ErrUnsupported: the file uses a part of JCAMP-DX this reader does not
	// read (peak tables, n-tuples, several blocks, other variable lists).
	ErrUnsupported = fmt.Errorf("jcampdx: unsupported JCAMP-DX feature: %w", specio.ErrSyntax)
)

// Default limits, used when the Reader's limit fields are zero. They are
// specio's, so that both readers accept the same sizes.
const (
	DefaultMaxBytes  = specio.DefaultMaxBytes
	DefaultMaxPoints = specio.DefaultMaxPoints
	// DefaultMaxLines is twice specio's, so that DefaultMaxPoints pairs of
	// ##XYPOINTS= one per line fit with their header.
	DefaultMaxLines = 2 * specio.DefaultMaxLines
)

// A Reader reads one spectrum from a JCAMP-DX file. Set the exported fields
// after NewReader and before Read; every zero value is a useful default.
// Invalid option values come back from Read as an error wrapping
// specio.ErrOption.
type Reader struct {
	// XUnit overrides ##XUNITS=. Zero (specio.XAuto) means use the file's.
	XUnit specio.XUnit

	// YKind overrides ##YUNITS=. Zero (specio.YAuto) means use the file's.
	YKind specio.YKind

	// MaxBytes is the largest input accepted, in bytes. Zero means
	// DefaultMaxBytes.
	MaxBytes int64

	// MaxPoints is the largest number of points accepted (also the largest
	// ##NPOINTS=). Zero means DefaultMaxPoints.
	MaxPoints int

	// MaxLines is the largest number of lines accepted. Zero means
	// DefaultMaxLines.
	MaxLines int

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
// *specio.ParseError values; invalid options give an error wrapping
// specio.ErrOption; errors of the underlying reader are returned wrapped.
// Read consumes the input: later calls return io.EOF.
func (r *Reader) Read() (*specio.Spectrum, error) {
	if r.done {
		return nil, io.EOF
	}
	r.done = true
	if r.XUnit < specio.XAuto || r.XUnit > specio.Wavenumber {
		return nil, fmt.Errorf("%w: XUnit %d out of range", specio.ErrOption, int(r.XUnit))
	}
	if r.YKind < specio.YAuto || r.YKind > specio.Alpha {
		return nil, fmt.Errorf("%w: YKind %d out of range", specio.ErrOption, int(r.YKind))
	}
	if r.MaxBytes < 0 || r.MaxPoints < 0 || r.MaxLines < 0 {
		return nil, fmt.Errorf("%w: negative limit (MaxBytes %d, MaxPoints %d, MaxLines %d)", specio.ErrOption, r.MaxBytes, r.MaxPoints, r.MaxLines)
	}
	p := &parser{r: r, name: r.name, maxBytes: r.MaxBytes, maxPoints: r.MaxPoints, maxLines: r.MaxLines}
	if p.maxBytes == 0 {
		p.maxBytes = DefaultMaxBytes
	}
	if p.maxPoints == 0 {
		p.maxPoints = DefaultMaxPoints
	}
	if p.maxLines == 0 {
		p.maxLines = DefaultMaxLines
	}
	raw, err := io.ReadAll(io.LimitReader(r.r, p.maxBytes+1))
	if err != nil {
		return nil, fmt.Errorf("read %s: %w", p.displayName(), err)
	}
	if int64(len(raw)) > p.maxBytes {
		return nil, p.errf(0, 0, specio.ErrTooLarge, "input larger than %d bytes (MaxBytes)", p.maxBytes)
	}
	return p.parse(raw)
}

var bom = []byte{0xEF, 0xBB, 0xBF}

// Sniff reports whether b, the start of a file, looks like JCAMP-DX: after
// an optional UTF-8 byte-order mark and blank lines, the first record is
// ##TITLE= (label compared as Read compares labels). A batch can use it to
// choose the reader by content rather than by extension.
func Sniff(b []byte) bool {
	b = bytes.TrimPrefix(b, bom)
	b = bytes.TrimLeft(b, " \t\r\n")
	if !bytes.HasPrefix(b, []byte("##")) {
		return false
	}
	b = b[2:]
	eq := bytes.IndexByte(b[:min(len(b), 40)], '=')
	if eq < 0 {
		return false
	}
	return normLabel(string(b[:eq])) == "TITLE"
}

// normLabel returns the comparison form of a label: upper case, without
// blanks, '-', '/' and '_'.
func normLabel(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == ' ' || c == '\t' || c == '-' || c == '/' || c == '_':
		case 'a' <= c && c <= 'z':
			b.WriteByte(c - 'a' + 'A')
		default:
			b.WriteByte(c)
		}
	}
	return b.String()
}

// ldr is one labelled data record.
type ldr struct {
	label string // as written between "##" and "=", trimmed
	norm  string // normLabel(label)
	value string // after "=", comments removed, trimmed; continuation lines joined by a blank
	line  int    // 1-based line of "##"
	col   int    // 1-based column of the value (or of the end of the line if empty)

	more []string // continuation lines, joined into value by keep
}

// table is a data-table record and the lines that follow it.
type table struct {
	ldr
	first, end int // 0-based line indices of the table lines, [first, end)
}

// Records this package interprets; each may occur once.
var coreLabels = map[string]bool{
	"TITLE": true, "JCAMPDX": true, "DATATYPE": true, "XUNITS": true, "YUNITS": true,
	"XFACTOR": true, "YFACTOR": true, "FIRSTX": true, "LASTX": true, "NPOINTS": true,
	"DELTAX": true, "FIRSTY": true,
}

// Records followed by table lines rather than continuation lines.
var tableLabels = map[string]bool{
	"XYDATA": true, "XYPOINTS": true, "PEAKTABLE": true, "PEAKASSIGNMENTS": true,
	"DATATABLE": true, "RADATA": true,
}

// parser holds the state of one Read.
type parser struct {
	r         *Reader
	name      string
	maxBytes  int64
	maxPoints int
	maxLines  int

	lines []string // without line terminators and $$ comments
	notes []string
	meta  map[string]string
	metas map[string][]string // values of each Meta key, joined by finishMeta
	keys  []string            // Meta keys in order of first appearance
	core  map[string]*ldr
	data  *table // the XYDATA or XYPOINTS table
	endLn int    // 1-based line of ##END=
}

func (p *parser) displayName() string {
	if p.name == "" {
		return "<input>"
	}
	return p.name
}

func (p *parser) errf(line, col int, sentinel error, format string, args ...any) *specio.ParseError {
	return &specio.ParseError{File: p.name, Line: line, Column: col, Err: sentinel, Detail: fmt.Sprintf(format, args...)}
}

func (p *parser) note(format string, args ...any) {
	p.notes = append(p.notes, fmt.Sprintf(format, args...))
}

func (p *parser) parse(raw []byte) (*specio.Spectrum, error) {
	text, err := p.decode(raw)
	if err != nil {
		return nil, err
	}
	if strings.IndexByte(text, '\n') < 0 && strings.IndexByte(text, '\r') >= 0 {
		text = strings.ReplaceAll(text, "\r", "\n")
	}
	if n := strings.Count(text, "\n") + 1; n > p.maxLines && !(n == p.maxLines+1 && strings.HasSuffix(text, "\n")) {
		return nil, p.errf(p.maxLines+1, 0, specio.ErrTooLarge, "more than %d lines (MaxLines)", p.maxLines)
	}
	p.lines = strings.Split(text, "\n")
	for i, l := range p.lines {
		l = strings.TrimSuffix(l, "\r")
		if j := strings.Index(l, "$$"); j >= 0 {
			l = l[:j]
		}
		p.lines[i] = l
	}
	p.meta = map[string]string{}
	p.metas = map[string][]string{}
	p.core = map[string]*ldr{}
	if err := p.records(); err != nil {
		return nil, err
	}
	p.finishMeta()
	return p.spectrum()
}

// decode checks that raw is text: it strips a UTF-8 byte-order mark and
// rejects UTF-16, NUL bytes and invalid UTF-8.
func (p *parser) decode(raw []byte) (string, error) {
	if bytes.HasPrefix(raw, bom) {
		raw = raw[len(bom):]
		p.note("UTF-8 byte-order mark skipped")
	}
	if bytes.HasPrefix(raw, []byte{0xFF, 0xFE}) || bytes.HasPrefix(raw, []byte{0xFE, 0xFF}) {
		return "", p.errf(1, 1, specio.ErrEncoding, "UTF-16 text: JCAMP-DX files are ASCII; export as ASCII or UTF-8")
	}
	text := string(raw)
	bad := strings.IndexByte(text, 0)
	what := "NUL byte: this is not a JCAMP-DX text file"
	if !utf8.ValidString(text) {
		for i := 0; i < len(text); {
			r, n := utf8.DecodeRuneInString(text[i:])
			if r == utf8.RuneError && n <= 1 {
				if bad < 0 || i < bad {
					bad, what = i, "invalid UTF-8: JCAMP-DX files are ASCII; export as ASCII or UTF-8"
				}
				break
			}
			i += n
		}
	}
	if bad >= 0 {
		line, col := lineCol(text, bad)
		return "", p.errf(line, col, specio.ErrEncoding, "%s", what)
	}
	return text, nil
}

// lineCol returns the 1-based line and byte column of offset off in text.
func lineCol(text string, off int) (line, col int) {
	line = 1 + strings.Count(text[:off], "\n")
	col = off - (strings.LastIndexByte(text[:off], '\n') + 1) + 1
	return line, col
}

func isBlank(s string) bool {
	return strings.Trim(s, " \t\x1a") == ""
}

// splitLDR splits an LDR line "##LABEL=value". ok is false if the line is
// not an LDR line.
func splitLDR(line string, ln int) (l ldr, ok bool, bad bool) {
	t := strings.TrimLeft(line, " \t")
	if !strings.HasPrefix(t, "##") {
		return ldr{}, false, false
	}
	off := len(line) - len(t)
	eq := strings.IndexByte(t, '=')
	if eq < 0 {
		return ldr{line: ln, col: off + 1}, true, true
	}
	label := strings.TrimSpace(t[2:eq])
	v := t[eq+1:]
	lead := len(v) - len(strings.TrimLeft(v, " \t"))
	return ldr{label: label, norm: normLabel(label), value: strings.TrimSpace(v), line: ln,
		col: off + eq + 2 + lead}, true, false
}

// records splits the lines into records, finds the data table and checks
// the block structure.
func (p *parser) records() error {
	var cur *ldr    // record taking continuation lines
	var tab *table  // table taking table lines
	var peak *table // a peak table, if any
	title := false
	for i := 0; i < len(p.lines); i++ {
		line, ln := p.lines[i], i+1
		l, isLDR, bad := splitLDR(line, ln)
		if !isLDR {
			switch {
			case tab != nil:
				tab.end = i + 1
			case isBlank(line):
			case !title:
				return p.errf(ln, 1, specio.ErrSyntax, "not JCAMP-DX: the file must begin with ##TITLE=")
			case cur != nil:
				cur.more = append(cur.more, strings.TrimSpace(line))
			}
			continue
		}
		if bad {
			return p.errf(ln, l.col, specio.ErrSyntax, "a record starting with ## needs '=' after its label")
		}
		if cur != nil {
			p.keep(cur)
		}
		cur, tab = nil, nil
		if !title {
			if l.norm != "TITLE" {
				return p.errf(ln, 1, specio.ErrSyntax, "not JCAMP-DX: the first record must be ##TITLE=, not ##%s=", l.label)
			}
			title = true
		}
		switch {
		case l.norm == "END":
			p.endLn = ln
			return p.afterEnd(i+1, peak)
		case l.norm == "NTUPLES":
			return p.errf(ln, 1, ErrUnsupported, "##NTUPLES= is not supported: export the spectrum as ##XYDATA= or ##XYPOINTS=")
		case l.norm == "BLOCKS":
			return p.errf(ln, 1, ErrUnsupported, "##BLOCKS=: linked multi-block files are not supported; export one spectrum per file")
		case l.norm == "TITLE" && p.core["TITLE"] != nil:
			return p.errf(ln, 1, ErrUnsupported, "second ##TITLE= before ##END= (line %d opened the block): nested blocks are not supported", p.core["TITLE"].line)
		case tableLabels[l.norm]:
			t := &table{ldr: l, first: i + 1, end: i + 1}
			switch l.norm {
			case "XYDATA", "XYPOINTS":
				if p.data != nil {
					return p.errf(ln, 1, ErrUnsupported, "second data table ##%s= (the first is ##%s= at line %d): one spectrum per file", l.label, p.data.label, p.data.line)
				}
				p.data = t
			case "PEAKTABLE", "PEAKASSIGNMENTS":
				if peak == nil {
					peak = t
				}
			default:
				return p.errf(ln, 1, ErrUnsupported, "##%s= is not supported: export the spectrum as ##XYDATA= or ##XYPOINTS=", l.label)
			}
			tab = t
		default:
			if coreLabels[l.norm] {
				if prev := p.core[l.norm]; prev != nil {
					return p.errf(ln, 1, specio.ErrSyntax, "##%s= given twice (lines %d and %d)", l.label, prev.line, ln)
				}
			}
			c := l
			cur = &c
		}
	}
	if !title {
		if isBlank(strings.Join(p.lines, "")) {
			return p.errf(0, 0, specio.ErrNoData, "empty input")
		}
		return p.errf(0, 0, specio.ErrSyntax, "not JCAMP-DX: no ##TITLE= record")
	}
	last := len(p.lines)
	for last > 1 && isBlank(p.lines[last-1]) {
		last--
	}
	return p.errf(last, 0, specio.ErrSyntax, "no ##END= record: the file is truncated or not a complete JCAMP-DX block")
}

// keep files a finished non-table record into core and Meta.
func (p *parser) keep(l *ldr) {
	if len(l.more) > 0 {
		l.value = strings.TrimSpace(l.value + " " + strings.Join(l.more, " "))
		l.more = nil
	}
	if coreLabels[l.norm] {
		p.core[l.norm] = l
	}
	key := strings.ToUpper(strings.Join(strings.Fields(l.label), " "))
	if _, ok := p.metas[key]; !ok {
		p.keys = append(p.keys, key)
	}
	p.metas[key] = append(p.metas[key], l.value)
}

// finishMeta joins the values of each Meta key with "; ", as specio does.
func (p *parser) finishMeta() {
	for _, k := range p.keys {
		p.meta[k] = strings.Join(p.metas[k], "; ")
	}
}

// afterEnd checks what follows ##END= (from line index i on).
func (p *parser) afterEnd(i int, peak *table) error {
	extra := 0
	for ; i < len(p.lines); i++ {
		l, isLDR, _ := splitLDR(p.lines[i], i+1)
		if isLDR && l.norm == "TITLE" {
			return p.errf(i+1, 1, ErrUnsupported, "a second block starts after ##END= at line %d: one spectrum per file", p.endLn)
		}
		if !isBlank(p.lines[i]) {
			extra++
		}
	}
	if extra > 0 {
		p.note("%d non-blank lines after ##END= (line %d) ignored", extra, p.endLn)
	}
	if p.data == nil {
		if peak != nil {
			return p.errf(peak.line, 1, ErrUnsupported, "##%s= is out of scope: bandedge reads continuous spectra; export the spectrum as ##XYDATA= or ##XYPOINTS=", peak.label)
		}
		return p.errf(p.endLn, 0, specio.ErrNoData, "no data table: the block has neither ##XYDATA= nor ##XYPOINTS=")
	}
	if peak != nil {
		p.note("##%s= at line %d skipped (peak tables are not read)", peak.label, peak.line)
	}
	return nil
}

// number parses the value of a numeric record.
func (p *parser) number(l *ldr) (v, res float64, err error) {
	v, res, n, ok := scanAFFN(l.value, 0, false)
	if !ok || n != len(l.value) {
		return 0, 0, p.errf(l.line, l.col, specio.ErrSyntax, "##%s= %q is not a number", l.label, l.value)
	}
	if !finite(v) {
		return 0, 0, p.errf(l.line, l.col, specio.ErrRange, "##%s= %s is too large", l.label, l.value)
	}
	return v, res, nil
}

// optNumber returns the value of core record key, or def (with set false)
// if the record is absent.
func (p *parser) optNumber(key string, def float64) (v, res float64, set bool, err error) {
	l := p.core[key]
	if l == nil {
		return def, 0, false, nil
	}
	v, res, err = p.number(l)
	return v, res, err == nil, err
}

// factor returns ##XFACTOR= or ##YFACTOR=, 1 if absent.
func (p *parser) factor(key string) (float64, error) {
	v, _, set, err := p.optNumber(key, 1)
	if err != nil {
		return 0, err
	}
	if !set {
		p.note("no ##%s=: 1 assumed", key)
		return 1, nil
	}
	if v == 0 {
		l := p.core[key]
		return 0, p.errf(l.line, l.col, specio.ErrRange, "##%s= must not be zero", l.label)
	}
	return v, nil
}

// npoints returns ##NPOINTS= (0, false if absent).
func (p *parser) npoints() (int, bool, error) {
	l := p.core["NPOINTS"]
	if l == nil {
		return 0, false, nil
	}
	n, err := strconv.Atoi(l.value)
	if err != nil || n < 1 {
		if err != nil && len(l.value) > 0 && len(strings.Trim(l.value, "0123456789")) == 0 {
			return 0, false, p.errf(l.line, l.col, specio.ErrTooLarge, "##NPOINTS= %s is more than %d (MaxPoints)", l.value, p.maxPoints)
		}
		return 0, false, p.errf(l.line, l.col, specio.ErrSyntax, "##NPOINTS= %q must be a positive whole number", l.value)
	}
	if n > p.maxPoints {
		return 0, false, p.errf(l.line, l.col, specio.ErrTooLarge, "##NPOINTS= %d is more than %d (MaxPoints)", n, p.maxPoints)
	}
	return n, true, nil
}

func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
