package jcampdx

import (
	"math"
	"strconv"

	"bandedge/io/specio"
)

// tokKind is the form of one number in a data line.
type tokKind uint8

const (
	tokAFFN tokKind = iota // absolute value, free format
	tokSQZ                 // absolute value, squeezed
	tokDIF                 // difference from the previous ordinate
	tokDUP                 // repeat count of the previous token
)

// token is one number of a data line.
type token struct {
	kind tokKind
	v    float64 // value, difference, or (tokDUP) total count
	res  float64 // half the unit of the last written digit (rounding of the written value)
	col  int     // 1-based byte column
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

// sqz returns the sign and first digit of an SQZ pseudo-digit.
func sqz(c byte) (d int, ok bool) {
	switch {
	case c == '@':
		return 0, true
	case 'A' <= c && c <= 'I':
		return int(c-'A') + 1, true
	case 'a' <= c && c <= 'i':
		return -int(c-'a') - 1, true
	}
	return 0, false
}

// dif returns the sign and first digit of a DIF pseudo-digit.
func dif(c byte) (d int, ok bool) {
	switch {
	case c == '%':
		return 0, true
	case 'J' <= c && c <= 'R':
		return int(c-'J') + 1, true
	case 'j' <= c && c <= 'r':
		return -int(c-'j') - 1, true
	}
	return 0, false
}

// dup returns the first digit of a DUP pseudo-digit.
func dup(c byte) (d int, ok bool) {
	switch {
	case 'S' <= c && c <= 'Z':
		return int(c-'S') + 1, true
	case c == 's':
		return 9, true
	}
	return 0, false
}

// hasPseudo reports whether s holds an ASDF pseudo-digit other than E and
// e (which may also be exponent markers).
func hasPseudo(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c == 'E' || c == 'e' {
			continue
		}
		if _, ok := sqz(c); ok {
			return true
		}
		if _, ok := dif(c); ok {
			return true
		}
		if _, ok := dup(c); ok {
			return true
		}
	}
	return false
}

// scanAFFN scans an AFFN number at s[i:]: optional sign, digits with at
// most one decimal point (at least one digit), optional exponent. An 'E' or
// 'e' starts the exponent if followed by a sign and a digit, or (when
// pseudo is false) by a digit. It returns the value, half the unit of the
// last written digit, the end offset and whether a number was found.
func scanAFFN(s string, i int, pseudo bool) (v, res float64, end int, ok bool) {
	j := i
	if j < len(s) && (s[j] == '+' || s[j] == '-') {
		j++
	}
	digits, frac, dot := 0, 0, false
	for j < len(s) {
		c := s[j]
		if isDigit(c) {
			digits++
			if dot {
				frac++
			}
		} else if c == '.' && !dot {
			dot = true
		} else {
			break
		}
		j++
	}
	if digits == 0 {
		return 0, 0, i, false
	}
	exp := 0
	if j < len(s) && (s[j] == 'E' || s[j] == 'e') {
		k := j + 1
		signed := k < len(s) && (s[k] == '+' || s[k] == '-')
		if signed {
			k++
		}
		if k < len(s) && isDigit(s[k]) && (signed || !pseudo) {
			start := k
			for k < len(s) && isDigit(s[k]) {
				k++
			}
			e, err := strconv.Atoi(s[start:k])
			if err != nil || e > 1000 {
				e = 1000
			}
			if s[j+1] == '-' {
				e = -e
			}
			exp = e
			j = k
		}
	}
	// The grammar above is a subset of ParseFloat's, so the only error left
	// is ErrRange, with ±Inf (overflow, reported by the caller) or 0.
	v, _ = strconv.ParseFloat(s[i:j], 64)
	return v, 0.5 * math.Pow(10, float64(max(min(exp-frac, 300), -300))), j, true
}

