package reports

import (
	"fmt"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// DefaultWaferDiameter is the wafer diameter drawn when none is given, mm.
const DefaultWaferDiameter = 100

// Site verdicts understood by the wafer map (the strings of
// sheet.Verdict); anything else is drawn as a measured site without a
// verdict.
const (
	SitePass          = "pass"
	SiteFail          = "fail"
	SiteIndeterminate = "indeterminate"
	SiteNotFitted     = "not fitted"
)

// WaferMap is what a wafer map shows: one wafer's sites with the values
// of one or two quantities, each in its own panel with a colour scale.
type WaferMap struct {
	// Wafer and Lot identify the wafer; Verdict is its verdict ("" without
	// a spec) and Rule the decision rule's name.
	Wafer, Lot, Verdict, Rule string
	// Diameter is the wafer diameter in mm (0: DefaultWaferDiameter).
	// Flat is the length in mm of a primary flat drawn at the bottom (0:
	// none); Notch draws an orientation notch at the bottom instead.
	Diameter, Flat float64
	Notch          bool
	// Sites are the measured sites, positions in mm from the wafer centre.
	Sites []WaferSite
	// Panels are the quantities mapped (one or two); Site.Values and
	// Site.Verdicts are indexed like Panels.
	Panels []MapPanel
	// Notes are extra lines for the text block (counts, reasons).
	Notes []string
	// Footer is the short provenance line.
	Footer string
}

// WaferSite is one measured site.
type WaferSite struct {
	// X and Y are the position in mm (x to the right, y up, flat or notch
	// at the bottom).
	X, Y float64
	// Values are the site's values per panel, in the panel's unit before
	// Scale (NaN: not available, e.g. E_g not determined).
	Values []float64
	// Verdicts are the verdict shown by the marker shape per panel
	// (SitePass, SiteFail, SiteIndeterminate, SiteNotFitted or "").
	Verdicts []string
}

// MapPanel describes one mapped quantity.
type MapPanel struct {
	// Symbol and Unit label the colour bar, e.g. "E_g", "eV"; Scale
	// multiplies the values for display (1000 to show eV as meV) and
	// Digits is the number of decimals of the site labels.
	Symbol, Unit string
	Scale        float64
	Digits       int
	// Range is the colour scale in display units; zero uses the sites'
	// range. Give every wafer of a lot the same Range so that colours
	// compare between maps. Values beyond it get the end colours and are
	// counted on the page.
	Range [2]float64
	// Lo and Hi are the spec limits in display units (NaN: none); they are
	// marked on the colour bar.
	Lo, Hi float64
	// Markers says what the marker shapes show, e.g. "verdict on eg_ev".
	Markers string
	// Stats are the wafer's statistics of this quantity, in the
	// quantity's own unit (before Scale).
	Stats MapStats
}

// MapStats are the statistics printed under a panel.
type MapStats struct {
	Count, Skipped                               int
	Mean, StdDev, Min, Max, Range, Nonuniformity float64
	LotMean                                      float64 // the lot's mean, for comparison (NaN: not printed)
}

// Wafer map geometry and style, in one place.
var (
	mapTitleH    = 0.62 * vg.Inch
	mapPanelH    = 4.7 * vg.Inch
	mapBarW      = 1.1 * vg.Inch
	mapOutline   = draw.LineStyle{Color: ink, Width: vg.Points(1.2)}
	mapCrossHair = draw.LineStyle{Color: color.Gray{Y: 200}, Width: vg.Points(0.5), Dashes: []vg.Length{vg.Points(3), vg.Points(3)}}
	mapEdge      = draw.LineStyle{Color: ink, Width: vg.Points(0.6)}
	notFitted    = color.Gray{Y: 120}
)

// viridisAnchors are control colours of the viridis palette (van der Walt &
// Smith, matplotlib, 2015), sRGB, from memory at ten evenly spaced
// positions; their CIELAB lightness increases strictly, which
// moreland.NewLuminance checks and then interpolates linearly in
// lightness. The dark end is kept above black and the light end below
// white (both ends stay visible against the white page and the ink
// outlines).
var viridisAnchors = []color.Color{
	color.NRGBA{0x48, 0x28, 0x78, 0xff},
	color.NRGBA{0x3e, 0x49, 0x89, 0xff},
	color.NRGBA{0x31, 0x68, 0x8e, 0xff},
	color.NRGBA{0x26, 0x82, 0x8e, 0xff},
	color.NRGBA{0x1f, 0x9e, 0x89, 0xff},
	color.NRGBA{0x35, 0xb7, 0x79, 0xff},
	color.NRGBA{0x6e, 0xce, 0x58, 0xff},
	color.NRGBA{0xb5, 0xde, 0x2b, 0xff},
	color.NRGBA{0xfd, 0xe7, 0x25, 0xff},
}

// SequentialColors returns the wafer maps' colour map over [lo, hi]: a
// viridis-like sequential palette whose lightness rises linearly with the
// value, so that it reads as a grey ramp in black-and-white print.
func SequentialColors(lo, hi float64) palette.ColorMap {
	cm, err := moreland.NewLuminance(viridisAnchors)
	if err != nil {
		panic("reports: viridis anchors are not ordered by lightness: " + err.Error())
	}
	cm.SetMin(lo)
	cm.SetMax(hi)
	return cm
}

// WaferPage is a built wafer map, ready to draw.
type WaferPage struct {
	m WaferMap
	// Bars are the colour-bar plots, one per panel.
	Bars []*plot.Plot
	// Colors are the colour maps, one per panel, over Ranges.
	Colors []palette.ColorMap
	Ranges [][2]float64
	// Legend lists the marker entries drawn, in order.
	Legend []string
	// Beyond counts, per panel, the sites whose value lies outside the
	// colour scale (drawn in its end colours).
	Beyond []int
	radius float64 // mm
}

// WaferFigure builds a wafer map: per panel, the wafer outline of the given
// diameter with its flat or notch, every site as a marker filled with the
// colour of its value (a lightness-ordered palette, readable in grey) and
// shaped by its verdict (filled circle pass, cross fail, open triangle
// indeterminate, open square not fitted), a labelled colour bar with the
// spec limits, and under it the statistics; the page also carries the
// wafer and lot, the decision rule, a legend, the caution line and the
// provenance footer.
func WaferFigure(m WaferMap) (*WaferPage, error) {
	if len(m.Panels) == 0 || len(m.Panels) > 2 {
		return nil, fmt.Errorf("wafer map: want one or two panels, have %d: %w", len(m.Panels), ErrNothingToDraw)
	}
	if len(m.Sites) == 0 {
		return nil, fmt.Errorf("wafer map of %s: no sites with a position: %w", m.Wafer, ErrNothingToDraw)
	}
	if !(m.Diameter > 0) {
		m.Diameter = DefaultWaferDiameter
	}
	pg := &WaferPage{m: m, radius: m.Diameter / 2}
	for i, s := range m.Sites {
		if len(s.Values) != len(m.Panels) || len(s.Verdicts) != len(m.Panels) {
			return nil, fmt.Errorf("wafer map: site %d has %d values and %d verdicts for %d panels", i, len(s.Values), len(s.Verdicts), len(m.Panels))
		}
		if !isFinite(s.X) || !isFinite(s.Y) {
			return nil, fmt.Errorf("wafer map: site %d has no finite position", i)
		}
	}
	for k := range m.Panels {
		p := &m.Panels[k]
		if !(p.Scale > 0) {
			p.Scale = 1
		}
		r := p.Range
		if !(r[1] > r[0]) || !isFinite(r[0]) || !isFinite(r[1]) {
			r = [2]float64{math.Inf(1), math.Inf(-1)}
			for _, s := range m.Sites {
				if v := s.Values[k] * p.Scale; isFinite(v) {
					r[0], r[1] = math.Min(r[0], v), math.Max(r[1], v)
				}
			}
			if !(r[1] >= r[0]) {
				r = [2]float64{0, 1}
			}
		}
		if !(r[1] > r[0]) {
			// One value, or all equal: widen so the scale has a span.
			w := math.Max(math.Abs(r[0])*1e-4, 1e-9)
			r = [2]float64{r[0] - w, r[1] + w}
		}
		beyond := 0
		for _, s := range m.Sites {
			if v := s.Values[k] * p.Scale; isFinite(v) && (v < r[0] || v > r[1]) {
				beyond++
			}
		}
		pg.Beyond = append(pg.Beyond, beyond)
		cm := SequentialColors(r[0], r[1])
		pg.Colors = append(pg.Colors, cm)
		pg.Ranges = append(pg.Ranges, r)
		pg.Bars = append(pg.Bars, colorBar(cm, *p))
	}
	pg.m.Panels = m.Panels
	seen := map[string]bool{}
	for _, s := range m.Sites {
		for _, v := range s.Verdicts {
			seen[legendKey(v)] = true
		}
	}
	for _, k := range []string{"pass", "fail", "indeterminate", "not fitted", "measured"} {
		if seen[k] {
			pg.Legend = append(pg.Legend, k)
		}
	}
	return pg, nil
}

func legendKey(v string) string {
	switch v {
	case SitePass, SiteFail, SiteIndeterminate, SiteNotFitted:
		return v
	}
	return "measured"
}

func legendText(k string) string {
	switch k {
	case "pass":
		return "pass (guard band inside the limits)"
	case "fail":
		return "fail (guard band outside a limit)"
	case "indeterminate":
		return "indeterminate (straddles a limit, or not determined)"
	case "not fitted":
		return "not fitted (see failures.txt)"
	}
	return "measured (no limit)"
}

// colorBar builds the colour-bar plot of a panel, spec limits drawn as
// dashed lines across it.
func colorBar(cm palette.ColorMap, p MapPanel) *plot.Plot {
	bp := newPlot()
	bp.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true, Colors: 256})
	bp.HideX()
	bp.Y.Label.Text = p.Symbol + " (" + p.Unit + ")"
	bp.Y.Min, bp.Y.Max = cm.Min(), cm.Max()
	bp.Y.Tick.Marker = fineTicks{}
	bp.Y.Padding = 0
	bp.X.Padding = 0
	for _, l := range []float64{p.Lo, p.Hi} {
		if isFinite(l) && l >= cm.Min() && l <= cm.Max() {
			addLine(bp, plotter.XYs{{X: 0, Y: l}, {X: 1, Y: l}}, color.White, 4, nil, "")
			addLine(bp, plotter.XYs{{X: 0, Y: l}, {X: 1, Y: l}}, ink, 2, []vg.Length{vg.Points(3), vg.Points(2)}, "")
		}
	}
	return bp
}

