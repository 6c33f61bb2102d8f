package optics

import "math"

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

// median reorders x and returns its median: the lower middle value for an
// even length, as stat.Quantile(0.5, stat.Empirical) of the sorted x. It
// selects that order statistic in O(n) (kth) rather than sorting, which
// was most of the cost of a conversion; x must hold no NaN.
func median(x []float64) float64 {
	return kth(x, (len(x)-1)/2)
}

// kth reorders x so that x[k] is its k-th smallest value (0-based) with
// no larger value before it and no smaller after it, and returns x[k]
// (Hoare's selection with a median-of-three pivot; C. A. R. Hoare,
// Commun. ACM 4, 321, 1961). x must be non-empty, 0 ≤ k < len(x) and hold
// no NaN.
func kth(x []float64, k int) float64 {
	lo, hi := 0, len(x)-1
	for hi > lo {
		mid := lo + (hi-lo)/2
		// Order x[lo], x[mid], x[hi]; the median of the three is the pivot.
		if x[mid] < x[lo] {
			x[mid], x[lo] = x[lo], x[mid]
		}
		if x[hi] < x[lo] {
			x[hi], x[lo] = x[lo], x[hi]
		}
		if x[hi] < x[mid] {
			x[hi], x[mid] = x[mid], x[hi]
		}
		pivot := x[mid]
		i, j := lo, hi
		for i <= j {
			for x[i] < pivot {
				i++
			}
			for x[j] > pivot {
				j--
			}
			if i <= j {
				x[i], x[j] = x[j], x[i]
				i++
				j--
			}
		}
		// Now x[lo..j] ≤ pivot ≤ x[i..hi], and x[j+1..i-1] = pivot.
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return x[k]
		}
	}
	return x[k]
}
