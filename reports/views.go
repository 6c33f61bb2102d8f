package reports

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandedge/fit/edge"
)

// ViewsReport is the page of linearised constructions.
type ViewsReport struct {
	Title         string
	Constructions []edge.Construction
	// Gap is the fitted E_g (eV) marked on every panel (NaN: none).
	Gap    float64
	Model  string
	Footer string
}

// ViewsPage is a built page of constructions.
type ViewsPage struct {
	Plots         []*plot.Plot
	title, footer string
}

// ViewsFigure builds one panel per construction: the plotted points, the
// points of the automatically chosen linear range filled, the fitted line
// extended to its root (Tauc, Cody) or across the range (Urbach), the
// construction's value in the title and the fitted model's E_g as a dotted
// line, for comparison.
func ViewsFigure(r ViewsReport) (*ViewsPage, error) {
	if len(r.Constructions) == 0 {
		return nil, fmt.Errorf("views: no constructions: %w", ErrNothingToDraw)
	}
	pg := &ViewsPage{title: r.Title, footer: r.Footer}
	for _, c := range r.Constructions {
		pg.Plots = append(pg.Plots, viewPlot(c, r.Gap))
	}
	return pg, nil
}

func viewPlot(c edge.Construction, gap float64) *plot.Plot {
	p := newPlot()
	p.Title.TextStyle.Font.Size = 9
	p.X.Label.Text = "E (eV)"
	p.X.Tick.Marker = niceTicks{n: 5}
	urbach := c.Name == "urbach"
	switch {
	case urbach:
		p.Y.Label.Text = "α (cm⁻¹), log scale"
	case c.Name == "cody":
		p.Y.Label.Text = "(α/E)^½"
	default:
		p.Y.Label.Text = map[float64]string{0.5: "(αE)²", 1.5: "(αE)^⅔", 2: "(αE)^½", 3: "(αE)^⅓"}[c.Exponent]
	}
	var in, out plotter.XYs
	for i, x := range c.X {
		y := c.Y[i]
		if urbach {
			y = math.Exp(y)
		}
		if math.IsNaN(y) || math.IsInf(y, 0) {
			continue
		}
		pt := plotter.XY{X: x, Y: y}
		if c.Failed == "" && i >= c.Line.First && i <= c.Line.Last {
			in = append(in, pt)
		} else {
			out = append(out, pt)
		}
	}
	// Zoom on the linear range: from a little below it (or its root) to a
	// little above it.
	lo, hi := viewRange(c)
	p.X.Min, p.X.Max = lo, hi
	if urbach {
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = decadeTicks{}
		ylo, yhi := positiveRange(clipX(in, lo, hi), clipX(out, lo, hi))
		p.Y.Min, p.Y.Max = ylo, yhi
		out = clipBelow(out, ylo)
	} else {
		// Plot in units of a power of ten, named in the axis label.
		sc := decade(maxY(clipX(in, lo, hi), clipX(out, lo, hi)))
		scaleXYs(in, sc)
		scaleXYs(out, sc)
		if k := int(math.Round(math.Log10(sc))); k != 0 {
			p.Y.Label.Text += ", ×10" + superscript(k)
		}
		p.Y.Min = 0
		p.Y.Max = 1.1 * maxY(clipX(in, lo, hi), clipX(out, lo, hi))
		p.Y.Tick.Marker = niceTicks{n: 5}
		out = clipY(out, p.Y.Max)
		c.Line.Slope /= sc
		c.Line.Intercept /= sc
	}
	addScatter(p, clipX(out, lo, hi), draw.RingGlyph{}, midGrey, 1.5, "")
	addScatter(p, in, draw.CircleGlyph{}, darkGrey, 1.6, "linear range")
	if c.Failed != "" {
		p.Title.Text = viewName(c) + "\nno linear range found"
		return p
	}
	l := c.Line // rescaled above for the Tauc and Cody views
	var line plotter.XYs
	if urbach {
		for _, x := range linspace(c.Range[0], c.Range[1], 40) {
			line = append(line, plotter.XY{X: x, Y: math.Exp(l.Intercept + l.Slope*x)})
		}
		p.Title.Text = fmt.Sprintf("Urbach plot\nE_U = %s", valueWithU(1e3*c.Value, 1e3*c.Err, "meV"))
	} else {
		x0 := math.Max(c.Value, lo)
		line = plotter.XYs{{X: x0, Y: l.Intercept + l.Slope*x0}, {X: c.Range[1], Y: l.Intercept + l.Slope*c.Range[1]}}
		p.Title.Text = fmt.Sprintf("%s\nE_g = %s", viewName(c), valueWithU(c.Value, c.Err, "eV"))
	}
	addLine(p, line, ink, 1.3, nil, "line")
	if !math.IsNaN(gap) && gap > lo && gap < hi {
		ylo := p.Y.Min
		if urbach {
			ylo = p.Y.Min
		}
		addVLine(p, gap, ylo, p.Y.Max, ink, []vg.Length{vg.Points(1), vg.Points(2)}, "fitted E_g")
	}
	p.Legend.Top, p.Legend.Left = true, true
	p.Legend.XOffs, p.Legend.YOffs = vg.Points(4), -vg.Points(2)
	return p
}

