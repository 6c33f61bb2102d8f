package edge

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"bandedge/fit"
	"bandedge/model"
)

// Defaults of the automatic window rule (see Options).
const (
	DefaultTailWidth = 6    // Urbach energies below the gap
	DefaultAboveGap  = 0.25 // eV above the gap
	// windowShiftTail and windowShiftAbove define the family of windows
	// refitted for the window term of the budget: the lower end moves by
	// ±2 Urbach energies (±0.02 eV for models without a tail) and the upper
	// end by ±0.10 eV, in all 3×3 combinations.
	windowShiftTail    = 2
	windowShiftNoTail  = 0.02
	windowShiftAbove   = 0.10
	defaultUrbachStart = 0.015 // eV, start value when the Urbach plot fails
	maxWindowPasses    = 4
)

// Options configures Analyze. The zero value fits the parabolic direct
// edge with an Urbach tail over the automatic window.
type Options struct {
	// Model is the edge model; nil means model.DirectUrbach{}.
	Model model.Model
	// Window forces the fit window [lo, hi] in eV; the zero value selects
	// the automatic rule: from TailWidth Urbach energies below the gap to
	// AboveGap above it (for a model without a tail, from the gap itself),
	// placed first at the Tauc gap and Urbach-plot E_U, then at the fitted
	// values, until the set of points no longer changes (at most four
	// passes), and always clipped to the usable points.
	Window [2]float64
	// TailWidth is the automatic window's extent below the gap, in Urbach
	// energies. Default DefaultTailWidth.
	TailWidth float64
	// AboveGap is the automatic window's extent above the gap in eV.
	// Default DefaultAboveGap.
	AboveGap float64
	// Coverage is the coverage factor k of the expanded uncertainties.
	// Default DefaultCoverage.
	Coverage float64
	// WavelengthErr is the standard uncertainty of the instrument's
	// wavelength scale in nm (0: no term).
	WavelengthErr float64
	// TemperatureErr is the standard uncertainty of the sample temperature
	// in K (0: no term); DGapDT is dE_g/dT in eV/K and DGapDTSource says
	// where it came from (a material's Varshni parameters, or a typical
	// value).
	TemperatureErr float64
	DGapDT         float64
	DGapDTSource   string
	// ThicknessRelErr is the relative standard uncertainty of the sample
	// thickness (0: no term). α ∝ 1/d exactly, so it enters the amplitude
	// and E_P but not E_g or E_U.
	ThicknessRelErr float64
	// Kane, when not nil, asks for the implied Kane energy E_P.
	Kane *KaneInputs
	// Index, when not nil, describes the refractive-index uncertainty,
	// propagated by reconverting the spectrum and refitting.
	Index *IndexInput
	// NoWindowBudget skips the window-family refits (the window term is
	// then reported as not evaluated and the combined uncertainty is NaN).
	NoWindowBudget bool

	// points, when not nil, fixes the points of the fit (Compare: every
	// candidate sees the reference model's points, so that their
	// likelihoods compare); Window then only names their range.
	points []bool
	// constructions, when not nil, are Constructions(d) already made
	// (Compare makes them once for all its candidates: they depend on
	// the data alone).
	constructions []Construction
}

// KaneInputs are the material inputs needed to turn the fitted amplitude
// into the Kane energy E_P (see model.KaneFromAmplitude).
type KaneInputs struct {
	// Index is the refractive index near the edge.
	Index float64
	// ElectronMass and HoleMass are the effective masses in units of m₀.
	ElectronMass, HoleMass float64
	// MassRelErr is the relative standard uncertainty of the reduced mass
	// (0: no term).
	MassRelErr float64
}

// IndexInput is a refractive-index uncertainty and a way to reconvert the
// spectrum at a perturbed index.
type IndexInput struct {
	// Value and Err are the index and its standard uncertainty.
	Value, Err float64
	// Reconvert returns the data converted with the index n.
	Reconvert func(n float64) (Data, error)
}

