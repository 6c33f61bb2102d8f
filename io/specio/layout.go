package specio

import (
	"strconv"
	"strings"
	"unicode/utf8"
)

// mode is a way of cutting lines into numbers: a separator (' ' meaning
// any run of spaces and tabs) and the decimal separator.
type mode struct {
	sep          rune
	decimalComma bool
}

// modes in order of preference. A decimal comma is only possible when the
// separator is not a comma.
var modes = []mode{
	{'\t', false}, {'\t', true},
	{';', false}, {';', true},
	{',', false},
	{' ', false}, {' ', true},
}

func (m mode) String() string {
	var s string
	switch m.sep {
	case '\t':
		s = "tab-separated"
	case ';':
		s = "semicolon-separated"
	case ',':
		s = "comma-separated"
	default:
		s = "whitespace-separated"
	}
	if m.decimalComma {
		s += ", decimal comma"
	}
	return s
}

// maxCells is the most cells a line may have. Layout detection and header
// reading look at no more than this many cells of a line, and a data line
// with more is an ErrTooLarge, so that no line can blow up memory.
const maxCells = 4096

// field is one cell of a line.
type field struct {
	s   string // trimmed text, surrounding quotes removed
	col int    // 1-based byte column of the cell in its line
}

// splitLine cuts line into fields for separator sep, for layout detection
// and for whitespace-separated data (encoding/csv reads the other data). A
// cell that starts with '"' runs to its closing quote ("" is a quote inside
// it), so `500,"0,93"` has two cells; the quotes are removed from the text
// but not unescaped. For ' ' a cell starting with '"' runs to the next '"'.
func splitLine(dst []field, line string, sep rune) []field {
	dst = dst[:0]
	if sep == ' ' {
		return splitWS(dst, line)
	}
	w := utf8.RuneLen(sep)
	start := 0
	for len(dst) < maxCells {
		// Skip a quoted part so that separators inside it do not count.
		from := start
		for from < len(line) && (line[from] == ' ' || line[from] == '\t') {
			from++
		}
		if from < len(line) && line[from] == '"' {
			j := from + 1
			for j < len(line) {
				if line[j] == '"' {
					if j+1 < len(line) && line[j+1] == '"' {
						j += 2
						continue
					}
					break
				}
				j++
			}
			from = min(j+1, len(line))
		}
		i := strings.IndexRune(line[from:], sep)
		end := len(line)
		if i >= 0 {
			end = from + i
		}
		dst = append(dst, trimField(line[start:end], start))
		if i < 0 {
			return dst
		}
		start = end + w
	}
	return dst
}

// trimField trims blanks and one pair of surrounding quotes from the cell s
// found at byte offset off of its line.
func trimField(s string, off int) field {
	t := strings.TrimLeft(s, " \t")
	off += len(s) - len(t)
	t = strings.TrimRight(t, " \t\r\x1a")
	if len(t) >= 2 && t[0] == '"' && t[len(t)-1] == '"' {
		t = t[1 : len(t)-1]
	}
	return field{s: t, col: off + 1}
}

func isBlankByte(c byte) bool { return c == ' ' || c == '\t' || c == '\r' || c == '\x1a' }

// splitWS cuts line at runs of spaces and tabs.
func splitWS(dst []field, line string) []field {
	i := 0
	for len(dst) < maxCells {
		for i < len(line) && isBlankByte(line[i]) {
			i++
		}
		if i >= len(line) {
			return dst
		}
		start := i
		if line[i] == '"' {
			j := strings.IndexByte(line[i+1:], '"')
			if j >= 0 {
				dst = append(dst, field{s: line[i+1 : i+1+j], col: start + 1})
				i += j + 2
				continue
			}
		}
		for i < len(line) && !isBlankByte(line[i]) {
			i++
		}
		dst = append(dst, field{s: line[start:i], col: start + 1})
	}
	return dst
}

// splitHeaderWS cuts a whitespace-separated header line so that it has want
// cells if it can: by tabs, then by runs of two or more blanks, then by
// single blanks with unit tokens ("(nm)", "[eV]", "nm", "%") joined to the
// word before them.
func splitHeaderWS(line string, want int) []field {
	line = strings.TrimRight(line, " \t\r\x1a")
	var tries [][]field
	if strings.IndexByte(line, '\t') >= 0 {
		tries = append(tries, nonEmpty(splitLine(nil, line, '\t')))
	}
	tries = append(tries, splitRuns(line))
	single := splitWS(nil, line)
	tries = append(tries, joinUnits(line, single), single)
	for _, t := range tries {
		if len(t) == want {
			return t
		}
	}
	return tries[len(tries)-2] // joined: the best guess
}

