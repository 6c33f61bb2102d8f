package model_test

// The printed values were cross-checked once, outside the Go tests, with
// 30-digit quadrature of the convolution integral and the Kane chain in
// mpmath 1.3.0; the unit tests check the same quantities against
// quadrature and the worked example of the physics reference.

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
