package sheet

import (
	"errors"
	"math"
	"strings"
	"testing"

	"bandedge/io/specio"
)

// fullSpec is the example of the package documentation.
const fullSpec = `bandedge-spec 1
name "KM-2611 GaAs epi, release (fictional)"
guard expanded                          # w = U, the expanded uncertainty

limit eg_ev                1.415 .. 1.435   # band-gap window, eV
limit urbach_ev                  .. 0.012   # upper limit only, eV
limit chi2_reduced               .. 3
limit points_used             50 ..         # lower limit only
limit eg_err_ev                  .. 0.004   # the fit must be precise enough
limit wafer.eg_ev.nonuniformity  .. 0.004   # (max − min)/(2·mean) over the wafer
limit wafer.eg_ev.count        5 ..         # at least five scans per wafer
`

func TestReadSpec(t *testing.T) {
	inf := math.Inf(1)
	for _, tc := range []struct {
		name  string
		in    string
		title string
		guard Guard
		want  []Limit
	}{
		{name: "full-example", in: fullSpec, title: "KM-2611 GaAs epi, release (fictional)", guard: GuardExpanded,
			want: []Limit{
				{"eg_ev", 1.415, 1.435, 5}, {"urbach_ev", -inf, 0.012, 6}, {"chi2_reduced", -inf, 3, 7},
				{"points_used", 50, inf, 8}, {"eg_err_ev", -inf, 0.004, 9},
				{"wafer.eg_ev.nonuniformity", -inf, 0.004, 10}, {"wafer.eg_ev.count", 5, inf, 11},
			}},
		{name: "compact/CRLF/BOM/case", in: "\ufeff# header comment\r\nBANDEDGE-SPEC 1\r\nGuard NONE\r\nLIMIT EG_EV 1.4..1.5\r\nlimit amplitude 1e4..\r\n",
			guard: GuardNone, want: []Limit{{"eg_ev", 1.4, 1.5, 4}, {"amplitude", 1e4, inf, 5}}},
		{name: "quotes-and-hash-in-name", in: "bandedge-spec 1\nname \"run #3 \\\"hot\\\" \\\\ B\" # c\nguard stat\nlimit ep_ev -1 .. +2.5e1\n",
			title: `run #3 "hot" \ B`, guard: GuardStat, want: []Limit{{"ep_ev", -1, 25, 4}}},
		{name: "point-interval", in: "bandedge-spec 1\nguard none\nlimit wafer.points_used.count 5 .. 5\n",
			guard: GuardNone, want: []Limit{{"wafer.points_used.count", 5, 5, 3}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			sp, err := ReadSpec(strings.NewReader(tc.in), "s.spec")
			if err != nil {
				t.Fatal(err)
			}
			if sp.Name != "s.spec" || sp.Title != tc.title || sp.Guard != tc.guard || len(sp.Limits) != len(tc.want) {
				t.Fatalf("name %q title %q guard %v %d limits; want %q %v %d", sp.Name, sp.Title, sp.Guard, len(sp.Limits), tc.title, tc.guard, len(tc.want))
			}
			for i, w := range tc.want {
				if g := sp.Limits[i]; g != w {
					t.Errorf("limit %d = %+v, want %+v", i, g, w)
				}
			}
		})
	}
}

