package reports

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandedge/fit/edge"
)

// addScatter adds points with the given glyph; empty sets are skipped.
func addScatter(p *plot.Plot, xys plotter.XYs, g draw.GlyphDrawer, c color.Color, r vg.Length, label string) {
	if len(xys) == 0 {
		return
	}
	s, err := plotter.NewScatter(xys)
	if err != nil {
		return
	}
	s.GlyphStyle = draw.GlyphStyle{Shape: g, Color: c, Radius: vg.Points(float64(r))}
	p.Add(s)
	if label != "" {
		p.Legend.Add(label, s)
	}
}

// addLine adds a polyline; empty sets are skipped.
func addLine(p *plot.Plot, xys plotter.XYs, c color.Color, width float64, dashes []vg.Length, label string) {
	if len(xys) < 2 {
		return
	}
	l, err := plotter.NewLine(xys)
	if err != nil {
		return
	}
	l.LineStyle = draw.LineStyle{Color: c, Width: vg.Points(width), Dashes: dashes}
	p.Add(l)
	if label != "" {
		p.Legend.Add(label, l)
	}
}

func addVLine(p *plot.Plot, x, ylo, yhi float64, c color.Color, dashes []vg.Length, label string) {
	if math.IsNaN(x) {
		return
	}
	addLine(p, plotter.XYs{{X: x, Y: ylo}, {X: x, Y: yhi}}, c, 1, dashes, label)
}

func addHLine(p *plot.Plot, xr [2]float64, y float64, c color.Color, dashes []vg.Length) {
	addLine(p, plotter.XYs{{X: xr[0], Y: y}, {X: xr[1], Y: y}}, c, 0.8, dashes, "")
}

// plotRange is the energy range drawn: the window widened by half its
// width on each side, clipped to the data.
func plotRange(d edge.Data, w [2]float64) [2]float64 {
	width := w[1] - w[0]
	lo, hi := w[0]-0.5*width, w[1]+0.5*width
	if len(d.E) > 0 {
		lo = math.Max(lo, d.E[0])
		hi = math.Min(hi, d.E[len(d.E)-1])
	}
	if !(hi > lo) {
		lo, hi = w[0], w[1]
	}
	return [2]float64{lo, hi}
}

// positiveRange returns a log-axis range covering the positive values.
func positiveRange(sets ...plotter.XYs) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, s := range sets {
		for _, p := range s {
			if p.Y > 0 {
				lo = math.Min(lo, p.Y)
				hi = math.Max(hi, p.Y)
			}
		}
	}
	if !(hi > 0) {
		return 1, 10
	}
	if !(hi > lo) {
		lo = hi / 10
	}
	return lo / 1.5, hi * 1.5
}

func maxY(sets ...plotter.XYs) float64 {
	m := 0.0
	for _, s := range sets {
		for _, p := range s {
			if p.Y > m && !math.IsInf(p.Y, 0) {
				m = p.Y
			}
		}
	}
	if m == 0 {
		return 1
	}
	return m
}

// decade returns the power of ten at or below v.
func decade(v float64) float64 {
	if !(v > 0) {
		return 1
	}
	return math.Pow(10, math.Floor(math.Log10(v)))
}

func scaleXYs(xys plotter.XYs, s float64) {
	for i := range xys {
		xys[i].Y /= s
	}
}

// clipY drops points above top so a curve does not stretch the axis.
func clipY(xys plotter.XYs, top float64) plotter.XYs {
	var out plotter.XYs
	for _, p := range xys {
		if p.Y <= top && !math.IsNaN(p.Y) {
			out = append(out, p)
		}
	}
	return out
}

func linspace(a, b float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return v
}

func sq(x float64) float64 { return x * x }

// wrap breaks s into lines of at most width runes at spaces.
func wrap(s string, width int) []string {
	var lines []string
	var cur []string
	n := 0
	for _, w := range strings.Fields(s) {
		lw := len([]rune(w))
		if n > 0 && n+1+lw > width {
			lines = append(lines, strings.Join(cur, " "))
			cur, n = nil, 0
		}
		if n > 0 {
			n++
		}
		cur = append(cur, w)
		n += lw
	}
	if len(cur) > 0 {
		lines = append(lines, strings.Join(cur, " "))
	}
	return lines
}

