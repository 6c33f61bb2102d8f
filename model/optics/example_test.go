package optics_test

// The printed numbers were checked once by hand with the formulas of
// SlabAlpha (Python double precision, independent code).

import (
	"fmt"

	"bandedge/model/optics"
)

func ExampleSlabAlpha() {
	// A 0.5 mm wafer with 30 % single-face reflectance transmitting 10 %.
	alpha, ok := optics.SlabAlpha(0.10, 0.30, 0.05)
	fmt.Printf("alpha = %.4g cm^-1 (ok %v)\n", alpha, ok)
	// Without the reflection correction, −ln T/d:
	naive, _ := optics.SlabAlpha(0.10, 0, 0.05)
	fmt.Printf("no correction: %.4g cm^-1\n", naive)
	// Output:
	// alpha = 31.86 cm^-1 (ok true)
	// no correction: 46.05 cm^-1
}

func ExampleToAlpha() {
	e := []float64{1.40, 1.45, 1.50, 1.55, 1.60}  // eV
	t := []float64{0.52, 0.40, 0.05, 0.004, 1e-5} // transmittance
	res, err := optics.ToAlpha(e, t, optics.Transmittance, 0.05,
		&optics.Settings{Index: optics.ConstIndex(3.5), SigmaT: 5e-4})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i := range e {
		fmt.Printf("%.4g eV: alpha = %.4g ± %.2g cm^-1, %v\n", e[i], res.Alpha[i], res.Sigma[i], res.Reason[i])
	}
	// Output:
	// 1.4 eV: alpha = 0.2623 ± 0.016 cm^-1, usable
	// 1.45 eV: alpha = 4.78 ± 0.022 cm^-1, usable
	// 1.5 eV: alpha = 45.17 ± 0.2 cm^-1, usable
	// 1.55 eV: alpha = 95.67 ± 2.5 cm^-1, usable
	// 1.6 eV: alpha = 215.5 ± 1e+03 cm^-1, absorbance above the instrument floor
}