func viewName(c edge.Construction) string {
	switch c.Name {
	case "tauc-direct-allowed":
		return "Tauc r = 1/2 (direct allowed)"
	case "tauc-direct-forbidden":
		return "Tauc r = 3/2 (direct forbidden)"
	case "tauc-indirect-allowed":
		return "Tauc r = 2 (indirect allowed)"
	case "tauc-indirect-forbidden":
		return "Tauc r = 3 (indirect forbidden)"
	case "cody":
		return "Cody (α/E)^½"
	case "urbach":
		return "Urbach plot"
	}
	return c.Name
}

// viewRange is the energy range of a view: the linear range and its root,
// widened by half their span on each side, within the plotted points.
func viewRange(c edge.Construction) (lo, hi float64) {
	if len(c.X) == 0 {
		return 0, 1
	}
	if c.Failed != "" {
		return c.X[0], c.X[len(c.X)-1]
	}
	lo, hi = c.Range[0], c.Range[1]
	if c.Name != "urbach" && !math.IsNaN(c.Value) {
		lo = math.Min(lo, c.Value)
	}
	span := hi - lo
	lo, hi = math.Max(lo-0.5*span, c.X[0]), math.Min(hi+0.5*span, c.X[len(c.X)-1])
	if !(hi > lo) {
		return c.X[0], c.X[len(c.X)-1]
	}
	return lo, hi
}

func clipX(xys plotter.XYs, lo, hi float64) plotter.XYs {
	var out plotter.XYs
	for _, p := range xys {
		if p.X >= lo && p.X <= hi {
			out = append(out, p)
		}
	}
	return out
}

// Draw lays out the panels in a grid of three columns.
func (pg *ViewsPage) Draw(c draw.Canvas) {
	c = draw.Crop(c, margin, -margin, margin, -margin)
	c.FillText(textStyle(15, true), vg.Point{X: c.Min.X, Y: c.Max.Y}, pg.title)
	drawFooter(c, pg.footer)
	body := draw.Crop(c, 0, 0, 26, -0.3*vg.Inch)
	cols := 3
	rows := (len(pg.Plots) + cols - 1) / cols
	grid := make([][]*plot.Plot, rows)
	for i := range grid {
		grid[i] = make([]*plot.Plot, cols)
		for j := range grid[i] {
			if k := i*cols + j; k < len(pg.Plots) {
				grid[i][j] = pg.Plots[k]
			}
		}
	}
	tiles := draw.Tiles{Rows: rows, Cols: cols, PadX: vg.Points(18), PadY: vg.Points(18)}
	cs := plot.Align(grid, tiles, body)
	for i := range grid {
		for j, p := range grid[i] {
			if p != nil {
				p.Draw(cs[i][j])
			}
		}
	}
}