// ParamValue is one fitted parameter.
type ParamValue struct {
	Name   string     `json:"name"`
	Symbol string     `json:"symbol"`
	Unit   string     `json:"unit"`
	Value  float64    `json:"value"`
	StdErr float64    `json:"stderr"`
	CI95   [2]float64 `json:"ci95"`
	// AtBound is true when the estimate ended on a parameter bound.
	AtBound bool `json:"at_bound,omitempty"`
	// StatWithheld is true when the fit is near-degenerate along this
	// parameter (see Result.Warnings): StdErr and CI95 are then NaN
	// rather than a number that does not describe the estimate.
	StatWithheld bool `json:"stat_withheld,omitempty"`
}

// Result is the outcome of Analyze.
type Result struct {
	// Model is the model's name.
	Model string `json:"model"`
	// Space is where the residuals were formed: SpaceTransmittance for
	// transmittance and absorbance input (Data.Transmission), SpaceAlpha
	// for α input. Chi2Red, DoF and the covariance belong to that fit.
	Space string `json:"fit_space"`
	// Params are the fitted parameters with statistical standard errors
	// and 95 % intervals from Student's t with DoF degrees of freedom.
	Params []ParamValue `json:"params"`
	// Correlation is the correlation matrix of the parameters.
	Correlation [][]float64 `json:"correlation"`
	// Chi2Red is the reduced χ² = SSR/DoF.
	Chi2Red float64 `json:"chi2_reduced"`
	// DoF is the number of degrees of freedom.
	DoF int `json:"dof"`
	// Points is the number of points in the window.
	Points int `json:"points_used"`
	// Window is the fit window in eV and WindowRule how it was chosen.
	Window     [2]float64 `json:"window_ev"`
	WindowRule string     `json:"window_rule"`
	// InWindow marks the points of Data that entered the fit.
	InWindow []bool `json:"-"`
	// FloorExcluded is the number of window points a transmittance fit
	// left out because the absorbance predicted by the fitted model
	// exceeds the instrument floor (0 in α space).
	FloorExcluded int `json:"floor_excluded"`
	// Converged is false when the solver stopped early; Status names how
	// it stopped.
	Converged bool   `json:"converged"`
	Status    string `json:"status"`
	// Cond is the condition number of JᵀWJ at the optimum.
	Cond float64 `json:"condition_number"`
	// CovScaled is true when the covariance was scaled by χ²_red.
	CovScaled bool `json:"covariance_scaled"`
	// PredictedBias is the first-order bias of each parameter that the
	// curvature of the model causes at this fit (Box 1971, evaluated from
	// the fit's own covariance and residuals; see predictedBias), in the
	// parameter's unit; NaN when it could not be computed.
	PredictedBias []float64 `json:"predicted_bias"`
	// Budgets holds an uncertainty budget for every fitted parameter,
	// keyed by its name ("eg", "amp", "eu", …), and for E_P ("ep") when
	// asked.
	Budgets map[string]Budget `json:"budgets"`
	// EP is the implied Kane energy in eV (NaN when not asked).
	EP float64 `json:"-"`
	// TailOnly is true when the window holds (almost) no points above the
	// gap: E_g and the amplitude are then not determined (their budgets
	// carry an "extrapolation" term of unknown size) and only E_U is.
	TailOnly bool `json:"tail_only"`
	// Tauc and Urbach are the linearised constructions used for the start
	// values (nil when they could not be made).
	Tauc   *Construction `json:"tauc,omitempty"`
	Urbach *Construction `json:"urbach,omitempty"`
	// Constructions are all linearised constructions (Tauc for r = 1/2,
	// 3/2, 2, 3; Cody; Urbach), as cross-checks.
	Constructions []Construction `json:"constructions"`
	// Start is the starting parameter vector.
	Start []float64 `json:"start"`
	// Warnings say, in plain words, how far to trust the numbers.
	Warnings []string `json:"warnings"`
	// Fit is the raw solver result.
	Fit *fit.Result `json:"-"`
}

// Param returns the fitted parameter called name.
func (r *Result) Param(name string) (ParamValue, bool) {
	for _, p := range r.Params {
		if p.Name == name {
			return p, true
		}
	}
	return ParamValue{}, false
}

