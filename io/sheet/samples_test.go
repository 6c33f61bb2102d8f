package sheet

import (
	"errors"
	"fmt"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/io/specio"
)

// Unit conversions are exact SI prefixes (BIPM SI Brochure, 9th ed.,
// 2019) and the Celsius offset 273.15 K (exact by definition), so values
// agree to a few ulps: 1e-12 relative.
const convTol = 1e-12

func f(v float64) *float64 { return &v }

func fmtPtr(p *float64) string {
	if p == nil {
		return "nil"
	}
	return fmt.Sprintf("%.15g", *p)
}

func samePtr(got, want *float64) bool {
	if got == nil || want == nil {
		return got == nil && want == nil
	}
	return scalar.EqualWithinAbsOrRel(*got, *want, convTol, convTol)
}

func sameU(got, want *Uncertainty) bool {
	if got == nil || want == nil {
		return got == nil && want == nil
	}
	return got.Relative == want.Relative && scalar.EqualWithinAbsOrRel(got.Value, want.Value, convTol, convTol)
}

func TestReadSamples(t *testing.T) {
	for _, tc := range []struct {
		name  string
		in    string
		want  []Sample // File, Line and the fields compared
		extra []string // ExtraColumns
		note  string   // a substring one of Notes must contain
	}{
		{
			name: "comma/all-columns",
			in: "# lot KM-2611 (fictional)\n" +
				"file,wafer,lot,thickness_um,thickness_err,index,index_err,x_mm,y_mm,temperature_k,operator,notes\n" +
				"W01_c.csv,W01,KM-2611,1.02,2%,3.6,1%,0,0,295,ab,centre\n" +
				"scans/W01_e.csv,W01,KM-2611,0.98,0.03um,,0.05,45,-2.5,295,,edge\n" +
				"W02_c.jdx,W02,KM-2611,,,,,,,,cd,\n",
			want: []Sample{
				{File: "W01_c.csv", Line: 3, ThicknessCM: f(1.02e-4), ThicknessErr: &Uncertainty{0.02, true}, Index: f(3.6),
					IndexErr: &Uncertainty{0.01, true}, Wafer: "W01", Lot: "KM-2611", XMM: f(0), YMM: f(0), TemperatureK: f(295),
					Notes: "centre", Extra: []KV{{"operator", "ab"}}},
				{File: "scans/W01_e.csv", Line: 4, ThicknessCM: f(0.98e-4), ThicknessErr: &Uncertainty{0.03e-4, false},
					IndexErr: &Uncertainty{0.05, false}, Wafer: "W01", Lot: "KM-2611", XMM: f(45), YMM: f(-2.5),
					TemperatureK: f(295), Notes: "edge", Extra: []KV{{"operator", ""}}},
				{File: "W02_c.jdx", Line: 5, Wafer: "W02", Lot: "KM-2611", Extra: []KV{{"operator", "cd"}}},
			},
			extra: []string{"operator"},
			note:  `"thickness_um": thickness in um`,
		},
		{
			name: "semicolon/decimal-comma/BOM/CRLF/celsius",
			in: "\ufeffScan File;Thickness (µm);u_thickness;n;Temp (C);X;Pos Y (um)\r\n" +
				"a.csv;1,25;0,05;3,5;21,85;12,5;2500\r\n" +
				"b.csv;350 nm;1,5 %;;26,85 °C;-1;\r\n",
			want: []Sample{
				{File: "a.csv", Line: 2, ThicknessCM: f(1.25e-4), ThicknessErr: &Uncertainty{0.05e-4, false}, Index: f(3.5),
					TemperatureK: f(295), XMM: f(12.5), YMM: f(2.5)},
				{File: "b.csv", Line: 3, ThicknessCM: f(350e-7), ThicknessErr: &Uncertainty{0.015, true}, TemperatureK: f(300), XMM: f(-1)},
			},
			note: "as in column \"Thickness (µm)\"",
		},
		{
			name: "units-in-cells/synonyms/quotes",
			in: "filename,d,d_err,refractive_index,temperature,wafer_id,batch,comments,\"Run, #\"\n" +
				"c.csv,0.5mm,10um,1.5,77K,W9,L1,\"cooled, then measured\",7\n" +
				"\n" +
				",,,,,,,,\n" +
				"d.csv,1cm,,,300k,,,,\n",
			want: []Sample{
				{File: "c.csv", Line: 2, ThicknessCM: f(0.05), ThicknessErr: &Uncertainty{10e-4, false}, Index: f(1.5), TemperatureK: f(77),
					Wafer: "W9", Lot: "L1", Notes: "cooled, then measured", Extra: []KV{{"Run, #", "7"}}},
				{File: "d.csv", Line: 5, ThicknessCM: f(1), TemperatureK: f(300), Extra: []KV{{"Run, #", ""}}},
			},
			extra: []string{"Run, #"},
		},
		{
			name: "trailing-empty-columns",
			in:   "file,thickness,,\nx.csv,2um,,\n",
			want: []Sample{{File: "x.csv", Line: 2, ThicknessCM: f(2e-4)}},
		},
		{
			name:  "known-stem-unknown-unit",
			in:    "file,thickness_nominal,d_max\nx.csv,2um,3\n",
			want:  []Sample{{File: "x.csv", Line: 2, Extra: []KV{{"thickness_nominal", "2um"}, {"d_max", "3"}}}},
			extra: []string{"thickness_nominal", "d_max"},
			note:  `"thickness_nominal" kept as an extra column: "nominal" is not a unit`,
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := ReadSamples(strings.NewReader(tc.in), "s.csv")
			if err != nil {
				t.Fatal(err)
			}
			if len(s.Rows) != len(tc.want) {
				t.Fatalf("%d rows, want %d", len(s.Rows), len(tc.want))
			}
			if fmt.Sprint(s.ExtraColumns) != fmt.Sprint(tc.extra) {
				t.Errorf("ExtraColumns %q, want %q", s.ExtraColumns, tc.extra)
			}
			if tc.note != "" && !strings.Contains(strings.Join(s.Notes, "\n"), tc.note) {
				t.Errorf("no note with %q in %q", tc.note, s.Notes)
			}
			for i, w := range tc.want {
				g := s.Rows[i]
				if g.File != w.File || g.Line != w.Line || g.Wafer != w.Wafer || g.Lot != w.Lot || g.Notes != w.Notes {
					t.Errorf("row %d: %q line %d wafer %q lot %q notes %q; want %q %d %q %q %q", i, g.File, g.Line, g.Wafer, g.Lot, g.Notes,
						w.File, w.Line, w.Wafer, w.Lot, w.Notes)
				}
				for _, p := range []struct {
					name      string
					got, want *float64
				}{
					{"ThicknessCM", g.ThicknessCM, w.ThicknessCM}, {"Index", g.Index, w.Index}, {"XMM", g.XMM, w.XMM},
					{"YMM", g.YMM, w.YMM}, {"TemperatureK", g.TemperatureK, w.TemperatureK},
				} {
					if !samePtr(p.got, p.want) {
						t.Errorf("row %d: %s = %s, want %s", i, p.name, fmtPtr(p.got), fmtPtr(p.want))
					}
				}
				if !sameU(g.ThicknessErr, w.ThicknessErr) || !sameU(g.IndexErr, w.IndexErr) {
					t.Errorf("row %d: ThicknessErr %+v, IndexErr %+v; want %+v, %+v", i, g.ThicknessErr, g.IndexErr, w.ThicknessErr, w.IndexErr)
				}
				if fmt.Sprint(g.Extra) != fmt.Sprint(w.Extra) {
					t.Errorf("row %d: Extra %q, want %q", i, g.Extra, w.Extra)
				}
			}
		})
	}
}

