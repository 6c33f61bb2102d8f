package selfcheck

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/model"
)

// TestFamilies runs every family and asserts that each check passes, names
// its published source and has a positive tolerance. The references and
// tolerances are on the checks themselves (slab.go: Pankove 1971, 1e-9;
// units.go: CODATA 2018, 1e-15 for float64 products and half a unit in
// the 10th digit for 10-digit constants; broadening.go: Katahara &
// Hillhouse 2014, 1e-9; kane.go: worked example, half a unit in the 3rd
// digit).
func TestFamilies(t *testing.T) {
	tests := []struct {
		name   string
		checks []Check
		n      int    // checks in the family
		source string // substring every Source must contain
	}{
		{name: "slab", checks: Slab(), n: len(slabReflectances) + 2, source: "Pankove"},
		{name: "units", checks: Units(), n: 5, source: "CODATA 2018"},
		{name: "broadening", checks: Broadening(), n: len(broadeningZ), source: "Katahara & Hillhouse"},
		{name: "kane", checks: Kane(), n: 4, source: "inputs from memory"},
	}
	total := 0
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if len(tc.checks) != tc.n {
				t.Errorf("%d checks, want %d", len(tc.checks), tc.n)
			}
			for _, c := range tc.checks {
				if !c.Pass {
					t.Errorf("%s: got %.15g, want %.15g (rel %.3g, tol %.3g) %s", c.Name, c.Got, c.Want, c.RelErr(), c.Tol, c.Note)
				}
				if !strings.Contains(c.Source, tc.source) {
					t.Errorf("%s: source %q does not name %q", c.Name, c.Source, tc.source)
				}
				if !(c.Tol > 0) || c.Quantity == "" {
					t.Errorf("%s: tol %g, quantity %q", c.Name, c.Tol, c.Quantity)
				}
			}
		})
		total += tc.n
	}
	if got := len(All()); got != total {
		t.Errorf("All returns %d checks, the families %d", got, total)
	}
}

// TestNewCheck pins the pass rule |got − want| ≤ tol·|want|, finite only.
func TestNewCheck(t *testing.T) {
	inf, nan := math.Inf(1), math.NaN()
	tests := []struct {
		name      string
		got, want float64
		tol       float64
		pass      bool
	}{
		{name: "equal", got: 2, want: 2, tol: 0, pass: true},
		{name: "inside", got: 1 + 0.9e-9, want: 1, tol: 1e-9, pass: true},
		{name: "outside", got: 1 + 1.1e-9, want: 1, tol: 1e-9, pass: false},
		{name: "outside below", got: -1, want: 1, tol: 1, pass: false},
		{name: "NaN got", got: nan, want: 1, tol: 1, pass: false},
		{name: "NaN want", got: 1, want: nan, tol: 1, pass: false},
		{name: "Inf both", got: inf, want: inf, tol: 1, pass: false},
		{name: "zero want", got: 1e-300, want: 0, tol: 1, pass: false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if c := newCheck("x", "s", "q", tc.got, tc.want, tc.tol); c.Pass != tc.pass {
				t.Errorf("Pass = %v, want %v (rel %g)", c.Pass, tc.pass, c.RelErr())
			}
		})
	}
}

