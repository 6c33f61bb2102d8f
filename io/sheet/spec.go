package sheet

import (
	"io"
	"math"
	"slices"
	"strings"

	"bandedge/io/specio"
)

// SpecVersion is the version of the spec format this package reads (the
// number in the first statement, "bandedge-spec 1").
const SpecVersion = 1

// Scan-level quantities a limit can name: the fields of the result record
// (io/results, JSON names).
var scanQuantities = []string{
	"eg_ev", "eg_err_ev", "eg_expanded_ev",
	"urbach_ev", "urbach_err_ev",
	"amplitude", "amplitude_err",
	"ep_ev", "ep_err_ev",
	"chi2_reduced", "points_used",
}

// Wafer statistics; "wafer.<quantity>.<stat>" names one (see Rollup).
var waferStats = []string{"count", "mean", "min", "max", "range", "stdev", "nonuniformity"}

// Quantities returns every quantity name a limit can use: the scan-level
// result fields, then the wafer statistics "wafer.<field>.<stat>".
func Quantities() []string {
	q := slices.Clone(scanQuantities)
	for _, f := range scanQuantities {
		for _, s := range waferStats {
			q = append(q, WaferQuantity(f, s))
		}
	}
	return q
}

// WaferQuantity returns the name of a wafer statistic of a scan-level
// quantity: WaferQuantity("eg_ev", "nonuniformity") is
// "wafer.eg_ev.nonuniformity".
func WaferQuantity(field, stat string) string { return "wafer." + field + "." + stat }

// KnownQuantity reports whether q is a quantity a limit can name.
func KnownQuantity(q string) bool {
	if slices.Contains(scanQuantities, q) {
		return true
	}
	rest, ok := strings.CutPrefix(q, "wafer.")
	if !ok {
		return false
	}
	f, s, ok := strings.Cut(rest, ".")
	return ok && slices.Contains(scanQuantities, f) && slices.Contains(waferStats, s)
}

// Spec is a parsed spec-limits file.
type Spec struct {
	// Name is the name given to ReadSpec.
	Name string
	// Title is the text of the "name" statement, "" if none.
	Title string
	// Guard is the decision rule.
	Guard Guard
	// Limits are the limits in file order, one per quantity.
	Limits []Limit
}

// Limit is a closed tolerance interval [Lo, Hi] on one quantity. A
// one-sided limit has Lo = −Inf or Hi = +Inf.
type Limit struct {
	Quantity string
	Lo, Hi   float64
	Line     int // 1-based line in the spec file, 0 if not from a file
}

// String writes the limit as "1.415 ≤ eg_ev ≤ 1.435", "urbach_ev ≤ 0.012"
// or "points_used ≥ 50".
func (l Limit) String() string {
	switch {
	case math.IsInf(l.Lo, -1) && math.IsInf(l.Hi, 1):
		return l.Quantity + " unbounded"
	case math.IsInf(l.Lo, -1):
		return l.Quantity + " ≤ " + fmtG(l.Hi)
	case math.IsInf(l.Hi, 1):
		return l.Quantity + " ≥ " + fmtG(l.Lo)
	}
	return fmtG(l.Lo) + " ≤ " + l.Quantity + " ≤ " + fmtG(l.Hi)
}

// Limit returns the limit on quantity q.
func (s *Spec) Limit(q string) (Limit, bool) {
	if s == nil {
		return Limit{}, false
	}
	for _, l := range s.Limits {
		if l.Quantity == q {
			return l, true
		}
	}
	return Limit{}, false
}

// specToken is one word or quoted string of a spec line.
type specToken struct {
	s      string
	col    int // 1-based byte column
	end    int // 0-based offset after the token
	quoted bool
}