func TestReadSpecErrors(t *testing.T) {
	const head = "bandedge-spec 1\nguard expanded\n"
	for _, tc := range []struct {
		name      string
		in        string
		err       error
		line, col int
		detail    string
	}{
		{"empty", "", specio.ErrNoData, 0, 0, "empty spec"},
		{"comments-only", "# x\n\n", specio.ErrNoData, 0, 0, "empty spec"},
		{"no-version", "guard none\nlimit eg_ev .. 1\n", specio.ErrSyntax, 1, 1, "first statement"},
		{"version-2", "bandedge-spec 2\n", specio.ErrSyntax, 1, 15, "version \"2\""},
		{"version-missing", "bandedge-spec\n", specio.ErrSyntax, 1, 14, "bandedge-spec 1"},
		{"version-twice", head + "bandedge-spec 1\n", ErrDuplicate, 3, 1, "lines 1 and 3"},
		{"unknown-statement", head + "limits eg_ev .. 1\n", specio.ErrSyntax, 3, 1, "unknown statement"},
		{"statement-is-string", head + "\"limit\"\n", specio.ErrSyntax, 3, 1, "starts with a word"},
		{"unknown-quantity", head + "limit eg .. 1\n", ErrUnknownQuantity, 3, 7, "eg_ev, eg_err_ev"},
		{"unknown-wafer-stat", head + "limit wafer.eg_ev.median .. 1\n", ErrUnknownQuantity, 3, 7, "nonuniformity"},
		{"unknown-wafer-field", head + "limit wafer.gap.mean .. 1\n", ErrUnknownQuantity, 3, 7, "wafer.<quantity>.<stat>"},
		{"quantity-missing", head + "limit\n", specio.ErrSyntax, 3, 7, "limit QUANTITY"},
		{"lo-above-hi", head + "limit eg_ev 1.435 .. 1.415\n", specio.ErrRange, 3, 13, "above upper bound"},
		{"bad-lo", head + "limit eg_ev 1,4 .. 1.5\n", specio.ErrSyntax, 3, 13, "not a number"},
		{"bad-hi", head + "limit eg_ev 1.4 .. 1.5x\n", specio.ErrSyntax, 3, 20, "not a number"},
		{"inf-bound", head + "limit eg_ev .. Inf\n", specio.ErrSyntax, 3, 16, "not a number"},
		{"unit-after-bound", head + "limit eg_ev 1.4 .. 1.5 eV\n", specio.ErrSyntax, 3, 24, "unit is part of the quantity"},
		{"no-dots", head + "limit eg_ev 1.4 1.5\n", specio.ErrSyntax, 3, 13, "LO .. HI"},
		{"no-bounds", head + "limit eg_ev ..\n", specio.ErrSyntax, 3, 13, "at least one bound"},
		{"no-interval", head + "limit eg_ev\n", specio.ErrSyntax, 3, 12, "LO .. HI"},
		{"three-dots", head + "limit eg_ev 1...2\n", specio.ErrSyntax, 3, 14, "one \"..\""},
		{"two-intervals", head + "limit eg_ev 1 .. 2 .. 3\n", specio.ErrSyntax, 3, 20, "one \"..\""},
		{"string-bound", head + "limit eg_ev \"1\" .. 2\n", specio.ErrSyntax, 3, 13, "numbers, not strings"},
		{"duplicate-limit", head + "limit eg_ev .. 2\nlimit EG_EV 1 ..\n", ErrDuplicate, 4, 7, "lines 3 and 4"},
		{"guard-missing", "bandedge-spec 1\nlimit eg_ev .. 2\n", specio.ErrSyntax, 2, 0, "no guard"},
		{"guard-twice", head + "guard none\n", ErrDuplicate, 3, 1, "lines 2 and 3"},
		{"guard-unknown", "bandedge-spec 1\nguard strict\n", specio.ErrSyntax, 2, 7, "expanded, stat or none"},
		{"guard-extra-word", "bandedge-spec 1\nguard none please\n", specio.ErrSyntax, 2, 12, "guard expanded|stat|none"},
		{"name-unquoted", head + "name release\n", specio.ErrSyntax, 3, 6, "quoted string"},
		{"name-unterminated", head + "name \"release\n", specio.ErrSyntax, 3, 6, "unterminated"},
		{"name-twice", head + "name \"a\"\nname \"b\"\n", ErrDuplicate, 4, 1, "lines 3 and 4"},
		{"no-limits", head + "name \"a\"\n", specio.ErrNoData, 3, 0, "no limit"},
		{"binary", head + "\x00", specio.ErrEncoding, 3, 1, "NUL"},
		{"invalid-utf8", head + "name \"\xff\"\n", specio.ErrEncoding, 3, 7, "UTF-8"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			sp, err := ReadSpec(strings.NewReader(tc.in), "s.spec")
			var pe *specio.ParseError
			if !errors.Is(err, tc.err) || !errors.As(err, &pe) || sp != nil {
				t.Fatalf("error %v, want %v as a *specio.ParseError", err, tc.err)
			}
			if pe.File != "s.spec" || pe.Line != tc.line || pe.Column != tc.col || !strings.Contains(pe.Detail, tc.detail) {
				t.Fatalf("%v; want s.spec:%d:%d with %q", err, tc.line, tc.col, tc.detail)
			}
		})
	}
}

func TestReadSpecTooLarge(t *testing.T) {
	in := "bandedge-spec 1\n" + strings.Repeat("# padding\n", MaxSpecBytes/10+1)
	if _, err := ReadSpec(strings.NewReader(in), "big.spec"); !errors.Is(err, specio.ErrTooLarge) {
		t.Fatalf("error %v, want ErrTooLarge", err)
	}
}

func TestQuantities(t *testing.T) {
	q := Quantities()
	// 11 scan-level fields, each with 7 wafer statistics.
	if len(q) != 11+11*7 {
		t.Fatalf("%d quantities, want %d", len(q), 11+11*7)
	}
	for _, name := range q {
		if !KnownQuantity(name) {
			t.Errorf("Quantities lists %q but KnownQuantity rejects it", name)
		}
	}
	for _, name := range []string{"EG_EV", "wafer.eg_ev", "wafer..mean", "wafer.eg_ev.mean.x", "eg", ""} {
		if KnownQuantity(name) {
			t.Errorf("KnownQuantity(%q) = true", name)
		}
	}
}

func TestLimitString(t *testing.T) {
	inf := math.Inf(1)
	for _, tc := range []struct {
		l    Limit
		want string
	}{
		{Limit{Quantity: "eg_ev", Lo: 1.415, Hi: 1.435}, "1.415 ≤ eg_ev ≤ 1.435"},
		{Limit{Quantity: "urbach_ev", Lo: -inf, Hi: 0.012}, "urbach_ev ≤ 0.012"},
		{Limit{Quantity: "points_used", Lo: 50, Hi: inf}, "points_used ≥ 50"},
	} {
		if got := tc.l.String(); got != tc.want {
			t.Errorf("String() = %q, want %q", got, tc.want)
		}
	}
}