// TestQuadrature checks the two double-exponential rules on integrals with
// known values, including the endpoint singularities they exist for:
// ∫₀¹ √x dx = 2/3, ∫₀¹ x^{−½} dx = 2 (elementary), ∫₀^∞ e^{−x} dx = 1 and
// ∫₀^∞ √x e^{−x} dx = Γ(3/2) = √π/2 (Abramowitz & Stegun 6.1.8 with
// Γ(x+1) = xΓ(x)). Tolerance 1e-13: the rules are asked for 1e-14 and
// converge double-exponentially.
func TestQuadrature(t *testing.T) {
	const relTol, tol = 1e-14, 1e-13
	tests := []struct {
		name string
		run  func() (float64, float64, bool)
		want float64
	}{
		{name: "sqrt on [0,1]", want: 2.0 / 3, run: func() (float64, float64, bool) {
			return tanhSinh(func(da, _ float64) float64 { return math.Sqrt(da) }, 1, relTol)
		}},
		{name: "1/sqrt on [0,1]", want: 2, run: func() (float64, float64, bool) {
			return tanhSinh(func(da, _ float64) float64 { return 1 / math.Sqrt(da) }, 1, relTol)
		}},
		{name: "sqrt at the upper end on [0,3]", want: 2.0 / 3 * 3 * math.Sqrt(3), run: func() (float64, float64, bool) {
			return tanhSinh(func(_, db float64) float64 { return math.Sqrt(db) }, 3, relTol)
		}},
		{name: "exp on [0,inf)", want: 1, run: func() (float64, float64, bool) {
			return expSinh(func(x float64) float64 { return math.Exp(-x) }, 1, relTol)
		}},
		{name: "Gamma(3/2), scale 0.01", want: math.Sqrt(math.Pi) / 2 * math.Pow(0.01, 1.5), run: func() (float64, float64, bool) {
			return expSinh(func(x float64) float64 { return math.Sqrt(x) * math.Exp(-x/0.01) }, 0.01, relTol)
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, est, ok := tc.run()
			if !ok {
				t.Errorf("did not converge (change %.3g)", est)
			}
			if !scalar.EqualWithinAbsOrRel(got, tc.want, 0, tol) {
				t.Errorf("got %.17g, want %.17g (rel %.3g)", got, tc.want, math.Abs(got-tc.want)/tc.want)
			}
		})
	}
}

// TestConvolutionAlphaGamma checks the quadrature of the broadening
// integral where it reduces to a Gamma function, independently of the
// model's closed form: for E ≤ E_g, |E − E′| = E′ − E and
//
//	α = (C/E) e^{(E−E_g)/γ} Γ(3/2) γ^{3/2} / (2γ) = (C/E)(√π/4) γ^½ e^{(E−E_g)/γ}
//
// (Katahara & Hillhouse 2014 integral; Γ(3/2) = √π/2, Abramowitz & Stegun
// 6.1.8). Tolerance 1e-12 for a quadrature asked for 1e-13.
func TestConvolutionAlphaGamma(t *testing.T) {
	const eg, c, g = 1.1, 2e4, 0.03
	for _, z := range []float64{0, -0.25, -4, -30} {
		e := eg + z*g
		want := c / e * math.Sqrt(math.Pi) / 4 * math.Sqrt(g) * math.Exp((e-eg)/g)
		got, _, ok := ConvolutionAlpha(e, eg, c, g, 1e-13)
		if !ok || !scalar.EqualWithinAbsOrRel(got, want, 0, 1e-12) {
			t.Errorf("z=%g: got %.15g, want %.15g (converged %v)", z, got, want, ok)
		}
	}
}

// TestBroadeningSensitivity shows that the broadening check can fail: a
// gap off by 1 µeV (z off by 7e-5) moves α by more than BroadeningTol at
// every z of the check, and an Urbach energy off by 1e-6 relative does so
// for z ≤ 10 (far above the gap α depends on E_U only through
// E_U²/(E − E_g)², as α → C√(E − E_g)/E).
func TestBroadeningSensitivity(t *testing.T) {
	for _, z := range broadeningZ {
		e := broadEg + z*broadEU
		want, _, _ := ConvolutionAlpha(e, broadEg, broadC, broadEU, QuadTol)
		perturbed := [][]float64{{broadEg + 1e-6, broadC, broadEU}}
		if z <= 10 {
			perturbed = append(perturbed, []float64{broadEg, broadC, broadEU * (1 + 1e-6)})
		}
		for _, p := range perturbed {
			got := make([]float64, 1)
			model.DirectUrbach{}.Eval(got, []float64{e}, p)
			if c := newCheck("", "", "", got[0], want, BroadeningTol); c.Pass {
				t.Errorf("z=%g p=%v: a perturbed model passes (rel %.3g)", z, p, c.RelErr())
			}
		}
	}
}

// TestHCExact checks the rational-arithmetic hc/e against CODATA 2018's
// hc = 1239.841984332… eV·nm (13 digits, from memory; 1e-12).
func TestHCExact(t *testing.T) {
	if got := HCExact(); !scalar.EqualWithinAbsOrRel(got, 1239.841984332, 0, 1e-12) {
		t.Errorf("HCExact = %.15g", got)
	}
}

func BenchmarkAll(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		All()
	}
}
