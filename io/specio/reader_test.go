package specio

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"testing"
	"unicode/utf16"

	"gonum.org/v1/gonum/floats/scalar"
)

// codataHC is hc/e in eV·nm computed from the exact CODATA 2018 defining
// constants h = 6.62607015e-34 J s, c = 299792458 m/s, e = 1.602176634e-19 C
// (Tiesinga et al., Rev. Mod. Phys. 93, 025010, 2021; citation from memory).
// Expected energies are computed from it, independently of the package's
// rounded HC.
const codataHC = 6.62607015e-34 * 299792458 / 1.602176634e-19 * 1e9

// Tolerances.
const (
	// HC is rounded to 10 significant digits (relative error 2.7e-10 against
	// codataHC), so energies agree to 1e-9 relative.
	energyRelTol = 1e-9
	// y values are copied or divided by 100: a few ulps.
	yTol = 1e-12
)

// wantEnergy converts x in unit u with codataHC.
func wantEnergy(x float64, u XUnit) float64 {
	switch u {
	case Nanometre:
		return codataHC / x
	case Micrometre:
		return codataHC / (x * 1000)
	case ElectronVolt:
		return x
	case Wavenumber:
		return codataHC * 1e-7 * x
	}
	return math.NaN()
}

func utf16LE(s string) []byte {
	b := []byte{0xFF, 0xFE}
	for _, u := range utf16.Encode([]rune(s)) {
		b = append(b, byte(u), byte(u>>8))
	}
	return b
}

func utf16BE(s string) []byte {
	b := []byte{0xFE, 0xFF}
	for _, u := range utf16.Encode([]rune(s)) {
		b = append(b, byte(u>>8), byte(u))
	}
	return b
}

// readTest is one case of TestRead, in the manner of encoding/csv's
// TestRead: input, Reader options, and either the wanted spectrum or the
// wanted error with its position.
type readTest struct {
	Name  string
	Input string
	Raw   []byte // used instead of Input when non-nil (encodings)

	// Reader options.
	Comment, Comma            rune
	XUnit                     XUnit
	YKind                     YKind
	XColumn, YColumn, RColumn string
	MaxBytes                  int64
	MaxLines, MaxPoints       int

	// The wanted spectrum. X is x in the unit Unit, in the order of the
	// result (ascending energy); E is checked against wantEnergy(X, Unit).
	X                []float64
	Unit             XUnit
	Y, R             []float64
	Kind, SrcKind    YKind
	Lines            []int
	XHeader, YHeader string
	Meta             map[string]string // entries that must be present
	Notes            []string          // each must be a substring of some note

	// The wanted error: Error is a sentinel checked with errors.Is; Line
	// and Column the *ParseError position. NotParse marks option errors,
	// which are not *ParseError values. Detail lists substrings the
	// message must contain (e.g. both line numbers of a duplicated x).
	Error        error
	Line, Column int
	NotParse     bool
	Detail       []string
}

