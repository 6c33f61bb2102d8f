package scan_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/fit/scan"
	"bandedge/io/specio"
)

// corruptDir is the corrupted-file corpus (testdata/README.md, section
// corrupt): damaged derivatives of the batch test lot's scan
// KM2611-W01-s01.csv, written by testdata/corrupt/make.py.
var corruptDir = filepath.Join("..", "..", "testdata", "corrupt")

// codataHC is hc/e in eV·nm from the exact CODATA 2018 defining constants
// (h = 6.62607015e-34 J s, c = 299792458 m/s, e = 1.602176634e-19 C;
// Tiesinga et al., Rev. Mod. Phys. 93, 025010, 2021; from memory).
const codataHC = 6.62607015e-34 * 299792458 / 1.602176634e-19 * 1e9

// TestCorruptCorpus reads every file of the corpus through scan.Analyze,
// the reader chosen by content as the batch does, with the batch lot's
// settings. Each case either fails with a *specio.ParseError that names
// the file and the line (and column where one cell is at fault), whose
// message starts "file:line", wrapping the sentinel that classifies it,
// or — where real instruments write files that way — is read correctly:
// all 301 points of the source scan, from 1000 nm (T = 51.670 %) to
// 700 nm, and fitted. The expected lines are where make.py puts the
// damage; line 0 means the whole input (an empty file has no line).
func TestCorruptCorpus(t *testing.T) {
	tests := []struct {
		file      string
		err       error // nil: read correctly
		line, col int
		note      string // read: a phrase of Spectrum.Notes
		meta      [2]string
	}{
		{file: "truncated.csv", err: specio.ErrSyntax, line: 127, col: 7},
		{file: "mixed_separators.csv", err: specio.ErrSyntax, line: 158, col: 1},
		{file: "mixed_decimal.csv", err: specio.ErrSyntax, line: 47, col: 1},
		{file: "unit_um_in_nm_column.csv", err: specio.ErrUnit, line: 308, col: 1},
		{file: "unit_nm_in_ev_column.csv", err: specio.ErrUnit, line: 8, col: 1},
		{file: "unit_pctT_in_abs_column.csv", err: specio.ErrRange, line: 107, col: 7},
		{file: "nonmonotonic.csv", err: specio.ErrNotMonotonic, line: 208, col: 1},
		{file: "duplicated_x.csv", err: specio.ErrNotMonotonic, line: 68, col: 1},
		{file: "all_nan.csv", err: specio.ErrNoData, line: 8, col: 8},
		{file: "fraction_above_one.csv", err: specio.ErrRange, line: 107, col: 7},
		{file: "negative_absorbance.csv", err: specio.ErrRange, line: 107, col: 7},
		{file: "utf16le_no_bom.txt", err: specio.ErrEncoding, line: 1, col: 2},
		{file: "utf16_truncated.txt", err: specio.ErrEncoding, line: 136, col: 8},
		{file: "header_only.csv", err: specio.ErrNoData, line: 7},
		{file: "empty.csv", err: specio.ErrNoData, line: 0},
		{file: "binary_png.csv", err: specio.ErrEncoding, line: 3, col: 1},
		{file: "binary_no_nul.csv", err: specio.ErrEncoding, line: 1, col: 1},
		{file: "nul_padded.csv", err: specio.ErrEncoding, line: 309, col: 1},
		{file: "excel_na.csv", err: specio.ErrSyntax, line: 107, col: 7},
		{file: "decimal_comma_comma_sep.csv", err: specio.ErrSyntax, line: 8},
		{file: "overflow.csv", err: specio.ErrRange, line: 17, col: 7},
		{file: "one_column.csv", err: specio.ErrNoData, line: 2},
		{file: "truncated.jdx", err: specio.ErrSyntax, line: 21},

		{file: "utf16le_bom_crlf.txt", note: "UTF-16 little-endian"},
		{file: "crlf.csv", note: "comma-separated"},
		{file: "latin1_micro.csv", note: "Windows-1252", meta: [2]string{"Gerät", "KM-DB2"}},
		{file: "trailing_summary.csv", note: "trailing block", meta: [2]string{"Average T (%)", "45.21"}},
		{file: "excel_sep_line.csv", note: "semicolon-separated, decimal comma"},
	}
	files, err := filepath.Glob(filepath.Join(corruptDir, "*.*"))
	if err != nil {
		t.Fatal(err)
	}
	covered := map[string]bool{"make.py": true}
	for _, tc := range tests {
		covered[tc.file] = true
	}
	for _, f := range files {
		if !covered[filepath.Base(f)] {
			t.Errorf("%s is in the corpus but not in the table", filepath.Base(f))
		}
	}
	settings := scan.Settings{Thickness: 2e-4, Index: 3.6, IndexErr: 0.05, WavelengthErr: 0.2, Coverage: 2}
	for _, tc := range tests {
		t.Run(tc.file, func(t *testing.T) {
			path := filepath.Join(corruptDir, tc.file)
			b, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			o, err := scan.Analyze(context.Background(), path, b, settings)
			if tc.err != nil {
				var pe *specio.ParseError
				if !errors.As(err, &pe) || !errors.Is(err, tc.err) {
					t.Fatalf("error %v, want a *specio.ParseError wrapping %v", err, tc.err)
				}
				if pe.File != tc.file || pe.Line != tc.line || pe.Column != tc.col {
					t.Errorf("at %s:%d:%d, want %s:%d:%d (%v)", pe.File, pe.Line, pe.Column, tc.file, tc.line, tc.col, err)
				}
				where := tc.file + ":"
				if tc.line > 0 {
					where += strconv.Itoa(tc.line) + ":"
				}
				if msg := err.Error(); !strings.HasPrefix(msg, where) || len(msg) < len(where)+20 {
					t.Errorf("message %q does not start with %q and say what is wrong", msg, where)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			sp := o.Spectrum
			n := sp.Len()
			// 301 points, 700–1000 nm: E from CODATA hc, 1e-9 relative for
			// the reader's rounded HC; T at 1000 nm is 51.670 % as written.
			if n != 301 || !scalar.EqualWithinAbsOrRel(sp.E[0], codataHC/1000, 0, 1e-9) ||
				!scalar.EqualWithinAbsOrRel(sp.E[n-1], codataHC/700, 0, 1e-9) || !scalar.EqualWithinAbsOrRel(sp.Y[0], 0.5167, 0, 1e-12) {
				t.Fatalf("%d points, E %v…%v, T[0] %v", n, sp.E[0], sp.E[n-1], sp.Y[0])
			}
			if sp.Kind != specio.Transmittance {
				t.Errorf("kind %v", sp.Kind)
			}
			found := false
			for _, nt := range sp.Notes {
				found = found || strings.Contains(nt, tc.note)
			}
			if !found {
				t.Errorf("no note %q in %q", tc.note, sp.Notes)
			}
			if tc.meta[0] != "" && sp.Meta[tc.meta[0]] != tc.meta[1] {
				t.Errorf("Meta[%q] = %q, want %q (meta %v)", tc.meta[0], sp.Meta[tc.meta[0]], tc.meta[1], sp.Meta)
			}
			if !o.Result.Converged {
				t.Errorf("fit did not converge: %v", o.Result.Warnings)
			}
		})
	}
}
