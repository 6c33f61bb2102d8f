package reports

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandedge/fit/edge"
	"bandedge/model"
)

// Caution is printed on every report that carries a fitted gap.
const Caution = "A fitted gap depends on the model and the window: quote it with both. " +
	"Qualification decisions follow the site's written procedures and accredited metrology; this report supports, not replaces, them."

// EdgeReport is what an edge report shows.
type EdgeReport struct {
	// Title heads the page, usually the input file name.
	Title string
	// Data and Result are the spectrum and its analysis; Model is the
	// fitted model.
	Data   edge.Data
	Result *edge.Result
	Model  model.Model
	// InputLines describe the input and its conversion to α, one line
	// each (thickness, index, noise, masked points).
	InputLines []string
	// Footer is the short provenance line.
	Footer string
	// Comparison, when not nil, is the ranking of --model auto.
	Comparison *edge.Comparison
}

// EdgePage is a built edge report, ready to draw.
type EdgePage struct {
	Alpha, Resid, Tauc *plot.Plot
	left, right        []styledLine
	title, footer      string
	dropped            int
}

// EdgeFigure builds the edge report: α(E) on a log axis with the data
// inside the window, outside it and masked told apart by marker; the
// fit's normalised residuals under it on the same energy axis (in the
// space of the fit: (T − T_fit)/σ_T or (α − α_fit)/σ_α); the
// (αE)² view with the fitted gap and the band's asymptote; and a block with
// the results, their uncertainty budgets, the input and the warnings.
func EdgeFigure(r EdgeReport) (*EdgePage, error) {
	if r.Result == nil || r.Model == nil {
		return nil, fmt.Errorf("edge report: no result: %w", ErrNothingToDraw)
	}
	d, res := r.Data, r.Result
	xr := plotRange(d, res.Window)
	pg := &EdgePage{title: r.Title, footer: r.Footer}

	// Split points by role.
	var inW, outW, masked, resid plotter.XYs
	var tIn, tOut plotter.XYs
	// The residuals are the fit's own, normalised, in the space it was
	// fitted in (transmittance for T and absorbance input, α for α
	// input), so that what the panel shows is what χ² counts.
	fr := edge.FitResiduals(d, r.Model, res.Fit.Params, res.InWindow)
	for i, e := range d.E {
		if e >= xr[0] && e <= xr[1] && !math.IsNaN(fr[i]) {
			resid = append(resid, plotter.XY{X: e, Y: fr[i]})
		}
	}
	for i, e := range d.E {
		if e < xr[0] || e > xr[1] {
			continue
		}
		a := d.Alpha[i]
		finite := !math.IsNaN(a) && !math.IsInf(a, 0)
		usable := (d.Mask == nil || d.Mask[i]) && finite && d.Sigma[i] > 0
		switch {
		case !finite || a <= 0:
			pg.dropped++
			continue
		case !usable:
			masked = append(masked, plotter.XY{X: e, Y: a})
		case res.InWindow[i]:
			inW = append(inW, plotter.XY{X: e, Y: a})
			tIn = append(tIn, plotter.XY{X: e, Y: sq(a * e)})
		default:
			outW = append(outW, plotter.XY{X: e, Y: a})
			tOut = append(tOut, plotter.XY{X: e, Y: sq(a * e)})
		}
	}
	if len(inW) == 0 {
		return nil, fmt.Errorf("edge report: no positive α in the window: %w", ErrNothingToDraw)
	}

	// Model curve on a fine grid: solid in the window, dashed outside.
	grid := linspace(xr[0], xr[1], 600)
	fg := make([]float64, len(grid))
	r.Model.Eval(fg, grid, res.Fit.Params)
	var curveIn, curveLo, curveHi, tauCurve plotter.XYs
	for i, e := range grid {
		tauCurve = append(tauCurve, plotter.XY{X: e, Y: sq(fg[i] * e)})
		if !(fg[i] > 0) {
			continue
		}
		pt := plotter.XY{X: e, Y: fg[i]}
		switch {
		case e < res.Window[0]:
			curveLo = append(curveLo, pt)
		case e > res.Window[1]:
			curveHi = append(curveHi, pt)
		default:
			curveIn = append(curveIn, pt)
		}
	}

	eg := paramValue(res, "eg")
	// α(E) panel.
	pa := newPlot()
	pa.Title.Text = "Absorption coefficient"
	pa.X.Label.Text = "E (eV)"
	pa.X.Tick.Marker = niceTicks{n: 8} // labels with the decimals the range needs
	pa.Y.Label.Text = "α (cm⁻¹)"
	pa.Y.Scale = plot.LogScale{}
	pa.Y.Tick.Marker = decadeTicks{}
	pa.X.Min, pa.X.Max = xr[0], xr[1]
	ylo, yhi := positiveRange(inW, outW, masked)
	pa.Y.Min, pa.Y.Max = ylo, yhi
	addScatter(pa, outW, draw.RingGlyph{}, midGrey, 1.6, "outside window")
	addScatter(pa, masked, draw.CrossGlyph{}, midGrey, 2.0, "masked")
	addScatter(pa, inW, draw.CircleGlyph{}, darkGrey, 1.6, "fit window")
	addLine(pa, clipBelow(curveIn, ylo), ink, 1.6, nil, "model "+res.Model)
	addLine(pa, clipBelow(curveLo, ylo), ink, 1.0, []vg.Length{vg.Points(4), vg.Points(3)}, "")
	addLine(pa, clipBelow(curveHi, ylo), ink, 1.0, []vg.Length{vg.Points(4), vg.Points(3)}, "extrapolated")
	addVLine(pa, eg, ylo, yhi, ink, []vg.Length{vg.Points(1), vg.Points(2)}, "E_g")
	for _, w := range res.Window {
		addVLine(pa, w, ylo, yhi, midGrey, []vg.Length{vg.Points(6), vg.Points(2), vg.Points(1), vg.Points(2)}, "")
	}
	// An absorption edge leaves the upper left of both panels empty.
	pa.Legend.Top = true
	pa.Legend.Left = true
	pa.Legend.XOffs = vg.Points(6)
	pa.Legend.YOffs = -vg.Points(2)
	pa.Legend.TextStyle.Font.Size = vg.Points(8)
	pg.Alpha = pa

	// Residual panel.
	pr := newPlot()
	pr.X.Label.Text = "E (eV)"
	pr.X.Tick.Marker = niceTicks{n: 8} // labels with the decimals the range needs
	pr.Y.Label.Text = "(α − fit)/σ_α"
	if res.Space == edge.SpaceTransmittance {
		pr.Y.Label.Text = "(T − fit)/σ_T"
	}
	pr.X.Min, pr.X.Max = xr[0], xr[1]
	lim := 3.0
	for _, p := range resid {
		lim = math.Max(lim, math.Min(math.Abs(p.Y)*1.1, 50))
	}
	pr.Y.Min, pr.Y.Max = -lim, lim
	addHLine(pr, xr, 0, ink, nil)
	addHLine(pr, xr, 2, midGrey, []vg.Length{vg.Points(4), vg.Points(3)})
	addHLine(pr, xr, -2, midGrey, []vg.Length{vg.Points(4), vg.Points(3)})
	clipped := 0
	for i := range resid {
		if math.Abs(resid[i].Y) > lim {
			resid[i].Y = math.Copysign(lim, resid[i].Y)
			clipped++
		}
	}
	addScatter(pr, resid, draw.CircleGlyph{}, darkGrey, 1.4, "")
	if clipped > 0 {
		pr.Title.Text = fmt.Sprintf("normalised residuals (%d clipped at ±%.0f)", clipped, lim)
	} else {
		pr.Title.Text = "normalised residuals (dashed: ±2)"
	}
	pr.Title.TextStyle.Font.Size = vg.Points(9)
	pg.Resid = pr

	// (αE)² panel.
	pt := newPlot()
	pt.Title.Text = "(αE)² view (direct allowed)"
	pt.X.Label.Text = "E (eV)"
	pt.X.Tick.Marker = niceTicks{n: 8} // labels with the decimals the range needs
	scale := decade(maxY(tIn, tOut))
	pt.Y.Label.Text = fmt.Sprintf("(αE)² (10%s cm⁻²·eV²)", superscript(int(math.Round(math.Log10(scale)))))
	pt.X.Min, pt.X.Max = xr[0], xr[1]
	scaleXYs(tIn, scale)
	scaleXYs(tOut, scale)
	scaleXYs(tauCurve, scale)
	top := maxY(tIn, tOut) * 1.08
	pt.Y.Min, pt.Y.Max = 0, top
	addScatter(pt, tOut, draw.RingGlyph{}, midGrey, 1.6, "outside window")
	addScatter(pt, tIn, draw.CircleGlyph{}, darkGrey, 1.6, "fit window")
	addLine(pt, clipY(tauCurve, top), ink, 1.6, nil, "model")
	if amp := paramValue(res, "amp"); !math.IsNaN(eg) && !math.IsNaN(amp) {
		// The band's asymptote (αE)² → C²(E − E_g), whose root is E_g.
		asym := plotter.XYs{{X: eg, Y: 0}}
		e1 := math.Min(xr[1], eg+top*scale/(amp*amp))
		asym = append(asym, plotter.XY{X: e1, Y: amp * amp * (e1 - eg) / scale})
		addLine(pt, asym, ink, 1.0, []vg.Length{vg.Points(5), vg.Points(3)}, "C²(E − E_g)")
	}
	if res.Tauc != nil {
		l := res.Tauc.Line
		e0 := res.Tauc.Value
		e1 := res.Tauc.Range[1]
		tl := plotter.XYs{{X: e0, Y: 0}, {X: e1, Y: (l.Intercept + l.Slope*e1) / scale}}
		addLine(pt, clipY(tl, top), midGrey, 1.2, []vg.Length{vg.Points(1.5), vg.Points(2)}, fmt.Sprintf("Tauc line → %.4f eV", e0))
	}
	addVLine(pt, eg, 0, top, ink, []vg.Length{vg.Points(1), vg.Points(2)}, "")
	pt.Legend.Top = true
	pt.Legend.Left = true
	pt.Legend.XOffs = vg.Points(6)
	pt.Legend.YOffs = -vg.Points(2)
	pt.Legend.TextStyle.Font.Size = vg.Points(8)
	pg.Tauc = pt

	pg.left, pg.right = resultLines(r, pg.dropped)
	return pg, nil
}

