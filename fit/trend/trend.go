// Package trend fits the temperature dependence of the band gap, E_g(T),
// to a series of gaps measured at several sample temperatures, with two
// published forms:
//
// Varshni (Physica 34, 149, 1967):
//
//	E_g(T) = E_g(0) − a·T²/(T + b)
//
// with E_g(0) in eV, a in eV/K and b in K; and the Bose–Einstein form of
// O'Donnell & Chen (Appl. Phys. Lett. 58, 2924, 1991):
//
//	E_g(T) = E_g(0) − S·⟨ħω⟩·[coth(⟨ħω⟩/2k_BT) − 1]
//
// with the dimensionless coupling S and the average phonon energy ⟨ħω⟩ in
// eV. Each gap enters with its combined standard uncertainty as weight.
package trend

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"bandedge/fit"
)

// KB is the Boltzmann constant in eV/K (CODATA 2018, exact:
// 1.380649e-23 J/K divided by e = 1.602176634e-19 C).
const KB = 1.380649e-23 / 1.602176634e-19

// Point is one measured gap.
type Point struct {
	// Label names the scan the gap came from.
	Label string
	// T is the sample temperature in K; Eg the gap in eV and U its
	// combined standard uncertainty in eV.
	T, Eg, U float64
}

// Form is an E_g(T) law.
type Form interface {
	// Name identifies the form ("varshni", "bose-einstein").
	Name() string
	// Params names the parameters and their units.
	Params() []ParamInfo
	// Eval returns E_g(T; p) and fills grad (len(p)) with ∂E_g/∂p.
	Eval(t float64, p, grad []float64) float64
	// start returns a start vector for the points.
	start(pts []Point) []float64
	lower() []float64
	upper() []float64
}

// ParamInfo describes one parameter of a Form.
type ParamInfo struct{ Name, Symbol, Unit string }

// Varshni is the Varshni form.
type Varshni struct{}

func (Varshni) Name() string { return "varshni" }

func (Varshni) Params() []ParamInfo {
	return []ParamInfo{{"eg0", "E_g(0)", "eV"}, {"a", "a", "eV/K"}, {"b", "b", "K"}}
}

// Eval implements Form.
func (Varshni) Eval(t float64, p, grad []float64) float64 {
	d := t + p[2]
	f := t * t / d
	if grad != nil {
		grad[0] = 1
		grad[1] = -f
		grad[2] = p[1] * t * t / (d * d)
	}
	return p[0] - p[1]*f
}

func (v Varshni) start(pts []Point) []float64 {
	// For fixed b the form is linear in E_g(0) and a: scan b on a
	// logarithmic grid and keep the best linear solve.
	return bestLinear(pts, logGrid(5, 2000, 60), func(t, b float64) float64 { return t * t / (t + b) })
}

func (Varshni) lower() []float64 { return []float64{0, 0, 0} }
func (Varshni) upper() []float64 { return []float64{20, 1, 1e5} }

// BoseEinstein is the form of O'Donnell & Chen.
type BoseEinstein struct{}

func (BoseEinstein) Name() string { return "bose-einstein" }

func (BoseEinstein) Params() []ParamInfo {
	return []ParamInfo{{"eg0", "E_g(0)", "eV"}, {"s", "S", "1"}, {"hw", "⟨ħω⟩", "eV"}}
}

// occupancy returns coth(x/2) − 1 = 2/(e^x − 1) for x = ħω/k_BT, and its
// derivative with respect to ħω.
func occupancy(t, hw float64) (g, dg float64) {
	x := hw / (KB * t)
	em1 := math.Expm1(x)
	g = 2 / em1
	// d/dhw [2/(e^x − 1)] = −2 e^x/(e^x − 1)² · 1/(k_B T)
	dg = -2 * (em1 + 1) / (em1 * em1) / (KB * t)
	if math.IsInf(em1, 1) {
		g, dg = 0, 0
	}
	return g, dg
}

// Eval implements Form.
func (BoseEinstein) Eval(t float64, p, grad []float64) float64 {
	g, dg := occupancy(t, p[2])
	if grad != nil {
		grad[0] = 1
		grad[1] = -p[2] * g
		grad[2] = -p[1] * (g + p[2]*dg)
	}
	return p[0] - p[1]*p[2]*g
}

func (BoseEinstein) start(pts []Point) []float64 {
	// For fixed ⟨ħω⟩ the form is linear in E_g(0) and S·⟨ħω⟩.
	p := bestLinear(pts, logGrid(0.003, 0.1, 60), func(t, hw float64) float64 {
		g, _ := occupancy(t, hw)
		return g
	})
	// bestLinear returns [E_g(0), coefficient, grid value]; here the
	// coefficient is S·⟨ħω⟩.
	p[1] /= p[2]
	return p
}

func (BoseEinstein) lower() []float64 { return []float64{0, 0, 1e-4} }
func (BoseEinstein) upper() []float64 { return []float64{20, 1e3, 1} }

// logGrid returns n values from lo to hi, evenly spaced in log.
func logGrid(lo, hi float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return g
}