var readTests = []readTest{
	// Layouts and separators.
	{
		Name:  "Comma/nm/%T",
		Input: "Wavelength (nm),%T\n500,50\n600,60\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
		XHeader: "Wavelength (nm)", YHeader: "%T",
		Notes: []string{"comma-separated", `x column 1 "Wavelength (nm)": wavelength in nm`, "reversed to ascending energy"},
	},
	{
		Name: "Semicolon/DecimalComma/Preamble",
		Input: "Instrument: DEMO-SPEC 2 (invented)\nSample;W07\nDate;2026-03-01\n\n" +
			"Wavelength [nm];T [%]\n400;12,5\n500;40,25\n",
		X: []float64{500, 400}, Unit: Nanometre, Y: []float64{0.4025, 0.125},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{7, 6},
		Meta:  map[string]string{"Instrument": "DEMO-SPEC 2 (invented)", "Sample": "W07", "Date": "2026-03-01"},
		Notes: []string{"semicolon-separated, decimal comma"},
	},
	{
		Name:  "Semicolon/DecimalPoint",
		Input: "Wavelength (nm);%T\n500.5;50.5\n600.5;60.5\n",
		X:     []float64{600.5, 500.5}, Unit: Nanometre, Y: []float64{0.605, 0.505},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},
	{
		Name:  "Tab/DecimalComma",
		Input: "Wavelength (nm)\tAbs\n400,5\t1,25\n401,5\t1,5\n",
		X:     []float64{401.5, 400.5}, Unit: Nanometre, Y: []float64{1.5, 1.25},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
		Notes: []string{"tab-separated, decimal comma"},
	},
	{
		Name:  "Whitespace/Aligned/eV",
		Input: "  Energy (eV)    Abs\n   1.20   0.50\n   1.30   0.80\n",
		X:     []float64{1.2, 1.3}, Unit: ElectronVolt, Y: []float64{0.5, 0.8},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{2, 3}, XHeader: "Energy (eV)", YHeader: "Abs",
		Notes: []string{"whitespace-separated"},
	},
	{
		Name:  "Whitespace/DecimalComma",
		Input: "Energy [eV] A\n1,20 0,50\n1,30 0,80\n",
		X:     []float64{1.2, 1.3}, Unit: ElectronVolt, Y: []float64{0.5, 0.8},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{2, 3}, XHeader: "Energy [eV]", YHeader: "A",
	},
	{
		Name:  "Comma/SpaceAfterComma",
		Input: "Wavelength (nm), %T\n500, 50\n600, 60 \n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2}, YHeader: "%T",
	},
	{
		Name:  "QuotedCells",
		Input: "\"Wavelength (nm)\",\"%T\"\n\"500\",\"50\"\n\"600\",\"60\"\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2}, XHeader: "Wavelength (nm)",
	},
	{
		Name:  "TrailingSeparators",
		Input: "Wavelength (nm),%T,\n500,50,\n600,60,\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},
	{
		Name:  "IndexColumnIgnored",
		Input: "No.,Wavelength (nm),%T\n1,500,50\n2,600,60\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},
	{
		Name:  "CommentsAndBlankLinesInData",
		Input: "# demo\nWavelength (nm),%T\n\n500,50\n# lamp change\n\n600,60\n  # indented comment\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{7, 4},
	},
	{
		Name:    "CommentRune",
		Comment: '!',
		Input:   "! Operator: demo user\nWavelength (nm),%T\n! mid\n500,50\n600,60\n",
		X:       []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{5, 4},
		Meta: map[string]string{"Operator": "demo user"},
	},
	{
		Name:  "Comma option",
		Comma: ' ',
		Input: "Energy (eV) A\n1.2 0.5\n1.3 0.8\n",
		X:     []float64{1.2, 1.3}, Unit: ElectronVolt, Y: []float64{0.5, 0.8},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{2, 3},
	},
	{
		Name:  "TwoLineHeader",
		Input: "Sample;W14\n\nWavelength;Transmittance\nnm;%\n400;93,2\n410;93,5\n",
		X:     []float64{410, 400}, Unit: Nanometre, Y: []float64{0.935, 0.932},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{6, 5},
		XHeader: "Wavelength nm", Meta: map[string]string{"Sample": "W14"}, Notes: []string{"two-line header, lines 3-4"},
	},
	{
		Name:  "CommentHeader",
		Input: "# sample: F13\n# Wavelength(nm) Abs\n800 0.1\n700 0.2\n",
		X:     []float64{800, 700}, Unit: Nanometre, Y: []float64{0.1, 0.2},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 4},
		Meta: map[string]string{"sample": "F13"}, Notes: []string{"header taken from comment line 2"},
	},
	{
		Name:  "OneRow",
		Input: "Wavelength (nm),%T\n500,50\n",
		X:     []float64{500}, Unit: Nanometre, Y: []float64{0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2},
	},
	{
		Name:  "Exponents",
		Input: "Energy (eV),alpha (cm-1)\n1.4,1.2e+02\n1.5,5E3\n",
		X:     []float64{1.4, 1.5}, Unit: ElectronVolt, Y: []float64{120, 5000},
		Kind: Alpha, SrcKind: Alpha, Lines: []int{2, 3},
	},
	{
		Name:  "CtrlZAtEnd",
		Input: "Wavelength (nm),%T\r\n500,50\r\n600,60\r\n\x1a",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},

	// Encodings and line endings.
	{
		Name: "UTF16LE/BOM/CRLF",
		Raw:  utf16LE("Instrument:\tDEMO-SPEC 3\r\nλ (nm)\tT (%)\r\n500\t50\r\n600\t60\r\n"),
		X:    []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{4, 3},
		XHeader: "λ (nm)", Meta: map[string]string{"Instrument": "DEMO-SPEC 3"},
		Notes: []string{"UTF-16 little-endian"},
	},
	{
		Name: "UTF16BE/BOM/SurrogatePair",
		Raw:  utf16BE("# 𝛼 demo\nEnergy (eV),α (cm⁻¹)\n1.40,120\n1.45,5000\n"),
		X:    []float64{1.4, 1.45}, Unit: ElectronVolt, Y: []float64{120, 5000},
		Kind: Alpha, SrcKind: Alpha, Lines: []int{3, 4}, YHeader: "α (cm⁻¹)",
		Notes: []string{"UTF-16 big-endian"},
	},
	{
		Name:  "UTF8BOM/CRLF",
		Input: "\ufeffnm,Abs\r\n500,0.1\r\n600,0.2\r\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2}, XHeader: "nm",
		Notes: []string{"UTF-8 with byte-order mark"},
	},
	{
		Name:  "BareCR",
		Input: "Wavelength (nm),A\r500,0.1\r600,0.2\r",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},

	// x units and order.
	{
		Name:  "DescendingWavelength",
		Input: "Wavelength (nm),%T\n600,60\n500,50\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2, 3},
	},
	{
		Name:  "Wavenumber/cm-1",
		Input: "Wavenumber (cm-1),A\n4000,0.1\n3000,0.2\n",
		X:     []float64{3000, 4000}, Unit: Wavenumber, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},
	{
		Name:  "Wavenumber/cm^-1",
		Input: "Wavenumber [cm^-1],%T\n2000,50\n3000,40\n",
		X:     []float64{2000, 3000}, Unit: Wavenumber, Y: []float64{0.5, 0.4},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2, 3},
	},
	{
		Name:  "Wavenumber/1/cm/T%",
		Input: "wavenumber/(1/cm),T%\n2000,50\n3000,40\n",
		X:     []float64{2000, 3000}, Unit: Wavenumber, Y: []float64{0.5, 0.4},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2, 3},
	},
	{
		Name:  "BareCm-1IsX",
		Input: "cm-1,%T\n2000,50\n3000,40\n",
		X:     []float64{2000, 3000}, Unit: Wavenumber, Y: []float64{0.5, 0.4},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2, 3},
	},
	{
		Name:  "BareCm-1IsAlpha",
		Input: "eV,cm-1\n1.4,120\n1.5,3000\n",
		X:     []float64{1.4, 1.5}, Unit: ElectronVolt, Y: []float64{120, 3000},
		Kind: Alpha, SrcKind: Alpha, Lines: []int{2, 3},
	},
	{
		Name:  "Micrometre/lambda/um",
		Input: "lambda/um,A\n0.5,0.1\n0.6,0.2\n",
		X:     []float64{0.6, 0.5}, Unit: Micrometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},
	{
		Name:  "Micrometre/MicroSign",
		Input: "Wavelength (µm);Abs\n0,5;0,1\n0,6;0,2\n",
		X:     []float64{0.6, 0.5}, Unit: Micrometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},
	{
		Name:  "WavelengthNoUnit/nm",
		Input: "Wavelength,A\n400,0.1\n800,0.2\n",
		X:     []float64{800, 400}, Unit: Nanometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
		Notes: []string{"wavelength without a unit; values 400–800 read as nm"},
	},
	{
		Name:  "WavelengthNoUnit/um",
		Input: "Wavelength,A\n0.4,0.1\n0.8,0.2\n",
		X:     []float64{0.8, 0.4}, Unit: Micrometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},
	{
		Name:  "EnergyNoUnit",
		Input: "Energy,A\n1.2,0.1\n1.3,0.2\n",
		X:     []float64{1.2, 1.3}, Unit: ElectronVolt, Y: []float64{0.1, 0.2},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{2, 3},
	},
	{
		Name:  "UnknownX/FitsOnlyCm-1",
		Input: "X,Abs\n5000,0.5\n6000,0.6\n",
		X:     []float64{5000, 6000}, Unit: Wavenumber, Y: []float64{0.5, 0.6},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{2, 3},
		Notes: []string{"values 5000–6000 fit only cm-1"},
	},
	{
		Name:  "XUnitOverridesHeader",
		Input: "Wavelength (nm),A\n0.5,0.1\n0.6,0.2\n",
		XUnit: Micrometre,
		X:     []float64{0.6, 0.5}, Unit: Micrometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
		Notes: []string{"the header says nm but --x-unit um wins"},
	},

	// y kinds.
	{
		Name:  "Absorbance/AU",
		Input: "Wavelength (nm),Absorbance (AU)\n500,0.1\n600,0.2\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.2, 0.1},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},
	{
		Name:  "AbsorptionCoefficient/1/cm",
		Input: "Photon energy (eV);Absorption coefficient (1/cm)\n1,40;120\n1,45;5000\n",
		X:     []float64{1.4, 1.45}, Unit: ElectronVolt, Y: []float64{120, 5000},
		Kind: Alpha, SrcKind: Alpha, Lines: []int{2, 3},
	},
	{
		Name:  "TransmittancePercentWords",
		Input: "Wavelength (nm),Transmittance (%)\n500,50\n600,60\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},
	{
		Name:  "T/PercentByValues",
		Input: "Wavelength (nm),T\n500,50\n600,87.5\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.875, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
		Notes: []string{"largest value 87.5 > 1.5, read as percent"},
	},
	{
		Name:  "T/FractionByValues/NoiseKept",
		Input: "Energy (eV),T\n1.0,1.05\n2.0,-0.01\n",
		X:     []float64{1, 2}, Unit: ElectronVolt, Y: []float64{1.05, -0.01},
		Kind: Transmittance, SrcKind: Transmittance, Lines: []int{2, 3},
		Notes: []string{"read as a fraction", "1 transmittance values ≤ 0 kept", "1 transmittance values above 100 % kept"},
	},
	{
		Name:  "%T/NoiseKept",
		Input: "Wavelength (nm),%T\n500,-0.3\n550,45\n600,100.8\n",
		X:     []float64{600, 550, 500}, Unit: Nanometre, Y: []float64{1.008, 0.45, -0.003},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{4, 3, 2},
	},
	{
		Name:  "YKindPercentExplicitSmallValues",
		Input: "Wavelength (nm),T\n500,0.5\n600,1.2\n",
		YKind: TransmittancePercent,
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.012, 0.005},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
		Notes: []string{"read as percent as --y-kind T% says"},
	},
	{
		Name:  "R/Percent",
		Input: "Wavelength (nm),%T,%R\n500,50,30\n600,60,31\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5}, R: []float64{0.31, 0.30},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},
	{
		Name:  "R/FractionByValues",
		Input: "Wavelength (nm),T,R\n500,0.5,0.3\n600,0.6,0.31\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5}, R: []float64{0.31, 0.3},
		Kind: Transmittance, SrcKind: Transmittance, Lines: []int{3, 2},
		Notes: []string{`R column 3 "R": reflectance; largest value 0.31 ≤ 1.5, read as a fraction`},
	},
	{
		Name:  "R/ReflectancePercentWords",
		Input: "Wavelength (nm)\tTransmittance (%)\tReflectance (%)\n500\t50\t30\n600\t60\t31\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5}, R: []float64{0.31, 0.30},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
	},

	// Columns and units by option.
	{
		Name:    "YColumnByName",
		Input:   "Wavelength (nm),%T,Abs\n500,50,0.301\n600,60,0.222\n",
		YColumn: "abs",
		X:       []float64{600, 500}, Unit: Nanometre, Y: []float64{0.222, 0.301},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2}, YHeader: "Abs",
	},
	{
		Name:    "ColumnsByIndex",
		Input:   "Wavelength (nm),%T,Abs\n500,50,0.301\n600,60,0.222\n",
		XColumn: "1", YColumn: "3",
		X: []float64{600, 500}, Unit: Nanometre, Y: []float64{0.222, 0.301},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
	},
	{
		Name:  "YKindPicksColumn",
		Input: "Wavelength (nm),%T,Abs\n500,50,0.301\n600,60,0.222\n",
		YKind: TransmittancePercent,
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2}, YHeader: "%T",
	},
	{
		Name:    "XColumnByName/ReferenceStyle",
		Input:   "wavelength_nm,energy_eV,n,k,alpha_cm-1\n500,2.479684,3.1,0.01,2513.3\n600,2.066403,3.0,0.001,209.4\n",
		XColumn: "energy_eV",
		X:       []float64{2.066403, 2.479684}, Unit: ElectronVolt, Y: []float64{209.4, 2513.3},
		Kind: Alpha, SrcKind: Alpha, Lines: []int{3, 2}, XHeader: "energy_eV", YHeader: "alpha_cm-1",
	},
	{
		Name:  "NoHeader/Flags",
		Input: "500\t50\n600\t60\n",
		XUnit: Nanometre, YKind: TransmittancePercent,
		X: []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2, 1},
		Notes: []string{"no header line"},
	},
	{
		Name:    "NoHeader/Columns",
		Input:   "1 500 50 0.3\n2 600 60 0.2\n",
		XColumn: "2", YColumn: "3", XUnit: Nanometre, YKind: TransmittancePercent,
		X: []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{2, 1},
	},

	// Bad input: empty, header only, not text.
	{Name: "Empty", Input: "", Error: ErrNoData},
	{Name: "BlankLines", Input: "\n\n  \r\n", Error: ErrNoData},
	{Name: "OnlyComments", Input: "# a\n# b\n", Error: ErrNoData},
	{Name: "HeaderOnly", Input: "Wavelength (nm),%T\n", Error: ErrNoData, Line: 1},
	{Name: "HeaderOnly/Preamble/CRLF", Input: "Sample,W07\r\nWavelength (nm),%T\r\n", Error: ErrNoData, Line: 2},
	{Name: "OneColumn", Input: "Wavelength (nm)\n500\n600\n", Error: ErrNoData, Line: 2},
	{Name: "Words", Input: "hello world\nfoo bar\n", Error: ErrNoData},
	{Name: "NUL", Input: "Wavelength (nm),%T\n500,5\x000\n", Error: ErrEncoding, Line: 2, Column: 6},
	{Name: "BinaryGarbage", Input: "\x89PNG\r\n\x1a\n\x00\x00\x01", Error: ErrEncoding, Line: 3, Column: 1},
	// Not UTF-8 and not Windows-1252 text either: a control byte (0x01)
	// and an undefined code point (0x81) mark binary data.
	{Name: "InvalidUTF8/ControlByte", Input: "Wavelength (\xb5m),A\x01\n0.5,0.1\n", Error: ErrEncoding, Line: 1, Column: 13},
	{Name: "InvalidUTF8/Undefined1252", Input: "Wavelength (\x81m),A\n0.5,0.1\n", Error: ErrEncoding, Line: 1, Column: 13},
	{Name: "UTF16/OddLength", Raw: []byte{0xFF, 0xFE, 'W', 0, 'a'}, Error: ErrEncoding, Line: 1, Column: 2,
		Detail: []string{"odd number of bytes", "truncated"}},
	{Name: "UTF16/UnpairedSurrogate", Raw: []byte{0xFF, 0xFE, 'A', 0, 0x00, 0xD8, 'B', 0}, Error: ErrEncoding, Line: 1, Column: 2},
	{Name: "UTF16/NoBOM", Raw: []byte("W\x00a\x00v\x00e\x00"), Error: ErrEncoding, Line: 1, Column: 2, Detail: []string{"UTF-16 without a byte-order mark"}},

	// Windows-1252 (Latin-1): "µm" as the byte 0xB5, "ä" as 0xE4, and
	// the en dash 0x96 from the code page's 0x80–0x9F block (Unicode's
	// CP1252.TXT maps it to U+2013).
	{
		Name:  "Windows1252/Micro",
		Input: "Ger\xe4t;KM \x96 2\nWellenl\xe4nge (\xb5m);T (%)\n0,85;50,5\n0,90;60,5\n",
		X:     []float64{0.90, 0.85}, Unit: Micrometre, Y: []float64{0.605, 0.505},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{4, 3},
		XHeader: "Wellenlänge (µm)", Meta: map[string]string{"Gerät": "KM – 2"},
		Notes: []string{"Windows-1252"},
	},
	// A trailing block after the data, as instrument software writes it:
	// read as metadata, not as points.
	{
		Name:  "Trailer/Statistics",
		Input: "Wavelength (nm),%T\n500,50\n600,60\n\n[Statistics]\nAverage,55\nScan end: 10:42\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.6, 0.5},
		Kind: Transmittance, SrcKind: TransmittancePercent, Lines: []int{3, 2},
		Meta:  map[string]string{"Average": "55", "Scan end": "10:42"},
		Notes: []string{"lines 5–7 after the data", "trailing block"},
	},
	{
		Name:  "Trailer/Whitespace",
		Input: "nm Abs\n500 0.5\n600 0.4\nEnd of data\n",
		X:     []float64{600, 500}, Unit: Nanometre, Y: []float64{0.4, 0.5},
		Kind: Absorbance, SrcKind: Absorbance, Lines: []int{3, 2},
		Notes: []string{"line"},
	},
	// Not a trailer: a damaged last row (a number, then nothing) is
	// reported where it is, even with text after it.
	{Name: "Trailer/DamagedRowBefore", Input: "Wavelength (nm),%T\n500,50\n600,60\n700,\nAverage,55\n", Error: ErrSyntax, Line: 4, Column: 5},
	// Not a trailer: rows with another separator after the data.
	{Name: "Trailer/OtherSeparator", Input: "Wavelength (nm),%T\n500,50\n600,60\n650,65\n680,68\n700;70\n800;80\n", Error: ErrSyntax, Line: 6, Column: 1,
		Detail: []string{`separated by ';'`}},
	// Not a trailer: text in the middle of the data.
	{Name: "Trailer/TextInside", Input: "Wavelength (nm),%T\n500,50\n550,55\nlamp change\n600,60\n650,65\n", Error: ErrSyntax, Line: 4, Column: 1},

	// Limits.
	{Name: "MaxLineBytes", Input: "Note," + strings.Repeat("x", DefaultMaxLineBytes) + "\nWavelength (nm),%T\n500,50\n600,60\n", Error: ErrTooLarge, Line: 1},

	// Units that contradict the values: the photon energy leaves
	// 0.005–25 eV.
	{Name: "Unit/UmInNmColumn", Input: "Wavelength (nm),%T\n0.85,50\n0.90,60\n", Error: ErrUnit, Line: 2, Column: 1, Detail: []string{"um"}},
	{Name: "Unit/NmInEVColumn", Input: "Energy (eV),A\n850,0.5\n900,0.6\n", Error: ErrUnit, Line: 3, Column: 1, Detail: []string{"--x-unit nm"}},
	{Name: "Unit/OptionWrong", Input: "850,50\n900,60\n", XUnit: Micrometre, YKind: TransmittancePercent, Error: ErrUnit, Line: 2, Detail: []string{"--x-unit"}},
	// Absorbance that cannot be: negative everywhere, or %T values.
	{Name: "Absorbance/AllNegative", Input: "Wavelength (nm),Abs\n500,-0.2\n600,-0.1\n", Error: ErrRange, Line: 3, Column: 5, Detail: []string{"swapped"}},
	{Name: "Absorbance/PercentT", Input: "Wavelength (nm),Abs\n500,20\n600,40\n700,60\n", Error: ErrRange, Line: 4, Column: 5, Detail: []string{"--y-kind T%"}},
	// A decimal comma in a comma-separated file: twice the cells.
	{Name: "DecimalCommaCommaSeparated", Input: "Wavelength (nm),%T\n500,0,50,5\n600,0,60,5\n", Error: ErrSyntax, Line: 2, Detail: []string{"decimal separator"}},

	// Bad cells.
	{
		Name: "NotANumber", Input: "Wavelength (nm),%T\n500,50\n550,n/a\n600,60\n",
		Error: ErrSyntax, Line: 3, Column: 5, Detail: []string{`"n/a" is not a number`},
	},
	{
		Name: "NotANumber/FirstRow", Input: "Wavelength (nm),%T\n500,n/a\n600,60\n700,70\n",
		Error: ErrSyntax, Line: 2, Column: 5,
	},
	{
		Name: "NotANumber/Whitespace", Input: "Energy (eV) A\n1.2 0.1\n1.3 x\n1.4 0.3\n",
		Error: ErrSyntax, Line: 3, Column: 5,
	},
	{
		Name: "DecimalCommaInCommaFile", Input: "Wavelength (nm),T\n500,\"0,93\"\n600,0.5\n",
		Error: ErrSyntax, Line: 2, Column: 5, Detail: []string{"is the decimal separator a comma?"},
	},
	{
		Name: "DecimalPointInDecimalCommaFile", Input: "Wavelength (nm);T\n500;0,93\n600;0.5\n700;0,4\n",
		Error: ErrSyntax, Line: 3, Column: 5, Detail: []string{"decimal comma"},
	},
	{
		Name: "NaNInGoodFile", Input: "Wavelength (nm),%T\n500,50\n550,NaN\n600,60\n",
		Error: ErrSyntax, Line: 3, Column: 5,
	},
	{
		Name: "NaNFirst", Input: "Wavelength (nm),%T\n500,NaN\n550,50\n600,60\n",
		Error: ErrSyntax, Line: 2, Column: 5,
	},
	{
		Name: "EmptyYInGoodFile", Input: "Wavelength (nm),%T\n500,50\n550,\n600,60\n",
		Error: ErrSyntax, Line: 3, Column: 5, Detail: []string{"empty y cell"},
	},
	{
		Name: "AllNaN", Input: "Wavelength (nm),%T\n500,NaN\n600,nan\n",
		Error: ErrNoData, Line: 2, Column: 5,
	},
	{
		Name: "InfX", Input: "Energy (eV),A\n1.2,0.1\ninf,0.2\n",
		Error: ErrSyntax, Line: 3, Column: 1,
	},
	{
		Name: "Overflow", Input: "Energy (eV),A\n1.2,1e400\n1.3,0.2\n",
		Error: ErrRange, Line: 2, Column: 5,
	},
	{
		Name: "ShortRow", Input: "Wavelength (nm),%T\n500,50\n600\n700,70\n",
		Error: ErrSyntax, Line: 3, Column: 4,
	},
	{
		Name: "BareQuote", Input: "Wavelength (nm),%T\n500,50\n600,6\"0\n700,70\n",
		Error: ErrSyntax, Line: 3, Column: 6,
	},
	{
		Name: "NegativeWavelength", Input: "Wavelength (nm),A\n-500,0.1\n600,0.2\n",
		Error: ErrRange, Line: 2, Column: 1,
	},
	{
		Name: "ZeroWavenumber", Input: "Wavenumber (cm-1),A\n0,0.1\n100,0.2\n",
		Error: ErrRange, Line: 2, Column: 1,
	},

	// Order of x.
	{
		Name: "DuplicateX", Input: "Wavelength (nm),%T\n500,50\n500,51\n",
		Error: ErrNotMonotonic, Line: 3, Column: 1, Detail: []string{"line 2"},
	},
	{
		Name: "ShuffledX", Input: "Wavelength (nm),%T\n500,50\n600,60\n550,55\n700,70\n",
		Error: ErrNotMonotonic, Line: 4, Column: 1, Detail: []string{"line 3"},
	},

	// Ambiguous or unknown columns and units.
	{
		Name: "Signal", Input: "Wavelength (nm),Signal\n500,1\n600,2\n",
		Error: ErrAmbiguous, Line: 1, Column: 17, Detail: []string{"--y-kind"},
	},
	{
		Name: "TwoYColumns", Input: "Wavelength (nm),%T,Abs\n500,50,0.3\n600,60,0.2\n",
		Error: ErrAmbiguous, Line: 1, Column: 20, Detail: []string{"--columns"},
	},
	{
		Name: "TwoXColumns", Input: "wavelength_nm,energy_eV,alpha_cm-1\n500,2.4797,100\n600,2.0664,90\n",
		Error: ErrAmbiguous, Line: 1, Column: 15, Detail: []string{"--columns"},
	},
	{
		Name: "TwoRColumns", Input: "Wavelength (nm),%T,R,%R\n500,50,0.3,30\n600,60,0.2,20\n",
		Error: ErrAmbiguous, Line: 1, Column: 22,
	},
	{
		Name: "UnknownX/FitsTwoUnits", Input: "X,Abs\n400,0.1\n800,0.2\n",
		Error: ErrAmbiguous, Line: 1, Column: 1, Detail: []string{"nm or cm-1", "--x-unit"},
	},
	{
		Name: "UnknownX/FitsNoUnit", Input: "X,A\n1e6,0.1\n2e6,0.2\n",
		Error: ErrUnit, Line: 1, Column: 1, Detail: []string{"--x-unit"},
	},
	{
		Name: "UnknownXAndY", Input: "Index,Time,Value\n1,2,3\n2,3,4\n",
		Error: ErrAmbiguous, Line: 1,
	},
	{
		Name: "NoHeader/NoFlags", Input: "500,50\n600,60\n",
		Error: ErrUnit, Line: 1, Detail: []string{"--x-unit", "--y-kind"},
	},
	{
		Name: "NoHeader/OnlyXUnit", Input: "500,50\n600,60\n", XUnit: Nanometre,
		Error: ErrUnit, Line: 1, Detail: []string{"--y-kind"},
	},
	{
		Name: "NoHeader/ThreeColumns", Input: "500,50,30\n600,60,31\n", XUnit: Nanometre, YKind: TransmittancePercent,
		Error: ErrAmbiguous, Line: 1, Detail: []string{"--columns"},
	},
	{
		Name: "UnsupportedXUnit", Input: "Energy (meV),A\n1200,0.1\n1300,0.2\n",
		Error: ErrUnit, Line: 1, Column: 1,
	},
	{
		Name: "UnsupportedAlphaUnit", Input: "Energy (eV),alpha (1/m)\n1.2,100\n1.3,200\n",
		Error: ErrUnit, Line: 1, Column: 13,
	},

	// Transmittance sanity.
	{
		Name: "FractionDeclared/PercentValues", Input: "Wavelength (nm),T\n500,87\n600,88\n", YKind: Transmittance,
		Error: ErrRange, Line: 3, Column: 5, Detail: []string{"looks like percent; pass --y-kind T%"},
	},
	{
		Name: "FractionHeader/PercentValues", Input: "Wavelength (nm),T (fraction)\n500,0.5\n600,45\n",
		Error: ErrRange, Line: 3, Column: 5, Detail: []string{"looks like percent; pass --y-kind T%"},
	},
	{
		Name: "FractionHeader/Above1.1", Input: "Wavelength (nm),T (fraction)\n500,0.5\n600,1.3\n",
		Error: ErrRange, Line: 3, Column: 5,
	},
	{
		Name: "PercentHeader/FractionValues", Input: "Wavelength (nm),%T\n500,0.5\n600,0.93\n",
		Error: ErrRange, Line: 3, Column: 5, Detail: []string{"looks like a fraction", "--y-kind T"},
	},
	{
		Name: "Percent/Above110", Input: "Wavelength (nm),%T\n500,50\n600,150\n",
		Error: ErrRange, Line: 3, Column: 5,
	},
	{
		Name: "Percent/BelowMinus5", Input: "Wavelength (nm),%T\n500,-8\n600,50\n",
		Error: ErrRange, Line: 2, Column: 5,
	},
	{
		Name: "T/TooLargeForPercent", Input: "Wavelength (nm),T\n500,50\n600,250\n",
		Error: ErrRange, Line: 3, Column: 5,
	},
	{
		Name: "R/Above1.1", Input: "Wavelength (nm),T,R\n500,0.5,0.3\n600,0.6,1.3\n",
		Error: ErrRange, Line: 3, Column: 9,
	},

	// Limits.
	{Name: "MaxBytes", Input: "Wavelength (nm),%T\n500,50\n600,60\n", MaxBytes: 20, Error: ErrTooLarge},
	{Name: "MaxLines", Input: "Wavelength (nm),%T\n500,50\n600,60\n700,70\n800,80\n", MaxLines: 3, Error: ErrTooLarge, Line: 4},
	{Name: "MaxPoints", Input: "Wavelength (nm),%T\n500,50\n600,60\n700,70\n", MaxPoints: 2, Error: ErrTooLarge, Line: 4},

	// Options naming columns the file lacks, and invalid options.
	{Name: "XColumnNotFound", Input: "Wavelength (nm),%T\n500,50\n600,60\n", XColumn: "Energy", Error: ErrOption, Line: 1},
	{Name: "YColumnIndexTooLarge", Input: "Wavelength (nm),%T\n500,50\n600,60\n", YColumn: "5", Error: ErrOption, Line: 1},
	{Name: "SameColumnTwice", Input: "Wavelength (nm),%T\n500,50\n600,60\n", XColumn: "1", YColumn: "1", Error: ErrOption, Line: 1},
	{Name: "BadComment", Input: "x", Comment: '1', Error: ErrOption, NotParse: true},
	{Name: "BadComma", Input: "x", Comma: ':', Error: ErrOption, NotParse: true},
	{Name: "CommentIsComma", Input: "x", Comma: ';', Comment: ';', Error: ErrOption, NotParse: true},
	{Name: "ZeroColumnIndex", Input: "x", XColumn: "0", Error: ErrOption, NotParse: true},
	{Name: "NegativeLimit", Input: "x", MaxBytes: -1, Error: ErrOption, NotParse: true},
	{Name: "BadYKind", Input: "x", YKind: 99, Error: ErrOption, NotParse: true},
}

