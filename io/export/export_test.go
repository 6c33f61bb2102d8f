package export

import (
	"bytes"
	"errors"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/io/specio"
)

// TestRoundTrip: every style export writes is read back by io/specio with
// the same values (to the written digits).
func TestRoundTrip(t *testing.T) {
	nm := []float64{1000, 950, 900, 850, 800, 750, 700}
	pt := []float64{91.25, 90.5, 88, 60.125, 12.5, 0.75, -0.05}
	styles := map[string]Style{
		"comma":         {Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{1, 3}},
		"semicolon dc":  {Comma: ';', DecimalComma: true, Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{1, 3}, CRLF: true},
		"tab preamble":  {Comma: '\t', Preamble: []string{"Instrument\tX", "Sample\tS"}, Header: []string{"nm", "%T"}, Digits: []int{1, 3}},
		"tab dc":        {Comma: '\t', DecimalComma: true, Header: []string{"nm", "T%"}, Digits: []int{2, 4}},
		"default digit": {Header: []string{"nm", "%T"}},
	}
	for name, st := range styles {
		t.Run(name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := Write(&buf, st, nm, pt); err != nil {
				t.Fatal(err)
			}
			sp, err := specio.NewReader(&buf, name).Read()
			if err != nil {
				t.Fatalf("%v\n%s", err, buf.String())
			}
			if sp.Kind != specio.Transmittance || len(sp.E) != len(nm) {
				t.Fatalf("kind %v, %d points", sp.Kind, len(sp.E))
			}
			// The wavelengths descend, so the energies already ascend in
			// file order.
			for i := range nm {
				j := i
				if !scalar.EqualWithinAbsOrRel(sp.E[j], specio.EnergyFromWavelength(nm[i]), 0, 1e-12) ||
					!scalar.EqualWithinAbsOrRel(sp.Y[j], pt[i]/100, 1e-12, 0) {
					t.Errorf("row %d: E %g T %g, want %g %g", i, sp.E[j], sp.Y[j], specio.EnergyFromWavelength(nm[i]), pt[i]/100)
				}
			}
		})
	}
}

func TestWriteErrors(t *testing.T) {
	var buf bytes.Buffer
	for name, c := range map[string]struct {
		st   Style
		cols [][]float64
	}{
		"decimal comma with comma": {Style{DecimalComma: true}, [][]float64{{1}, {2}}},
		"no columns":               {Style{}, nil},
		"ragged":                   {Style{}, [][]float64{{1, 2}, {2}}},
		"header count":             {Style{Header: []string{"a"}}, [][]float64{{1}, {2}}},
	} {
		if err := Write(&buf, c.st, c.cols...); !errors.Is(err, ErrStyle) {
			t.Errorf("%s: err = %v, want ErrStyle", name, err)
		}
	}
}
