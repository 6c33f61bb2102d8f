package jcampdx

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/io/specio"
)

// codataHC is hc/e in eV·nm from the exact CODATA 2018 defining constants
// h = 6.62607015e-34 J s, c = 299792458 m/s, e = 1.602176634e-19 C
// (Tiesinga et al., Rev. Mod. Phys. 93, 025010, 2021; citation from
// memory), computed here independently of specio.HC.
const codataHC = 6.62607015e-34 * 299792458 / 1.602176634e-19 * 1e9

// Tolerances.
const (
	// specio.HC is rounded to 10 significant digits (2.7e-10 relative to
	// codataHC), so energies agree to 1e-9 relative.
	energyRelTol = 1e-9
	// y values are written integers times YFACTOR, or copies: a few ulps.
	yTol = 1e-12
)

func wantEnergy(x float64, u specio.XUnit) float64 {
	switch u {
	case specio.Nanometre:
		return codataHC / x
	case specio.Micrometre:
		return codataHC / (x * 1000)
	case specio.ElectronVolt:
		return x
	case specio.Wavenumber:
		return codataHC * 1e-7 * x
	}
	return math.NaN()
}

// header writes the usual records; the table follows.
func header(xunits, yunits string, extra ...string) string {
	var b strings.Builder
	b.WriteString("##TITLE= invented test spectrum, not a measurement\n##JCAMP-DX= 4.24\n##DATA TYPE= UV/VIS SPECTRUM\n")
	fmt.Fprintf(&b, "##XUNITS= %s\n##YUNITS= %s\n", xunits, yunits)
	for _, e := range extra {
		b.WriteString(e)
		b.WriteByte('\n')
	}
	return b.String()
}

// The worked example. Eleven ordinates (written integers, YFACTOR 0.001,
// so T = 0.120 … −0.003) on x = 800, 810, …, 900 nm:
//
//	x:  800 810 820 830 840 850 860 870 880 890 900
//	y:  120 125 125 125 131 250 420 600 600 598  -3
//
// encoded by hand with the character table of McDonald & Wilks (1988):
//
//	SQZ  @ABCDEFGHI = +0…+9, abcdefghi = −1…−9 (first digit and sign)
//	DIF  %JKLMNOPQR = +0…+9, jklmnopqr = −1…−9 (difference from the previous)
//	DUP  STUVWXYZs  = 1…9 (occurrences of the previous token in all)
//
// DIF form, with differences +5, 0, 0, +6, +119, +170, +180, 0, −2, −601:
//
//	800A20N%TO          120 (A20), +5 (N), 0 0 (% and T = twice), +6 (O)
//	840A31J19J70J80%k   Y check 131 = A31 (the last ordinate again, at x 840),
//	                    +119 +170 +180 0 −2
//	890E98o01           Y check 598, −601 (o01: o = −6)
//	900c                Y check −3 (c = −3) on a last line of its own
//
// SQZ form with DUP: A25U is 125 three times; E98 is SQZ 598 (E = +5).
const (
	workedDIF  = "800A20N%TO\n840A31J19J70J80%k\n890E98o01\n900c\n"
	workedSQZ  = "800A20A25UA31\n850B50D20F00TE98\n900c\n"
	workedAFFN = "800 120 125 125 125 131\n850 250, 420, 600, 600, 598\n900 -3\n"
	workedPAC  = "800+120+125+125+125+131\n850+250+420+600+600+598\n900-3\n"
)

var (
	workedX = []float64{900, 890, 880, 870, 860, 850, 840, 830, 820, 810, 800} // ascending energy
	workedY = []float64{-0.003, 0.598, 0.6, 0.6, 0.42, 0.25, 0.131, 0.125, 0.125, 0.125, 0.12}
)

func worked(table string, extra ...string) string {
	return header("NANOMETERS", "TRANSMITTANCE", append([]string{"##XFACTOR= 1", "##YFACTOR= 0.001",
		"##FIRSTX= 800", "##LASTX= 900", "##DELTAX= 10", "##NPOINTS= 11", "##FIRSTY= 0.120"}, extra...)...) +
		"##XYDATA=(X++(Y..Y))\n" + table + "##END=\n"
}

