package specio

import "slices"

// Plausibility bounds shared by the readers (io/specio, io/jcampdx): values
// outside them mean a wrong unit or kind, not an unusual instrument.
const (
	// MinPhotonEV and MaxPhotonEV bound the photon energies a
	// spectrophotometer export can hold: the union of the plausible x
	// ranges of the unit detection (50 cm⁻¹ is 0.0062 eV, 100 nm is
	// 12.4 eV) with a margin, far infrared to vacuum ultraviolet.
	MinPhotonEV = 0.005
	MaxPhotonEV = 25
	// MaxMedianAbsorbance is the largest median decadic absorbance read as
	// absorbance: common practice is that spectrophotometers measure up
	// to about 6–8 A at best, so a median above 10 means the column holds
	// another quantity (%T under an absorbance header, say).
	MaxMedianAbsorbance = 10
)

// ImplausibleEnergy returns the index of a photon energy (eV) of e outside
// [MinPhotonEV, MaxPhotonEV] — the largest if one is above, else the
// smallest — or -1 when all are inside.
func ImplausibleEnergy(e []float64) int {
	if len(e) == 0 {
		return -1
	}
	lo, hi := 0, 0
	for i := range e {
		if e[i] < e[lo] {
			lo = i
		}
		if e[i] > e[hi] {
			hi = i
		}
	}
	switch {
	case e[hi] > MaxPhotonEV:
		return hi
	case e[lo] < MinPhotonEV:
		return lo
	}
	return -1
}

// ImplausibleAbsorbance reports whether decadic absorbances y cannot be
// absorbance, and why: negative at every point (T > 1 everywhere: sample
// and reference beams swapped, or the baseline taken on the sample), or a
// median above MaxMedianAbsorbance. It returns the index of the largest
// value (where to point the error), the median, and the reason
// ("negative", "median"; "" when plausible).
func ImplausibleAbsorbance(y []float64) (imax int, median float64, why string) {
	if len(y) == 0 {
		return -1, 0, ""
	}
	for i := range y {
		if y[i] > y[imax] {
			imax = i
		}
	}
	v := slices.Clone(y)
	slices.Sort(v)
	median = v[len(v)/2]
	switch {
	case y[imax] < 0:
		why = "negative"
	case median > MaxMedianAbsorbance:
		why = "median"
	}
	return imax, median, why
}
