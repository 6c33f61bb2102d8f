package jcampdx

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"bandedge/io/specio"
)

// sampleDir holds the invented example files (see testdata/README.md,
// section "jcampdx").
var sampleDir = filepath.Join("..", "..", "testdata", "jcampdx")

func readSample(t *testing.T, name string) (*specio.Spectrum, error) {
	t.Helper()
	f, err := os.Open(filepath.Join(sampleDir, name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	return NewReader(f, name).Read()
}

// TestTestdata reads every example file. The expected values are read off
// the files by eye: point count, units, kinds, and the lines holding the
// first and last x of the file (in the result, ascending energy).
func TestTestdata(t *testing.T) {
	for _, tc := range []struct {
		file           string
		unit           specio.XUnit
		src            specio.YKind
		n              int
		loE, hiE       float64 // x (file unit) of the lowest and highest energy
		loLine, hiLine int     // their lines
		err            error
		errLine        int
		errCol         int
	}{
		{file: "km2611_w01_affn_nm_T.jdx", unit: specio.Nanometre, src: specio.Transmittance, n: 51, loE: 920, hiE: 820, loLine: 26, hiLine: 16},
		{file: "km2611_w02_difdup_nm_pctT.jdx", unit: specio.Nanometre, src: specio.TransmittancePercent, n: 101, loE: 920, hiE: 820, loLine: 26, hiLine: 16},
		{file: "km2611_w03_sqz_um_abs.jdx", unit: specio.Micrometre, src: specio.Absorbance, n: 51, loE: 0.920, hiE: 0.820, loLine: 21, hiLine: 15},
		{file: "km2611_w04_xypoints_ev_abs.jdx", unit: specio.ElectronVolt, src: specio.Absorbance, n: 29, loE: 1.36, hiE: 1.50, loLine: 14, hiLine: 23},
		{file: "km2611_w05_difdup_cm1_pctT.jdx", unit: specio.Wavenumber, src: specio.TransmittancePercent, n: 71, loE: 10800, hiE: 12200, loLine: 24, hiLine: 16},
		{file: "bad_ycheck.jdx", err: ErrCheck, errLine: 17, errCol: 4},
		{file: "bad_truncated.jdx", err: specio.ErrSyntax, errLine: 18},
		{file: "bad_peaktable.jdx", err: ErrUnsupported, errLine: 9, errCol: 1},
		{file: "bad_yunits.jdx", err: specio.ErrUnit, errLine: 7, errCol: 11},
	} {
		t.Run(tc.file, func(t *testing.T) {
			s, err := readSample(t, tc.file)
			if tc.err != nil {
				var pe *specio.ParseError
				if !errors.Is(err, tc.err) || !errors.As(err, &pe) || pe.Line != tc.errLine || pe.Column != tc.errCol {
					t.Fatalf("error %v, want %v at line %d column %d", err, tc.err, tc.errLine, tc.errCol)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if s.Len() != tc.n || s.SourceXUnit != tc.unit || s.SourceYKind != tc.src {
				t.Fatalf("%d points, %v, %v; want %d, %v, %v", s.Len(), s.SourceXUnit, s.SourceYKind, tc.n, tc.unit, tc.src)
			}
			n := s.Len() - 1
			if e := wantEnergy(tc.loE, tc.unit); math.Abs(s.E[0]-e) > energyRelTol*e || s.Lines[0] != tc.loLine {
				t.Errorf("lowest energy %g eV at line %d, want %g at line %d", s.E[0], s.Lines[0], e, tc.loLine)
			}
			if e := wantEnergy(tc.hiE, tc.unit); math.Abs(s.E[n]-e) > energyRelTol*e || s.Lines[n] != tc.hiLine {
				t.Errorf("highest energy %g eV at line %d, want %g at line %d", s.E[n], s.Lines[n], e, tc.hiLine)
			}
			if s.Meta["ORIGIN"] == "" {
				t.Error("no ORIGIN in Meta")
			}
		})
	}
}

// TestTestdataAgree: W01 (AFFN, T to 5 decimals), W02 (DIFDUP, %T in
// steps of 0.001 %) and W03 (SQZ, absorbance in steps of 1e-4) encode the
// same invented transmittance on a common 2 nm grid (testdata/README.md).
// Decoded, they must agree to within the sum of their rounding:
// |ΔT| ≤ 0.5e-5 + 0.5e-5 between W01 and W02, and
// |ΔT| ≤ 0.5e-5 + T·ln 10·0.5e-4 between W01 and W03 (T = 10^−A).
func TestTestdataAgree(t *testing.T) {
	w1, err := readSample(t, "km2611_w01_affn_nm_T.jdx")
	if err != nil {
		t.Fatal(err)
	}
	w2, err := readSample(t, "km2611_w02_difdup_nm_pctT.jdx")
	if err != nil {
		t.Fatal(err)
	}
	w3, err := readSample(t, "km2611_w03_sqz_um_abs.jdx")
	if err != nil {
		t.Fatal(err)
	}
	// Ascending energy: W01 and W03 point i is 920 − 2i nm, W02 point 2i.
	for i := range w1.E {
		T1, T2, T3 := w1.Y[i], w2.Y[2*i], math.Pow(10, -w3.Y[i])
		if d := math.Abs(T1 - T2); d > 1e-5+1e-12 {
			t.Errorf("%g nm: W01 T %.6f, W02 T %.6f (|Δ| %.2g > 1e-5)", 920-2*float64(i), T1, T2, d)
		}
		if d, tol := math.Abs(T1-T3), 0.5e-5+T3*math.Ln10*0.5e-4; d > tol+1e-12 {
			t.Errorf("%g nm: W01 T %.6f, W03 T %.6f (|Δ| %.2g > %.2g)", 920-2*float64(i), T1, T3, d, tol)
		}
		if w1.E[i] != w3.E[i] && math.Abs(w1.E[i]-w3.E[i]) > energyRelTol*w1.E[i] {
			t.Errorf("point %d: W01 E %g, W03 E %g", i, w1.E[i], w3.E[i])
		}
	}
}
