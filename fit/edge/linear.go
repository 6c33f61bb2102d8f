package edge

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// ErrNoLinearRange is returned when a linearised construction finds no
// range of at least MinLinearPoints points to fit a line to.
var ErrNoLinearRange = errors.New("edge: no usable linear range")

// MinLinearPoints is the fewest points a linearised construction fits.
const MinLinearPoints = 5

// Line is a weighted straight line y = Intercept + Slope·x fitted to
// points First..Last (inclusive indices into the arrays it was fitted to).
type Line struct {
	Slope, Intercept float64
	// VarSlope, VarIntercept and CovSI are the (co)variances of the
	// estimates, scaled by the reduced χ² of the fit when it exceeds one.
	VarSlope, VarIntercept, CovSI float64
	// Chi2Red is the reduced χ² of the points about the line.
	Chi2Red float64
	// First and Last are the first and last index used.
	First, Last int
	// N is the number of points used.
	N int
}

// Root returns the x where the line crosses y = level, and its standard
// uncertainty from the delta method on (Intercept, Slope).
//
//	x₀ = (level − b)/a,  u²(x₀) = [u²(b) + x₀²·u²(a) + 2x₀·cov(a,b)] / a²
func (l Line) Root(level float64) (x0, u float64) {
	a, b := l.Slope, l.Intercept
	x0 = (level - b) / a
	v := (l.VarIntercept + x0*x0*l.VarSlope + 2*x0*l.CovSI) / (a * a)
	return x0, math.Sqrt(math.Max(v, 0))
}

// lineSums accumulates the weighted moments of a straight-line fit so that
// points can be added one at a time and the line refitted in O(1). The
// moments are updated about the running weighted means (West, Commun. ACM
// 22, 532, 1979), which stays accurate when the weights span many decades,
// as they do on Tauc plots near the gap.
type lineSums struct {
	w, xm, ym     float64 // total weight and weighted means
	sxx, sxy, syy float64 // weighted co-moments about the means
	n             int
}

func (s *lineSums) add(x, y, w float64) {
	s.n++
	w0 := s.w
	s.w += w
	dx, dy := x-s.xm, y-s.ym
	f := w / s.w
	s.xm += f * dx
	s.ym += f * dy
	// (w0·w/(w0+w))·dx·dy, the weighted West update.
	g := w0 * f
	s.sxx += g * dx * dx
	s.sxy += g * dx * dy
	s.syy += g * dy * dy
}

// line solves the weighted normal equations from the centred moments.
func (s *lineSums) line() (l Line, ok bool) {
	if s.n < 2 || !(s.w > 0) || !(s.sxx > 0) {
		return Line{}, false
	}
	a := s.sxy / s.sxx
	b := s.ym - a*s.xm
	chi2 := math.Max(s.syy-a*s.sxy, 0)
	l = Line{Slope: a, Intercept: b, N: s.n}
	if s.n > 2 {
		l.Chi2Red = chi2 / float64(s.n-2)
	}
	scale := math.Max(l.Chi2Red, 1)
	l.VarSlope = scale / s.sxx
	l.VarIntercept = scale * (1/s.w + s.xm*s.xm/s.sxx)
	l.CovSI = -scale * s.xm / s.sxx
	return l, true
}

// maxInflate caps the inflation of σ by the seed's own scatter in
// GrowLine: a seed that is curved, not noisy, would otherwise let the
// range grow over any curvature.
const maxInflate = 2

// GrowLine fits a straight line to (x, y) with standard deviations sigma,
// starting from the seed range [lo, hi] (inclusive indices; x ascending)
// and growing it by the stated rule:
//
//	the range grows one point at a time, alternately at its upper and its
//	lower end, while the candidate point lies within tol standard
//	deviations of the line fitted to the current range; σ is the
//	propagated noise of the point, inflated by √χ²_red of the seed (at
//	most by maxInflate) when the seed itself is not linear within its
//	noise. Growth at an end stops at the first point that fails.
//
// This is the reproducible replacement for choosing the linear part of a
// Tauc or Urbach plot by eye.
func GrowLine(x, y, sigma []float64, lo, hi int, tol float64) (Line, error) {
	if lo < 0 || hi >= len(x) || hi-lo+1 < MinLinearPoints {
		return Line{}, fmt.Errorf("seed has %d points, need %d: %w", hi-lo+1, MinLinearPoints, ErrNoLinearRange)
	}
	var s lineSums
	for i := lo; i <= hi; i++ {
		s.add(x[i], y[i], 1/(sigma[i]*sigma[i]))
	}
	l, ok := s.line()
	if !ok {
		return Line{}, fmt.Errorf("degenerate seed: %w", ErrNoLinearRange)
	}
	inflate := math.Min(math.Sqrt(math.Max(l.Chi2Red, 1)), maxInflate)
	accept := func(i int) bool {
		r := y[i] - (l.Intercept + l.Slope*x[i])
		return math.Abs(r) <= tol*inflate*sigma[i]
	}
	upOK, downOK := true, true
	for upOK || downOK {
		if upOK {
			if hi+1 < len(x) && accept(hi+1) {
				hi++
				s.add(x[hi], y[hi], 1/(sigma[hi]*sigma[hi]))
				if nl, ok := s.line(); ok {
					l = nl
				}
			} else {
				upOK = false
			}
		}
		if downOK {
			if lo-1 >= 0 && accept(lo-1) {
				lo--
				s.add(x[lo], y[lo], 1/(sigma[lo]*sigma[lo]))
				if nl, ok := s.line(); ok {
					l = nl
				}
			} else {
				downOK = false
			}
		}
	}
	l.First, l.Last = lo, hi
	return l, nil
}

// quantile returns the q-quantile (0 ≤ q ≤ 1) of v by linear
// interpolation between order statistics; v is not modified.
func quantile(v []float64, q float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	pos := q * float64(len(s)-1)
	i := int(math.Floor(pos))
	if i >= len(s)-1 {
		return s[len(s)-1]
	}
	f := pos - float64(i)
	return s[i]*(1-f) + s[i+1]*f
}
