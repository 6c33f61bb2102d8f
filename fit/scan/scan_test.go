package scan

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"bandedge/io/export"
	"bandedge/io/specio"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// truth: GaAs-like parameters from memory (E_g = 1.424 eV, Sze & Ng,
// Physics of Semiconductor Devices, 3rd ed.; C from E_P = 28.8 eV, n = 3.6,
// m_e = 0.067, m_h = 0.51, Vurgaftman et al., J. Appl. Phys. 89, 5815,
// 2001); E_U = 8 meV, a typical epitaxial value (from memory).
var truth = []float64{1.424, model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51)), 0.008}

const (
	thick  = 2e-4 // cm
	index  = 3.6
	sigmaT = 0.002
)

// styles are export layouts a third party's instrument may write, each
// read back through the full pipeline.
var styles = []struct {
	name  string
	write func(e, t []float64) ([]byte, error)
}{
	{"csv nm descending %T with preamble", func(e, t []float64) ([]byte, error) {
		nm, y := wavelengths(e), scale(t, 100)
		return render(export.Style{Preamble: []string{"Instrument,test", "Sample,S1"}, Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{2, 4}}, nm, y)
	}},
	{"semicolon decimal comma nm ascending T%", func(e, t []float64) ([]byte, error) {
		nm, y := wavelengths(e), scale(t, 100)
		rev(nm)
		rev(y)
		return render(export.Style{Comma: ';', DecimalComma: true, Header: []string{"Wellenlänge [nm]", "T [%]"}, Digits: []int{2, 4}, CRLF: true}, nm, y)
	}},
	{"tab nm absorbance", func(e, t []float64) ([]byte, error) {
		a := make([]float64, len(t))
		for i, v := range t {
			a[i] = 6 // the software's overflow value where T ≤ 0
			if v > 0 {
				a[i] = -math.Log10(v)
			}
		}
		return render(export.Style{Comma: '\t', Header: []string{"nm", "Abs"}, Digits: []int{2, 6}}, wavelengths(e), a)
	}},
	{"csv eV fraction T", func(e, t []float64) ([]byte, error) {
		return render(export.Style{Header: []string{"Energy (eV)", "Transmittance (fraction)"}, Digits: []int{6, 6}}, e, t)
	}},
	{"csv wavenumber %T", func(e, t []float64) ([]byte, error) {
		k := make([]float64, len(e))
		for i, v := range e {
			k[i] = specio.WavenumberFromEnergy(v)
		}
		return render(export.Style{Header: []string{"Wavenumber (cm-1)", "%T"}, Digits: []int{3, 4}}, k, scale(t, 100))
	}},
}

// TestRecoveryEachStyle: the same noisy scan written in each style is
// read, converted and fitted; E_g, E_U and C lie within three combined
// standard uncertainties of the values the spectrum was made from.
func TestRecoveryEachStyle(t *testing.T) {
	e := synth.WavelengthGrid(700, 1000, 1)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: truth, E: e, Thickness: thick,
		R: optics.FresnelR(index, 0), SigmaT: sigmaT}, rand.New(rand.NewPCG(42, 42)))
	var eg []float64
	for _, st := range styles {
		t.Run(st.name, func(t *testing.T) {
			b, err := st.write(sc.E, sc.T)
			if err != nil {
				t.Fatal(err)
			}
			o, err := Analyze(context.Background(), "scan.txt", b, Settings{Thickness: thick, Index: index})
			if err != nil {
				t.Fatal(err)
			}
			res := o.Result
			for i, key := range []string{"eg", "amp", "eu"} {
				p, _ := res.Param(key)
				u := res.Budgets[key].Combined
				if !(u > 0) || math.Abs(p.Value-truth[i]) > 3*u {
					t.Errorf("%s = %.6g ± %.2g, truth %.6g", key, p.Value, u, truth[i])
				}
			}
			eg = append(eg, res.Params[0].Value)
		})
	}
	// Rounding in the exports differs, so the gaps agree closely but not
	// exactly; all should be within 0.5 meV of each other.
	for _, v := range eg {
		if math.Abs(v-eg[0]) > 5e-4 {
			t.Errorf("gaps differ between styles: %v", eg)
			break
		}
	}
}

// TestAlphaInput: α already converted (relative weights) is fitted
// without a thickness.
func TestAlphaInput(t *testing.T) {
	e := synth.WavelengthGrid(750, 950, 0.5)
	a := make([]float64, len(e))
	model.DirectUrbach{}.Eval(a, e, truth)
	rng := rand.New(rand.NewPCG(3, 3))
	for i := range a {
		a[i] *= 1 + 0.02*rng.NormFloat64()
	}
	b, err := render(export.Style{Header: []string{"E (eV)", "alpha (cm-1)"}, Digits: []int{6, 3}}, e, a)
	if err != nil {
		t.Fatal(err)
	}
	o, err := Analyze(context.Background(), "alpha.csv", b, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if !o.Conversion.RelativeWeights || o.Data.SigmaKnown {
		t.Errorf("α input must use relative weights")
	}
	p, _ := o.Result.Param("eg")
	if u := o.Result.Budgets["eg"].Combined; math.Abs(p.Value-truth[0]) > 3*u {
		t.Errorf("E_g = %.5f ± %.2g, truth %.5f", p.Value, u, truth[0])
	}
}

func TestStages(t *testing.T) {
	good, _ := render(export.Style{Header: []string{"nm", "%T"}}, []float64{900, 800, 700, 600, 500, 400}, []float64{90, 80, 50, 20, 5, 1})
	tests := []struct {
		name  string
		input []byte
		s     Settings
		stage Stage
	}{
		{"empty", nil, Settings{Thickness: thick}, StageRead},
		{"text in numbers", []byte("nm,%T\n900,abc\n800,50\n"), Settings{Thickness: thick}, StageRead},
		{"no thickness", good, Settings{}, StageConvert},
		{"unknown model", good, Settings{Thickness: thick, Model: "parabolic-ish"}, StageFit},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Analyze(context.Background(), "x.csv", tc.input, tc.s)
			var se *Error
			if !errors.As(err, &se) || se.Stage != tc.stage {
				t.Fatalf("err = %v, want a scan.Error at stage %s", err, tc.stage)
			}
			if se.File != "x.csv" {
				t.Errorf("error names %q, want x.csv", se.File)
			}
		})
	}
}

func render(st export.Style, cols ...[]float64) ([]byte, error) {
	var buf bytes.Buffer
	err := export.Write(&buf, st, cols...)
	return buf.Bytes(), err
}

func wavelengths(e []float64) []float64 {
	nm := make([]float64, len(e))
	for i, v := range e {
		nm[i] = specio.WavelengthFromEnergy(v)
	}
	return nm
}

func scale(v []float64, k float64) []float64 {
	out := make([]float64, len(v))
	for i := range v {
		out[i] = k * v[i]
	}
	return out
}

func rev(v []float64) {
	for i, j := 0, len(v)-1; i < j; i, j = i+1, j-1 {
		v[i], v[j] = v[j], v[i]
	}
}
