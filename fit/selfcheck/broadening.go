package selfcheck

import (
	"fmt"
	"math"

	"bandedge/model"
)

const katahara = "Katahara & Hillhouse, J. Appl. Phys. 116, 173504, 2014"

// Tolerances of the broadening check.
const (
	// BroadeningTol is the relative tolerance between model.DirectUrbach
	// and the quadrature. The closed form is built from Dawson's integral
	// and erfcx, each good to a few 1e-16, and loses at most about
	// log10(z) digits to the subtraction √z − D(√z)/2 below the asymptotic
	// branch; 1e-9 is far above that and far below any error in the
	// formula (a wrong factor √π/4 or a γ^½ for γ shows at 1e-2).
	BroadeningTol = 1e-9
	// QuadTol is the relative convergence target of the quadrature, 100
	// times below BroadeningTol so that a pass says something about the
	// model and not about the quadrature.
	QuadTol = 1e-11
)

// broadeningZ are the reduced energies z = (E − E_g)/E_U of the check:
// deep in the tail, near and at the gap, the kink region, and the
// asymptotic branch of the closed form (z ≥ 50).
var broadeningZ = []float64{-20, -3, -0.5, 0, 1e-3, 0.5, 2, 10, 60, 200}

// Broadening parameters: a GaAs-like gap and Urbach energy (common
// practice values; the check holds for any).
const (
	broadEg = 1.42 // eV
	broadC  = 3e4  // cm⁻¹·eV^½
	broadEU = 0.015
)

// ConvolutionAlpha returns the exponentially broadened direct edge by
// numerical quadrature of its defining integral (Katahara & Hillhouse
// 2014, θ = 1),
//
//	α(E) = (C/E) ∫_{E_g}^∞ G(E − E′) √(E′ − E_g) dE′,
//	G(u) = exp(−|u|/γ) / (2γ),
//
// for the photon energy e > 0 (eV), the gap eg (eV), the amplitude c
// (cm⁻¹·eV^½) and the broadening g = E_U > 0 (eV). For E > E_g the
// integral is split at the kink E′ = E: tanh-sinh on [E_g, E] (the
// √(E′ − E_g) singularity sits at a node-clustering end) and exp-sinh on
// [E, ∞); for E ≤ E_g there is one exp-sinh piece on [E_g, ∞). It also
// returns the quadrature's error estimate (same unit as α) and whether
// every piece met relTol.
func ConvolutionAlpha(e, eg, c, g, relTol float64) (alpha, errEst float64, ok bool) {
	w := e - eg
	kern := 1 / (2 * g)
	var sum float64
	ok = true
	if w > 0 {
		// [E_g, E]: da = E′ − E_g, db = E − E′.
		s1, e1, ok1 := tanhSinh(func(da, db float64) float64 {
			return kern * math.Exp(-db/g) * math.Sqrt(da)
		}, w, relTol)
		// [E, ∞): u = E′ − E.
		s2, e2, ok2 := expSinh(func(u float64) float64 {
			return kern * math.Exp(-u/g) * math.Sqrt(w+u)
		}, g, relTol)
		sum, errEst, ok = s1+s2, e1+e2, ok1 && ok2
	} else {
		// [E_g, ∞): s = E′ − E_g, E′ − E = s − w.
		sum, errEst, ok = expSinh(func(s float64) float64 {
			return kern * math.Exp(-(s-w)/g) * math.Sqrt(s)
		}, g, relTol)
	}
	return c / e * sum, c / e * errEst, ok
}

// Broadening returns one check per z in broadeningZ: model.DirectUrbach
// (closed form) against ConvolutionAlpha at E = E_g + z·E_U. A check also
// fails if the quadrature did not converge to QuadTol.
func Broadening() []Check {
	p := []float64{broadEg, broadC, broadEU}
	var out []Check
	for _, z := range broadeningZ {
		e := broadEg + z*broadEU
		got := make([]float64, 1)
		model.DirectUrbach{}.Eval(got, []float64{e}, p)
		want, qerr, ok := ConvolutionAlpha(e, broadEg, broadC, broadEU, QuadTol)
		c := newCheck(fmt.Sprintf("direct+urbach z=%g", z), katahara,
			fmt.Sprintf("α (cm⁻¹) at E=%.6g eV vs quadrature", e), got[0], want, BroadeningTol)
		c.Note = fmt.Sprintf("E_g=%g eV, E_U=%g eV, C=%g; quadrature relative change %.1e", broadEg, broadEU, broadC, qerr/math.Abs(want))
		if !ok {
			c.Pass = false
			c.Note += " (did not converge)"
		}
		out = append(out, c)
	}
	return out
}
