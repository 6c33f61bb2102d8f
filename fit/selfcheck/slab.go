package selfcheck

import (
	"fmt"
	"math"

	"bandedge/model/optics"
)

const pankove = "Pankove, Optical Processes in Semiconductors, 1971"

// SlabTol is the relative tolerance of the slab checks. The inversion
// works on x = exp(−αd); at αd = 1e-4 a rounding of x (≈ 2e-16) is
// amplified by 1/(αd) to ≈ 2e-12 in α, so 1e-9 leaves a wide margin,
// while an error in the formula (a wrong power of 1 − R, a dropped R²x²)
// shows at 1e-5 or more on this grid.
const SlabTol = 1e-9

// slabReflectances are the single-face reflectances of the round trip:
// 0 (no reflection), 0.05 (glass-like), 0.3 (n ≈ 3.4, GaAs- or Si-like)
// and 0.6, beyond any dielectric near an edge, to stress the R²x² term.
var slabReflectances = []float64{0, 0.05, 0.3, 0.6}

// slabThicknesses are 1 µm and 0.5 mm, in cm.
var slabThicknesses = []float64{1e-4, 0.05}

// slabGrid returns 25 values of αd spaced evenly in log from 1e-4 to 20.
func slabGrid() []float64 {
	const n = 25
	lo, hi := math.Log(1e-4), math.Log(20)
	g := make([]float64, n)
	for i := range g {
		g[i] = math.Exp(lo + (hi-lo)*float64(i)/(n-1))
	}
	g[0], g[n-1] = 1e-4, 20
	return g
}

// Slab returns the slab checks (Pankove 1971),
//
//	T = (1 − R)² x / (1 − R² x²),   x = exp(−αd):
//
// one round-trip check α → T → α per reflectance in slabReflectances over
// αd ∈ [1e-4, 20] and both thicknesses, and two R → 0 checks: at R = 0
// the inversion is α = −ln T / d, and at R = 1e-9 it is
// α = (−ln T − 2R)/d + O(R²) (from ln T = ln x + 2 ln(1 − R) + O(R²)),
// which tests that the small-R path has no cancellation.
func Slab() []Check {
	grid := slabGrid()
	var out []Check
	for _, r := range slabReflectances {
		var w worst
		for _, d := range slabThicknesses {
			for _, ad := range grid {
				a := ad / d
				t := optics.SlabTransmittance(a, r, d)
				got, ok := optics.SlabAlpha(t, r, d)
				if !ok {
					got = math.NaN()
				}
				w.add(got, a, fmt.Sprintf("αd=%.3g d=%g cm", ad, d))
			}
		}
		out = append(out, w.check(fmt.Sprintf("slab round trip R=%g", r), pankove,
			"α (cm⁻¹) from SlabAlpha(SlabTransmittance(α))", SlabTol))
	}
	for _, r := range []float64{0, 1e-9} {
		var w worst
		for _, d := range slabThicknesses {
			for _, ad := range grid {
				t := math.Exp(-ad)
				got, ok := optics.SlabAlpha(t, r, d)
				if !ok {
					got = math.NaN()
				}
				w.add(got, (-math.Log(t)-2*r)/d, fmt.Sprintf("T=exp(−%.3g) d=%g cm", ad, d))
			}
		}
		name, q := "slab limit R=0", "α (cm⁻¹) vs −ln T / d"
		if r != 0 {
			name, q = fmt.Sprintf("slab limit R=%g", r), "α (cm⁻¹) vs (−ln T − 2R)/d"
		}
		out = append(out, w.check(name, pankove, q, SlabTol))
	}
	return out
}