// bestLinear fits E_g = c0 − c1·h(T; q) by weighted linear least squares
// for each q of the grid and returns [c0, c1, q] of the smallest χ², with
// c1 clamped to be non-negative.
func bestLinear(pts []Point, grid []float64, h func(t, q float64) float64) []float64 {
	best := math.Inf(1)
	out := []float64{pts[0].Eg, 0, grid[len(grid)/2]}
	for _, q := range grid {
		var sw, sx, sy, sxx, sxy float64
		for _, p := range pts {
			w := 1 / (p.U * p.U)
			x := h(p.T, q)
			sw += w
			sx += w * x
			sy += w * p.Eg
			sxx += w * x * x
			sxy += w * x * p.Eg
		}
		det := sw*sxx - sx*sx
		if !(det > 0) {
			continue
		}
		c0 := (sxx*sy - sx*sxy) / det
		c1 := -(sw*sxy - sx*sy) / det
		if c1 < 0 {
			c1 = 0
			c0 = sy / sw
		}
		var chi2 float64
		for _, p := range pts {
			r := (p.Eg - (c0 - c1*h(p.T, q))) / p.U
			chi2 += r * r
		}
		if chi2 < best {
			best = chi2
			out = []float64{c0, c1, q}
		}
	}
	return out
}

// Result is a fitted form.
type Result struct {
	Form   Form
	Params []float64
	StdErr []float64
	// Correlation of the parameters (nil when singular).
	Correlation [][]float64
	Chi2Red     float64
	DoF         int
	Converged   bool
	// Fit is the raw solver result.
	Fit *fit.Result
}

// At returns E_g(T) from the fit and its standard uncertainty from the
// parameter covariance (delta method: u² = gᵀ Cov g).
func (r *Result) At(t float64) (eg, u float64) {
	g := make([]float64, len(r.Params))
	eg = r.Form.Eval(t, r.Params, g)
	if r.Fit.Cov == nil {
		return eg, math.NaN()
	}
	gv := mat.NewVecDense(len(g), g)
	return eg, math.Sqrt(math.Max(mat.Inner(gv, r.Fit.Cov, gv), 0))
}

// PValue is the probability of a χ² at least as large as the one found if
// the form were right and the uncertainties correct.
func (r *Result) PValue() float64 {
	if r.DoF <= 0 {
		return math.NaN()
	}
	return 1 - distuv.ChiSquared{K: float64(r.DoF)}.CDF(r.Chi2Red*float64(r.DoF))
}

// ErrTooFewPoints is returned when the series has fewer usable points than
// a form has parameters plus one.
var ErrTooFewPoints = errors.New("trend: too few temperatures")

// Fit fits form to the points with weights 1/U². Points with a non-finite
// T, E_g or U, or U ≤ 0, are skipped. The covariance is scaled by χ²_red
// when χ²_red > 1 (the gaps scatter more than their uncertainties say) and
// left unscaled otherwise, so the parameter errors are never smaller than
// the stated uncertainties imply.
func Fit(ctx context.Context, form Form, pts []Point) (*Result, error) {
	var use []Point
	for _, p := range pts {
		if finite(p.T) && p.T > 0 && finite(p.Eg) && finite(p.U) && p.U > 0 {
			use = append(use, p)
		}
	}
	n := len(form.Params())
	if len(use) < n+1 {
		return nil, fmt.Errorf("%w: %d usable gaps, %s needs at least %d", ErrTooFewPoints, len(use), form.Name(), n+1)
	}
	grad := make([]float64, n)
	f := fit.Func{
		M: len(use),
		Residuals: func(dst, p []float64) {
			for i, q := range use {
				dst[i] = (q.Eg - form.Eval(q.T, p, nil)) / q.U
			}
		},
		Jacobian: func(dst *mat.Dense, p []float64) {
			for i, q := range use {
				form.Eval(q.T, p, grad)
				for j := range grad {
					dst.Set(i, j, -grad[j]/q.U)
				}
			}
		},
		Lower: form.lower(),
		Upper: form.upper(),
	}
	start := form.start(use)
	for i := range start {
		start[i] = math.Min(math.Max(start[i], f.Lower[i]), f.Upper[i])
	}
	fr, err := fit.LeastSquares(ctx, f, start, &fit.Settings{AbsoluteSigma: true})
	if err != nil && (fr == nil || !errors.Is(err, fit.ErrSingular)) {
		return nil, fmt.Errorf("trend %s: %w", form.Name(), err)
	}
	res := &Result{Form: form, Params: fr.Params, DoF: fr.DoF, Converged: !fr.Status.Early(), Fit: fr}
	if fr.DoF > 0 {
		res.Chi2Red = fr.SSR / float64(fr.DoF)
	}
	scale := math.Max(res.Chi2Red, 1)
	if fr.Cov != nil && scale > 1 {
		fr.Cov.ScaleSym(scale, fr.Cov)
	}
	res.StdErr = make([]float64, n)
	for i := range res.StdErr {
		res.StdErr[i] = math.NaN()
		if fr.Cov != nil {
			res.StdErr[i] = math.Sqrt(fr.Cov.At(i, i))
		}
	}
	if c := fr.Correlation(); c != nil {
		for i := 0; i < n; i++ {
			row := make([]float64, n)
			for j := range row {
				row[j] = c.At(i, j)
			}
			res.Correlation = append(res.Correlation, row)
		}
	}
	return res, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