func TestLookup(t *testing.T) {
	s, err := ReadSamples(strings.NewReader("file,thickness\nscans/W01_c.csv,1um\nC:\\data\\W02.jdx,2um\nW03.csv,\n"), "s.csv")
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		file  string
		ok    bool
		thick *float64
	}{
		{"W01_c.csv", true, f(1e-4)},
		{"/mnt/lab/run7/W01_c.csv", true, f(1e-4)},
		{`D:\other\W02.jdx`, true, f(2e-4)},
		{"W03.csv", true, nil}, // row present, thickness not given
		{"w01_c.csv", false, nil},
		{"W01_c", false, nil},
		{"W04.csv", false, nil},
	} {
		got, ok := s.Lookup(tc.file)
		if ok != tc.ok || !samePtr(got.ThicknessCM, tc.thick) {
			t.Errorf("Lookup(%q) = %s, %v; want %s, %v", tc.file, fmtPtr(got.ThicknessCM), ok, fmtPtr(tc.thick), tc.ok)
		}
	}
	var none *Samples
	if _, ok := none.Lookup("x"); ok {
		t.Error("nil Samples found a row")
	}
}

func TestUncertainty(t *testing.T) {
	rel := Uncertainty{Value: 0.02, Relative: true}
	absU := Uncertainty{Value: 0.05e-4}
	if r, ok := rel.Rel(1e-4); !ok || r != 0.02 {
		t.Errorf("2%% Rel = %g, %v", r, ok)
	}
	if r, ok := absU.Rel(1e-4); !ok || !scalar.EqualWithinAbsOrRel(r, 0.05, 0, convTol) {
		t.Errorf("0.05um of 1um Rel = %g, %v; want 0.05", r, ok)
	}
	if _, ok := absU.Rel(0); ok {
		t.Error("absolute uncertainty of a zero nominal has a relative value")
	}
	if a := rel.Abs(-2e-4); !scalar.EqualWithinAbsOrRel(a, 4e-6, 0, convTol) {
		t.Errorf("2%% of 2um Abs = %g, want 4e-6", a)
	}
}

