package specio

import (
	"errors"
	"strconv"
	"strings"
)

// Sentinel errors. Every data error returned by Reader.Read is a *ParseError
// whose Err is one of these; test with errors.Is.
var (
	// ErrSyntax: a cell is not a number, a row is too short, or a quote is
	// malformed.
	ErrSyntax = errors.New("specio: syntax error")
	// ErrRange: a value is outside what its column can hold (a negative
	// wavelength, transmittance far above 100 %, a number that overflows).
	ErrRange = errors.New("specio: value out of range")
	// ErrNotMonotonic: x repeats a value or changes direction.
	ErrNotMonotonic = errors.New("specio: x not strictly monotonic")
	// ErrNoData: the input holds no usable data rows.
	ErrNoData = errors.New("specio: no data rows")
	// ErrUnit: the unit of a column is unknown (no header and no option) or
	// not supported.
	ErrUnit = errors.New("specio: unknown unit")
	// ErrAmbiguous: more than one reading of the columns fits; an option
	// (flag) must decide.
	ErrAmbiguous = errors.New("specio: ambiguous columns")
	// ErrTooLarge: the input exceeds MaxBytes, MaxLines, MaxPoints or
	// MaxLineBytes, or a data line has more than 4096 cells.
	ErrTooLarge = errors.New("specio: input too large")
	// ErrEncoding: the input is not text (NUL bytes, invalid UTF-8, broken
	// UTF-16).
	ErrEncoding = errors.New("specio: bad text encoding")
	// ErrOption: a Reader option is invalid, or names a column the file does
	// not have. Invalid option values come back from Read as a plain error
	// wrapping ErrOption; a column the file lacks comes back as a
	// *ParseError at the header.
	ErrOption = errors.New("specio: invalid option")
)

// ParseError is a data error with its position in the input.
//
// Line and Column are 1-based, as in encoding/csv: Column counts bytes of
// the line in UTF-8 (for UTF-16 input, of the decoded text), so it equals
// the character column on ASCII lines. Line 0 means the error concerns the
// whole input; Column 0 means the whole line.
//
// Error prints it compiler-style, "file:line:column: detail", e.g.
//
//	wafer07.csv:17:9: "0,93" is not a number (is the decimal separator a comma?)
type ParseError struct {
	File   string // the name given to NewReader ("<input>" when printed if empty)
	Line   int    // 1-based line, 0 if not known
	Column int    // 1-based byte column, 0 if not known
	Err    error  // a sentinel: ErrSyntax, ErrRange, ...
	Detail string // what went wrong and what to do, in plain words
}

func (e *ParseError) Error() string {
	var b strings.Builder
	if e.File == "" {
		b.WriteString("<input>")
	} else {
		b.WriteString(e.File)
	}
	if e.Line > 0 {
		b.WriteByte(':')
		b.WriteString(strconv.Itoa(e.Line))
		if e.Column > 0 {
			b.WriteByte(':')
			b.WriteString(strconv.Itoa(e.Column))
		}
	}
	b.WriteString(": ")
	switch {
	case e.Detail != "":
		b.WriteString(e.Detail)
	case e.Err != nil:
		b.WriteString(e.Err.Error())
	default:
		b.WriteString("parse error")
	}
	return b.String()
}

// Unwrap returns e.Err, so that errors.Is(err, specio.ErrSyntax) works.
func (e *ParseError) Unwrap() error { return e.Err }