// Draw lays the page out: the title block, the panels side by side (wafer
// and colour bar), the statistics under each panel, then the legend, the
// limits and rule, the caution and the footer.
func (pg *WaferPage) Draw(c draw.Canvas) {
	m := pg.m
	c = draw.Crop(c, margin, -margin, margin, -margin)
	w := c.Max.X - c.Min.X
	top := c.Max.Y
	title := "Wafer " + orDash(m.Wafer)
	if m.Lot != "" {
		title += " · lot " + m.Lot
	}
	if m.Verdict != "" {
		title += " · wafer verdict: " + strings.ToUpper(m.Verdict)
	}
	c.FillText(textStyle(15, true), vg.Point{X: c.Min.X, Y: top}, title)
	sub := fmt.Sprintf("%d sites on a %g mm wafer; positions in mm from the centre, x right, y up", len(m.Sites), m.Diameter)
	switch {
	case m.Notch:
		sub += ", notch at the bottom"
	case m.Flat > 0:
		sub += fmt.Sprintf(", %g mm flat at the bottom", m.Flat)
	}
	c.FillText(textStyle(9, false), vg.Point{X: c.Min.X, Y: top - 21}, sub)
	if m.Rule != "" {
		c.FillText(textStyle(9, false), vg.Point{X: c.Min.X, Y: top - 33}, "decision rule: "+m.Rule)
	}

	n := len(m.Panels)
	colW := w / vg.Length(n)
	panelTop := top - mapTitleH
	textY := panelTop
	for k := range m.Panels {
		x0 := c.Min.X + vg.Length(k)*colW
		size := min(colW-mapBarW-0.2*vg.Inch, mapPanelH)
		wc := draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: x0, Y: panelTop - size}, Max: vg.Point{X: x0 + size, Y: panelTop}}}
		pg.drawWafer(wc, k)
		bc := draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: x0 + size + 0.1*vg.Inch, Y: panelTop - size + 0.1*vg.Inch},
			Max: vg.Point{X: x0 + size + mapBarW, Y: panelTop - 0.1*vg.Inch}}}
		pg.Bars[k].Draw(bc)
		textY = min(textY, pg.drawPanelText(c, k, x0, panelTop-size-0.12*vg.Inch))
	}
	textY -= 6

	// Notes (counts, wafer-level limits), then the legend, drawn with the
	// same markers as the map.
	y := textY
	for _, l := range m.Notes {
		for _, part := range wrap(l, 170) {
			c.FillText(textStyle(8.5, false), vg.Point{X: c.Min.X, Y: y}, part)
			y -= 12
		}
	}
	y -= 8
	c.FillText(textStyle(9, true), vg.Point{X: c.Min.X, Y: y}, "Markers")
	ly := y - 19
	lx := c.Min.X
	st := textStyle(8.5, false)
	st.YAlign = draw.YCenter
	for _, k := range pg.Legend {
		drawSite(c, vg.Point{X: lx + 6, Y: ly}, 4.5, legendVerdict(k), color.Gray{Y: 160}, true)
		c.FillText(st, vg.Point{X: lx + 16, Y: ly}, legendText(k))
		lx += st.Width(legendText(k)) + 36
		if lx > c.Max.X-2.2*vg.Inch {
			lx, ly = c.Min.X, ly-14
		}
	}
	// Caution and footer.
	fs := textStyle(7, false)
	fs.YAlign = draw.YBottom
	lines := wrap(Caution, 190)
	c.FillText(fs, vg.Point{X: c.Min.X, Y: c.Min.Y + 11}, lines[0])
	last := pg.m.Footer
	if len(lines) > 1 {
		last = lines[1] + "   " + last
	}
	c.FillText(fs, vg.Point{X: c.Min.X, Y: c.Min.Y}, last)
}