// Draw lays the page out: title on top, the α and residual panels on the
// left sharing their energy axis, the (αE)² panel and the result block on
// the right, the caution and provenance at the foot.
func (pg *EdgePage) Draw(c draw.Canvas) {
	c = draw.Crop(c, margin, -margin, margin, -margin)
	h := c.Max.Y - c.Min.Y
	w := c.Max.X - c.Min.X
	// Title.
	c.FillText(textStyle(15, true), vg.Point{X: c.Min.X, Y: c.Max.Y}, pg.title)
	drawFooter(c, pg.footer)
	body := draw.Crop(c, 0, 0, 26, -0.3*vg.Inch)
	leftW := 0.58 * w
	left := draw.Crop(body, 0, -(w - leftW), 0, 0)
	right := draw.Crop(body, leftW+0.15*vg.Inch, 0, 0, 0)

	// Left column: α over residuals, aligned; α gets 70 % of the height.
	tiles := draw.Tiles{Rows: 10, Cols: 1}
	rows := make([][]*plot.Plot, 10)
	for i := range rows {
		rows[i] = []*plot.Plot{nil}
	}
	rows[0][0] = pg.Alpha
	rows[9][0] = pg.Resid
	cs := plot.Align(rows, tiles, left)
	ac := cs[0][0]
	ac.Min.Y = cs[6][0].Min.Y
	rc := cs[9][0]
	rc.Max.Y = cs[7][0].Max.Y
	pg.Alpha.Draw(ac)
	pg.Resid.Draw(rc)

	// Right column: (αE)² view on top, text below.
	th := 0.46 * h
	tc := draw.Crop(right, 0, 0, (right.Max.Y-right.Min.Y)-th, 0)
	pg.Tauc.Draw(tc)
	y := tc.Min.Y - 0.12*vg.Inch
	y = textBlock(right, vg.Point{X: right.Min.X, Y: y}, pg.right)
	_ = y
	_ = pg.left
}

