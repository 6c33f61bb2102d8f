package optics

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestFresnelR(t *testing.T) {
	tests := []struct {
		name   string
		n, k   float64
		want   float64
		absTol float64
	}{
		// Crown glass n = 1.5: R = (0.5/2.5)² = 0.04, the textbook 4 % per
		// face (e.g. Born & Wolf); exact, so 1e-15.
		{name: "glass", n: 1.5, want: 0.04, absTol: 1e-15},
		// Si in the near infrared, n ≈ 3.5 (from memory): R ≈ 0.31, the
		// familiar ~31 % of a bare Si wafer face (from memory); 0.005
		// reflects the two-digit reference.
		{name: "Si", n: 3.5, want: 0.31, absTol: 0.005},
		// index matched to vacuum: no reflection.
		{name: "n=1", n: 1, want: 0, absTol: 0},
		// n = 1, k = 1e4: R = k²/(4 + k²) = 1 − 4e-8, a strong absorber
		// reflects almost everything (the k → ∞ limit of the formula).
		{name: "k large", n: 1, k: 1e4, want: 1, absTol: 1e-7},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := FresnelR(tc.n, tc.k); !scalar.EqualWithinAbs(got, tc.want, tc.absTol) {
				t.Errorf("FresnelR(%v, %v) = %.6g, want %.6g ± %g", tc.n, tc.k, got, tc.want, tc.absTol)
			}
		})
	}
}

// TestFresnelDRDn compares ∂R/∂n with a central difference (step 1e-6;
// tolerance 1e-8 absolute: truncation 1e-12, rounding 1e-10).
func TestFresnelDRDn(t *testing.T) {
	for _, n := range []float64{1, 1.2, 1.5, 2.4, 3.5, 4.1} {
		for _, k := range []float64{0, 0.01, 0.5, 2} {
			const h = 1e-6
			fd := (FresnelR(n+h, k) - FresnelR(n-h, k)) / (2 * h)
			if got := FresnelDRDn(n, k); !scalar.EqualWithinAbs(got, fd, 1e-8) {
				t.Errorf("∂R/∂n(%v, %v) = %.10g, fd %.10g", n, k, got, fd)
			}
		}
	}
	// k = 0 closed form 4(n − 1)/(n + 1)³
	if got, want := FresnelDRDn(3.5, 0), 4*2.5/(4.5*4.5*4.5); !scalar.EqualWithinRel(got, want, 1e-15) {
		t.Errorf("∂R/∂n(3.5, 0) = %v, want %v", got, want)
	}
}

// TestDispersion checks the dispersion laws against handbook indices at the
// helium d line, λ = 587.56 nm (E = 1239.841984/587.56 eV). Coefficients and
// indices are from memory; tolerances reflect the printed digits.
func TestDispersion(t *testing.T) {
	ed := 1239.841984 / 587.56
	tests := []struct {
		name   string
		index  Index
		want   float64
		absTol float64
	}{
		// Fused silica, Malitson, J. Opt. Soc. Am. 55, 1205 (1965): three
		// Sellmeier terms; n_d = 1.4585 (from memory, 4 decimals).
		{name: "fused silica Sellmeier", index: Sellmeier{Terms: []SellmeierTerm{
			{B: 0.6961663, C: 0.0684043 * 0.0684043},
			{B: 0.4079426, C: 0.1162414 * 0.1162414},
			{B: 0.8974794, C: 9.896161 * 9.896161},
		}}, want: 1.4585, absTol: 1e-4},
		// N-BK7 Sellmeier coefficients of the glass maker's data sheet (from
		// memory); n_d = 1.5168 (4 decimals).
		{name: "BK7 Sellmeier", index: Sellmeier{Terms: []SellmeierTerm{
			{B: 1.03961212, C: 0.00600069867},
			{B: 0.231792344, C: 0.0200179144},
			{B: 1.01046945, C: 103.560653},
		}}, want: 1.5168, absTol: 1e-4},
		// Two-term Cauchy fit for BK7, A = 1.5046, B = 0.00420 µm² (common
		// textbook values, from memory); a two-term fit is good to ~5e-4.
		{name: "BK7 Cauchy", index: Cauchy{A: 1.5046, B: 0.00420}, want: 1.5168, absTol: 5e-4},
		{name: "constant", index: ConstIndex(3.6), want: 3.6, absTol: 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := tc.index.N(ed); !scalar.EqualWithinAbs(got, tc.want, tc.absTol) {
				t.Errorf("n_d = %.6f, want %.4f ± %g", got, tc.want, tc.absTol)
			}
		})
	}
	// Domain: no photon, a pole, and n² < 0 inside the band give NaN.
	s := Sellmeier{Terms: []SellmeierTerm{{B: 1, C: 0.01}}} // resonance at λ = 0.1 µm
	epole := 1239.841984 / 100
	for _, e := range []float64{0, -1, epole * 1.001} {
		if v := s.N(e); !math.IsNaN(v) {
			t.Errorf("Sellmeier N(%v) = %v, want NaN", e, v)
		}
	}
	if v := (Cauchy{A: 1.5}).N(0); !math.IsNaN(v) {
		t.Errorf("Cauchy N(0) = %v, want NaN", v)
	}
}
