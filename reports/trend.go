package reports

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandedge/fit/trend"
)

// TrendReport is what the E_g(T) report shows.
type TrendReport struct {
	Title  string
	Points []trend.Point
	// Fits are the fitted laws (nil entries are skipped).
	Fits   []*trend.Result
	Footer string
}

// TrendPage is a built E_g(T) report.
type TrendPage struct {
	Plot          *plot.Plot
	lines         []styledLine
	title, footer string
}

// TrendFigure builds the E_g(T) report: the measured gaps with their
// combined standard uncertainties as error bars, each fitted law as a
// line (solid, dashed), and a block with the fitted parameters.
func TrendFigure(r TrendReport) (*TrendPage, error) {
	var pts plotter.XYs
	var errs plotter.YErrors
	tmax := 0.0
	for _, p := range r.Points {
		if math.IsNaN(p.Eg) || math.IsInf(p.Eg, 0) || math.IsNaN(p.T) {
			continue
		}
		u := p.U
		if math.IsNaN(u) || math.IsInf(u, 0) {
			u = 0
		}
		pts = append(pts, plotter.XY{X: p.T, Y: p.Eg})
		errs = append(errs, struct{ Low, High float64 }{u, u})
		tmax = math.Max(tmax, p.T)
	}
	if len(pts) == 0 {
		return nil, fmt.Errorf("trend report: no finite gaps: %w", ErrNothingToDraw)
	}
	p := newPlot()
	p.Title.Text = "Band gap against temperature"
	p.X.Label.Text = "T (K)"
	p.Y.Label.Text = "E_g (eV)"
	p.Y.Tick.Marker = niceTicks{n: 8}
	p.X.Tick.Marker = niceTicks{n: 8}
	p.X.Min, p.X.Max = 0, tmax*1.08
	dashes := [][]vg.Length{nil, {vg.Points(6), vg.Points(3)}, {vg.Points(2), vg.Points(2)}}
	for i, f := range r.Fits {
		if f == nil {
			continue
		}
		grid := linspace(0.5, tmax*1.08, 300)
		var line plotter.XYs
		for _, t := range grid {
			eg := f.Form.Eval(t, f.Params, nil)
			if !math.IsNaN(eg) {
				line = append(line, plotter.XY{X: t, Y: eg})
			}
		}
		addLine(p, line, ink, 1.4, dashes[i%len(dashes)], formTitle(f.Form.Name()))
	}
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, fmt.Errorf("trend report: %w", err)
	}
	sc.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Color: darkGrey, Radius: vg.Points(2.4)}
	p.Add(sc)
	p.Legend.Add("measured E_g ± u_c", sc)
	eb, err := plotter.NewYErrorBars(struct {
		plotter.XYs
		plotter.YErrors
	}{pts, errs})
	if err == nil {
		eb.LineStyle = draw.LineStyle{Color: darkGrey, Width: vg.Points(0.8)}
		p.Add(eb)
	}
	p.Legend.Top = false
	p.Legend.Left = true
	p.Legend.XOffs = vg.Points(6)
	p.Legend.YOffs = vg.Points(6)
	pg := &TrendPage{Plot: p, title: r.Title, footer: r.Footer}
	b, n, s := textStyle(10, true), textStyle(9, false), textStyle(8, false)
	add := func(st draw.TextStyle, indent vg.Length, format string, a ...any) {
		pg.lines = append(pg.lines, styledLine{text: fmt.Sprintf(format, a...), style: st, indent: indent})
	}
	for _, f := range r.Fits {
		if f == nil {
			continue
		}
		add(b, 0, "%s", formTitle(f.Form.Name()))
		add(s, 12, "χ²_red = %.3g on %d degrees of freedom%s", f.Chi2Red, f.DoF, map[bool]string{true: "", false: "; NOT CONVERGED"}[f.Converged])
		for j, pi := range f.Form.Params() {
			unit := pi.Unit
			if unit == "1" {
				unit = ""
			}
			add(n, 12, "%s = %s", pi.Symbol, valueWithU(f.Params[j], f.StdErr[j], unit))
		}
		eg, u := f.At(300)
		add(s, 12, "E_g(300 K) = %s", valueWithU(eg, u, "eV"))
	}
	add(s, 0, "uncertainties are standard uncertainties (k = 1); weights 1/u_c² of the measured gaps; covariance scaled by χ²_red when it exceeds 1")
	return pg, nil
}

// formTitle is the printed name of an E_g(T) law with its source.
func formTitle(name string) string {
	switch name {
	case "varshni":
		return "Varshni (1967)"
	case "bose-einstein":
		return "Bose–Einstein (O'Donnell & Chen 1991)"
	}
	return name
}

// Draw lays the page out: the plot on the left, the parameters on the
// right, the caution and provenance at the foot.
func (pg *TrendPage) Draw(c draw.Canvas) {
	c = draw.Crop(c, margin, -margin, margin, -margin)
	w := c.Max.X - c.Min.X
	c.FillText(textStyle(15, true), vg.Point{X: c.Min.X, Y: c.Max.Y}, pg.title)
	drawFooter(c, pg.footer)
	body := draw.Crop(c, 0, 0, 26, -0.3*vg.Inch)
	left := draw.Crop(body, 0, -0.38*w, 0, 0)
	pg.Plot.Draw(left)
	var lines []styledLine
	for _, l := range pg.lines {
		for i, part := range wrap(l.text, 60) {
			lines = append(lines, styledLine{text: part, style: l.style, indent: l.indent + vg.Length(8*min(i, 1))})
		}
	}
	textBlock(c, vg.Point{X: c.Min.X + 0.64*w, Y: body.Max.Y - 20}, lines)
}