// ErrTooFewPoints is returned when the window holds too few points.
var ErrTooFewPoints = errors.New("edge: too few points in the fit window")

// Analyze fits the edge model to d and evaluates the uncertainty budgets.
func Analyze(ctx context.Context, d Data, o Options) (*Result, error) {
	if err := d.Validate(); err != nil {
		return nil, err
	}
	o = o.withDefaults()
	m := o.Model
	ieg, iamp := model.ParamIndex(m, "eg"), model.ParamIndex(m, "amp")
	if ieg < 0 || iamp < 0 {
		return nil, fmt.Errorf("edge: model %s lacks an eg or amp parameter", m.Name())
	}
	if need := minWindowPoints(len(m.Params())); d.fitUsableCount() < need {
		return nil, fmt.Errorf("%w: %d usable points in the whole spectrum, need at least %d", ErrTooFewPoints, d.fitUsableCount(), need)
	}
	res := &Result{Model: m.Name(), Space: d.Space(), Budgets: map[string]Budget{}, EP: math.NaN()}

	res.Constructions = o.constructions
	if res.Constructions == nil {
		res.Constructions = Constructions(d)
	}
	start := startValues(d, m, res)
	forced := o.Window != [2]float64{}
	var win [2]float64
	var in []bool
	var fr *fit.Result
	var err error
	switch {
	case o.points != nil:
		// Compare: every candidate is fitted to the reference's points.
		win, in = o.Window, append([]bool(nil), o.points...)
		res.WindowRule = fmt.Sprintf("common to the comparison: the reference model's %d points, %.4g to %.4g eV", count(in), win[0], win[1])
		fr, err = fitWindow(ctx, d, m, in, start)
	default:
		// The window (automatic, or forced) and, in transmittance space,
		// the model-predicted floor are placed at the start values, then
		// at each new estimate, until the set of points stops changing.
		p := start
		for pass := 0; pass < maxWindowPasses; pass++ {
			w := o.Window
			if !forced {
				w = autoWindow(m, p, o)
			}
			next, left := fitMask(d, m, w, p)
			if in != nil && equalMask(in, next) {
				break
			}
			win, in, res.FloorExcluded = w, next, left
			fr, err = fitWindow(ctx, d, m, in, start)
			if err != nil {
				break
			}
			p = fr.Params
		}
		if forced {
			res.WindowRule = fmt.Sprintf("forced: %.4g to %.4g eV", win[0], win[1])
		} else {
			res.WindowRule = autoRule(m, o)
		}
	}
	if d.tSpace() {
		if res.FloorExcluded == 0 {
			res.WindowRule += fmt.Sprintf("; fitted in transmittance (no window point beyond the absorbance floor %g)", d.Transmission.maxAbsorbance())
		} else {
			res.WindowRule += fmt.Sprintf("; fitted in transmittance, %d window points left out where the fitted absorbance exceeds the floor %g",
				res.FloorExcluded, d.Transmission.maxAbsorbance())
		}
	}
	if err != nil && (fr == nil || !errors.Is(err, fit.ErrSingular)) {
		return nil, err
	}
	res.Window, res.InWindow = clipWindow(d, in, win), in
	res.Start = start
	res.Fit = fr
	res.fill(m, fr, d.SigmaKnown, count(in))
	pr := newProblem(d, m, in)
	jac := residualJacobian(pr, fr.Params)
	res.PredictedBias = predictedBias(pr, fr, jac)
	pr.release()
	if res.PredictedBias == nil {
		res.PredictedBias = make([]float64, len(fr.Params))
		for j := range res.PredictedBias {
			res.PredictedBias[j] = math.NaN()
		}
	}
	if err != nil {
		// Singular covariance: the estimates stand but say so (withhold
		// recovers the standard errors of the parameters the data
		// determine).
		res.Warnings = append(res.Warnings, fmt.Sprintf("the covariance could not be computed (%v): not every parameter is determined by these data", err))
	}
	res.warn(d, m, ieg, iamp)
	res.withhold(jac, ieg, iamp, d.SigmaKnown)
	res.warnBias()

	// Uncertainty budgets: one per parameter, with the statistical and
	// window terms; E_g and the amplitude get the input terms.
	family := windowFamily(m, fr.Params, res.Window)
	fam := make([][]float64, len(fr.Params))
	if !o.NoWindowBudget {
		for _, w := range family {
			fin, _ := fitMask(d, m, w, fr.Params)
			fw, err := fitWindow(ctx, d, m, fin, fr.Params)
			if fw == nil || (err != nil && !errors.Is(err, fit.ErrSingular)) || fw.Status.Early() {
				continue // a singular covariance leaves the estimates valid
			}
			for j, v := range fw.Params {
				fam[j] = append(fam[j], v)
			}
		}
	}
	winTerm := func(j int) Term {
		vals := fam[j]
		t := Term{Source: "fit window", Type: TypeB, InputUnit: m.Params()[j].Unit,
			Note: fmt.Sprintf("standard deviation over %d refits: lower end ±%s, upper end ±%.2g eV", len(vals), shiftText(m), windowShiftAbove)}
		if o.NoWindowBudget || len(vals) < 3 {
			t.U = math.NaN()
			t.Note = "not evaluated"
		} else {
			t.U = stat.StdDev(vals, nil)
		}
		return t
	}
	terms := make([][]Term, len(fr.Params))
	for j, q := range m.Params() {
		note := res.statNote()
		if res.Params[j].StatWithheld {
			note = "withheld: near-degenerate fit, the least-squares standard error is not reliable (see the warnings)"
		}
		terms[j] = []Term{{Source: "statistical", Type: TypeA, InputUnit: q.Unit, U: res.Params[j].StdErr, Note: note}, winTerm(j)}
	}
	if o.WavelengthErr > 0 {
		eg := fr.Params[ieg]
		c := eg * eg / model.HCeVnm // |dE/dλ| at the edge
		terms[ieg] = append(terms[ieg], Term{Source: "wavelength scale", Type: TypeB, Input: o.WavelengthErr, InputUnit: "nm",
			Sensitivity: c, U: c * o.WavelengthErr, Note: "|dE/dλ| = E_g²/(hc) at the edge"})
	}
	if o.TemperatureErr > 0 && o.DGapDT != 0 {
		c := math.Abs(o.DGapDT)
		terms[ieg] = append(terms[ieg], Term{Source: "sample temperature", Type: TypeB, Input: o.TemperatureErr, InputUnit: "K",
			Sensitivity: o.DGapDT, U: c * o.TemperatureErr, Note: "dE_g/dT " + o.DGapDTSource})
	}
	amp := fr.Params[iamp]
	if o.ThicknessRelErr > 0 {
		terms[iamp] = append(terms[iamp], Term{Source: "thickness", Type: TypeB, Input: o.ThicknessRelErr, InputUnit: "relative",
			Sensitivity: amp, U: amp * o.ThicknessRelErr, Note: "α ∝ 1/d, so u(C)/C = u(d)/d"})
	}
	if o.Index != nil && o.Index.Err > 0 && o.Index.Reconvert != nil {
		if c := indexSensitivity(ctx, o.Index, m, res.Window, fr.Params); c != nil {
			for _, j := range []int{ieg, iamp} {
				terms[j] = append(terms[j], Term{Source: "refractive index", Type: TypeB, Input: o.Index.Err, InputUnit: "1",
					Sensitivity: c[j], U: math.Abs(c[j]) * o.Index.Err, Note: "refit of the spectrum reconverted at n ± u(n)"})
			}
		}
	}
	if res.TailOnly {
		terms[ieg] = append(terms[ieg], extrapolationTerm("eV"))
		terms[iamp] = append(terms[iamp], extrapolationTerm(m.Params()[iamp].Unit))
	}
	for j, q := range m.Params() {
		res.Budgets[q.Name] = NewBudget(q.Symbol, q.Unit, o.Coverage, terms[j]...)
	}
	if o.Kane != nil {
		res.kane(o, m, iamp)
	}
	res.budgetWarnings()
	return res, nil
}