func legendVerdict(k string) string {
	if k == "measured" {
		return ""
	}
	return k
}

func orDash(s string) string {
	if s == "" {
		return "(no wafer id)"
	}
	return s
}

// drawPanelText writes the statistics and limits of panel k under it and
// returns the y below the last line.
func (pg *WaferPage) drawPanelText(c draw.Canvas, k int, x, y vg.Length) vg.Length {
	p := pg.m.Panels[k]
	s := p.Stats
	b, n := textStyle(9.5, true), textStyle(8.5, false)
	f := func(v float64) string {
		if !isFinite(v) {
			return "n/a"
		}
		return fmtFixed(v*p.Scale, p.Digits)
	}
	lines := []styledLine{{text: fmt.Sprintf("%s over %d sites", p.Symbol, s.Count), style: b}}
	if s.Skipped > 0 {
		lines[0].text += fmt.Sprintf(" (%d without a value)", s.Skipped)
	}
	lines = append(lines,
		styledLine{text: fmt.Sprintf("mean %s %s   s %s %s   (sample standard deviation)", f(s.Mean), p.Unit, fmtSD(s.StdDev*p.Scale), p.Unit), style: n},
		styledLine{text: fmt.Sprintf("min %s   max %s   range %s %s", f(s.Min), f(s.Max), fmtSD(s.Range*p.Scale), p.Unit), style: n},
		styledLine{text: fmt.Sprintf("non-uniformity (max − min)/(2·mean) = %s", pct(s.Nonuniformity)), style: n},
	)
	if isFinite(s.LotMean) {
		lines = append(lines, styledLine{text: fmt.Sprintf("lot mean %s %s", f(s.LotMean), p.Unit), style: n})
	}
	lim := "no spec limit on " + p.Symbol
	switch lo, hi := isFinite(p.Lo), isFinite(p.Hi); {
	case lo && hi:
		lim = fmt.Sprintf("limits %s ≤ %s ≤ %s %s (dashed on the scale)", fmtG(p.Lo, 6), p.Symbol, fmtG(p.Hi, 6), p.Unit)
	case lo:
		lim = fmt.Sprintf("limit %s ≥ %s %s", p.Symbol, fmtG(p.Lo, 6), p.Unit)
	case hi:
		lim = fmt.Sprintf("limit %s ≤ %s %s", p.Symbol, fmtG(p.Hi, 6), p.Unit)
	}
	r := pg.Ranges[k]
	if (isFinite(p.Lo) && p.Lo < r[0]) || (isFinite(p.Hi) && p.Hi > r[1]) {
		lim += "; outside the colour scale"
	}
	lines = append(lines, styledLine{text: lim, style: n})
	if b := pg.Beyond[k]; b > 0 {
		what := fmt.Sprintf("%d sites", b)
		if b == 1 {
			what = "1 site"
		}
		lines = append(lines, styledLine{text: what + " beyond the colour scale, drawn in its end colours", style: b9(n)})
	}
	if p.Markers != "" {
		lines = append(lines, styledLine{text: "marker shape: " + p.Markers + "; colour: value (scale common to the lot)", style: textStyle(7.5, false)})
	}
	return textBlock(c, vg.Point{X: x, Y: y}, lines)
}