func (tc *readTest) reader() *Reader {
	var in io.Reader = strings.NewReader(tc.Input)
	if tc.Raw != nil {
		in = strings.NewReader(string(tc.Raw))
	}
	r := NewReader(in, "test.csv")
	r.Comment, r.Comma = tc.Comment, tc.Comma
	r.XUnit, r.YKind = tc.XUnit, tc.YKind
	r.XColumn, r.YColumn, r.RColumn = tc.XColumn, tc.YColumn, tc.RColumn
	r.MaxBytes, r.MaxLines, r.MaxPoints = tc.MaxBytes, tc.MaxLines, tc.MaxPoints
	return r
}

func TestRead(t *testing.T) {
	for _, tc := range readTests {
		t.Run(tc.Name, func(t *testing.T) {
			s, err := tc.reader().Read()
			if tc.Error != nil {
				checkError(t, err, tc)
				return
			}
			if err != nil {
				t.Fatalf("unexpected error: %v", err)
			}
			checkSpectrum(t, s, tc)
		})
	}
}

func checkError(t *testing.T, err error, tc readTest) {
	t.Helper()
	if !errors.Is(err, tc.Error) {
		t.Fatalf("error %v, want errors.Is %v", err, tc.Error)
	}
	var pe *ParseError
	if tc.NotParse {
		if errors.As(err, &pe) {
			t.Errorf("option error is a *ParseError: %v", err)
		}
		return
	}
	if !errors.As(err, &pe) {
		t.Fatalf("error %v is not a *ParseError", err)
	}
	if pe.Line != tc.Line || pe.Column != tc.Column {
		t.Errorf("error at %d:%d, want %d:%d (%v)", pe.Line, pe.Column, tc.Line, tc.Column, err)
	}
	if pe.File != "test.csv" {
		t.Errorf("error names file %q, want test.csv", pe.File)
	}
	for _, d := range tc.Detail {
		if !strings.Contains(pe.Error(), d) {
			t.Errorf("error %q does not say %q", pe.Error(), d)
		}
	}
}