func (o Options) withDefaults() Options {
	if o.Model == nil {
		o.Model = model.DirectUrbach{}
	}
	if !(o.TailWidth > 0) {
		o.TailWidth = DefaultTailWidth
	}
	if !(o.AboveGap > 0) {
		o.AboveGap = DefaultAboveGap
	}
	if !(o.Coverage > 0) {
		o.Coverage = DefaultCoverage
	}
	return o
}

// startValues derives the start vector from the data: E_g from the Tauc
// construction with the model's exponent (direct allowed when it has
// none), the tail width from the Urbach plot (E_U for "eu"; 2·E_U for a
// Gaussian-type width "gw", whose 1/e length one width below the gap is
// γ/θ), the model's own typical values for its other parameters
// (model.Starter), and the amplitude from a weighted linear least-squares
// solve with the others fixed; every value is clamped into the bounds.
func startValues(d Data, m model.Model, res *Result) []float64 {
	ps := m.Params()
	p := make([]float64, len(ps))
	for i, q := range ps {
		p[i] = midpoint(q)
	}
	ieg, iamp := model.ParamIndex(m, "eg"), model.ParamIndex(m, "amp")
	ieu, igw := model.ParamIndex(m, "eu"), model.ParamIndex(m, "gw")
	r := 0.5
	if t, ok := m.(model.Tauc); ok {
		r = t.TaucExponent()
	}
	gap := math.NaN()
	// The Tauc construction of the model's exponent, from the
	// constructions already made of d when they hold it.
	t, err := Construction{}, error(nil)
	found := false
	for _, c := range res.Constructions {
		if c.Exponent == r && strings.HasPrefix(c.Name, "tauc") {
			t, found = c, true
			if c.Failed != "" {
				err = errors.New(c.Failed)
			}
			break
		}
	}
	if !found {
		t, err = Tauc(d, r)
	}
	if err == nil && isFinite(t.Value) {
		res.Tauc = &t
		gap = t.Value
	}
	eu := defaultUrbachStart
	if u, err := Urbach(d, gap); err == nil {
		res.Urbach = &u
		eu = u.Value
	}
	if ieu >= 0 {
		p[ieu] = eu
	}
	if igw >= 0 {
		p[igw] = 2 * eu
	}
	if math.IsNaN(gap) {
		// No Tauc line: put the gap where α reaches half its largest
		// usable value, a crude but data-driven start.
		gap = halfRise(d)
	}
	p[ieg] = gap
	if st, ok := m.(model.Starter); ok {
		st.Start(p)
	}
	for i, q := range ps {
		p[i] = math.Min(math.Max(p[i], q.Min), q.Max)
	}
	// Amplitude by weighted linear least squares: α ≈ C·f(E; C = 1).
	p[iamp] = 1
	f := make([]float64, len(d.E))
	m.Eval(f, d.E, p)
	var num, den float64
	for i := range d.E {
		if !d.usable(i) {
			continue
		}
		w := 1 / (d.Sigma[i] * d.Sigma[i])
		num += w * f[i] * d.Alpha[i]
		den += w * f[i] * f[i]
	}
	if den > 0 && num > 0 {
		p[iamp] = num / den
	}
	p[iamp] = math.Min(math.Max(p[iamp], ps[iamp].Min), ps[iamp].Max)
	return p
}

