package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestConstants checks the CODATA 2018 constants (values from memory)
// against relations that tie them together.
func TestConstants(t *testing.T) {
	tests := []struct {
		name           string
		got, want, tol float64
	}{
		// η₀ = 376.730313668(57) Ω, CODATA 2018 (from memory): 1e-11 is the
		// printed precision.
		{name: "eta0", got: Eta0, want: 376.730313668, tol: 1e-11},
		// μ₀ε₀c² = 1 with ε₀ = 8.8541878128e-12 F/m, CODATA 2018 (from
		// memory); both carry a relative standard uncertainty of 1.5e-10.
		{name: "mu0 eps0 c^2", got: VacuumPermeability * 8.8541878128e-12 * SpeedOfLight * SpeedOfLight, want: 1, tol: 1e-9},
		// hc/e = 1239.841984 eV·nm (10 digits, as printed in PHYSICS.md and
		// tabulated by CODATA 2018 from exact constants).
		{name: "hc/e", got: HCeVnm, want: 1239.841984, tol: 1e-9},
		// ħ = 1.054571817e-34 J·s (CODATA 2018, 10 digits, from memory).
		{name: "hbar", got: Hbar, want: 1.054571817e-34, tol: 1e-9},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if !scalar.EqualWithinRel(tc.got, tc.want, tc.tol) {
				t.Errorf("got %.12g, want %.12g (rel tol %g)", tc.got, tc.want, tc.tol)
			}
		})
	}
}

// TestKaneWorkedExample checks the worked number of the project's physics
// reference (PHYSICS.md 3.1: GaAs-like inputs from memory, E_P = 28.8 eV,
// n = 3.6, m_e = 0.067, m_h = 0.51, E_g = 1.424 eV, computed there with
// CODATA constants). The reference prints 3 digits, so each check allows
// half a unit in the third digit.
func TestKaneWorkedExample(t *testing.T) {
	const ep, n, me, mh, eg = 28.8, 3.6, 0.067, 0.51, 1.424
	mr := ReducedMass(me, mh)
	c := AmplitudeFromKane(ep, n, mr)
	a := make([]float64, 2)
	Direct{}.Eval(a, []float64{eg + 0.1, eg + 0.2}, []float64{eg, c})
	tests := []struct {
		name              string
		got, want, absTol float64
	}{
		{name: "m_r (m0)", got: mr, want: 0.0592, absTol: 0.00005},
		{name: "A_P (cm2 eV2)", got: KaneAP(ep, n), want: 2.93e-16, absTol: 0.005e-16},
		{name: "alpha(Eg+0.1) (cm-1)", got: a[0], want: 5.96e3, absTol: 5},
		{name: "alpha(Eg+0.2) (cm-1)", got: a[1], want: 7.91e3, absTol: 5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if math.Abs(tc.got-tc.want) > tc.absTol {
				t.Errorf("got %.5g, want %.3g ± %.2g", tc.got, tc.want, tc.absTol)
			}
		})
	}
}

// TestKaneAPAlternativeForm recomputes A_P with η₀ = 1/(ε₀c) and ε₀ from
// CODATA 2018 (from memory), i.e. A_P = π q² ħ E_P / (6 n m₀ ε₀ c) in SI,
// with the unit conversion written out independently (J²·m² → eV²·cm²).
// Tolerance 1e-9 (the measured constants' uncertainty).
func TestKaneAPAlternativeForm(t *testing.T) {
	const eps0 = 8.8541878128e-12
	const q = 1.602176634e-19
	hbar := 6.62607015e-34 / (2 * math.Pi)
	ep, n := 20.7, 3.1 // InP-like E_P from memory (Vurgaftman et al. 2001)
	si := math.Pi * q * q * hbar * ep * q / (6 * n * 9.1093837015e-31 * eps0 * 299792458)
	want := si / (q * q) / 1e-4 // 1 eV² = q² J², 1 cm² = 1e-4 m²
	if got := KaneAP(ep, n); !scalar.EqualWithinRel(got, want, 1e-9) {
		t.Errorf("KaneAP = %.12g, independent form %.12g", got, want)
	}
}

// TestKaneInverse checks that KaneFromAmplitude inverts AmplitudeFromKane
// (1e-14: a few roundings) and the scaling E_P ∝ n·C·m_r^{−3/2} stated in
// PHYSICS.md 3.1 (exact up to rounding, 1e-13).
func TestKaneInverse(t *testing.T) {
	for _, ep := range []float64{5, 20.7, 28.8} {
		for _, n := range []float64{1.5, 3.6} {
			for _, mr := range []float64{0.01, 0.0592, 0.3} {
				c := AmplitudeFromKane(ep, n, mr)
				if got := KaneFromAmplitude(c, n, mr); !scalar.EqualWithinRel(got, ep, 1e-14) {
					t.Errorf("round trip E_P=%v n=%v m_r=%v: got %.17g", ep, n, mr, got)
				}
			}
		}
	}
	base := KaneFromAmplitude(3e4, 3.6, 0.06)
	for _, tc := range []struct {
		name string
		got  float64
		want float64
	}{
		{"2C", KaneFromAmplitude(6e4, 3.6, 0.06), 2 * base},
		{"2n", KaneFromAmplitude(3e4, 7.2, 0.06), 2 * base},
		{"4 m_r", KaneFromAmplitude(3e4, 3.6, 0.24), base / 8},
	} {
		if !scalar.EqualWithinRel(tc.got, tc.want, 1e-13) {
			t.Errorf("%s: E_P = %.15g, want %.15g", tc.name, tc.got, tc.want)
		}
	}
}

func TestKaneRelErr(t *testing.T) {
	tests := []struct {
		name             string
		relC, relN, relM float64
		want             float64
	}{
		{name: "3-4-5", relC: 0.03, relN: 0.04, want: 0.05},
		{name: "mass exponent 3/2", relM: 0.02, want: 0.03},
		{name: "all", relC: 0.01, relN: 0.02, relM: 0.04, want: math.Sqrt(0.0001 + 0.0004 + 0.0036)},
		{name: "zero", want: 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := KaneRelErr(tc.relC, tc.relN, tc.relM); !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-17, 1e-14) {
				t.Errorf("got %.17g, want %.17g", got, tc.want)
			}
		})
	}
}

func TestKaneBadInput(t *testing.T) {
	for _, v := range []float64{
		ReducedMass(0, 0.5), ReducedMass(0.1, -1), ReducedMass(math.NaN(), 1),
		KaneAP(20, 0), JointDOSFactor(0), JointDOSFactor(math.NaN()),
		AmplitudeFromKane(20, -1, 0.05), KaneFromAmplitude(1e4, 3, 0),
	} {
		if !math.IsNaN(v) {
			t.Errorf("got %v, want NaN for a non-physical input", v)
		}
	}
}