// scanPseudo scans the digits (and at most one decimal point) after a
// pseudo-digit at s[i], whose digit is d (with its sign). It returns the
// value, half the unit of its last digit, and the end offset.
func scanPseudo(s string, i, d int) (v, res float64, end int) {
	neg := d < 0
	if neg {
		d = -d
	}
	buf := make([]byte, 0, 24)
	if neg {
		buf = append(buf, '-')
	}
	buf = append(buf, byte('0'+d))
	j, frac, dot := i+1, 0, false
	for j < len(s) {
		c := s[j]
		if isDigit(c) {
			if dot {
				frac++
			}
		} else if c == '.' && !dot {
			dot = true
		} else {
			break
		}
		buf = append(buf, c)
		j++
	}
	v, _ = strconv.ParseFloat(string(buf), 64) // digits only: at worst ErrRange with ±Inf
	return v, 0.5 * math.Pow(10, float64(max(-frac, -300))), j
}

// tokenize splits one XYDATA line into tokens (appended to dst). A line
// holding more than maxTokens tokens is an ErrCheck at the first token too
// many (more ordinates than
// NPOINTS allows), so that no line can make tokenize allocate more than
// NPOINTS does.
func (p *parser) tokenize(dst []token, s string, ln, maxTokens int) ([]token, error) {
	pseudo := hasPseudo(s)
	for i := 0; i < len(s); {
		c := s[i]
		if c == ' ' || c == '\t' || c == ',' || c == '\x1a' {
			i++
			continue
		}
		col := i + 1
		if len(dst) >= maxTokens {
			return dst, p.errf(ln, col, ErrCheck, "more ordinates on this line than ##NPOINTS= allows")
		}
		if c == '+' || c == '-' || c == '.' || isDigit(c) {
			v, res, end, ok := scanAFFN(s, i, pseudo)
			if !ok {
				return dst, p.errf(ln, col, specio.ErrSyntax, "%q does not start a number", string(c))
			}
			if !finite(v) {
				return dst, p.errf(ln, col, specio.ErrRange, "%s is too large", s[i:end])
			}
			dst = append(dst, token{kind: tokAFFN, v: v, res: res, col: col})
			i = end
			continue
		}
		kind := tokSQZ
		d, ok := sqz(c)
		if !ok {
			kind = tokDIF
			d, ok = dif(c)
		}
		if !ok {
			kind = tokDUP
			d, ok = dup(c)
		}
		if !ok {
			if c == '?' {
				return dst, p.errf(ln, col, specio.ErrSyntax, "missing value '?' in the data table is not supported")
			}
			r := string(c)
			if c >= 0x80 {
				r = "non-ASCII byte"
			}
			return dst, p.errf(ln, col, specio.ErrSyntax, "unexpected %q in the data table (not an AFFN number or an ASDF pseudo-digit)", r)
		}
		if kind == tokDUP {
			j := i + 1
			for j < len(s) && isDigit(s[j]) {
				j++
			}
			if j-i > 9 {
				return dst, p.errf(ln, col, specio.ErrRange, "DUP count %q is absurdly large", s[i:j])
			}
			n, _ := strconv.Atoi(strconv.Itoa(d) + s[i+1:j])
			dst = append(dst, token{kind: tokDUP, v: float64(n), col: col})
			i = j
			continue
		}
		v, res, end := scanPseudo(s, i, d)
		if !finite(v) {
			return dst, p.errf(ln, col, specio.ErrRange, "%s is too large", s[i:end])
		}
		dst = append(dst, token{kind: kind, v: v, res: res, col: col})
		i = end
	}
	return dst, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// grid is the abscissa grid of an XYDATA table, in file units (after
// XFACTOR).
type grid struct {
	first, step float64
	xfactor     float64
	n           int
}

func (g grid) x(i int) float64 { return g.first + g.step*float64(i) }

// decoded holds the ordinates of a table, in written units (before
// YFACTOR), with the line of each.
type decoded struct {
	y      []float64
	lines  []int
	checks int // Y check values verified
	forms  [4]int
	coarse bool // an abscissa was written more coarsely than a step
}

// decodeXYData decodes the (X++(Y..Y)) table t on grid g (n = NPOINTS).
func (p *parser) decodeXYData(t *table, g grid) (*decoded, error) {
	c := min(g.n, 4096) // grows as needed; NPOINTS alone must not allocate
	d := &decoded{y: make([]float64, 0, c), lines: make([]int, 0, c)}
	var (
		toks     []token
		prevDIF  bool // the previous data line ended in DIF form
		prevLine int
		err      error
	)
	add := func(v float64, ln, col int) error {
		if len(d.y) >= g.n {
			return p.errf(ln, col, ErrCheck, "more ordinates than ##NPOINTS= %d", g.n)
		}
		if !finite(v) {
			return p.errf(ln, col, specio.ErrRange, "ordinate overflows")
		}
		d.y = append(d.y, v)
		d.lines = append(d.lines, ln)
		return nil
	}
	for i := t.first; i < t.end; i++ {
		ln := i + 1
		// Each new point takes at most two tokens (a value and a DUP), plus
		// the abscissa and a Y check with its DUP.
		toks, err = p.tokenize(toks[:0], p.lines[i], ln, 2*(g.n-len(d.y))+3)
		if err != nil {
			return nil, err
		}
		if len(toks) == 0 {
			continue
		}
		x := toks[0]
		if x.kind != tokAFFN && x.kind != tokSQZ {
			return nil, p.errf(ln, x.col, specio.ErrSyntax, "a data line must start with its abscissa, not a DIF or DUP character")
		}
		ys := toks[1:]
		if len(ys) == 0 {
			return nil, p.errf(ln, 0, specio.ErrSyntax, "abscissa without ordinates")
		}
		idx := len(d.y)
		start := 0
		var lastKind tokKind
		var lastV float64
		if prevDIF {
			c := ys[0]
			if c.kind != tokAFFN && c.kind != tokSQZ {
				return nil, p.errf(ln, c.col, ErrCheck,
					"line %d ends in DIF form, so this line must start with the Y check value %s in absolute form (AFFN or SQZ)",
					prevLine, fmtG(d.y[len(d.y)-1]))
			}
			last := d.y[len(d.y)-1]
			if math.Abs(c.v-last) > 1e-9*math.Max(1, math.Abs(last)) {
				return nil, p.errf(ln, c.col, ErrCheck,
					"Y check value %s does not match the last ordinate %s of line %d: a character is corrupt or a line is missing",
					fmtG(c.v), fmtG(last), prevLine)
			}
			d.checks++
			idx--
			start = 1
			lastKind, lastV = c.kind, last
		}
		want := g.x(idx)
		got := x.v * g.xfactor
		tol := math.Max(0.5*math.Abs(g.step), x.res*math.Abs(g.xfactor)) + 1e-9*math.Abs(want)
		if x.res*math.Abs(g.xfactor) >= math.Abs(g.step) && g.n > 1 {
			d.coarse = true
		}
		if !(math.Abs(got-want) <= tol) {
			return nil, p.errf(ln, x.col, ErrCheck,
				"abscissa %s (x %s after XFACTOR) is not FIRSTX + %d·Δx = %s: an ordinate is missing or extra before this line",
				fmtG(x.v), fmtG(got), idx, fmtG(want))
		}
		for k := start; k < len(ys); k++ {
			tk := ys[k]
			d.forms[tk.kind]++
			switch tk.kind {
			case tokAFFN, tokSQZ:
				if err := add(tk.v, ln, tk.col); err != nil {
					return nil, err
				}
				lastV = tk.v
			case tokDIF:
				if len(d.y) == 0 {
					return nil, p.errf(ln, tk.col, specio.ErrSyntax, "DIF form needs a preceding ordinate")
				}
				if err := add(d.y[len(d.y)-1]+tk.v, ln, tk.col); err != nil {
					return nil, err
				}
				lastV = tk.v
			case tokDUP:
				if k == 0 || ys[k-1].kind == tokDUP {
					return nil, p.errf(ln, tk.col, specio.ErrSyntax, "a DUP character must follow an ordinate or a difference")
				}
				reps := int(tk.v) - 1
				if len(d.y)+reps > g.n {
					return nil, p.errf(ln, tk.col, ErrCheck, "DUP count %d gives more ordinates than ##NPOINTS= %d", int(tk.v), g.n)
				}
				for range reps {
					v := lastV
					if lastKind == tokDIF {
						v = d.y[len(d.y)-1] + lastV
					}
					if err := add(v, ln, tk.col); err != nil {
						return nil, err
					}
				}
				continue // lastKind stays that of the repeated token
			}
			lastKind = tk.kind
		}
		prevDIF = lastKind == tokDIF
		prevLine = ln
	}
	if prevDIF {
		p.note("the last data line (%d) ends in DIF form without a Y check line after it", prevLine)
	}
	if len(d.y) != g.n {
		ln, l := t.line, p.core["NPOINTS"]
		if prevLine > 0 {
			ln = prevLine
		}
		return nil, p.errf(ln, 0, ErrCheck, "##NPOINTS= %d (line %d) but the table holds %d ordinates", g.n, l.line, len(d.y))
	}
	return d, nil
}

// xyPoints reads an (XY..XY) table: x and y in written units, the line of
// each pair, and the rounding of the first and last x. npoints is
// ##NPOINTS= (0 if absent): no more pairs are read than it, or MaxPoints.
func (p *parser) xyPoints(t *table, npoints int) (x, y []float64, lines []int, res [2]float64, err error) {
	for i := t.first; i < t.end; i++ {
		s, ln := p.lines[i], i+1
		var vals []token
		limit := p.maxPoints
		if npoints > 0 {
			limit = npoints
		}
		for j := 0; j < len(s); {
			c := s[j]
			if c == ' ' || c == '\t' || c == ',' || c == ';' || c == '\x1a' {
				j++
				continue
			}
			if len(vals) >= 2*(limit-len(x)) { // this value starts a pair too many
				if npoints > 0 {
					return nil, nil, nil, res, p.errf(ln, j+1, ErrCheck, "more pairs than ##NPOINTS= %d (line %d)", npoints, p.core["NPOINTS"].line)
				}
				return nil, nil, nil, res, p.errf(ln, j+1, specio.ErrTooLarge, "more than %d points (MaxPoints)", p.maxPoints)
			}
			v, r, end, ok := scanAFFN(s, j, false)
			if !ok {
				switch {
				case c == '?':
					return nil, nil, nil, res, p.errf(ln, j+1, specio.ErrSyntax, "missing value '?' is not supported")
				case hasPseudo(string(c)) || c == 'E' || c == 'e':
					return nil, nil, nil, res, p.errf(ln, j+1, specio.ErrSyntax, "compressed (ASDF) forms are not allowed in ##XYPOINTS=; write plain numbers")
				}
				return nil, nil, nil, res, p.errf(ln, j+1, specio.ErrSyntax, "unexpected %q in ##XYPOINTS= (want pairs of numbers \"x, y\")", string(c))
			}
			if !finite(v) {
				return nil, nil, nil, res, p.errf(ln, j+1, specio.ErrRange, "%s is too large", s[j:end])
			}
			vals = append(vals, token{v: v, res: r, col: j + 1})
			j = end
		}
		if len(vals)%2 != 0 {
			return nil, nil, nil, res, p.errf(ln, vals[len(vals)-1].col, specio.ErrSyntax, "x without y: each line must hold whole pairs \"x, y\"")
		}
		for k := 0; k < len(vals); k += 2 {
			if npoints > 0 && len(x) >= npoints {
				return nil, nil, nil, res, p.errf(ln, vals[k].col, ErrCheck, "more pairs than ##NPOINTS= %d (line %d)", npoints, p.core["NPOINTS"].line)
			}
			if len(x) >= p.maxPoints {
				return nil, nil, nil, res, p.errf(ln, vals[k].col, specio.ErrTooLarge, "more than %d points (MaxPoints)", p.maxPoints)
			}
			if len(x) == 0 {
				res[0] = vals[k].res
			}
			res[1] = vals[k].res
			x = append(x, vals[k].v)
			y = append(y, vals[k+1].v)
			lines = append(lines, ln)
		}
	}
	return x, y, lines, res, nil
}
