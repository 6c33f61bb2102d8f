package edge

import (
	"fmt"
	"math"
)

// Construction is the result of a linearised construction: a Tauc, Cody
// or Urbach plot with its automatically chosen linear range.
type Construction struct {
	// Name identifies the construction, e.g. "tauc-direct-allowed".
	Name string `json:"name"`
	// Exponent is Tauc's r (the plot is (αE)^(1/r) against E); 0 for the
	// Cody and Urbach plots.
	Exponent float64 `json:"exponent,omitempty"`
	// Value is the gap (eV) for Tauc and Cody plots, or the Urbach energy
	// (eV) for the Urbach plot; Err is its standard uncertainty from the
	// line fit (statistical only).
	Value float64 `json:"value_ev"`
	Err   float64 `json:"err_ev"`
	// Range is the energy range of the linear part (eV).
	Range [2]float64 `json:"range_ev"`
	// Points is the number of points in the linear part.
	Points int `json:"points"`
	// Chi2Red is the reduced χ² about the line.
	Chi2Red float64 `json:"chi2_reduced"`
	// Failed says why, when no linear range was found (the numbers are
	// then not set).
	Failed string `json:"failed,omitempty"`
	// Line is the fitted line in the plot's own coordinates.
	Line Line `json:"-"`
	// X, Y, Sigma are the plotted points (all usable points, not only the
	// linear part), for reports.
	X, Y, Sigma []float64 `json:"-"`
}

// Constructions makes every linearised construction of d: the Tauc plot
// for r = 1/2, 3/2, 2 and 3, the Cody plot, and the Urbach plot below the
// direct-allowed Tauc gap. A construction that finds no linear range is
// kept with Failed set, so a report can say so.
func Constructions(d Data) []Construction {
	var out []Construction
	gap := math.NaN()
	es := steepestRise(d) // the same for every construction of d
	for _, r := range []float64{0.5, 1.5, 2, 3} {
		c, err := taucAt(d, r, es)
		if err != nil {
			c = Construction{Name: taucName(r), Exponent: r, X: c.X, Y: c.Y, Sigma: c.Sigma, Failed: err.Error()}
		} else if r == 0.5 {
			gap = c.Value
		}
		out = append(out, c)
	}
	c, err := codyAt(d, es)
	if err != nil {
		c = Construction{Name: "cody", X: c.X, Y: c.Y, Sigma: c.Sigma, Failed: err.Error()}
	}
	out = append(out, c)
	u, err := Urbach(d, gap)
	if err != nil {
		u = Construction{Name: "urbach", X: u.X, Y: u.Y, Sigma: u.Sigma, Failed: err.Error()}
	}
	return append(out, u)
}

// growTol is the acceptance threshold, in standard deviations, of GrowLine
// as used by the constructions.
const growTol = 3

// Tauc fits the Tauc construction (Tauc, Grigorovici & Vancu, phys. stat.
// sol. 15, 627, 1966)
//
//	(α·E)^(1/r) = B·(E − E_g)
//
// with r = 1/2 (direct allowed), 3/2 (direct forbidden), 2 (indirect
// allowed) or 3 (indirect forbidden). Only points with α > 0 enter.
//
// Linear range rule: E_s is the energy where ln α rises fastest
// (steepestRise); u_ref is the 95th percentile of u = (αE)^(1/r) over the
// points from E_s − 0.1 eV to E_s + 0.3 eV, so that absorption far above the
// edge does not set the scale; the seed is the run of points from the first
// with u ≥ 0.2·u_ref up to the last before u first exceeds 0.6·u_ref
// (widened to MinLinearPoints); it then grows by GrowLine with a 3σ
// threshold. E_g is the root of the line.
func Tauc(d Data, r float64) (Construction, error) {
	return taucAt(d, r, steepestRise(d))
}

// taucAt is Tauc with the energy of steepest rise es of d given.
func taucAt(d Data, r, es float64) (Construction, error) {
	name := taucName(r)
	if !(r > 0) {
		return Construction{}, fmt.Errorf("tauc: exponent r = %g: %w", r, ErrNoLinearRange)
	}
	p := 1 / r
	tr := func(e, a, s float64) (y, sy float64, ok bool) {
		if !(a > 0) {
			return 0, 0, false
		}
		y = math.Pow(a*e, p)
		return y, p * y / a * s, true
	}
	c, err := edgeConstruction(d, name, tr, 0.2, 0.6, es)
	if err != nil {
		return c, err
	}
	c.Exponent = r
	c.Value, c.Err = c.Line.Root(0)
	return c, nil
}

// Cody fits the Cody construction (Cody et al., Phys. Rev. Lett. 47, 1480,
// 1981)
//
//	(α/E)^(1/2) = B·(E − E_g)
//
// with the same linear range rule as Tauc.
func Cody(d Data) (Construction, error) {
	return codyAt(d, steepestRise(d))
}

