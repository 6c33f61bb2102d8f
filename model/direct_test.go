package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// TestDirectTauc checks the property that makes the direct Tauc plot work
// (Tauc, Grigorovici & Vancu 1966): (αE)² = C²(E − E_g) above the gap, so
// the straight line through any two points of (αE)² vs E meets the energy
// axis at E_g and has slope C². Tolerance 1e-12 relative (a handful of
// roundings).
func TestDirectTauc(t *testing.T) {
	tests := []struct {
		name  string
		eg, c float64
		e1    float64
		e2    float64
	}{
		{name: "GaAs-like", eg: 1.424, c: 2.87e4, e1: 1.45, e2: 1.9},
		{name: "wide gap", eg: 3.3, c: 1e5, e1: 3.31, e2: 4},
		{name: "narrow gap", eg: 0.35, c: 5e3, e1: 0.36, e2: 0.5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			e := []float64{tc.e1, tc.e2}
			a := make([]float64, 2)
			Direct{}.Eval(a, e, []float64{tc.eg, tc.c})
			y1, y2 := a[0]*e[0]*a[0]*e[0], a[1]*e[1]*a[1]*e[1]
			slope := (y2 - y1) / (e[1] - e[0])
			intercept := e[0] - y1/slope
			if !scalar.EqualWithinRel(slope, tc.c*tc.c, 1e-12) {
				t.Errorf("slope of (αE)² = %.15g, want C² = %.15g", slope, tc.c*tc.c)
			}
			if !scalar.EqualWithinRel(intercept, tc.eg, 1e-12) {
				t.Errorf("Tauc intercept = %.15g, want E_g = %.15g", intercept, tc.eg)
			}
		})
	}
}

// TestDirectBelowGap checks the documented domain: 0 at and below the gap
// and for E ≤ 0, NaN only for a NaN energy.
func TestDirectBelowGap(t *testing.T) {
	e := []float64{-1, 0, 0.5, 1.424, math.Nextafter(1.424, 2), math.NaN()}
	a := make([]float64, len(e))
	Direct{}.Eval(a, e, []float64{1.424, 3e4})
	for i := 0; i < 4; i++ {
		if a[i] != 0 {
			t.Errorf("α(%v) = %v, want 0", e[i], a[i])
		}
	}
	if !(a[4] > 0) {
		t.Errorf("α just above the gap = %v, want > 0", a[4])
	}
	if !math.IsNaN(a[5]) {
		t.Errorf("α(NaN) = %v, want NaN", a[5])
	}
}

// TestDirectJacobian compares the analytic Jacobian with fd.Central. The
// energies stay ≥ 10 meV from the gap: ∂α/∂E_g ∝ (E − E_g)^{−1/2}, and the
// central difference's relative truncation error (step/(E − E_g))² must stay
// far below the 1e-6 tolerance of checkJacobian.
func TestDirectJacobian(t *testing.T) {
	var e []float64
	for x := 0.9; x <= 1.414; x += 0.05 { // below the gap: zero rows
		e = append(e, x)
	}
	for x := 1.434; x <= 3; x += 0.0371 {
		e = append(e, x)
	}
	checkJacobian(t, jacobianCase{name: "direct", m: Direct{}, p: []float64{1.424, 2.87e4}, e: e})
}

// TestDirectFinite checks the Model contract for Direct: finite energies
// and in-bounds parameters give a finite α ≥ 0 and a finite Jacobian, even
// a hair above the gap where ∂α/∂E_g is largest.
func TestDirectFinite(t *testing.T) {
	eg := 1.424
	e := []float64{-1, 0, 1, eg, math.Nextafter(eg, 2), eg + 1e-300, 2, 1e300}
	a := make([]float64, len(e))
	p := []float64{eg, 1e6}
	Direct{}.Eval(a, e, p)
	jac := mat.NewDense(len(e), 2, nil)
	Direct{}.Jacobian(jac, e, p)
	for i := range e {
		if math.IsNaN(a[i]) || math.IsInf(a[i], 0) || a[i] < 0 {
			t.Errorf("α(%v) = %v", e[i], a[i])
		}
		for j := 0; j < 2; j++ {
			if v := jac.At(i, j); math.IsNaN(v) || math.IsInf(v, 0) {
				t.Errorf("J(%v)[%d] = %v", e[i], j, v)
			}
		}
	}
}