// fineTicks are plot.DefaultTicks labelled with as many decimals as the
// tick spacing needs (DefaultTicks may label 1.4325 and 1.4350 both
// "1.43").
type fineTicks struct{}

func (fineTicks) Ticks(lo, hi float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(lo, hi)
	var major []float64
	for _, t := range ticks {
		if t.Label != "" {
			major = append(major, t.Value)
		}
	}
	if len(major) < 2 {
		return ticks
	}
	step := math.Abs(major[1] - major[0])
	dec := 0
	if step > 0 {
		dec = max(0, int(math.Ceil(-math.Log10(step)-1e-9)))
		// A step such as 0.0025 needs one digit more than its order.
		if r := step * math.Pow(10, float64(dec)); math.Abs(r-math.Round(r)) > 1e-6 {
			dec++
		}
	}
	dec = min(dec, 10)
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = fmtFixed(ticks[i].Value, dec)
		}
	}
	return ticks
}

// b9 is st in bold.
func b9(st draw.TextStyle) draw.TextStyle {
	st.Font = face(st.Font.Size, true)
	return st
}

func fmtSD(v float64) string {
	if !isFinite(v) {
		return "n/a"
	}
	return fmtG(v, 2)
}

func pct(v float64) string {
	if !isFinite(v) {
		return "n/a"
	}
	return fmtG(100*v, 2) + " %"
}