// drawFooter writes the caution and the provenance line at the foot of c.
func drawFooter(c draw.Canvas, footer string) {
	fs := textStyle(7, false)
	fs.YAlign = draw.YBottom
	lines := wrap(Caution, 190)
	c.FillText(fs, vg.Point{X: c.Min.X, Y: c.Min.Y + 11}, lines[0])
	last := footer
	if len(lines) > 1 {
		last = lines[1] + "   " + footer
	}
	c.FillText(fs, vg.Point{X: c.Min.X, Y: c.Min.Y}, last)
}

func resultLines(r EdgeReport, dropped int) (left, right []styledLine) {
	res := r.Result
	b, n, s := textStyle(10, true), textStyle(9, false), textStyle(8, false)
	add := func(st draw.TextStyle, indent vg.Length, format string, a ...any) {
		right = append(right, styledLine{text: fmt.Sprintf(format, a...), style: st, indent: indent})
	}
	if bg, ok := res.Budgets["eg"]; ok && res.TailOnly {
		add(b, 0, "E_g not determined: the data show only the tail")
		add(s, 12, "the fitted %.4f eV is an extrapolation; E_g and C trade off exactly in the tail", paramValue(res, "eg"))
	} else if ok {
		eg := paramValue(res, "eg")
		add(b, 0, "E_g = %s   (U, k = %g)", valueWithU(eg, bg.Expanded, "eV"), bg.K)
		add(s, 12, "u_c = %.2g eV; largest terms: %s", bg.Combined, budgetText(bg))
	}
	if bu, ok := res.Budgets["eu"]; ok {
		eu := paramValue(res, "eu")
		add(n, 0, "E_U = %s   (U, k = %g)", valueWithU(1e3*eu, 1e3*bu.Expanded, "meV"), bu.K)
	}
	if ba, ok := res.Budgets["amp"]; ok {
		add(n, 0, "C = %s   (U, k = %g)", valueWithU(paramValue(res, "amp"), ba.Expanded, "cm⁻¹·eV^½"), ba.K)
	}
	if be, ok := res.Budgets["ep"]; ok {
		add(n, 0, "E_P = %s   (U, k = %g)", valueWithU(res.EP, be.Expanded, "eV"), be.K)
		add(s, 12, "largest terms: %s", budgetText(be))
	}
	add(n, 0, "χ²_red = %.3g   points %d   window %.4f–%.4f eV", res.Chi2Red, res.Points, res.Window[0], res.Window[1])
	add(s, 12, "%s", res.WindowRule)
	add(n, 0, "model %s; %s", res.Model, convergence(res))
	if c := r.Comparison; c != nil {
		add(s, 12, "recommended by AIC among %d candidates (Akaike weight %.2f):", len(c.Ranked), c.Candidates[c.Recommended].Weight)
		for k, i := range c.Ranked {
			if k >= 4 {
				add(s, 20, "… %d more in the JSON record", len(c.Ranked)-k)
				break
			}
			cd := c.Candidates[i]
			eg, _ := cd.Result.Param("eg")
			add(s, 20, "%d. %s  ΔAIC %.1f  w %.2f  E_g %.4f eV", k+1, cd.Model, cd.DeltaAIC, cd.Weight, eg.Value)
		}
	}
	// The warnings come before the input details: when the block is too
	// long for the page, textBlock cuts its end, and what is cut is in
	// the text and JSON outputs.
	if len(res.Warnings) == 0 {
		add(s, 0, "no warnings")
	} else {
		add(b, 0, "Warnings")
		for _, w := range res.Warnings {
			add(s, 6, "• %s", w) // textBlock wraps it, continued 8 points in
		}
	}
	for _, l := range r.InputLines {
		add(s, 0, "%s", l)
	}
	if dropped > 0 {
		add(s, 0, "%d points with α ≤ 0 or undefined are not drawn on the log axes", dropped)
	}
	return nil, right
}

func budgetText(b edge.Budget) string {
	var parts []string
	for i, t := range b.Dominant() {
		if i >= 3 {
			break
		}
		if math.IsNaN(t.U) {
			parts = append(parts, t.Source+" not available")
			continue
		}
		parts = append(parts, fmt.Sprintf("%s %.2g", t.Source, t.U))
	}
	return strings.Join(parts, ", ")
}

func convergence(res *edge.Result) string {
	if res.Converged {
		return "converged (" + res.Status + ")"
	}
	return "NOT converged (" + res.Status + ")"
}

func paramValue(res *edge.Result, name string) float64 {
	if p, ok := res.Param(name); ok {
		return p.Value
	}
	return math.NaN()
}