func checkSpectrum(t *testing.T, s *Spectrum, tc readTest) {
	t.Helper()
	if s.Name != "test.csv" {
		t.Errorf("Name %q, want test.csv", s.Name)
	}
	if len(s.E) != len(tc.X) || len(s.Y) != len(tc.X) || len(s.Lines) != len(tc.X) {
		t.Fatalf("len(E, Y, Lines) = %d, %d, %d, want %d (notes %q)", len(s.E), len(s.Y), len(s.Lines), len(tc.X), s.Notes)
	}
	for i, x := range tc.X {
		if want := wantEnergy(x, tc.Unit); !scalar.EqualWithinAbsOrRel(s.E[i], want, 0, energyRelTol) {
			t.Errorf("E[%d] = %.12g, want %.12g (x = %g %v)", i, s.E[i], want, x, tc.Unit)
		}
		if !scalar.EqualWithinAbsOrRel(s.Y[i], tc.Y[i], yTol, yTol) {
			t.Errorf("Y[%d] = %.12g, want %.12g", i, s.Y[i], tc.Y[i])
		}
	}
	if tc.R == nil {
		if s.R != nil {
			t.Errorf("R = %v, want nil", s.R)
		}
	} else {
		if len(s.R) != len(tc.R) {
			t.Fatalf("len(R) = %d, want %d", len(s.R), len(tc.R))
		}
		for i := range tc.R {
			if !scalar.EqualWithinAbsOrRel(s.R[i], tc.R[i], yTol, yTol) {
				t.Errorf("R[%d] = %.12g, want %.12g", i, s.R[i], tc.R[i])
			}
		}
	}
	if !slices.Equal(s.Lines, tc.Lines) {
		t.Errorf("Lines = %v, want %v", s.Lines, tc.Lines)
	}
	if s.SourceXUnit != tc.Unit {
		t.Errorf("SourceXUnit = %v, want %v", s.SourceXUnit, tc.Unit)
	}
	if s.Kind != tc.Kind || s.SourceYKind != tc.SrcKind {
		t.Errorf("Kind, SourceYKind = %v, %v, want %v, %v", s.Kind, s.SourceYKind, tc.Kind, tc.SrcKind)
	}
	if tc.XHeader != "" && s.XHeader != tc.XHeader {
		t.Errorf("XHeader = %q, want %q", s.XHeader, tc.XHeader)
	}
	if tc.YHeader != "" && s.YHeader != tc.YHeader {
		t.Errorf("YHeader = %q, want %q", s.YHeader, tc.YHeader)
	}
	if s.Meta == nil {
		t.Errorf("Meta is nil")
	}
	for k, v := range tc.Meta {
		if s.Meta[k] != v {
			t.Errorf("Meta[%q] = %q, want %q (Meta %q)", k, s.Meta[k], v, s.Meta)
		}
	}
	for _, n := range tc.Notes {
		if !slices.ContainsFunc(s.Notes, func(s string) bool { return strings.Contains(s, n) }) {
			t.Errorf("no note says %q; notes: %q", n, s.Notes)
		}
	}
	for i := 1; i < len(s.E); i++ {
		if !(s.E[i] > s.E[i-1]) {
			t.Errorf("E not strictly ascending at %d: %v", i, s.E)
		}
	}
}