// drawWafer draws panel k's wafer into the square canvas wc.
func (pg *WaferPage) drawWafer(wc draw.Canvas, k int) {
	m := pg.m
	R := pg.radius
	side := wc.Max.X - wc.Min.X
	scale := (side / 2) / vg.Length(R*1.06) // points per mm
	ctr := vg.Point{X: wc.Min.X + side/2, Y: wc.Min.Y + side/2}
	at := func(x, y float64) vg.Point {
		return vg.Point{X: ctr.X + vg.Length(x)*scale, Y: ctr.Y + vg.Length(y)*scale}
	}
	// Cross-hair through the centre.
	wc.StrokeLine2(mapCrossHair, at(-R, 0).X, ctr.Y, at(R, 0).X, ctr.Y)
	wc.StrokeLine2(mapCrossHair, ctr.X, at(0, -R).Y, ctr.X, at(0, R).Y)
	// Outline with its flat or notch at the bottom.
	var path vg.Path
	switch {
	case m.Flat > 0 && m.Flat < 2*R:
		h := math.Asin(m.Flat / (2 * R)) // half-angle of the flat
		start := -math.Pi/2 + h
		path.Move(at(R*math.Cos(start), R*math.Sin(start)))
		path.Arc(ctr, vg.Length(R)*scale, start, 2*math.Pi-2*h)
		path.Close()
	case m.Notch:
		nw := 0.03 * R // notch half-width and depth, drawn to be seen
		h := math.Asin(nw / R)
		start := -math.Pi/2 + h
		path.Move(at(R*math.Cos(start), R*math.Sin(start)))
		path.Arc(ctr, vg.Length(R)*scale, start, 2*math.Pi-2*h)
		path.Line(at(0, -R+1.5*nw))
		path.Close()
	default:
		path.Move(at(R, 0))
		path.Arc(ctr, vg.Length(R)*scale, 0, 2*math.Pi)
		path.Close()
	}
	wc.SetLineStyle(mapOutline)
	wc.Stroke(path)
	lab := textStyle(7.5, false)
	lab.Color = midGrey
	lab.XAlign, lab.YAlign = draw.XLeft, draw.YCenter
	wc.FillText(lab, vg.Point{X: at(R, 0).X + 2, Y: ctr.Y}, "+x")
	lab.XAlign, lab.YAlign = draw.XCenter, draw.YBottom
	wc.FillText(lab, vg.Point{X: ctr.X, Y: at(0, R).Y + 2}, "+y")
	lab.XAlign, lab.YAlign = draw.XLeft, draw.YTop
	wc.FillText(lab, vg.Point{X: wc.Min.X, Y: wc.Max.Y}, fmt.Sprintf("Ø %g mm", m.Diameter))

	// Marker size from the site spacing: about a third of the mean
	// distance between neighbours, between 2.5 and 7 points.
	spacing := 2 * R / math.Sqrt(float64(len(m.Sites))) * float64(scale)
	r := vg.Length(math.Max(2.5, math.Min(7, 0.3*spacing)))
	labels := len(m.Sites) <= 40
	p := m.Panels[k]
	cm := pg.Colors[k]
	vs := textStyle(6, false)
	vs.XAlign, vs.YAlign = draw.XCenter, draw.YTop
	// Not fitted and indeterminate first, so pass and fail sit on top.
	for _, pass := range []int{0, 1} {
		for _, s := range m.Sites {
			v := s.Verdicts[k]
			first := v == SiteNotFitted || v == SiteIndeterminate
			if (pass == 0) != first {
				continue
			}
			pt := at(s.X, s.Y)
			val := s.Values[k] * p.Scale
			fill := color.Color(nil)
			if isFinite(val) {
				fill = colorAt(cm, val)
			}
			drawSite(wc, pt, r, v, fill, false)
			if labels && isFinite(val) {
				// Below the marker, or above it near the bottom edge.
				lp, st := vg.Point{X: pt.X, Y: pt.Y - r*1.5 - 1}, vs
				if s.Y < -0.8*R {
					lp.Y, st.YAlign = pt.Y+r*1.5+1, draw.YBottom
				}
				wc.FillText(st, lp, fmtFixed(val, p.Digits))
			}
		}
	}
}

