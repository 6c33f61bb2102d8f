package model_test

// The printed values were cross-checked once, outside the Go tests, with
// 30-digit quadrature of the convolution integral and the Kane chain in
// mpmath 1.3.0 (for ExampleNew and ExampleNew_exciton: the Macfarlane–
// Roberts branches convolved with the Gaussian, and Elliott's lines summed
// with mpmath.nsum plus the Sommerfeld continuum convolved with the
// exponential kernel, all digits shown agreeing); the unit tests check the
// same quantities against quadrature and the worked example of the physics
// reference.

import (
	"fmt"

	"bandedge/model"
)

func ExampleDirect() {
	m := model.Direct{}
	e := []float64{1.4, 1.524, 1.624} // eV
	alpha := make([]float64, len(e))
	m.Eval(alpha, e, []float64{1.424, 2.872e4}) // E_g (eV), C (cm⁻¹·eV^½)
	for i := range e {
		fmt.Printf("E = %.4g eV: alpha = %.4g cm^-1\n", e[i], alpha[i])
	}
	// Output:
	// E = 1.4 eV: alpha = 0 cm^-1
	// E = 1.524 eV: alpha = 5959 cm^-1
	// E = 1.624 eV: alpha = 7909 cm^-1
}

func ExampleDirectUrbach() {
	m := model.DirectUrbach{}
	p := []float64{1.424, 2.872e4, 0.008} // E_g (eV), C (cm⁻¹·eV^½), E_U (eV)
	e := []float64{1.30, 1.35, 1.424, 1.524}
	alpha := make([]float64, len(e))
	m.Eval(alpha, e, p)
	for i := range e {
		fmt.Printf("E = %.4g eV: alpha = %.4g cm^-1\n", e[i], alpha[i])
	}
	// Output:
	// E = 1.3 eV: alpha = 0.0001625 cm^-1
	// E = 1.35 eV: alpha = 0.08104 cm^-1
	// E = 1.424 eV: alpha = 799.3 cm^-1
	// E = 1.524 eV: alpha = 5950 cm^-1
}

func ExampleUrbachEdgeF() {
	for _, z := range []float64{-10, 0, 1, 100} {
		f, df := model.UrbachEdgeF(z)
		fmt.Printf("z = %.4g: F = %.4g, F' = %.4g\n", z, f, df)
	}
	// Output:
	// z = -10: F = 2.012e-05, F' = 2.012e-05
	// z = 0: F = 0.4431, F' = 0.4431
	// z = 1: F = 0.9204, F' = 0.4585
	// z = 100: F = 10, F' = 0.05
}

func ExampleKaneFromAmplitude() {
	mr := model.ReducedMass(0.067, 0.51) // GaAs-like masses (m₀), from memory
	c := model.AmplitudeFromKane(28.8, 3.6, mr)
	fmt.Printf("m_r = %.4g m0, C = %.4g cm^-1 eV^1/2\n", mr, c)
	fmt.Printf("E_P back = %.4g eV\n", model.KaneFromAmplitude(c, 3.6, mr))
	fmt.Printf("u(E_P)/E_P = %.4g\n", model.KaneRelErr(0.03, 0.02, 0.05))
	// Output:
	// m_r = 0.05922 m0, C = 2.873e+04 cm^-1 eV^1/2
	// E_P back = 28.8 eV
	// u(E_P)/E_P = 0.08322
}

func ExampleNew() {
	// A silicon-like indirect edge (E_g, E_ph from memory) with a Gaussian
	// tail, at 295 K.
	m, err := model.New("indirect", "gauss", model.Config{Temperature: 295})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.Name())
	for i, p := range m.Params() {
		if i > 0 {
			fmt.Print(" ")
		}
		fmt.Printf("%s (%s)", p.Name, p.Unit)
	}
	fmt.Println()
	p := []float64{1.12, 3e3, 0.01, 0.058} // E_g, A, γ, E_ph
	e := []float64{1.0, 1.1, 1.2, 1.3}
	alpha := make([]float64, len(e))
	m.Eval(alpha, e, p)
	for i := range e {
		fmt.Printf("E = %.4g eV: alpha = %.4g cm^-1\n", e[i], alpha[i])
	}
	// Output:
	// indirect+gauss
	// eg (eV) amp (cm⁻¹·eV⁻²) gw (eV) eph (eV)
	// E = 1 eV: alpha = 3.792e-22 cm^-1
	// E = 1.1 eV: alpha = 0.5098 cm^-1
	// E = 1.2 eV: alpha = 8.299 cm^-1
	// E = 1.3 eV: alpha = 69.24 cm^-1
}

func ExampleNew_exciton() {
	// A GaAs-like excitonic edge (R_x = 4.2 meV, from memory) broadened by
	// a 2 meV exponential kernel: the n = 1 line sits at E_g − R_x.
	m, _ := model.New("exciton", "urbach", model.Config{})
	p := []float64{1.519, 2.872e4, 0.002, 0.0042} // E_g, C, E_U, R_x
	e := []float64{1.505, 1.5148, 1.519, 1.6}
	alpha := make([]float64, len(e))
	m.Eval(alpha, e, p)
	for i := range e {
		fmt.Printf("E = %.4g eV: alpha = %.4g cm^-1\n", e[i], alpha[i])
	}
	// Output:
	// E = 1.505 eV: alpha = 129.5 cm^-1
	// E = 1.515 eV: alpha = 1.728e+04 cm^-1
	// E = 1.519 eV: alpha = 8099 cm^-1
	// E = 1.6 eV: alpha = 9606 cm^-1
}

func ExampleWithBaseline() {
	m, _ := model.WithBaseline(model.DirectUrbach{}, "linear")
	fmt.Println(m.Name(), len(m.Params()))
	p := []float64{1.424, 2.872e4, 0.008, 20, 5} // E_g, C, E_U, b₀, b₁
	e := []float64{1.30, 1.424}
	alpha := make([]float64, len(e))
	m.Eval(alpha, e, p)
	fmt.Printf("alpha = %.4g, %.4g cm^-1\n", alpha[0], alpha[1])
	// Output:
	// direct+urbach+linear 5
	// alpha = 19.38, 819.3 cm^-1
}

func ExampleTailedEdge_TailWidth() {
	for _, name := range []string{"direct+urbach", "direct+gauss", "direct+theta"} {
		m, _ := model.Lookup(name)
		p := []float64{1.5, 1e4, 0.02, 1.6}[:len(m.Params())]
		fmt.Printf("%s: %.4g eV\n", name, m.(model.Tailed).TailWidth(p))
	}
	// Output:
	// direct+urbach: 0.02 eV
	// direct+gauss: 0.01 eV
	// direct+theta: 0.0125 eV
}