// specLine splits a line into tokens up to a '#' outside quotes. An
// unterminated or malformed string gives a non-empty reason and its column.
func specLine(line string) (toks []specToken, rest string, bad string, badCol int) {
	i := 0
	for i < len(line) {
		c := line[i]
		switch {
		case c == ' ' || c == '\t' || c == '\r':
			i++
			continue
		case c == '#':
			return toks, line[:i], "", 0
		case c == '"':
			var b strings.Builder
			j := i + 1
			for ; j < len(line) && line[j] != '"'; j++ {
				if line[j] == '\\' && j+1 < len(line) && (line[j+1] == '"' || line[j+1] == '\\') {
					j++
				}
				b.WriteByte(line[j])
			}
			if j >= len(line) {
				return nil, "", "unterminated string: a closing \" is missing", i + 1
			}
			toks = append(toks, specToken{s: b.String(), col: i + 1, end: j + 1, quoted: true})
			i = j + 1
			continue
		}
		j := i
		for j < len(line) && line[j] != ' ' && line[j] != '\t' && line[j] != '\r' && line[j] != '#' && line[j] != '"' {
			j++
		}
		toks = append(toks, specToken{s: line[i:j], col: i + 1, end: j})
		i = j
	}
	return toks, line, "", 0
}

// ReadSpec reads a spec-limits file (see the package documentation). Data
// errors are *specio.ParseError values with the file, 1-based line and
// byte column, wrapping a specio sentinel, ErrDuplicate or
// ErrUnknownQuantity.
func ReadSpec(r io.Reader, name string) (*Spec, error) {
	text, err := readText(r, name, MaxSpecBytes)
	if err != nil {
		return nil, err
	}
	sp := &Spec{Name: name}
	var (
		versionLn, nameLn, guardLn int
		seen                       = map[string]int{}
		lastLn                     int
	)
	ln := 0
	for line := range strings.Lines(text) {
		ln++
		line = strings.TrimRight(line, "\r\n")
		toks, body, bad, badCol := specLine(line)
		if bad != "" {
			return nil, perr(name, ln, badCol, specio.ErrSyntax, "%s", bad)
		}
		if len(toks) == 0 {
			continue
		}
		lastLn = ln
		kw := toks[0]
		errAt := func(t specToken, sentinel error, format string, args ...any) error {
			return perr(name, ln, t.col, sentinel, format, args...)
		}
		if kw.quoted {
			return nil, errAt(kw, specio.ErrSyntax, "a statement starts with a word: bandedge-spec, name, guard or limit")
		}
		word := strings.ToLower(kw.s)
		if versionLn == 0 && word != "bandedge-spec" {
			return nil, errAt(kw, specio.ErrSyntax, "the first statement must be \"bandedge-spec %d\" (is this a bandedge spec file?)", SpecVersion)
		}
		// want checks the number of arguments.
		want := func(n int, usage string) error {
			if len(toks)-1 == n {
				return nil
			}
			at := kw
			if len(toks)-1 > n {
				at = toks[n+1]
			} else {
				at.col = len(strings.TrimRight(body, " \t")) + 1
			}
			return errAt(at, specio.ErrSyntax, "want %q", usage)
		}
		switch word {
		case "bandedge-spec":
			if versionLn != 0 {
				return nil, errAt(kw, ErrDuplicate, "bandedge-spec given twice (lines %d and %d)", versionLn, ln)
			}
			if err := want(1, "bandedge-spec 1"); err != nil {
				return nil, err
			}
			if toks[1].s != "1" {
				return nil, errAt(toks[1], specio.ErrSyntax, "spec format version %q: this program reads version %d", toks[1].s, SpecVersion)
			}
			versionLn = ln
		case "name":
			if nameLn != 0 {
				return nil, errAt(kw, ErrDuplicate, "name given twice (lines %d and %d)", nameLn, ln)
			}
			if err := want(1, `name "text"`); err != nil {
				return nil, err
			}
			if !toks[1].quoted {
				return nil, errAt(toks[1], specio.ErrSyntax, `the name is a quoted string: name "%s"`, toks[1].s)
			}
			sp.Title, nameLn = toks[1].s, ln
		case "guard":
			if guardLn != 0 {
				return nil, errAt(kw, ErrDuplicate, "guard given twice (lines %d and %d)", guardLn, ln)
			}
			if err := want(1, "guard expanded|stat|none"); err != nil {
				return nil, err
			}
			g, ok := parseGuard(strings.ToLower(toks[1].s))
			if !ok || toks[1].quoted {
				return nil, errAt(toks[1], specio.ErrSyntax, "guard %q: want expanded, stat or none", toks[1].s)
			}
			sp.Guard, guardLn = g, ln
		case "limit":
			l, err := parseLimit(name, ln, toks, body)
			if err != nil {
				return nil, err
			}
			if prev, ok := seen[l.Quantity]; ok {
				return nil, errAt(toks[1], ErrDuplicate, "a second limit on %s (lines %d and %d)", l.Quantity, prev, ln)
			}
			seen[l.Quantity] = ln
			sp.Limits = append(sp.Limits, l)
		default:
			return nil, errAt(kw, specio.ErrSyntax, "unknown statement %q: want name, guard or limit", kw.s)
		}
	}
	switch {
	case versionLn == 0:
		return nil, perr(name, 0, 0, specio.ErrNoData, "empty spec file: it starts with \"bandedge-spec %d\"", SpecVersion)
	case guardLn == 0:
		return nil, perr(name, lastLn, 0, specio.ErrSyntax, "no guard statement: say which decision rule applies (guard expanded, guard stat or guard none)")
	case len(sp.Limits) == 0:
		return nil, perr(name, lastLn, 0, specio.ErrNoData, "no limit statements")
	}
	return sp, nil
}

