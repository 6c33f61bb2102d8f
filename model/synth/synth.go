// Package synth makes synthetic spectrophotometer scans from an edge model:
// the model's α(E) is turned into the transmittance of a thick slab
// (model/optics) and Gaussian noise of a stated σ_T is added. It is used by
// the demo, by statistical tests and by benchmarks; every random draw comes
// from the caller's seeded generator.
package synth

import (
	"math/rand/v2"

	"bandedge/model"
	"bandedge/model/optics"
)

// Scan is a synthetic transmittance scan.
type Scan struct {
	// E are photon energies (eV, ascending), T the noisy transmittance
	// (fraction), Alpha the noiseless α (cm⁻¹) it was made from.
	E, T, Alpha []float64
}

// Spec describes a synthetic scan.
type Spec struct {
	// Model and Params give α(E).
	Model  model.Model
	Params []float64
	// Baseline is added to α (cm⁻¹) at every energy, e.g. a sub-gap
	// scattering or defect background the model lacks.
	Baseline func(e float64) float64
	// E are the photon energies (eV, ascending).
	E []float64
	// Thickness in cm, single-face reflectance R, and transmittance noise
	// σ_T (fraction).
	Thickness, R, SigmaT float64
}

// Transmittance makes the scan; rng supplies the noise (nil: noiseless).
func Transmittance(s Spec, rng *rand.Rand) Scan {
	n := len(s.E)
	a := make([]float64, n)
	s.Model.Eval(a, s.E, s.Params)
	t := make([]float64, n)
	for i := range a {
		if s.Baseline != nil {
			a[i] += s.Baseline(s.E[i])
		}
		t[i] = optics.SlabTransmittance(a[i], s.R, s.Thickness)
		if rng != nil {
			t[i] += s.SigmaT * rng.NormFloat64()
		}
	}
	return Scan{E: append([]float64(nil), s.E...), T: t, Alpha: a}
}

// WavelengthGrid returns photon energies for a wavelength scan from lo to
// hi nm in steps of step nm, in ascending energy.
func WavelengthGrid(lo, hi, step float64) []float64 {
	var e []float64
	for l := hi; l >= lo-1e-9; l -= step {
		e = append(e, model.HCeVnm/l)
	}
	return e
}