// colorAt returns the colour of v, clamped into the map's range.
func colorAt(cm palette.ColorMap, v float64) color.Color {
	v = math.Max(cm.Min(), math.Min(cm.Max(), v))
	c, err := cm.At(v)
	if err != nil {
		return midGrey
	}
	return c
}

// drawSite draws one site marker of radius r at pt: the shape says the
// verdict, the fill the value (fill nil: no value).
//
//	pass           filled circle
//	fail           filled cross (×), larger
//	indeterminate  open triangle, with a small dot of the value's colour
//	not fitted     open grey square
//	no verdict     filled circle
func drawSite(c draw.Canvas, pt vg.Point, r vg.Length, verdict string, fill color.Color, legend bool) {
	switch verdict {
	case SiteFail:
		// A cross made of two bars rotated by 45°, as one polygon.
		a := r * 1.45 // arm length
		t := r * 0.42 // half-thickness
		var pts []vg.Point
		for q := 0; q < 4; q++ {
			th := math.Pi/4 + float64(q)*math.Pi/2
			cs, sn := vg.Length(math.Cos(th)), vg.Length(math.Sin(th))
			// Along the arm (cs, sn), across (−sn, cs).
			pts = append(pts,
				vg.Point{X: pt.X + (t*cs + t*sn), Y: pt.Y + (t*sn - t*cs)}, // corner between arms
				vg.Point{X: pt.X + a*cs + t*sn, Y: pt.Y + a*sn - t*cs},
				vg.Point{X: pt.X + a*cs - t*sn, Y: pt.Y + a*sn + t*cs},
			)
		}
		if fill == nil {
			fill = color.White
		}
		c.FillPolygon(fill, pts)
		c.StrokeLines(mapEdge, append(pts, pts[0]))
	case SiteIndeterminate:
		s := r * 1.5
		pts := []vg.Point{
			{X: pt.X, Y: pt.Y + s},
			{X: pt.X - s*0.866, Y: pt.Y - s*0.5},
			{X: pt.X + s*0.866, Y: pt.Y - s*0.5},
		}
		c.FillPolygon(color.White, pts)
		c.StrokeLines(draw.LineStyle{Color: ink, Width: vg.Points(1.1)}, append(pts, pts[0]))
		if fill != nil && !legend {
			circle(c, pt, r*0.42, fill, mapEdge)
		}
	case SiteNotFitted:
		s := r * 0.9
		pts := []vg.Point{{X: pt.X - s, Y: pt.Y - s}, {X: pt.X + s, Y: pt.Y - s}, {X: pt.X + s, Y: pt.Y + s}, {X: pt.X - s, Y: pt.Y + s}}
		c.FillPolygon(color.White, pts)
		c.StrokeLines(draw.LineStyle{Color: notFitted, Width: vg.Points(1)}, append(pts, pts[0]))
	default:
		if fill == nil {
			fill = color.White
		}
		circle(c, pt, r, fill, mapEdge)
	}
}

func circle(c draw.Canvas, pt vg.Point, r vg.Length, fill color.Color, edge draw.LineStyle) {
	var p vg.Path
	p.Move(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Arc(pt, r, 0, 2*math.Pi)
	p.Close()
	c.SetColor(fill)
	c.Fill(p)
	c.SetLineStyle(edge)
	c.Stroke(p)
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