func midpoint(q model.Param) float64 {
	switch {
	case !math.IsInf(q.Min, 0) && !math.IsInf(q.Max, 0):
		return 0.5 * (q.Min + q.Max)
	case !math.IsInf(q.Min, 0):
		return q.Min + 1
	case !math.IsInf(q.Max, 0):
		return q.Max - 1
	}
	return 0
}

// halfRise returns the lowest energy at which α reaches half its 95th
// percentile over the usable points.
func halfRise(d Data) float64 {
	var a []float64
	for i := range d.E {
		if d.usable(i) {
			a = append(a, d.Alpha[i])
		}
	}
	ref := quantile(a, 0.95) / 2
	for i := range d.E {
		if d.usable(i) && d.Alpha[i] >= ref {
			return d.E[i]
		}
	}
	return d.E[len(d.E)/2]
}

func autoWindow(m model.Model, p []float64, o Options) [2]float64 {
	eg := p[model.ParamIndex(m, "eg")]
	lo := eg
	if w, ok := tailWidth(m, p); ok {
		lo = eg - o.TailWidth*w
	}
	return [2]float64{lo, eg + o.AboveGap}
}

// tailWidth returns the energy scale of the model's sub-gap tail at p:
// model.Tailed's TailWidth, else the "eu" parameter, and whether the
// model has a tail at all.
func tailWidth(m model.Model, p []float64) (float64, bool) {
	if t, ok := m.(model.Tailed); ok {
		return t.TailWidth(p), true
	}
	if i := model.ParamIndex(m, "eu"); i >= 0 {
		return p[i], true
	}
	return 0, false
}

