package specio

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// sampleDir holds the invented sample exports (see testdata/README.md,
// section "specio").
var sampleDir = filepath.Join("..", "..", "testdata", "specio")

// TestTestdata reads every sample export. The expected values are read off
// the files by eye: point count, the x values of the first and last data
// lines as written, their line numbers, units and kinds.
func TestTestdata(t *testing.T) {
	for _, tc := range []struct {
		file               string
		xunit              XUnit
		ykind              YKind // kind as found (SourceYKind)
		n                  int
		firstX, lastX      float64 // x on the first and last data lines of the file
		firstLine, lastLin int
		r                  bool
		opts               func(*Reader)
		err                error
		errLine            int
	}{
		{file: "wafer07_comma_nm_pctT.csv", xunit: Nanometre, ykind: TransmittancePercent, n: 31, firstX: 840, lastX: 960, firstLine: 7, lastLin: 37},
		{file: "wafer08_semicolon_decimal_comma.csv", xunit: Nanometre, ykind: TransmittancePercent, n: 25, firstX: 960, lastX: 840, firstLine: 6, lastLin: 30},
		{file: "film03_tab_ev_abs.txt", xunit: ElectronVolt, ykind: Absorbance, n: 30, firstX: 1.30, lastX: 1.59, firstLine: 4, lastLin: 34},
		{file: "film04_utf16le_crlf.txt", xunit: Nanometre, ykind: Absorbance, n: 21, firstX: 900, lastX: 800, firstLine: 5, lastLin: 25},
		{file: "film05_utf16be.csv", xunit: Micrometre, ykind: TransmittancePercent, n: 20, firstX: 0.80, lastX: 0.99, firstLine: 3, lastLin: 22},
		{file: "ir06_wavenumber_pctT.csv", xunit: Wavenumber, ykind: TransmittancePercent, n: 21, firstX: 4000, lastX: 2000, firstLine: 3, lastLin: 23},
		{file: "slab09_um_alpha.dat", xunit: Micrometre, ykind: Alpha, n: 25, firstX: 0.84, lastX: 0.96, firstLine: 5, lastLin: 29},
		{file: "wafer10_T_R_fraction.csv", xunit: Nanometre, ykind: Transmittance, n: 21, firstX: 850, lastX: 950, firstLine: 3, lastLin: 23, r: true},
		{file: "noheader11.txt", xunit: Nanometre, ykind: TransmittancePercent, n: 11, firstX: 850, lastX: 950, firstLine: 1, lastLin: 11,
			opts: func(r *Reader) { r.XUnit, r.YKind = Nanometre, TransmittancePercent }},
		{file: "noheader11.txt", err: ErrUnit, errLine: 1},
		{file: "bom12_crlf_nm_abs.csv", xunit: Nanometre, ykind: Absorbance, n: 11, firstX: 850, lastX: 950, firstLine: 2, lastLin: 12},
		{file: "commentheader13.txt", xunit: Nanometre, ykind: Absorbance, n: 11, firstX: 950, lastX: 850, firstLine: 3, lastLin: 13},
		{file: "twoline14.csv", xunit: Nanometre, ykind: TransmittancePercent, n: 11, firstX: 850, lastX: 950, firstLine: 5, lastLin: 15},
		{file: "bad_duplicate_x15.csv", err: ErrNotMonotonic, errLine: 4},
		{file: "bad_signal16.csv", err: ErrAmbiguous, errLine: 1},
		{file: "bad_signal16.csv", xunit: Nanometre, ykind: TransmittancePercent, n: 3, firstX: 850, lastX: 860, firstLine: 2, lastLin: 4,
			opts: func(r *Reader) { r.YKind = TransmittancePercent }},
	} {
		t.Run(tc.file, func(t *testing.T) {
			b, err := os.ReadFile(filepath.Join(sampleDir, tc.file))
			if err != nil {
				t.Fatal(err)
			}
			r := NewReader(bytes.NewReader(b), tc.file)
			if tc.opts != nil {
				tc.opts(r)
			}
			s, err := r.Read()
			if tc.err != nil {
				var pe *ParseError
				if !errors.Is(err, tc.err) || !errors.As(err, &pe) || pe.Line != tc.errLine {
					t.Fatalf("error %v, want %v at line %d", err, tc.err, tc.errLine)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if s.Len() != tc.n || s.SourceXUnit != tc.xunit || s.SourceYKind != tc.ykind || (s.R != nil) != tc.r {
				t.Fatalf("got %d points, %v, %v, R %v; want %d, %v, %v, R %v (notes %q)",
					s.Len(), s.SourceXUnit, s.SourceYKind, s.R != nil, tc.n, tc.xunit, tc.ykind, tc.r, s.Notes)
			}
			// Find the file's first and last data lines among the points.
			for _, want := range []struct {
				line int
				x    float64
			}{{tc.firstLine, tc.firstX}, {tc.lastLin, tc.lastX}} {
				i := -1
				for j, l := range s.Lines {
					if l == want.line {
						i = j
					}
				}
				if i < 0 {
					t.Fatalf("no point from line %d; lines %v", want.line, s.Lines)
				}
				// Energies from CODATA 2018 hc/e (codataHC); 1e-9 relative
				// for HC's rounding.
				if e := wantEnergy(want.x, tc.xunit); !scalar.EqualWithinAbsOrRel(s.E[i], e, 0, energyRelTol) {
					t.Errorf("line %d: E = %.10g, want %.10g", want.line, s.E[i], e)
				}
			}
			checkProperties(t, s)
		})
	}
}

// checkProperties asserts what every spectrum from Read must satisfy (the
// FuzzRead property).
func checkProperties(t *testing.T, s *Spectrum) {
	t.Helper()
	n := len(s.E)
	if n < 1 || len(s.Y) != n || len(s.Lines) != n || s.R != nil && len(s.R) != n {
		t.Fatalf("lengths E %d, Y %d, Lines %d, R %d", n, len(s.Y), len(s.Lines), len(s.R))
	}
	switch s.Kind {
	case Transmittance, Absorbance, Alpha:
	default:
		t.Errorf("Kind = %v", s.Kind)
	}
	for i := range n {
		if !(s.E[i] > 0) || math.IsInf(s.E[i], 0) || math.IsNaN(s.Y[i]) || math.IsInf(s.Y[i], 0) {
			t.Fatalf("point %d not finite: E %v, Y %v", i, s.E[i], s.Y[i])
		}
		if s.R != nil && (math.IsNaN(s.R[i]) || math.IsInf(s.R[i], 0)) {
			t.Fatalf("R[%d] = %v", i, s.R[i])
		}
		if s.Lines[i] < 1 {
			t.Fatalf("Lines[%d] = %d", i, s.Lines[i])
		}
		if i > 0 && !(s.E[i] > s.E[i-1]) {
			t.Fatalf("E not strictly ascending at %d: %v, %v", i, s.E[i-1], s.E[i])
		}
	}
	if s.Meta == nil {
		t.Errorf("Meta is nil")
	}
}
