package sheet

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/io/specio"
)

// sampleDir holds the invented example sheets and specs (see
// testdata/README.md, section "sheet").
var sampleDir = filepath.Join("..", "..", "testdata", "sheet")

func open(t *testing.T, name string) *os.File {
	t.Helper()
	f, err := os.Open(filepath.Join(sampleDir, name))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// TestTestdataSamples reads the example sheets; expected values are read
// off the files by eye.
func TestTestdataSamples(t *testing.T) {
	s, err := ReadSamples(open(t, "km2611_samples.csv"), "km2611_samples.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Rows) != 5 || len(s.ExtraColumns) != 1 || s.ExtraColumns[0] != "operator" {
		t.Fatalf("%d rows, extra columns %q", len(s.Rows), s.ExtraColumns)
	}
	w3, ok := s.Lookup("/data/km2611_w03_sqz_um_abs.jdx")
	if !ok || w3.Line != 6 || w3.Wafer != "W03" || w3.Notes != "edge, 5 mm from flat" || w3.Index != nil {
		t.Fatalf("W03 row %+v, %v", w3, ok)
	}
	// thickness_err 0.03 without a unit takes the µm of thickness_um.
	if !scalar.EqualWithinAbsOrRel(*w3.ThicknessCM, 0.98e-4, 0, convTol) || w3.ThicknessErr.Relative ||
		!scalar.EqualWithinAbsOrRel(w3.ThicknessErr.Value, 0.03e-4, 0, convTol) {
		t.Errorf("W03 thickness %g ± %+v", *w3.ThicknessCM, *w3.ThicknessErr)
	}
	w4, _ := s.Lookup("km2611_w04_xypoints_ev_abs.jdx")
	if w4.ThicknessCM != nil || w4.TemperatureK != nil || w4.YMM == nil || *w4.YMM != -45 {
		t.Errorf("W04 row %+v", w4)
	}
	w5, _ := s.Lookup("km2611_w05_difdup_cm1_pctT.jdx")
	if w5.TemperatureK == nil || *w5.TemperatureK != 296.5 || w5.IndexErr == nil || *w5.IndexErr != (Uncertainty{0.01, true}) {
		t.Errorf("W05 row %+v", w5)
	}

	s, err = ReadSamples(open(t, "km2611_samples_semicolon.csv"), "km2611_samples_semicolon.csv")
	if err != nil {
		t.Fatal(err)
	}
	e, ok := s.Lookup("W01_e.csv")
	// 21,85 °C = 295 K; 0,98 µm; 2 % relative; line 4 (line 2 is a comment).
	if !ok || e.Line != 4 || math.Abs(*e.TemperatureK-295) > 1e-12 || !scalar.EqualWithinAbsOrRel(*e.ThicknessCM, 0.98e-4, 0, convTol) ||
		*e.ThicknessErr != (Uncertainty{0.02, true}) || e.Extra[0] != (KV{"Bemerkung", "Rand"}) || *e.XMM != 45 {
		t.Errorf("W01_e row %+v, %v", e, ok)
	}

	_, err = ReadSamples(open(t, "bad_duplicate_row.csv"), "bad_duplicate_row.csv")
	var pe *specio.ParseError
	if !errors.Is(err, ErrDuplicate) || !errors.As(err, &pe) || pe.Line != 5 || pe.Column != 1 {
		t.Errorf("bad_duplicate_row.csv: %v, want ErrDuplicate at 5:1", err)
	}
}

func TestTestdataSpecs(t *testing.T) {
	sp, err := ReadSpec(open(t, "km2611_release.spec"), "km2611_release.spec")
	if err != nil {
		t.Fatal(err)
	}
	if sp.Guard != GuardExpanded || len(sp.Limits) != 7 || sp.Title != "KM-2611 GaAs epi, release (fictional)" {
		t.Fatalf("%+v", sp)
	}
	if l, ok := sp.Limit("eg_ev"); !ok || l.Lo != 1.415 || l.Hi != 1.435 || l.Line != 7 {
		t.Errorf("eg_ev limit %+v, %v", l, ok)
	}
	for _, tc := range []struct {
		file      string
		err       error
		line, col int
	}{
		{"bad_lo_above_hi.spec", specio.ErrRange, 4, 13},
		{"bad_unknown_quantity.spec", ErrUnknownQuantity, 4, 7},
	} {
		_, err := ReadSpec(open(t, tc.file), tc.file)
		var pe *specio.ParseError
		if !errors.Is(err, tc.err) || !errors.As(err, &pe) || pe.Line != tc.line || pe.Column != tc.col {
			t.Errorf("%s: %v, want %v at %d:%d", tc.file, err, tc.err, tc.line, tc.col)
		}
	}
}