func hasTail(m model.Model) bool {
	_, ok := tailWidth(m, make([]float64, len(m.Params())))
	return ok
}

func autoRule(m model.Model, o Options) string {
	if hasTail(m) {
		return fmt.Sprintf("automatic: E_g − %g tail widths to E_g + %g eV, iterated to a fixed point", o.TailWidth, o.AboveGap)
	}
	return fmt.Sprintf("automatic: E_g to E_g + %g eV, iterated to a fixed point", o.AboveGap)
}

// clipWindow reports the window as the energies of the first and last
// point inside it (the nominal limits may lie beyond the data).
func clipWindow(d Data, in []bool, w [2]float64) [2]float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, ok := range in {
		if ok {
			lo = math.Min(lo, d.E[i])
			hi = math.Max(hi, d.E[i])
		}
	}
	if lo > hi {
		return w
	}
	return [2]float64{lo, hi}
}

func equalMask(a, b []bool) bool {
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func count(in []bool) int {
	n := 0
	for _, ok := range in {
		if ok {
			n++
		}
	}
	return n
}

// fitWindow fits m to the points of d marked in in, in d's space (see
// newProblem and Transmission).
func fitWindow(ctx context.Context, d Data, m model.Model, in []bool, start []float64) (*fit.Result, error) {
	n := count(in)
	if need := minWindowPoints(len(start)); n < need {
		return nil, fmt.Errorf("%w: %d points, need at least %d (3 per parameter, at least %d)", ErrTooFewPoints, n, need, MinWindowPoints)
	}
	pr := newProblem(d, m, in)
	defer pr.release() // a Result holds nothing of the problem's buffers
	fr, err := fit.LeastSquares(ctx, pr.f, start, pr.set)
	if fr == nil || !atBound(fr) || ctx.Err() != nil {
		return fr, err
	}
	// A fit that ends on a bound is often a local minimum reached from a
	// poor start (an Urbach energy run down to its floor): refit from the
	// start with the tail width three times larger and three times
	// smaller, and keep the lowest χ².
	for _, alt := range alternativeStarts(m, start) {
		fa, erra := fit.LeastSquares(ctx, pr.f, alt, pr.set)
		if fa != nil && !fa.Status.Early() && fa.SSR < fr.SSR*(1-1e-9) {
			fr, err = fa, erra
		}
	}
	return fr, err
}

// MinWindowPoints is the fewest points a fit window may hold; a model
// with k parameters needs at least 3k.
const MinWindowPoints = 10

func minWindowPoints(k int) int { return max(MinWindowPoints, 3*k) }

func atBound(fr *fit.Result) bool {
	for _, b := range fr.AtBound {
		if b {
			return true
		}
	}
	return false
}

// alternativeStarts returns start vectors with the tail width ("eu" or
// "gw") scaled by 3 and by 1/3, clamped into the bounds; none for models
// without a tail parameter.
func alternativeStarts(m model.Model, start []float64) [][]float64 {
	j := model.ParamIndex(m, "eu")
	if j < 0 {
		j = model.ParamIndex(m, "gw")
	}
	if j < 0 {
		return nil
	}
	q := m.Params()[j]
	var out [][]float64
	for _, f := range []float64{3, 1.0 / 3} {
		alt := append([]float64(nil), start...)
		alt[j] = math.Min(math.Max(start[j]*f, q.Min), q.Max)
		out = append(out, alt)
	}
	return out
}

func (r *Result) fill(m model.Model, fr *fit.Result, sigmaKnown bool, n int) {
	ci := fr.ConfInt(0.95)
	for i, q := range m.Params() {
		pv := ParamValue{Name: q.Name, Symbol: q.Symbol, Unit: q.Unit, Value: fr.Params[i], StdErr: fr.StdErr[i], CI95: ci[i]}
		if fr.AtBound != nil {
			pv.AtBound = fr.AtBound[i]
		}
		r.Params = append(r.Params, pv)
	}
	if c := fr.Correlation(); c != nil {
		r.Correlation = denseRows(c)
	}
	r.DoF = fr.DoF
	r.Chi2Red = fr.SSR / float64(fr.DoF)
	r.Points = n
	r.Converged = !fr.Status.Early()
	r.Status = fr.Status.String()
	r.Cond = fr.Cond
	r.CovScaled = !sigmaKnown
}

func denseRows(c *mat.SymDense) [][]float64 {
	n := c.SymmetricDim()
	rows := make([][]float64, n)
	for i := range rows {
		rows[i] = make([]float64, n)
		for j := range rows[i] {
			rows[i][j] = c.At(i, j)
		}
	}
	return rows
}

func (r *Result) statNote() string {
	in := "fit in α"
	if r.Space == SpaceTransmittance {
		in = "fit in transmittance"
	}
	if r.CovScaled {
		return "least-squares standard error (" + in + "), covariance scaled by χ²_red"
	}
	return "least-squares standard error (" + in + "), absolute weights"
}

// windowFamily returns the eight windows around w used for the window
// term: the lower end moved by −s, 0, +s (s = 2 tail widths, or 0.02 eV
// for models without a tail) and the upper end by −0.10, 0, +0.10 eV,
// without the nominal window itself.
func windowFamily(m model.Model, p []float64, w [2]float64) [][2]float64 {
	s := windowShiftNoTail
	if tw, ok := tailWidth(m, p); ok {
		s = windowShiftTail * tw
	}
	var fam [][2]float64
	for _, dl := range []float64{-s, 0, s} {
		for _, dh := range []float64{-windowShiftAbove, 0, windowShiftAbove} {
			if dl == 0 && dh == 0 {
				continue
			}
			fam = append(fam, [2]float64{w[0] + dl, w[1] + dh})
		}
	}
	return fam
}

func shiftText(m model.Model) string {
	if hasTail(m) {
		return fmt.Sprintf("%g tail widths", float64(windowShiftTail))
	}
	return fmt.Sprintf("%.2g eV", windowShiftNoTail)
}

// extrapolationTerm is the budget line of a quantity the data do not
// determine: its size is unknown, so the combined uncertainty is too.
func extrapolationTerm(unit string) Term {
	return Term{Source: "extrapolation", Type: TypeB, Input: math.NaN(), InputUnit: unit, Sensitivity: 1, U: math.NaN(),
		Note: "not determined: the data show only the tail below the gap"}
}

// indexSensitivity refits at n ± u(n) and returns the central-difference
// sensitivities ∂p_j/∂n of every parameter, or nil when a refit fails.
func indexSensitivity(ctx context.Context, ix *IndexInput, m model.Model, w [2]float64, p []float64) []float64 {
	var v [2][]float64
	for k, sgn := range []float64{-1, 1} {
		d, err := ix.Reconvert(ix.Value + sgn*ix.Err)
		if err != nil {
			return nil
		}
		fin, _ := fitMask(d, m, w, p)
		fr, err := fitWindow(ctx, d, m, fin, p)
		if fr == nil || (err != nil && !errors.Is(err, fit.ErrSingular)) {
			return nil
		}
		v[k] = fr.Params
	}
	h := 2 * ix.Err
	c := make([]float64, len(p))
	for j := range c {
		c[j] = (v[1][j] - v[0][j]) / h
	}
	return c
}