func TestReadTwice(t *testing.T) {
	r := NewReader(strings.NewReader("Wavelength (nm),%T\n500,50\n"), "twice.csv")
	if _, err := r.Read(); err != nil {
		t.Fatal(err)
	}
	if s, err := r.Read(); s != nil || err != io.EOF {
		t.Errorf("second Read = %v, %v, want nil, io.EOF", s, err)
	}
}

// errReader fails after its data.
type errReader struct{ err error }

func (e errReader) Read([]byte) (int, error) { return 0, e.err }

func TestReadUnderlyingError(t *testing.T) {
	boom := errors.New("disk on fire")
	_, err := NewReader(errReader{boom}, "x.csv").Read()
	if !errors.Is(err, boom) {
		t.Errorf("error %v, want it to wrap %v", err, boom)
	}
}

// TestParseErrorFormat checks the compiler-style message of STYLE.md
// ("errors"), with the position taken from encoding/csv.
func TestParseErrorFormat(t *testing.T) {
	var b strings.Builder
	b.WriteString("Instrument: DEMO-SPEC 1 (invented)\nWavelength (nm),T\n")
	for i := range 14 {
		fmt.Fprintf(&b, "%d.000,0.90\n", 300+i)
	}
	b.WriteString(`314.000,"0,93"` + "\n315.000,0.94\n")
	_, err := NewReader(strings.NewReader(b.String()), "wafer07.csv").Read()
	const want = `wafer07.csv:17:9: "0,93" is not a number (is the decimal separator a comma?)`
	if err == nil || err.Error() != want {
		t.Errorf("error\n%v\nwant\n%s", err, want)
	}
	for _, tc := range []struct {
		e    ParseError
		want string
	}{
		{ParseError{File: "a.csv", Err: ErrNoData}, "a.csv: specio: no data rows"},
		{ParseError{Line: 3, Err: ErrSyntax, Detail: "bad"}, "<input>:3: bad"},
		{ParseError{File: "b.txt", Line: 3, Column: 4, Detail: "bad"}, "b.txt:3:4: bad"},
	} {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("Error() = %q, want %q", got, tc.want)
		}
	}
	pe := &ParseError{Err: ErrRange}
	if !errors.Is(pe, ErrRange) || pe.Unwrap() != ErrRange {
		t.Errorf("Unwrap does not return Err")
	}
}