// codyAt is Cody with the energy of steepest rise es of d given.
func codyAt(d Data, es float64) (Construction, error) {
	tr := func(e, a, s float64) (y, sy float64, ok bool) {
		if !(a > 0) {
			return 0, 0, false
		}
		y = math.Sqrt(a / e)
		return y, 0.5 * y / a * s, true
	}
	c, err := edgeConstruction(d, "cody", tr, 0.2, 0.6, es)
	if err != nil {
		return c, err
	}
	c.Value, c.Err = c.Line.Root(0)
	return c, nil
}

// Urbach fits the Urbach plot (Urbach, Phys. Rev. 92, 1324, 1953)
//
//	ln α = ln α₀ + (E − E₀)/E_U
//
// to points with α > 3σ_α (so that ln α is near-Gaussian) below gapHint
// (eV; NaN for none). Linear range rule: α_ref is α interpolated at gapHint,
// or the largest usable α when there is no hint; the seed is the run of
// points just below the gap with α between α_ref/20 and α_ref/2 (searched
// downwards from the gap), grown by GrowLine with a 3σ threshold but never
// past gapHint nor below the last break in the energies (a gap wider than
// three median spacings, where α sank into the noise). E_U is the inverse
// slope.
func Urbach(d Data, gapHint float64) (Construction, error) {
	var x, y, s []float64
	for i := range d.E {
		if !d.usable(i) || !(d.Alpha[i] > 3*d.Sigma[i]) {
			continue
		}
		if !math.IsNaN(gapHint) && d.E[i] > gapHint {
			continue
		}
		x = append(x, d.E[i])
		y = append(y, math.Log(d.Alpha[i]))
		s = append(s, d.Sigma[i]/d.Alpha[i])
	}
	// Keep the run of points that reaches the gap: below a break in
	// energy (points dropped because α sank into the noise) the tail is no
	// longer measured, and an isolated noise spike must not join the line.
	if k := lastBreak(x); k > 0 {
		x, y, s = x[k:], y[k:], s[k:]
	}
	c := Construction{Name: "urbach", X: x, Y: y, Sigma: s}
	if len(x) < MinLinearPoints {
		return c, fmt.Errorf("urbach: %d points with α > 3σ below the gap: %w", len(x), ErrNoLinearRange)
	}
	ref := interpAlpha(d, gapHint)
	if math.IsNaN(gapHint) {
		ref = math.Exp(quantile(y, 1))
	}
	lo, hi := seedRangeDown(y, math.Log(ref/20), math.Log(ref/2))
	l, err := GrowLine(x, y, s, lo, hi, growTol)
	if err != nil {
		return c, fmt.Errorf("urbach: %w", err)
	}
	if !(l.Slope > 0) {
		return c, fmt.Errorf("urbach: ln α does not rise with E in the tail: %w", ErrNoLinearRange)
	}
	c.Line = l
	c.Value = 1 / l.Slope
	c.Err = math.Sqrt(l.VarSlope) / (l.Slope * l.Slope)
	c.Range = [2]float64{x[l.First], x[l.Last]}
	c.Points = l.N
	c.Chi2Red = l.Chi2Red
	return c, nil
}

// edgeConstruction applies a transform to the usable points with positive
// α and fits the grown line from a seed between the fractions lo and hi of
// the 95th percentile of the transformed values near es, the energy of
// steepest rise of d (steepestRise; NaN: over all points).
func edgeConstruction(d Data, name string, tr func(e, a, s float64) (y, sy float64, ok bool), lo, hi, es float64) (Construction, error) {
	x, y, s := make([]float64, 0, len(d.E)), make([]float64, 0, len(d.E)), make([]float64, 0, len(d.E))
	for i := range d.E {
		if !d.usable(i) {
			continue
		}
		yi, si, ok := tr(d.E[i], d.Alpha[i], d.Sigma[i])
		if !ok || !(si > 0) || math.IsInf(yi, 0) {
			continue
		}
		x = append(x, d.E[i])
		y = append(y, yi)
		s = append(s, si)
	}
	c := Construction{Name: name, X: x, Y: y, Sigma: s}
	if len(x) < MinLinearPoints {
		return c, fmt.Errorf("%s: %d usable points: %w", name, len(x), ErrNoLinearRange)
	}
	ref := math.NaN()
	if !math.IsNaN(es) {
		var near []float64
		for i, e := range x {
			if e >= es-edgeBelow && e <= es+edgeAbove {
				near = append(near, y[i])
			}
		}
		if len(near) >= MinLinearPoints {
			ref = quantile(near, 0.95)
		}
	}
	if math.IsNaN(ref) { // no edge found, or too few points near it
		ref = quantile(y, 0.95)
	}
	first, last := seedRange(y, lo*ref, hi*ref)
	l, err := GrowLine(x, y, s, first, last, growTol)
	if err != nil {
		return c, fmt.Errorf("%s: %w", name, err)
	}
	if !(l.Slope > 0) {
		return c, fmt.Errorf("%s: the linear part does not rise with E: %w", name, ErrNoLinearRange)
	}
	c.Line = l
	c.Range = [2]float64{x[l.First], x[l.Last]}
	c.Points = l.N
	c.Chi2Red = l.Chi2Red
	return c, nil
}