// decadeTicks marks powers of ten on a log axis, labelled 0.01, 0.1, 1, 10,
// 100, 10³, 10⁴ …, with unlabelled minor ticks at 2…9 times each power.
// Unlike plot.LogTicks it never panics on a non-positive range: it returns
// no ticks.
type decadeTicks struct{}

func (decadeTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0) || !(max > min) || math.IsInf(max, 0) {
		return nil
	}
	var ticks []plot.Tick
	lo, hi := int(math.Floor(math.Log10(min))), int(math.Ceil(math.Log10(max)))
	for k := lo; k <= hi && k-lo < 400; k++ {
		base := math.Pow(10, float64(k))
		if base >= min && base <= max {
			ticks = append(ticks, plot.Tick{Value: base, Label: decadeLabel(k)})
		}
		for m := 2; m <= 9; m++ {
			v := float64(m) * base
			if v >= min && v <= max {
				ticks = append(ticks, plot.Tick{Value: v})
			}
		}
	}
	return ticks
}

func decadeLabel(k int) string {
	switch {
	case k >= 0 && k <= 2:
		return []string{"1", "10", "100"}[k]
	case k < 0 && k >= -2:
		return []string{"0.1", "0.01"}[-k-1]
	}
	return "10" + superscript(k)
}

// superscript writes an integer with Unicode superscript digits.
func superscript(k int) string {
	const digits = "⁰¹²³⁴⁵⁶⁷⁸⁹"
	sup := []rune(digits)
	var b strings.Builder
	if k < 0 {
		b.WriteRune('⁻')
		k = -k
	}
	for _, c := range strconv.Itoa(k) {
		b.WriteRune(sup[c-'0'])
	}
	return b.String()
}

func fmtFixed(v float64, dec int) string { return strconv.FormatFloat(v, 'f', dec, 64) }

func fmtG(v float64, n int) string { return strconv.FormatFloat(v, 'g', n, 64) }

// clipBelow drops points below lo so a curve does not stretch a log axis.
func clipBelow(xys plotter.XYs, lo float64) plotter.XYs {
	var out plotter.XYs
	for _, p := range xys {
		if p.Y >= lo {
			out = append(out, p)
		}
	}
	return out
}

// valueWithU formats "value ± U unit" with U to two significant digits
// and the value to the same decimal place (JCGM 100:2008, §7.2.6).
func valueWithU(v, u float64, unit string) string {
	if math.IsNaN(u) || math.IsInf(u, 0) || u <= 0 {
		return fmtG(v, 5) + " " + unit + " ± n/a"
	}
	if math.Abs(v) >= 1e6 || (math.Abs(v) < 1e-3 && v != 0) {
		// Scientific: write both in the value's exponent.
		e := math.Floor(math.Log10(math.Abs(v)))
		s := math.Pow(10, e)
		return roundPair(v/s, u/s) + " ×10" + superscript(int(e)) + " " + unit
	}
	return roundPair(v, u) + " " + unit
}

// roundPair writes v ± u with u rounded to two significant digits and v to
// the same place; above the units digit both are rounded to that place.
func roundPair(v, u float64) string {
	place := math.Floor(math.Log10(u)) - 1 // place of u's second digit
	if place >= 0 {
		q := math.Pow(10, place)
		return fmtFixed(math.Round(v/q)*q, 0) + " ± " + fmtFixed(math.Round(u/q)*q, 0)
	}
	dec := min(int(-place), 12)
	return fmtFixed(v, dec) + " ± " + fmtFixed(u, dec)
}

// niceTicks labels about n major ticks at steps of 1, 2 or 5 times a power
// of ten, with one unlabelled minor tick between them.
type niceTicks struct{ n int }

func (t niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(hi-lo, 0) || t.n < 2 {
		return nil
	}
	raw := (hi - lo) / float64(t.n)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{1, 2, 5, 10} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	prec := max(-int(math.Floor(math.Log10(step))), 0)
	var ticks []plot.Tick
	for k := math.Ceil(lo / step * 2); k*step/2 <= hi && len(ticks) < 4*t.n; k++ {
		v := k * step / 2
		if math.Mod(k, 2) == 0 {
			ticks = append(ticks, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', prec, 64)})
		} else {
			ticks = append(ticks, plot.Tick{Value: v})
		}
	}
	return ticks
}
