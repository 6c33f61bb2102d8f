package reports

import "testing"

// TestValueWithU: the uncertainty keeps two significant digits and the
// value is rounded to the same place (JCGM 100:2008, §7.2.6).
func TestValueWithU(t *testing.T) {
	tests := []struct {
		v, u float64
		unit string
		want string
	}{
		{1.423967, 0.000163, "eV", "1.42397 ± 0.00016 eV"},
		{8.0330, 0.2214, "meV", "8.03 ± 0.22 meV"},
		{28903.5, 1505, "cm⁻¹", "28900 ± 1500 cm⁻¹"},
		{28718.7, 84, "cm⁻¹", "28719 ± 84 cm⁻¹"},
		{28.78, 4.5, "eV", "28.8 ± 4.5 eV"},
		{2.9e7, 3.1e5, "x", "2.900 ± 0.031 ×10⁷ x"},
		{1.42, 0, "eV", "1.42 eV ± n/a"},
	}
	for _, tc := range tests {
		if got := valueWithU(tc.v, tc.u, tc.unit); got != tc.want {
			t.Errorf("valueWithU(%g, %g) = %q, want %q", tc.v, tc.u, got, tc.want)
		}
	}
}