// The energy range around the steepest rise that sets the scale of a
// Tauc or Cody plot (eV).
const (
	edgeBelow = 0.1
	edgeAbove = 0.3
	// slopeHalfWidth is the half-width (eV) of the local fits of ln α in
	// steepestRise; at least two points lie on each side.
	slopeHalfWidth = 0.01
)

// steepestRise returns the energy at which ln α rises fastest, from local
// weighted straight-line fits of ln α over ±slopeHalfWidth (at least two
// points on each side) among the usable points with α > 3σ_α. It returns
// NaN when fewer than MinLinearPoints such points exist.
func steepestRise(d Data) float64 {
	var x, y, s []float64
	for i := range d.E {
		if d.usable(i) && d.Alpha[i] > 3*d.Sigma[i] {
			x = append(x, d.E[i])
			y = append(y, math.Log(d.Alpha[i]))
			s = append(s, d.Sigma[i]/d.Alpha[i])
		}
	}
	if len(x) < MinLinearPoints {
		return math.NaN()
	}
	best, at := math.Inf(-1), math.NaN()
	lo, hi := 0, 0
	for i := range x {
		for lo < i-2 && x[lo] < x[i]-slopeHalfWidth {
			lo++
		}
		if hi < i {
			hi = i
		}
		for hi+1 < len(x) && (hi < i+2 || x[hi+1] <= x[i]+slopeHalfWidth) {
			hi++
		}
		if i-lo < 2 || hi-i < 2 {
			continue
		}
		var ls lineSums
		for j := lo; j <= hi; j++ {
			ls.add(x[j], y[j], 1/(s[j]*s[j]))
		}
		if l, ok := ls.line(); ok && l.Slope > best {
			best, at = l.Slope, x[i]
		}
	}
	return at
}

// seedRange returns the run of indices from the first i with y[i] ≥ lo up
// to the last index before y first exceeds hi after it, widened
// symmetrically to MinLinearPoints where the run is shorter.
func seedRange(y []float64, lo, hi float64) (first, last int) {
	first = len(y) - 1
	for i, v := range y {
		if v >= lo {
			first = i
			break
		}
	}
	last = first
	for i := first + 1; i < len(y) && y[i] <= hi; i++ {
		last = i
	}
	for last-first+1 < MinLinearPoints && (first > 0 || last < len(y)-1) {
		if last < len(y)-1 {
			last++
		}
		if last-first+1 < MinLinearPoints && first > 0 {
			first--
		}
	}
	return first, last
}

// lastBreak returns the index after the last gap in x wider than three
// median spacings, or 0 when there is none.
func lastBreak(x []float64) int {
	if len(x) < 3 {
		return 0
	}
	dx := make([]float64, len(x)-1)
	for i := range dx {
		dx[i] = x[i+1] - x[i]
	}
	med := quantile(dx, 0.5)
	for i := len(dx) - 1; i >= 0; i-- {
		if dx[i] > 3*med {
			return i + 1
		}
	}
	return 0
}

// seedRangeDown is seedRange searched from the top: the run ends at the
// highest index with y ≤ hi and extends down while y ≥ lo, so that a noise
// spike far below the edge cannot start the seed. It is widened to
// MinLinearPoints like seedRange.
func seedRangeDown(y []float64, lo, hi float64) (first, last int) {
	last = 0
	for i := len(y) - 1; i >= 0; i-- {
		if y[i] <= hi {
			last = i
			break
		}
	}
	first = last
	for i := last - 1; i >= 0 && y[i] >= lo; i-- {
		first = i
	}
	for last-first+1 < MinLinearPoints && (first > 0 || last < len(y)-1) {
		if first > 0 {
			first--
		}
		if last-first+1 < MinLinearPoints && last < len(y)-1 {
			last++
		}
	}
	return first, last
}

// interpAlpha interpolates α linearly in E at e over the usable points.
func interpAlpha(d Data, e float64) float64 {
	prev := -1
	for i := range d.E {
		if !d.usable(i) {
			continue
		}
		if d.E[i] >= e {
			if prev < 0 {
				return d.Alpha[i]
			}
			f := (e - d.E[prev]) / (d.E[i] - d.E[prev])
			return d.Alpha[prev]*(1-f) + d.Alpha[i]*f
		}
		prev = i
	}
	if prev >= 0 {
		return d.Alpha[prev]
	}
	return math.NaN()
}

func taucName(r float64) string {
	switch r {
	case 0.5:
		return "tauc-direct-allowed"
	case 1.5:
		return "tauc-direct-forbidden"
	case 2:
		return "tauc-indirect-allowed"
	case 3:
		return "tauc-indirect-forbidden"
	}
	return fmt.Sprintf("tauc-r%g", r)
}