// parseLimit reads "limit QUANTITY LO .. HI" (either bound may be
// omitted). body is the line without its comment.
func parseLimit(name string, ln int, toks []specToken, body string) (Limit, error) {
	if len(toks) < 2 {
		return Limit{}, perr(name, ln, len(strings.TrimRight(body, " \t"))+2, specio.ErrSyntax, "want \"limit QUANTITY LO .. HI\" (one bound may be left out)")
	}
	qt := toks[1]
	q := strings.ToLower(qt.s)
	if qt.quoted || !KnownQuantity(q) {
		return Limit{}, perr(name, ln, qt.col, ErrUnknownQuantity,
			"unknown quantity %q: want one of %s, or wafer.<quantity>.<stat> with stat %s",
			qt.s, strings.Join(scanQuantities, ", "), strings.Join(waferStats, ", "))
	}
	for _, t := range toks[2:] {
		if t.quoted {
			return Limit{}, perr(name, ln, t.col, specio.ErrSyntax, "a limit holds numbers, not strings")
		}
	}
	rest := body[qt.end:]
	off := qt.end // offset of rest in the line
	dots := strings.Index(rest, "..")
	if dots < 0 {
		col := len(strings.TrimRight(body, " \t")) + 1
		if len(toks) > 2 {
			col = toks[2].col
		}
		return Limit{}, perr(name, ln, col, specio.ErrSyntax, "want LO .. HI after %s, e.g. 1.415 .. 1.435, or .. 0.012 for an upper limit only", q)
	}
	if i := strings.Index(rest, "..."); i >= 0 || strings.Contains(rest[dots+2:], "..") {
		if i < 0 {
			i = dots + 2 + strings.Index(rest[dots+2:], "..")
		}
		return Limit{}, perr(name, ln, off+i+1, specio.ErrSyntax, "one \"..\" between the bounds: LO .. HI")
	}
	l := Limit{Quantity: q, Lo: math.Inf(-1), Hi: math.Inf(1), Line: ln}
	bound := func(s string, at int, dst *float64) error {
		t := strings.TrimSpace(s)
		if t == "" {
			return nil
		}
		col := off + at + strings.Index(s, t) + 1
		if f := strings.Fields(t); len(f) > 1 {
			return perr(name, ln, col+strings.Index(t, f[1]), specio.ErrSyntax,
				"unexpected %q: a bound is one number (the unit is part of the quantity name, e.g. eg_ev)", f[1])
		}
		v, ok := parseNumber(t, false)
		if !ok {
			return perr(name, ln, col, specio.ErrSyntax, "bound %q is not a number", t)
		}
		*dst = v
		return nil
	}
	if err := bound(rest[:dots], 0, &l.Lo); err != nil {
		return Limit{}, err
	}
	if err := bound(rest[dots+2:], dots+2, &l.Hi); err != nil {
		return Limit{}, err
	}
	switch {
	case math.IsInf(l.Lo, -1) && math.IsInf(l.Hi, 1):
		return Limit{}, perr(name, ln, off+dots+1, specio.ErrSyntax, "a limit needs at least one bound: LO .., .. HI or LO .. HI")
	case l.Lo > l.Hi:
		return Limit{}, perr(name, ln, toks[2].col, specio.ErrRange, "lower bound %s is above upper bound %s", fmtG(l.Lo), fmtG(l.Hi))
	}
	return l, nil
}