func TestReadSamplesErrors(t *testing.T) {
	for _, tc := range []struct {
		name      string
		in        string
		err       error
		line, col int
		detail    string // a substring of the message
	}{
		{"duplicate-row", "file,thickness\na.csv,1um\nb.csv,1um\nrun2/a.csv,2um\n", ErrDuplicate, 4, 1, "lines 2 and 4"},
		{"duplicate-column", "file,thickness_um,d\n", ErrDuplicate, 1, 19, "both thickness"},
		{"duplicate-extra", "file,Operator,operator\n", ErrDuplicate, 1, 15, "repeats column 2"},
		{"no-file-column", "wafer,thickness\nW1,1um\n", specio.ErrSyntax, 1, 0, "no file column"},
		{"thickness-no-unit", "file,thickness\na.csv,1.2\n", specio.ErrUnit, 2, 7, "has no unit"},
		{"thickness-zero", "file,thickness_um\na.csv,0\n", specio.ErrRange, 2, 7, "positive"},
		{"thickness-negative", "file,thickness\na.csv,-1um\n", specio.ErrRange, 2, 7, "positive"},
		{"thickness-word", "file,thickness\na.csv,thick\n", specio.ErrUnit, 2, 7, "not a length"},
		{"thickness-NaN", "file,thickness\na.csv,NaNum\n", specio.ErrUnit, 2, 7, "not a number"},
		{"thickness-err-negative", "file,thickness_err\na.csv,-2%\n", specio.ErrRange, 2, 7, "negative"},
		{"thickness-err-bad-percent", "file,thickness_err\na.csv,x%\n", specio.ErrSyntax, 2, 7, "percentage"},
		{"index-word", "file,index\na.csv,high\n", specio.ErrSyntax, 2, 7, "not a number"},
		{"index-zero", "file,n\na.csv,0\n", specio.ErrRange, 2, 7, "positive"},
		{"index-err-negative", "file,n_err\na.csv,-0.1\n", specio.ErrRange, 2, 7, "negative"},
		{"position-word", "file,x_mm\na.csv,left\n", specio.ErrSyntax, 2, 7, "not a number"},
		{"position-overflow", "file,x_mm,y_cm\na.csv,0,1e308\n", specio.ErrRange, 2, 9, "too large"},
		{"position-overflow-cell-unit", "file,x\na.csv,1e308cm\n", specio.ErrRange, 2, 7, "too large"},
		{"temperature-no-unit", "file,temperature\na.csv,300\n", specio.ErrUnit, 2, 7, "no unit"},
		{"temperature-below-zero", "file,temperature_c\na.csv,-300\n", specio.ErrRange, 2, 7, "absolute zero"},
		{"decimal-comma-with-commas", "file,thickness_um\na.csv,\"1,2\"\n", specio.ErrUnit, 2, 7, "not a length"},
		{"cell-beyond-header", "file,wafer\na.csv,W1,extra\n", specio.ErrSyntax, 2, 10, "beyond the last header column"},
		{"cell-under-empty-header", "file,,wafer\na.csv,x,W1\n", specio.ErrSyntax, 2, 7, "no header"},
		{"row-without-file", "wafer,file\nW1,\n", specio.ErrSyntax, 2, 4, "without a file"},
		{"bare-quote", "file,notes\na.csv,5\" wafer\n", specio.ErrSyntax, 2, 8, "bare"},
		{"empty", "", specio.ErrNoData, 0, 0, "empty"},
		{"comments-only", "# nothing\n\n", specio.ErrNoData, 0, 0, "empty"},
		{"header-only", "file,thickness\n", specio.ErrNoData, 1, 0, "no sample rows"},
		{"binary", "file\n\x00\x01", specio.ErrEncoding, 2, 1, "NUL"},
		{"latin-1", "file,notes\na.csv,caf\xe9\n", specio.ErrEncoding, 2, 10, "UTF-8"},
		{"utf-16", "\xff\xfef\x00", specio.ErrEncoding, 1, 1, "UTF-16"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := ReadSamples(strings.NewReader(tc.in), "s.csv")
			var pe *specio.ParseError
			if !errors.Is(err, tc.err) || !errors.As(err, &pe) || s != nil {
				t.Fatalf("error %v, want %v as a *specio.ParseError", err, tc.err)
			}
			if pe.File != "s.csv" || pe.Line != tc.line || pe.Column != tc.col || !strings.Contains(pe.Detail, tc.detail) {
				t.Fatalf("%v; want s.csv:%d:%d with %q", err, tc.line, tc.col, tc.detail)
			}
		})
	}
}

