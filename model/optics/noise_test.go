package optics

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// TestMADScale checks 1.4826… = 1/Φ⁻¹(3/4) against gonum's normal quantile.
func TestMADScale(t *testing.T) {
	want := 1 / distuv.UnitNormal.Quantile(0.75)
	if !scalar.EqualWithinRel(madScale, want, 1e-14) {
		t.Errorf("madScale = %.16g, 1/Φ⁻¹(3/4) = %.16g", madScale, want)
	}
}

// TestNoiseSigma adds Gaussian white noise of known σ (seeded PCG, seeds
// stated) to smooth trends, a steep absorption-edge step and a few
// outliers, and checks that NoiseSigma recovers σ within 4 %. Without
// outliers the estimate is unbiased with a relative standard deviation of
// 1.0 % at 20000 points (measured over 200 seeds), so 4 % is a 4-sigma
// bound that a wrong scale (√2 or √4 in place of √6: 15 % or more off)
// fails. Isolated spikes in a fraction p of the points contaminate a
// fraction c ≈ 3p of the second differences and raise the MAD by the factor
//
//	b = Φ⁻¹(½ + 1/(4(1 − c))) / Φ⁻¹(¾)
//
// (the clean part must supply half of all points below the MAD): b = 1.019
// at p = 0.5 %, inside the 4 %, and b = 1.076 at p = 2 %, which the last
// case checks to 2 %, the size of its statistical error.
func TestNoiseSigma(t *testing.T) {
	const n = 20000
	trends := []struct {
		name string
		f    func(x float64) float64 // x in [0, 1)
	}{
		{"flat", func(float64) float64 { return 0.5 }},
		{"quadratic", func(x float64) float64 { return 0.2 + 0.5*x - 0.4*x*x }},
		{"slow sine", func(x float64) float64 { return 0.5 + 0.3*math.Sin(6*x) }},
		// transmittance-like edge: a logistic drop of 0.6 with a width of
		// 10 samples, steep compared with the noise, a minority of points.
		{"edge", func(x float64) float64 { return 0.6 / (1 + math.Exp((x-0.5)*n/10)) }},
	}
	bias := func(p float64) float64 {
		c := 3 * p
		return distuv.UnitNormal.Quantile(0.5+1/(4*(1-c))) / distuv.UnitNormal.Quantile(0.75)
	}
	for _, seed := range []uint64{1, 2, 3} {
		for _, sigma := range []float64{1e-4, 3e-3} {
			for _, tr := range trends {
				for _, sp := range []struct {
					p      float64 // fraction of points with a 100 σ spike
					want   float64 // expected NoiseSigma/σ
					relTol float64
				}{{0, 1, 0.04}, {0.005, 1, 0.04}, {0.02, bias(0.02), 0.02}} {
					rng := rand.New(rand.NewPCG(seed, seed))
					y := make([]float64, n)
					for i := range y {
						y[i] = tr.f(float64(i)/n) + sigma*rng.NormFloat64()
					}
					for k := 0; k < int(sp.p*n); k++ {
						y[rng.IntN(n)] += 100 * sigma
					}
					got := NoiseSigma(y) / sigma
					if !scalar.EqualWithinRel(got, sp.want, sp.relTol) {
						t.Errorf("seed %d σ=%g %s, spikes %g: NoiseSigma/σ = %.4f, want %.4f ± %g",
							seed, sigma, tr.name, sp.p, got, sp.want, sp.relTol)
					}
				}
			}
		}
	}
}

func TestNoiseSigmaEdgeCases(t *testing.T) {
	nan := math.NaN()
	if v := NoiseSigma([]float64{1, 2, 3, 4}); !math.IsNaN(v) { // 2 second differences
		t.Errorf("4 points: %v, want NaN", v)
	}
	if v := NoiseSigma(nil); !math.IsNaN(v) {
		t.Errorf("nil: %v, want NaN", v)
	}
	// a pure quadratic has constant second differences: zero noise.
	var q []float64
	for i := 0; i < 50; i++ {
		x := float64(i)
		q = append(q, 1+0.5*x+0.25*x*x)
	}
	if v := NoiseSigma(q); v != 0 {
		t.Errorf("quadratic: %v, want 0", v)
	}
	// non-finite values are skipped, not propagated
	y := []float64{0.1, 0.3, 0.2, nan, 0.4, math.Inf(1), 0.1, 0.3, 0.2, 0.4, 0.1, 0.3}
	if v := NoiseSigma(y); math.IsNaN(v) || math.IsInf(v, 0) {
		t.Errorf("with NaN/Inf: %v, want finite", v)
	}
	before := append([]float64(nil), y...)
	NoiseSigma(y)
	for i := range y {
		if y[i] != before[i] && !(math.IsNaN(y[i]) && math.IsNaN(before[i])) {
			t.Fatal("NoiseSigma modified its input")
		}
	}
}

// TestKth: the selection gives the same order statistic as sorting, for
// every k, on random data with and without ties (lengths 1 to 60), and
// median is the lower middle value gonum's stat.Quantile(0.5, Empirical)
// gives.
func TestKth(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for n := 1; n <= 60; n++ {
		for _, levels := range []int{0, 3} { // 0: continuous values; 3: many ties
			x := make([]float64, n)
			for i := range x {
				if levels == 0 {
					x[i] = rng.NormFloat64()
				} else {
					x[i] = float64(rng.IntN(levels))
				}
			}
			sorted := append([]float64(nil), x...)
			sort.Float64s(sorted)
			for k := range n {
				y := append([]float64(nil), x...)
				if got := kth(y, k); got != sorted[k] {
					t.Fatalf("n %d, k %d: kth = %v, sorted %v", n, k, got, sorted[k])
				}
				for i := range y {
					if (i < k && y[i] > y[k]) || (i > k && y[i] < y[k]) {
						t.Fatalf("n %d, k %d: not partitioned at %d", n, k, i)
					}
				}
			}
			y := append([]float64(nil), x...)
			if got, want := median(y), stat.Quantile(0.5, stat.Empirical, sorted, nil); got != want {
				t.Fatalf("n %d: median %v, stat.Quantile %v", n, got, want)
			}
		}
	}
}
