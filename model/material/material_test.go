package material

import (
	"errors"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
)

// TestHandbookGaps: the presets reproduce the handbook room-temperature
// gaps, all from memory: GaAs 1.4223 eV at 300 K from the Varshni
// parameters of Vurgaftman et al. (2001); Si 1.1245 eV at 300 K (Thurmond
// 1975); Ge 0.66 eV (Sze & Ng, Physics of Semiconductor Devices, 3rd ed.).
func TestHandbookGaps(t *testing.T) {
	for _, tc := range []struct {
		name string
		want float64
		tol  float64
	}{
		{"GaAs", 1.4223, 2e-4},
		{"Si", 1.1245, 1e-4},
		{"Ge", 0.66, 0.01},
	} {
		m, err := Lookup(tc.name)
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Gap(300); !scalar.EqualWithinAbs(got, tc.want, tc.tol) {
			t.Errorf("%s: E_g(300 K) = %.4f eV, want %.4f ± %g", tc.name, got, tc.want, tc.tol)
		}
	}
}

func TestDGapDT(t *testing.T) {
	m, _ := Lookup("gaas")
	for _, temp := range []float64{4, 77, 300, 600} {
		want := fd.Derivative(m.Gap, temp, &fd.Settings{Formula: fd.Central, Step: 1e-3})
		if got := m.DGapDT(temp); !scalar.EqualWithinAbsOrRel(got, want, 1e-12, 1e-6) {
			t.Errorf("dE_g/dT(%g K) = %g, finite differences %g", temp, got, want)
		}
	}
	// The typical coefficient agrees with GaAs at 300 K within 10 %.
	if got := m.DGapDT(300); !scalar.EqualWithinRel(got, TypicalDGapDT, 0.1) {
		t.Errorf("GaAs dE_g/dT(300 K) = %g eV/K, typical %g", got, TypicalDGapDT)
	}
	if _, err := Lookup("unobtainium"); !errors.Is(err, ErrUnknown) {
		t.Errorf("err = %v", err)
	}
}