func TestReadSamplesTooLarge(t *testing.T) {
	in := "file\n" + strings.Repeat("a.csv\n", MaxSheetBytes/6+1)
	_, err := ReadSamples(strings.NewReader(in), "big.csv")
	if !errors.Is(err, specio.ErrTooLarge) {
		t.Fatalf("error %v, want ErrTooLarge", err)
	}
}

func TestReadSamplesTooManyColumns(t *testing.T) {
	in := "file" + strings.Repeat(",c", MaxSheetColumns) + "\na.csv\n"
	_, err := ReadSamples(strings.NewReader(in), "wide.csv")
	var pe *specio.ParseError
	// Column MaxSheetColumns+1 starts at byte 5 + 2·(MaxSheetColumns−1) + 1.
	if !errors.Is(err, specio.ErrTooLarge) || !errors.As(err, &pe) || pe.Line != 1 || pe.Column != 6+2*(MaxSheetColumns-1) {
		t.Fatalf("error %v, want ErrTooLarge at 1:%d", err, 6+2*(MaxSheetColumns-1))
	}
}

func TestNormHeader(t *testing.T) {
	for in, want := range map[string]string{
		"Thickness (µm)": "thickness_µm", " file ": "file", "Pos-Y [mm]": "pos_y_mm", "x__mm": "x_mm", "(a)": "a", "": "",
	} {
		if got := normHeader(in); got != want {
			t.Errorf("normHeader(%q) = %q, want %q", in, got, want)
		}
	}
}