// readTest is one case of TestRead, as in encoding/csv's TestRead: input,
// options, and either the wanted spectrum or the wanted error position.
type readTest struct {
	Name  string
	Input string

	// Reader options.
	XUnit     specio.XUnit
	YKind     specio.YKind
	MaxBytes  int64
	MaxPoints int
	MaxLines  int

	// The wanted spectrum: X in Unit, in the order of the result (ascending
	// energy), E checked against wantEnergy; Y as a fraction for T.
	Unit  specio.XUnit
	Kind  specio.YKind // Spectrum.Kind
	Src   specio.YKind // Spectrum.SourceYKind
	X, Y  []float64
	Lines []int
	Note  string // a substring one of Notes must contain

	// The wanted error.
	Err          error
	Line, Column int
}

var readTests = []readTest{
	// The worked example in each form decodes to the same spectrum (the
	// expected values are the hand-decoded ones above).
	{Name: "worked/DIF+DUP", Input: worked(workedDIF), Unit: specio.Nanometre, Kind: specio.Transmittance,
		Src: specio.Transmittance, X: workedX, Y: workedY, Lines: []int{16, 15, 15, 15, 15, 15, 14, 14, 14, 14, 14},
		Note: "3 Y check values verified"},
	{Name: "worked/SQZ+DUP", Input: worked(workedSQZ), Unit: specio.Nanometre, Kind: specio.Transmittance,
		Src: specio.Transmittance, X: workedX, Y: workedY, Lines: []int{16, 15, 15, 15, 15, 15, 14, 14, 14, 14, 14},
		Note: "forms SQZ+DUP"},
	{Name: "worked/AFFN", Input: worked(workedAFFN), Unit: specio.Nanometre, Kind: specio.Transmittance,
		Src: specio.Transmittance, X: workedX, Y: workedY, Note: "forms AFFN,"},
	{Name: "worked/PAC", Input: worked(workedPAC), Unit: specio.Nanometre, Kind: specio.Transmittance,
		Src: specio.Transmittance, X: workedX, Y: workedY},
	{Name: "worked/CRLF+BOM+comments", Unit: specio.Nanometre, Kind: specio.Transmittance, Src: specio.Transmittance,
		Input: "\ufeff" + strings.ReplaceAll(worked("$$ the table\n800A20N%TO $$ first line\n840A31J19J70J80%k\n890E98o01\n900c\n"), "\n", "\r\n"),
		X:     workedX, Y: workedY, Note: "byte-order mark"},
	{Name: "worked/XFACTOR", Unit: specio.Nanometre, Kind: specio.Transmittance, Src: specio.Transmittance,
		// x written in tenths of a nanometre: 8000 × 0.1 = 800 nm.
		Input: strings.Replace(worked("8000A20N%TO\n8400A31J19J70J80%k\n8900E98o01\n9000c\n"), "##XFACTOR= 1", "##XFACTOR= 0.1", 1),
		X:     workedX, Y: workedY},
	{Name: "labels/case-and-blanks", Unit: specio.Nanometre, Kind: specio.Transmittance, Src: specio.Transmittance,
		Input: "##title= t\n##Jcamp-Dx= 4.24\n##x units= nanometers\n##Y_UNITS= Transmittance\n##xfactor=1\n##Y-FACTOR= 0.001\n" +
			"##first x=800\n##LAST_X= 900\n##N POINTS= 11\n##XY DATA= (X++(Y..Y))\n" + workedDIF + "##end=\n",
		X: workedX, Y: workedY},
	{Name: "XYPOINTS/ev-absorbance", Unit: specio.ElectronVolt, Kind: specio.Absorbance, Src: specio.Absorbance,
		Input: header("EV", "ABSORBANCE", "##XFACTOR= 1", "##YFACTOR= 1", "##FIRSTX= 1.30", "##LASTX= 1.50", "##NPOINTS= 5") +
			"##XYPOINTS=(XY..XY)\n1.30, 0.05; 1.35, 0.08\n1.40 0.31\n1.45, 1.20; 1.50, 1.90\n##END=\n",
		X: []float64{1.30, 1.35, 1.40, 1.45, 1.50}, Y: []float64{0.05, 0.08, 0.31, 1.20, 1.90}, Lines: []int{12, 12, 13, 14, 14}},
	{Name: "XYPOINTS/descending-um-alpha", Unit: specio.Micrometre, Kind: specio.Alpha, Src: specio.Alpha,
		Input: header("MICROMETERS", "1/CM") + "##XYPOINTS=(XY..XY)\n0.86, 9.0e3\n0.88, 1.5E+03\n0.90, 120\n##END=\n",
		X:     []float64{0.90, 0.88, 0.86}, Y: []float64{120, 1500, 9000}, Note: "reversed"},
	// Infrared convention: FIRSTX > LASTX in 1/CM (energy descending), %T
	// without a percent sign in the unit, detected from the values.
	{Name: "XYDATA/wavenumber-percent", Unit: specio.Wavenumber, Kind: specio.Transmittance, Src: specio.TransmittancePercent,
		Input: header("1/CM", "TRANSMITTANCE", "##XFACTOR= 1", "##YFACTOR= 0.01", "##FIRSTX= 12000", "##LASTX= 11000",
			"##NPOINTS= 5") + "##XYDATA=(X++(Y..Y))\n12000 8712 8650\n11500 7101\n11250 3000 1505\n##END=\n",
		X: []float64{11000, 11250, 11500, 11750, 12000}, Y: []float64{0.1505, 0.3, 0.7101, 0.865, 0.8712},
		Note: "read as percent"},
	{Name: "AFFN/exponents", Unit: specio.Nanometre, Kind: specio.Absorbance, Src: specio.Absorbance,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") +
			"##XYDATA=(X++(Y..Y))\n8.0E+02 1.5E-01 2e-1\n8.2e2 2.5E-1 3.0E-01\n##END=\n",
		X: []float64{830, 820, 810, 800}, Y: []float64{0.3, 0.25, 0.2, 0.15}, Note: "no ##XFACTOR=: 1 assumed"},
	// A DIF difference with a decimal point, and DUP after a DIF.
	{Name: "DIF/decimal-and-DUP", Unit: specio.ElectronVolt, Kind: specio.Absorbance, Src: specio.Absorbance,
		Input: header("EV", "ABSORBANCE", "##FIRSTX= 1", "##LASTX= 1.5", "##NPOINTS= 6") +
			"##XYDATA=(X++(Y..Y))\n1 @.5J.25V\n1.4 E.5l\n1.5 B.5\n##END=\n",
		X: []float64{1, 1.1, 1.2, 1.3, 1.4, 1.5}, Y: []float64{0.5, 1.75, 3, 4.25, 5.5, 2.5}},
	{Name: "peak-table-beside-spectrum", Unit: specio.Nanometre, Kind: specio.Transmittance, Src: specio.Transmittance,
		Input: strings.Replace(worked(workedDIF), "##XYDATA", "##PEAK TABLE=(XY..XY)\n850, 0.25\n##XYDATA", 1),
		X:     workedX, Y: workedY, Note: "PEAK TABLE= at line 13 skipped"},
	{Name: "option/YKind-overrides-unknown", YKind: specio.Absorbance, Unit: specio.Nanometre, Kind: specio.Absorbance,
		Src:   specio.Absorbance,
		Input: header("NANOMETERS", "ARBITRARY UNITS", "##FIRSTX= 800", "##LASTX= 810", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n800 1 2\n##END=\n",
		X:     []float64{810, 800}, Y: []float64{2, 1}, Note: "YKind option"},
	{Name: "option/XUnit", XUnit: specio.Micrometre, Unit: specio.Micrometre, Kind: specio.Absorbance, Src: specio.Absorbance,
		Input: header("ARBITRARY UNITS", "ABSORBANCE", "##FIRSTX= 0.8", "##LASTX= 0.9", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n0.8 1 2\n##END=\n",
		X:     []float64{0.9, 0.8}, Y: []float64{2, 1}},
	{Name: "trailing-lines-after-END", Unit: specio.Nanometre, Kind: specio.Transmittance, Src: specio.Transmittance,
		Input: worked(workedDIF) + "\ngarbage\n", X: workedX, Y: workedY, Note: "after ##END="},

	// Malformed files: the error and its position.
	{Name: "bad/Y-check", Input: worked("800A20N%TO\n840A32J19J70J80%k\n890E98o01\n900c\n"), Err: ErrCheck, Line: 15, Column: 4},
	{Name: "bad/no-Y-check", Input: worked("800A20N%TO\n840J19J70J80%k\n890E98o01\n900c\n"), Err: ErrCheck, Line: 15, Column: 4},
	{Name: "bad/abscissa", Input: worked("800A20N%TO\n850A31J19J70J80%k\n890E98o01\n900c\n"), Err: ErrCheck, Line: 15, Column: 1},
	{Name: "bad/missing-line", Input: worked("800A20N%TO\n890E98o01\n900c\n"), Err: ErrCheck, Line: 15, Column: 4},
	// NPOINTS and LASTX say 12 points to 910 nm; the table has 11.
	{Name: "bad/NPOINTS-short", Input: strings.NewReplacer("##NPOINTS= 11", "##NPOINTS= 12", "##LASTX= 900", "##LASTX= 910",
		"##DELTAX= 10\n", "").Replace(worked(workedDIF)), Err: ErrCheck, Line: 16},
	{Name: "bad/NPOINTS-fewer-ordinates", Err: ErrCheck, Line: 10,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 1 2 3\n##END=\n"},
	{Name: "bad/NPOINTS-more-ordinates", Err: ErrCheck, Line: 10, Column: 13,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 1 2 3 4 5\n##END=\n"},
	{Name: "bad/DUP-beyond-NPOINTS", Err: ErrCheck, Line: 10, Column: 7,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 A1s999999\n##END=\n"},
	{Name: "bad/DUP-count-absurd", Err: specio.ErrRange, Line: 10, Column: 7,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 A1s99999999999999999999\n##END=\n"},
	{Name: "bad/DUP-first", Err: specio.ErrSyntax, Line: 10, Column: 5,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 T\n##END=\n"},
	{Name: "bad/DUP-DUP", Err: specio.ErrSyntax, Line: 10, Column: 8,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 A1TT\n##END=\n"},
	{Name: "bad/DIF-first", Err: specio.ErrSyntax, Line: 10, Column: 5,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 J1\n##END=\n"},
	{Name: "bad/DIF-abscissa", Err: specio.ErrSyntax, Line: 10, Column: 1,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\nJ00 1 2 3 4\n##END=\n"},
	{Name: "bad/question-mark", Err: specio.ErrSyntax, Line: 10, Column: 7,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 1 ? 3 4\n##END=\n"},
	{Name: "bad/stray-character", Err: specio.ErrSyntax, Line: 10, Column: 7,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800 1 ; 3 4\n##END=\n"},
	{Name: "bad/missing-END", Input: strings.TrimSuffix(worked(workedDIF), "##END=\n") + "\n\n", Err: specio.ErrSyntax, Line: 17},
	{Name: "bad/truncated-mid-line", Input: worked(workedDIF)[:len(worked(workedDIF))-30], Err: specio.ErrSyntax, Line: 15},
	{Name: "bad/XUNITS", Input: header("SECONDS", "ABSORBANCE", "##FIRSTX= 1", "##LASTX= 2", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n1 1 2\n##END=\n",
		Err: specio.ErrUnit, Line: 4, Column: 11},
	{Name: "bad/YUNITS", Input: header("NANOMETERS", "KUBELKA-MUNK", "##FIRSTX= 800", "##LASTX= 810", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n800 1 2\n##END=\n",
		Err: specio.ErrUnit, Line: 5, Column: 11},
	{Name: "bad/no-YUNITS", Input: "##TITLE= t\n##XUNITS= NM\n##FIRSTX= 800\n##LASTX= 810\n##NPOINTS= 2\n##XYDATA=(X++(Y..Y))\n800 1 2\n##END=\n",
		Err: specio.ErrUnit, Line: 6},
	{Name: "bad/percent-over-fraction", Input: header("NANOMETERS", "%T", "##FIRSTX= 800", "##LASTX= 810", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n800 0.5 0.6\n##END=\n",
		Err: specio.ErrRange, Line: 10},
	{Name: "bad/transmittance-too-large", Input: header("NANOMETERS", "TRANSMITTANCE", "##FIRSTX= 800", "##LASTX= 810", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n800 50 250\n##END=\n",
		Err: specio.ErrRange, Line: 10},
	{Name: "bad/negative-wavelength", Input: header("NANOMETERS", "ABSORBANCE", "##FIRSTX= -10", "##LASTX= 10", "##NPOINTS= 2") + "##XYDATA=(X++(Y..Y))\n-10 1 2\n##END=\n",
		Err: specio.ErrRange, Line: 10},
	{Name: "bad/binary", Input: "##TITLE= x\n\x00\x01\x02\xff", Err: specio.ErrEncoding, Line: 2, Column: 1},
	{Name: "bad/invalid-UTF-8", Input: "##TITLE= caf\xe9\n", Err: specio.ErrEncoding, Line: 1, Column: 13},
	{Name: "bad/UTF-16", Input: "\xff\xfe#\x00#\x00", Err: specio.ErrEncoding, Line: 1, Column: 1},
	{Name: "bad/not-JCAMP", Input: "wavelength,T\n800,0.5\n", Err: specio.ErrSyntax, Line: 1, Column: 1},
	{Name: "bad/first-record", Input: "##JCAMP-DX= 4.24\n##TITLE= t\n", Err: specio.ErrSyntax, Line: 1, Column: 1},
	{Name: "bad/empty", Input: "\n \n", Err: specio.ErrNoData},
	{Name: "bad/no-table", Input: "##TITLE= t\n##XUNITS= NM\n##END=\n", Err: specio.ErrNoData, Line: 3},
	{Name: "bad/no-equals", Input: "##TITLE= t\n##XUNITS NM\n##END=\n", Err: specio.ErrSyntax, Line: 2, Column: 1},
	{Name: "bad/peak-table-only", Input: header("1/CM", "ABSORBANCE") + "##PEAK TABLE=(XY..XY)\n1000, 0.5\n##END=\n",
		Err: ErrUnsupported, Line: 6, Column: 1},
	{Name: "bad/ntuples", Input: "##TITLE= t\n##JCAMP-DX= 5.01\n##NTUPLES= NMR SPECTRUM\n##END=\n", Err: ErrUnsupported, Line: 3, Column: 1},
	{Name: "bad/link-block", Input: "##TITLE= t\n##JCAMP-DX= 4.24\n##BLOCKS= 2\n##TITLE= a\n##END=\n##END=\n", Err: ErrUnsupported, Line: 3, Column: 1},
	{Name: "bad/second-block", Input: worked(workedDIF) + "##TITLE= second\n##END=\n", Err: ErrUnsupported, Line: 19, Column: 1},
	{Name: "bad/two-tables", Input: strings.Replace(worked(workedDIF), "##END=", "##XYPOINTS=(XY..XY)\n800, 1\n##END=", 1),
		Err: ErrUnsupported, Line: 18, Column: 1},
	{Name: "bad/variable-list", Input: strings.Replace(worked(workedDIF), "(X++(Y..Y))", "(X++(R..R))", 1),
		Err: ErrUnsupported, Line: 13, Column: 10},
	{Name: "bad/duplicate-XUNITS", Input: strings.Replace(worked(workedDIF), "##XFACTOR", "##XUNITS= NM\n##XFACTOR", 1),
		Err: specio.ErrSyntax, Line: 6, Column: 1},
	{Name: "bad/XFACTOR-zero", Input: strings.Replace(worked(workedDIF), "##XFACTOR= 1", "##XFACTOR= 0", 1),
		Err: specio.ErrRange, Line: 6, Column: 12},
	{Name: "bad/FIRSTX-not-a-number", Input: strings.Replace(worked(workedDIF), "##FIRSTX= 800", "##FIRSTX= 800 nm", 1),
		Err: specio.ErrSyntax, Line: 8, Column: 11},
	{Name: "bad/FIRSTX-Inf", Input: strings.Replace(worked(workedDIF), "##FIRSTX= 800", "##FIRSTX= Inf", 1),
		Err: specio.ErrSyntax, Line: 8, Column: 11},
	{Name: "bad/DELTAX", Input: strings.Replace(worked(workedDIF), "##DELTAX= 10", "##DELTAX= 11", 1),
		Err: ErrCheck, Line: 10, Column: 11},
	{Name: "bad/FIRSTY", Input: strings.Replace(worked(workedDIF), "##FIRSTY= 0.120", "##FIRSTY= 120", 1),
		Err: ErrCheck, Line: 12, Column: 11},
	{Name: "bad/missing-LASTX", Input: strings.Replace(worked(workedDIF), "##LASTX= 900\n", "", 1), Err: specio.ErrSyntax, Line: 12},
	{Name: "bad/NPOINTS-word", Input: strings.Replace(worked(workedDIF), "##NPOINTS= 11", "##NPOINTS= eleven", 1),
		Err: specio.ErrSyntax, Line: 11, Column: 12},
	{Name: "bad/MaxPoints", MaxPoints: 10, Input: worked(workedDIF), Err: specio.ErrTooLarge, Line: 11, Column: 12},
	{Name: "bad/MaxBytes", MaxBytes: 100, Input: worked(workedDIF), Err: specio.ErrTooLarge},
	{Name: "bad/MaxLines", MaxLines: 10, Input: worked(workedDIF), Err: specio.ErrTooLarge, Line: 11},
	// 40 ordinates on one line with NPOINTS 4: stopped at the 12th token
	// (2·4 + 3 allowed), column 25, before the rest is read; with XYPOINTS
	// and NPOINTS 2, at the fifth value (column 9).
	{Name: "bad/long-line", Err: ErrCheck, Line: 10, Column: 25,
		Input: header("NM", "ABSORBANCE", "##FIRSTX= 800", "##LASTX= 830", "##NPOINTS= 4") + "##XYDATA=(X++(Y..Y))\n800" + strings.Repeat(" 1", 40) + "\n##END=\n"},
	{Name: "bad/XYPOINTS-long-line", Err: ErrCheck, Line: 8, Column: 9,
		Input: header("EV", "ABSORBANCE", "##NPOINTS= 2") + "##XYPOINTS=(XY..XY)\n" + strings.Repeat("1 1 ", 40) + "\n##END=\n"},
	{Name: "bad/XYPOINTS-odd", Input: header("EV", "ABSORBANCE") + "##XYPOINTS=(XY..XY)\n1.3, 0.1\n1.4\n##END=\n",
		Err: specio.ErrSyntax, Line: 8, Column: 1},
	{Name: "bad/XYPOINTS-repeated-x", Input: header("EV", "ABSORBANCE") + "##XYPOINTS=(XY..XY)\n1.3, 0.1\n1.4, 0.2\n1.4, 0.3\n##END=\n",
		Err: specio.ErrNotMonotonic, Line: 9},
	{Name: "bad/XYPOINTS-NPOINTS", Input: header("EV", "ABSORBANCE", "##NPOINTS= 1") + "##XYPOINTS=(XY..XY)\n1.3, 0.1\n1.4, 0.2\n##END=\n",
		Err: ErrCheck, Line: 9, Column: 1},
	{Name: "bad/XYPOINTS-LASTX", Input: header("EV", "ABSORBANCE", "##LASTX= 1.6") + "##XYPOINTS=(XY..XY)\n1.3, 0.1\n1.4, 0.2\n##END=\n",
		Err: ErrCheck, Line: 6, Column: 10},
	{Name: "bad/XYPOINTS-compressed", Input: header("EV", "ABSORBANCE") + "##XYPOINTS=(XY..XY)\n1.3, A1\n##END=\n",
		Err: specio.ErrSyntax, Line: 7, Column: 6},
}

func TestRead(t *testing.T) {
	for _, tc := range readTests {
		t.Run(tc.Name, func(t *testing.T) {
			r := NewReader(strings.NewReader(tc.Input), "t.jdx")
			r.XUnit, r.YKind, r.MaxBytes, r.MaxPoints, r.MaxLines = tc.XUnit, tc.YKind, tc.MaxBytes, tc.MaxPoints, tc.MaxLines
			s, err := r.Read()
			if tc.Err != nil {
				var pe *specio.ParseError
				if !errors.Is(err, tc.Err) || !errors.As(err, &pe) {
					t.Fatalf("Read() error = %v, want %v as a *specio.ParseError", err, tc.Err)
				}
				if pe.Line != tc.Line || pe.Column != tc.Column || pe.File != "t.jdx" {
					t.Fatalf("error at %s:%d:%d, want t.jdx:%d:%d (%v)", pe.File, pe.Line, pe.Column, tc.Line, tc.Column, err)
				}
				if s != nil {
					t.Fatal("spectrum returned with an error")
				}
				return
			}
			if err != nil {
				t.Fatalf("Read() error: %v", err)
			}
			if s.Kind != tc.Kind || s.SourceYKind != tc.Src || s.SourceXUnit != tc.Unit {
				t.Fatalf("Kind %v, SourceYKind %v, SourceXUnit %v; want %v, %v, %v (notes %q)", s.Kind, s.SourceYKind, s.SourceXUnit, tc.Kind, tc.Src, tc.Unit, s.Notes)
			}
			if s.Len() != len(tc.X) || len(s.Y) != len(tc.Y) || len(s.Lines) != len(tc.X) {
				t.Fatalf("%d points (Y %d, Lines %d), want %d", s.Len(), len(s.Y), len(s.Lines), len(tc.X))
			}
			for i := range tc.X {
				if e := wantEnergy(tc.X[i], tc.Unit); !scalar.EqualWithinAbsOrRel(s.E[i], e, 0, energyRelTol) {
					t.Errorf("E[%d] = %.12g, want %.12g (x = %g %v)", i, s.E[i], e, tc.X[i], tc.Unit)
				}
				if !scalar.EqualWithinAbsOrRel(s.Y[i], tc.Y[i], yTol, yTol) {
					t.Errorf("Y[%d] = %.15g, want %.15g", i, s.Y[i], tc.Y[i])
				}
			}
			if tc.Lines != nil && fmt.Sprint(s.Lines) != fmt.Sprint(tc.Lines) {
				t.Errorf("Lines = %v, want %v", s.Lines, tc.Lines)
			}
			if tc.Note != "" && !strings.Contains(strings.Join(s.Notes, "\n"), tc.Note) {
				t.Errorf("no note containing %q in %q", tc.Note, s.Notes)
			}
			if s.Name != "t.jdx" || s.Meta == nil || s.R != nil {
				t.Errorf("Name %q, Meta nil %v, R %v", s.Name, s.Meta == nil, s.R)
			}
		})
	}
}

func TestReadMeta(t *testing.T) {
	in := strings.Replace(worked(workedDIF), "##XYDATA", "##ORIGIN= Kestrel Moor (fictional)\n##OWNER= public domain\n##$ PRIVATE= a\n##$PRIVATE= b $$ c\n  continued\n##XYDATA", 1)
	s, err := NewReader(strings.NewReader(in), "t.jdx").Read()
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"TITLE": "invented test spectrum, not a measurement", "JCAMP-DX": "4.24", "DATA TYPE": "UV/VIS SPECTRUM",
		"XUNITS": "NANOMETERS", "YFACTOR": "0.001", "ORIGIN": "Kestrel Moor (fictional)", "OWNER": "public domain",
		"$ PRIVATE": "a", "$PRIVATE": "b continued",
	}
	for k, v := range want {
		if s.Meta[k] != v {
			t.Errorf("Meta[%q] = %q, want %q", k, s.Meta[k], v)
		}
	}
	if _, ok := s.Meta["XYDATA"]; ok {
		t.Error("the data table is in Meta")
	}
	if s.XHeader != "NANOMETERS" || s.YHeader != "TRANSMITTANCE" {
		t.Errorf("XHeader %q, YHeader %q", s.XHeader, s.YHeader)
	}
}

func TestReadOptions(t *testing.T) {
	for _, r := range []*Reader{{XUnit: 99}, {YKind: -1}, {MaxBytes: -1}, {MaxPoints: -1}, {MaxLines: -1}} {
		r.r = strings.NewReader(worked(workedDIF))
		_, err := r.Read()
		var pe *specio.ParseError
		if !errors.Is(err, specio.ErrOption) || errors.As(err, &pe) {
			t.Errorf("%+v: error %v, want a plain error wrapping ErrOption", r, err)
		}
	}
	r := NewReader(strings.NewReader(worked(workedDIF)), "t.jdx")
	if _, err := r.Read(); err != nil {
		t.Fatal(err)
	}
	if _, err := r.Read(); err != io.EOF {
		t.Fatalf("second Read: %v, want io.EOF", err)
	}
}

// TestSentinels: the package's sentinels are specio.ErrSyntax to callers
// that classify by specio's set.
func TestSentinels(t *testing.T) {
	for _, e := range []error{ErrCheck, ErrUnsupported} {
		if !errors.Is(e, specio.ErrSyntax) {
			t.Errorf("%v does not wrap specio.ErrSyntax", e)
		}
	}
	if errors.Is(ErrCheck, ErrUnsupported) || errors.Is(ErrUnsupported, ErrCheck) {
		t.Error("ErrCheck and ErrUnsupported are not distinct")
	}
}

func TestSniff(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want bool
	}{
		{"##TITLE= x\n", true},
		{"\ufeff\r\n  \t##title=x", true},
		{"##Title =x", true},
		{"## TITLE= x", true},
		{"##JCAMP-DX= 4.24\n##TITLE= x", false},
		{"$$ comment\n##TITLE= x", false},
		{"wavelength,T\n", false},
		{"##TITLE", false},
		{"##TITLES= x", false},
		{"", false},
		{"\x00\x01", false},
	} {
		if got := Sniff([]byte(tc.in)); got != tc.want {
			t.Errorf("Sniff(%q) = %v, want %v", tc.in, got, tc.want)
		}
	}
}

// TestTokenize checks the character table of McDonald & Wilks (1988) one
// pseudo-digit at a time: value, form and column.
func TestTokenize(t *testing.T) {
	p := &parser{name: "t"}
	for _, tc := range []struct {
		in   string
		want string // kind:value@col …
	}{
		{"@ A B C D E F G H I", "S0@1 S1@3 S2@5 S3@7 S4@9 S5@11 S6@13 S7@15 S8@17 S9@19"},
		{"a b c d e f g h i", "S-1@1 S-2@3 S-3@5 S-4@7 S-5@9 S-6@11 S-7@13 S-8@15 S-9@17"},
		{"% J K L M N O P Q R", "D0@1 D1@3 D2@5 D3@7 D4@9 D5@11 D6@13 D7@15 D8@17 D9@19"},
		{"j k l m n o p q r", "D-1@1 D-2@3 D-3@5 D-4@7 D-5@9 D-6@11 D-7@13 D-8@15 D-9@17"},
		{"1S T U V W X Y Z s", "A1@1 R1@2 R2@4 R3@6 R4@8 R5@10 R6@12 R7@14 R8@16 R9@18"},
		{"A23b45J67k89T0s1", "S123@1 S-245@4 D167@7 D-289@10 R20@13 R91@15"},
		{"1+2-3,4 5", "A1@1 A2@2 A-3@4 A4@7 A5@9"},
		{"1E5 1E+5 1e-5 1.5E2", "A100000@1 A100000@5 A1e-05@10 A150@15"}, // no other pseudo-digit: exponents
		{"1E5A", "A1@1 S55@2 S1@4"}, // pseudo-digit on the line: E is SQZ +5
		{"1E+5A", "A100000@1 S1@5"}, // a sign after E: exponent
		{"100 E2", "A100@1 S52@5"},  // E not after a number: SQZ
	} {
		toks, err := p.tokenize(nil, tc.in, 1, 100)
		if err != nil {
			t.Errorf("%q: %v", tc.in, err)
			continue
		}
		var got []string
		for _, k := range toks {
			got = append(got, fmt.Sprintf("%c%g@%d", "ASDR"[k.kind], k.v, k.col))
		}
		if g := strings.Join(got, " "); g != tc.want {
			t.Errorf("tokenize(%q) = %s, want %s", tc.in, g, tc.want)
		}
	}
}

// TestUnitMapping checks every spelling the package documentation lists
// (and a few tolerated variants) against its unit or kind.
func TestUnitMapping(t *testing.T) {
	for in, want := range map[string]specio.XUnit{
		"NANOMETERS": specio.Nanometre, "nanometres": specio.Nanometre, "NM": specio.Nanometre, "Nano Meters": specio.Nanometre,
		"MICROMETERS": specio.Micrometre, "Micrometres": specio.Micrometre, "MICRONS": specio.Micrometre, "um": specio.Micrometre,
		"µm": specio.Micrometre, "μm": specio.Micrometre,
		"1/CM": specio.Wavenumber, "cm-1": specio.Wavenumber, "CM^-1": specio.Wavenumber, "CM**-1": specio.Wavenumber,
		"WAVENUMBERS": specio.Wavenumber, "1 / cm": specio.Wavenumber,
		"EV": specio.ElectronVolt, "ELECTRONVOLTS": specio.ElectronVolt, "Electron Volts": specio.ElectronVolt, "e.V.": specio.ElectronVolt,
		"SECONDS": specio.XAuto, "HZ": specio.XAuto, "ARBITRARY UNITS": specio.XAuto, "": specio.XAuto,
	} {
		if got := xUnits[unitKey(in)]; got != want {
			t.Errorf("XUNITS %q: %v, want %v", in, got, want)
		}
	}
	for in, want := range map[string]specio.YKind{
		"TRANSMITTANCE": specio.Transmittance, "Transmission": specio.Transmittance, "T": specio.Transmittance,
		"%T": specio.TransmittancePercent, "T%": specio.TransmittancePercent, "PERCENT TRANSMITTANCE": specio.TransmittancePercent,
		"TRANSMITTANCE (%)": specio.TransmittancePercent, "% Transmittance": specio.TransmittancePercent,
		"ABSORBANCE": specio.Absorbance, "abs": specio.Absorbance, "A": specio.Absorbance, "OPTICAL DENSITY": specio.Absorbance,
		"OD":   specio.Absorbance,
		"1/CM": specio.Alpha, "CM-1": specio.Alpha, "ABSORPTION COEFFICIENT": specio.Alpha,
		"REFLECTANCE": specio.YAuto, "KUBELKA-MUNK": specio.YAuto, "ARBITRARY UNITS": specio.YAuto, "COUNTS": specio.YAuto,
	} {
		if got := yUnits[unitKey(in)]; got != want {
			t.Errorf("YUNITS %q: %v, want %v", in, got, want)
		}
	}
}
