package optics

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat"
)

// madScale is 1/Φ⁻¹(3/4): for Gaussian data, σ = madScale·MAD.
const madScale = 1.482602218505602

// NoiseSigma returns a robust estimate of the standard deviation σ of
// white point-to-point noise in y, from the median absolute deviation
// (MAD) of the second differences
//
//	dᵢ = y_{i−1} − 2yᵢ + y_{i+1},
//	σ = 1.4826 · MAD(d) / √6.
//
// Why √6: for y = s + ε with ε independent of variance σ², the second
// difference of ε has variance (1² + 2² + 1²)σ² = 6σ², while a smooth trend
// s contributes only h²·s″ (nearly constant over a few points, and removed
// by the median in the MAD). For Gaussian ε the dᵢ are Gaussian with
// standard deviation √6·σ, and 1.4826 = 1/Φ⁻¹(3/4) turns their MAD into
// that standard deviation (Hampel 1974, J. Am. Stat. Assoc. 69, 383).
// Neighbouring dᵢ are correlated, which costs efficiency but not
// consistency. The median makes the estimate insensitive to a minority
// (well under half) of steep or outlying points, such as an absorption
// edge that changes faster than the sampling.
//
// Triples containing a non-finite value are skipped. The result is NaN if
// fewer than 3 second differences remain, and 0 if more than half of them
// are equal (e.g. data quantised more coarsely than their noise).
// y is not modified.
func NoiseSigma(y []float64) float64 {
	d := make([]float64, 0, len(y))
	for i := 1; i+1 < len(y); i++ {
		v := y[i-1] - 2*y[i] + y[i+1]
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			d = append(d, v)
		}
	}
	if len(d) < 3 {
		return math.NaN()
	}
	med := median(d)
	for i, v := range d {
		d[i] = math.Abs(v - med)
	}
	return madScale * median(d) / math.Sqrt(6)
}

// median sorts x in place and returns its median (stat.Quantile with the
// empirical rule, the lower middle value for even length).
func median(x []float64) float64 {
	sort.Float64s(x)
	return stat.Quantile(0.5, stat.Empirical, x, nil)
}