func nonEmpty(fs []field) []field {
	out := fs[:0]
	for _, f := range fs {
		if f.s != "" {
			out = append(out, f)
		}
	}
	return out
}

// splitRuns cuts line at tabs and at runs of two or more spaces.
func splitRuns(line string) []field {
	var out []field
	i := 0
	for i < len(line) && len(out) < maxCells {
		for i < len(line) && isBlankByte(line[i]) {
			i++
		}
		if i >= len(line) {
			break
		}
		start := i
		for i < len(line) {
			if line[i] == '\t' || line[i] == ' ' && i+1 < len(line) && isBlankByte(line[i+1]) {
				break
			}
			i++
		}
		out = append(out, trimField(line[start:i], start))
	}
	return out
}

// joinUnits joins tokens that are only a unit to the token before them.
func joinUnits(line string, fs []field) []field {
	var out []field
	for _, f := range fs {
		if len(out) > 0 && isUnitToken(f.s) {
			last := &out[len(out)-1]
			end := f.col - 1 + len(f.s)
			if end <= len(line) && last.col-1 <= end {
				last.s = strings.TrimSpace(line[last.col-1 : end])
				if strings.HasPrefix(last.s, `"`) || strings.HasSuffix(last.s, `"`) {
					last.s = strings.Trim(last.s, `"`)
				}
			}
			continue
		}
		out = append(out, f)
	}
	return out
}

func isUnitToken(s string) bool {
	if s == "" {
		return false
	}
	switch s[0] {
	case '(', '[', '{', '/':
		return true
	}
	switch strings.ToLower(s) {
	case "nm", "um", "µm", "ev", "cm-1", "cm^-1", "1/cm", "%", "a.u.", "au", "fraction":
		return true
	}
	return false
}

// Cell classes for scanNumber.
const (
	numNo  = iota // not a number
	numOK         // a finite decimal number
	numNaN        // NaN or Inf written out
)

// scanNumber classifies the cell s: a decimal number (optional sign,
// digits with one decimal separator, optional exponent), a NaN/Inf literal,
// or neither. With decimalComma the decimal separator is ',' and '.' is not
// accepted.
func scanNumber(s string, decimalComma bool) int {
	if s == "" {
		return numNo
	}
	i := 0
	if s[0] == '+' || s[0] == '-' {
		i++
	}
	switch r := s[i:]; {
	case strings.EqualFold(r, "nan"), strings.EqualFold(r, "inf"), strings.EqualFold(r, "infinity"):
		return numNaN
	}
	dec := byte('.')
	if decimalComma {
		dec = ','
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == dec {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return numNo
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		exp := 0
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			exp++
		}
		if exp == 0 {
			return numNo
		}
	}
	if i != len(s) {
		return numNo
	}
	return numOK
}

// parseNumber converts a cell that scanNumber accepted as numOK.
func parseNumber(s string, decimalComma bool) (float64, error) {
	if decimalComma && strings.IndexByte(s, ',') >= 0 {
		var buf [64]byte
		if len(s) <= len(buf) {
			b := buf[:len(s)]
			copy(b, s)
			for i, c := range b {
				if c == ',' {
					b[i] = '.'
				}
			}
			return strconv.ParseFloat(string(b), 64)
		}
		s = strings.ReplaceAll(s, ",", ".")
	}
	return strconv.ParseFloat(s, 64)
}

// trimTrailingEmpty drops empty cells at the end of fs (spreadsheets write
// "400,0.93,,").
func trimTrailingEmpty(fs []field) []field {
	for len(fs) > 0 && fs[len(fs)-1].s == "" {
		fs = fs[:len(fs)-1]
	}
	return fs
}

// numericRow reports whether fs is a data row in decimal mode dc: the first
// cell is a number and at least two cells are numbers (NaN counts).
func numericRow(fs []field, dc bool) bool {
	if len(fs) < 2 || scanNumber(fs[0].s, dc) != numOK {
		return false
	}
	n := 0
	for _, f := range fs {
		if scanNumber(f.s, dc) != numNo {
			n++
		}
	}
	return n >= 2
}
