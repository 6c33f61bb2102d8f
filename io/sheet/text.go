package sheet

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"bandedge/io/specio"
)

// Sentinel errors of this package. Each wraps specio.ErrSyntax, so that
// errors.Is(err, specio.ErrSyntax) holds for them too; the other data
// errors wrap specio's sentinels directly (ErrSyntax, ErrRange, ErrUnit,
// ErrEncoding, ErrNoData, ErrTooLarge).
var (
	// ErrDuplicate: a scan file, column, limit or statement is given twice.
	ErrDuplicate = fmt.Errorf("sheet: duplicate entry: %w", specio.ErrSyntax)
	// ErrUnknownQuantity: a spec names a quantity that is not a result field.
	ErrUnknownQuantity = fmt.Errorf("sheet: unknown quantity: %w", specio.ErrSyntax)
)

// Size limits. A sample sheet or spec file larger than these, or a sheet
// with more columns, is an ErrTooLarge (they are typed by hand or exported from a spreadsheet; the
// limits only stop absurd input).
const (
	MaxSheetBytes   = 16 << 20 // 16 MiB
	MaxSpecBytes    = 1 << 20  // 1 MiB
	MaxSheetColumns = 1024     // columns of a sample sheet (bounds the Extra cells per row)
)

func perr(file string, line, col int, sentinel error, format string, args ...any) *specio.ParseError {
	return &specio.ParseError{File: file, Line: line, Column: col, Err: sentinel, Detail: fmt.Sprintf(format, args...)}
}

func displayName(name string) string {
	if name == "" {
		return "<input>"
	}
	return name
}

// readText reads at most limit bytes of r and checks that they are UTF-8
// text (a byte-order mark is dropped; NUL bytes, UTF-16 and invalid UTF-8
// are ErrEncoding with their position).
func readText(r io.Reader, name string, limit int64) (string, error) {
	raw, err := io.ReadAll(io.LimitReader(r, limit+1))
	if err != nil {
		return "", fmt.Errorf("read %s: %w", displayName(name), err)
	}
	if int64(len(raw)) > limit {
		return "", perr(name, 0, 0, specio.ErrTooLarge, "input larger than %d bytes", limit)
	}
	raw = bytes.TrimPrefix(raw, []byte{0xEF, 0xBB, 0xBF})
	if bytes.HasPrefix(raw, []byte{0xFF, 0xFE}) || bytes.HasPrefix(raw, []byte{0xFE, 0xFF}) {
		return "", perr(name, 1, 1, specio.ErrEncoding, "UTF-16 text: save the file as UTF-8")
	}
	text := string(raw)
	bad, what := strings.IndexByte(text, 0), "NUL byte: this is not a text file"
	if !utf8.ValidString(text) {
		for i := 0; i < len(text); {
			r, n := utf8.DecodeRuneInString(text[i:])
			if r == utf8.RuneError && n <= 1 {
				if bad < 0 || i < bad {
					bad, what = i, "invalid UTF-8: save the file as UTF-8"
				}
				break
			}
			i += n
		}
	}
	if bad >= 0 {
		line := 1 + strings.Count(text[:bad], "\n")
		col := bad - strings.LastIndexByte(text[:bad], '\n')
		return "", perr(name, line, col, specio.ErrEncoding, "%s", what)
	}
	return text, nil
}

// parseNumber parses a finite decimal number: optional sign, digits with
// at most one decimal point (at least one digit), optional exponent. With
// decimalComma a single ',' may stand for the point. Inf, NaN, hex and
// digit separators are not numbers here.
func parseNumber(s string, decimalComma bool) (float64, bool) {
	if decimalComma && strings.Count(s, ",") == 1 && !strings.Contains(s, ".") {
		s = strings.Replace(s, ",", ".", 1)
	}
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits, dot := 0, false
	for ; i < len(s); i++ {
		c := s[i]
		if '0' <= c && c <= '9' {
			digits++
		} else if c == '.' && !dot {
			dot = true
		} else {
			break
		}
	}
	if digits == 0 {
		return 0, false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		start := i
		for i < len(s) && '0' <= s[i] && s[i] <= '9' {
			i++
		}
		if i == start {
			return 0, false
		}
	}
	if i != len(s) {
		return 0, false
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, false
	}
	return v, true
}

func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
