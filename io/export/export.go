// Package export writes spectra as delimited text in the styles that
// spectrophotometer software produces: comma, semicolon or tab separated,
// decimal point or decimal comma, a free-text preamble, wavelength
// ascending or descending. The demo uses it to write its invented scans,
// and tests use it to check that io/specio reads every style back.
package export

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// Style is how a spectrum is laid out.
type Style struct {
	// Comma is the field separator; 0 means ','.
	Comma rune
	// DecimalComma writes numbers with ',' as the decimal separator; it
	// requires Comma to be ';' or a tab.
	DecimalComma bool
	// Preamble lines are written first, as they are (e.g. instrument
	// metadata "Instrument,UV-VIS-NIR 2"), each followed by a newline.
	Preamble []string
	// Header names the columns; nil writes no header line.
	Header []string
	// Digits are the decimals written per column (0 means 6 significant
	// digits in %g style).
	Digits []int
	// CRLF ends lines with "\r\n" instead of "\n".
	CRLF bool
}

// ErrStyle is returned for a style that cannot be written unambiguously.
var ErrStyle = errors.New("export: bad style")

// Write writes the rows of cols (each column one slice, all the same
// length) in the given style.
func Write(w io.Writer, st Style, cols ...[]float64) error {
	comma := st.Comma
	if comma == 0 {
		comma = ','
	}
	if st.DecimalComma && comma == ',' {
		return fmt.Errorf("%w: a decimal comma needs ';' or tab as the separator", ErrStyle)
	}
	if len(cols) == 0 {
		return fmt.Errorf("%w: no columns", ErrStyle)
	}
	n := len(cols[0])
	for _, c := range cols {
		if len(c) != n {
			return fmt.Errorf("%w: columns of different lengths", ErrStyle)
		}
	}
	if st.Header != nil && len(st.Header) != len(cols) {
		return fmt.Errorf("%w: %d header names for %d columns", ErrStyle, len(st.Header), len(cols))
	}
	eol := "\n"
	if st.CRLF {
		eol = "\r\n"
	}
	bw := bufio.NewWriter(w)
	for _, l := range st.Preamble {
		bw.WriteString(l)
		bw.WriteString(eol)
	}
	sep := string(comma)
	if st.Header != nil {
		bw.WriteString(strings.Join(st.Header, sep))
		bw.WriteString(eol)
	}
	for i := 0; i < n; i++ {
		for j, c := range cols {
			if j > 0 {
				bw.WriteString(sep)
			}
			s := format(c[i], st, j)
			bw.WriteString(s)
		}
		bw.WriteString(eol)
	}
	return bw.Flush()
}

func format(v float64, st Style, col int) string {
	var s string
	if col < len(st.Digits) && st.Digits[col] > 0 {
		s = strconv.FormatFloat(v, 'f', st.Digits[col], 64)
	} else {
		s = strconv.FormatFloat(v, 'g', 6, 64)
	}
	if st.DecimalComma {
		s = strings.Replace(s, ".", ",", 1)
	}
	return s
}
