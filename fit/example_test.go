package fit_test

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"bandedge/fit"
	"bandedge/model"
)

// saturation is y = a·(1 − exp(−k·x)), a ≥ 0, k ≥ 0, with its analytic
// Jacobian (the NIST StRD Misra1a model).
type saturation struct{}

func (saturation) Name() string { return "saturation" }
func (saturation) Params() []model.Param {
	return []model.Param{
		{Name: "a", Min: 0, Max: math.Inf(1)},
		{Name: "k", Min: 0, Max: math.Inf(1)},
	}
}
func (saturation) Eval(dst, x, p []float64) {
	for i, xi := range x {
		dst[i] = p[0] * (1 - math.Exp(-p[1]*xi))
	}
}
func (saturation) Jacobian(dst *mat.Dense, x, p []float64) {
	for i, xi := range x {
		e := math.Exp(-p[1] * xi)
		dst.Set(i, 0, 1-e)
		dst.Set(i, 1, p[0]*xi*e)
	}
}

// ExampleFit fits the NIST StRD Misra1a data from NIST's first start. The
// certified values are a = 238.94212918 ± 2.7070075241 and
// k = 5.5015643181e-4 ± 7.2668688436e-6, RSS 0.12455138894.
func ExampleFit() {
	x := []float64{77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0}
	y := []float64{10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78}
	res, err := fit.Fit(context.Background(), fit.Problem{
		E: x, Alpha: y, Model: saturation{}, Init: []float64{500, 1e-4},
	}, nil)
	if err != nil {
		fmt.Println("fit failed:", err)
		return
	}
	if res.Status.Early() {
		fmt.Println("not converged:", res.Status)
	}
	ci := res.ConfInt(0.95)
	for j, name := range []string{"a", "k"} {
		fmt.Printf("%s = %.4g ± %.4g (95%%: %.4g to %.4g)\n", name, res.Params[j], res.StdErr[j], ci[j][0], ci[j][1])
	}
	fmt.Printf("SSR = %.4g, DoF = %d, correlation = %.4g\n", res.SSR, res.DoF, res.Correlation().At(0, 1))
	// Output:
	// a = 238.9 ± 2.707 (95%: 233 to 244.8)
	// k = 0.0005502 ± 7.267e-06 (95%: 0.0005343 to 0.000566)
	// SSR = 0.1246, DoF = 12, correlation = -0.9988
}
