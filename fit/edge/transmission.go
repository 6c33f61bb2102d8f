package edge

import (
	"fmt"
	"math"
	"sort"
	"sync"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"bandedge/fit"
	"bandedge/model"
	"bandedge/model/optics"
)

// Transmission is the measured transmittance behind an absorption
// spectrum: with it, Analyze fits the model where the noise lives.
//
// Why. The instrument's noise is Gaussian with a constant σ_T in T, not
// in α. Fitting α = g(T) with σ_α = |∂α/∂T|·σ_T evaluated at the measured
// (noisy) T gives a point whose T fluctuated up both a lower α and a
// larger weight; to first order in σ_T/T the weighted residual is then
// biased by about −3/2·(σ_T/T)·σ_α per point (−2 from the weight, +½ from
// the curvature of ln T), and the fitted amplitude and gap follow (bias
// b = (JᵀWJ)⁻¹JᵀWδ; on the bench/honesty study −0.45 standard errors for C
// on a 2 µm film at σ_T = 0.002, −1.1 at σ_T = 0.005, −1.25 for E_g on a
// 10 µm slab, with the 68 % interval covering 39 % of the time). Masking
// points by their measured T (T < 5σ_T, measured absorbance above the
// floor) selects on the noise as well (−0.51 standard errors for E_g at
// 10 µm by itself). Least squares in T with the constant σ_T is the
// maximum-likelihood estimator for Gaussian photometric noise and has
// neither effect (the same study: +0.003 standard errors, 68.5/95.3 %
// coverage at 10 µm), provided the points are chosen without looking at
// their noise. See e.g. Seber & Wild, Nonlinear Regression (Wiley, 1989),
// §2.2 on maximum likelihood for Gaussian errors, and Box, J. R. Stat.
// Soc. B 33, 171 (1971) on the bias of nonlinear estimators.
//
// The fit in transmittance space. Over the window points i,
//
//	r_i = (T_i − T_slab(α(E_i; p), R_i, d)) / σ_T,
//	T_slab(α, R, d) = (1 − R)² x / (1 − R² x²),  x = e^(−αd)
//
// (optics.SlabTransmittance, Pankove 1971), with the Jacobian by the chain
// rule ∂r_i/∂p = −(dT/dα)(α_i)·(∂α/∂p)_i / σ_T
// (optics.SlabTransmittanceGrad and the model's analytic Jacobian). χ², the
// reduced χ² and the information criteria of Compare are those of this
// likelihood.
//
// Points. A point may enter a transmittance fit when E, T and R are
// finite, R ∈ [0, 1), and T does not exceed the slab maximum
// (1 − R)/(1 + R) by more than 5σ_T (an outlier rule for baseline errors:
// Gaussian noise crosses it with probability 3·10⁻⁷). Measured T ≤ 0 and
// T < 5σ_T are valid data here. Within the window, points whose
// absorbance predicted by the model at the current estimate,
// −log₁₀ T_slab(α(E; p)), exceeds MaxAbsorbance (the instrument floor:
// stray light and detector offset) are left out; the window iteration of
// Analyze repeats this at each new estimate until the set of points stops
// changing, so the final set depends on the data only through the fitted
// parameters, not on the noise of each point.
type Transmission struct {
	// T is the measured transmittance at each energy of Data.E
	// (fraction; converted from absorbance as 10^(−A) when that was the
	// export). Values ≤ 0 are valid data.
	T []float64
	// R is the single-face reflectance used at each point (fraction in
	// [0, 1): zeros without a reflection correction, a constant, the
	// Fresnel reflectance of the index, or a measured R column). A point
	// with a non-finite R takes no part.
	R []float64
	// SigmaT is the standard deviation of the transmittance noise
	// (fraction, > 0). Data.SigmaKnown says whether it was given or
	// estimated.
	SigmaT float64
	// Thickness is the sample thickness in cm.
	Thickness float64
	// MaxAbsorbance is the instrument floor: points whose predicted
	// absorbance exceeds it are left out. Zero means
	// optics.DefaultMaxAbsorbance.
	MaxAbsorbance float64
}

// Fit spaces (Result.Space).
const (
	SpaceTransmittance = "transmittance"
	SpaceAlpha         = "absorption coefficient"
)

func (t *Transmission) validate(n int) error {
	switch {
	case len(t.T) != n || len(t.R) != n:
		return fmt.Errorf("%w: lengths E %d, transmittance %d, reflectance %d", ErrData, n, len(t.T), len(t.R))
	case !(t.SigmaT > 0) || math.IsInf(t.SigmaT, 1):
		return fmt.Errorf("%w: transmittance noise σ_T = %v, want finite and > 0", ErrData, t.SigmaT)
	case !(t.Thickness > 0) || math.IsInf(t.Thickness, 1):
		return fmt.Errorf("%w: thickness %v cm, want finite and > 0", ErrData, t.Thickness)
	case !(t.MaxAbsorbance >= 0) || math.IsInf(t.MaxAbsorbance, 1):
		return fmt.Errorf("%w: absorbance floor %v, want finite and ≥ 0", ErrData, t.MaxAbsorbance)
	}
	return nil
}

// floorT is the smallest predicted transmittance a point may have.
func (t *Transmission) floorT() float64 {
	a := t.MaxAbsorbance
	if a == 0 {
		a = optics.DefaultMaxAbsorbance
	}
	return math.Pow(10, -a)
}

func (t *Transmission) maxAbsorbance() float64 {
	if t.MaxAbsorbance == 0 {
		return optics.DefaultMaxAbsorbance
	}
	return t.MaxAbsorbance
}

// tSpace reports whether d is fitted in transmittance space.
func (d Data) tSpace() bool { return d.Transmission != nil && !d.RelativeSigma }

// Space names the space d is fitted in: SpaceTransmittance or SpaceAlpha.
func (d Data) Space() string {
	if d.tSpace() {
		return SpaceTransmittance
	}
	return SpaceAlpha
}

// fitUsable reports whether point i may enter a fit in d's space, before
// the model-based floor of a transmittance fit (see Transmission).
func (d Data) fitUsable(i int) bool {
	if !d.tSpace() {
		return d.usable(i)
	}
	tr := d.Transmission
	t, r := tr.T[i], tr.R[i]
	return isFinite(d.E[i]) && d.E[i] > 0 && isFinite(t) && r >= 0 && r < 1 &&
		t <= (1-r)/(1+r)+optics.NoiseMultiple*tr.SigmaT
}

// fitUsableCount returns the number of points that may enter a fit in
// d's space.
func (d Data) fitUsableCount() int {
	n := 0
	for i := range d.E {
		if d.fitUsable(i) {
			n++
		}
	}
	return n
}

// fitMask returns the points of d that enter a fit of m over the window w
// at the estimate p: the usable points of the window, and for a
// transmittance fit only those whose predicted absorbance at p is within
// the instrument floor. It also returns how many window points the floor
// left out.
func fitMask(d Data, m model.Model, w [2]float64, p []float64) ([]bool, int) {
	in := make([]bool, len(d.E))
	// d.E ascends (Validate): the window is the run i0 ≤ i < i1, and the
	// model is evaluated there only.
	i0 := sort.SearchFloat64s(d.E, w[0])
	i1 := i0
	for i1 < len(d.E) && d.E[i1] <= w[1] {
		i1++
	}
	var pred []float64
	var floor float64
	if d.tSpace() && i1 > i0 {
		pred = make([]float64, i1-i0)
		m.Eval(pred, d.E[i0:i1], p)
		floor = d.Transmission.floorT()
	}
	left := 0
	for i := i0; i < i1; i++ {
		e := d.E[i]
		if !(d.fitUsable(i) && e >= w[0] && e <= w[1]) {
			continue
		}
		if pred != nil {
			t := optics.SlabTransmittance(pred[i-i0], d.Transmission.R[i], d.Transmission.Thickness)
			if !(t >= floor) {
				left++
				continue
			}
		}
		in[i] = true
	}
	return in, left
}

// problem is the least-squares problem of one fit: residuals over the
// points marked in, in d's space, with the model's bounds.
type problem struct {
	f   fit.Func
	set *fit.Settings
	buf *problemBuffers
}

// problemBuffers are the per-point arrays of a problem. A batch builds a
// dozen problems per scan (the window passes and the budget refits), and
// allocating them anew was most of its garbage; fitWindow recycles them
// through problemPool once its fits are done.
type problemBuffers struct {
	e, y, sw, refl, a, r2, x, buf []float64
	ev                            fit.Evaluator
}

var problemPool = sync.Pool{New: func() any { return new(problemBuffers) }}

// sized returns s with length 0 and capacity at least n.
func sized(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, 0, n)
	}
	return s[:0]
}

// release returns the problem's buffers to problemPool; the problem and
// its Func must not be used afterwards.
func (pr problem) release() {
	if pr.buf != nil {
		pr.buf.ev.Reset(nil, nil)
		problemPool.Put(pr.buf)
	}
}

// newProblem builds the residual function of m over the points of d marked
// in: in α space r_i = (α_i − α(E_i; p))/σ_i, exactly as fit.Fit forms it;
// in transmittance space r_i = (T_i − T_slab(α(E_i; p)))/σ_T (see
// Transmission). The Jacobian is analytic when m implements
// model.Jacobianer, else left to the engine's central differences.
func newProblem(d Data, m model.Model, in []bool) problem {
	n := count(in)
	ps := m.Params()
	k := len(ps)
	pb := problemPool.Get().(*problemBuffers)
	e := sized(pb.e, n)
	y := sized(pb.y, n)
	sw := sized(pb.sw, n) // √w_i
	var refl []float64
	tsp := d.tSpace()
	var dcm float64
	if tsp {
		refl = sized(pb.refl, n)
		dcm = d.Transmission.Thickness
	}
	for i, ok := range in {
		if !ok {
			continue
		}
		e = append(e, d.E[i])
		if tsp {
			y = append(y, d.Transmission.T[i])
			refl = append(refl, d.Transmission.R[i])
			sw = append(sw, 1/d.Transmission.SigmaT)
		} else {
			y = append(y, d.Alpha[i])
			sw = append(sw, math.Sqrt(1/(d.Sigma[i]*d.Sigma[i])))
		}
	}
	lower, upper := make([]float64, k), make([]float64, k)
	for j, q := range ps {
		lower[j], upper[j] = q.Min, q.Max
	}
	buf := sized(pb.buf, n)[:n]
	f := fit.Func{M: n, Lower: lower, Upper: upper}
	// The evaluator keeps ∂α/∂p from each evaluation of a one-pass model
	// for the solver's next Jacobian call at the same p (see fit.Evaluator).
	ev := &pb.ev
	ev.Reset(m, e)
	if !tsp {
		f.Residuals = func(dst, p []float64) {
			ev.Eval(buf, p)
			for i := range dst {
				dst[i] = sw[i] * (y[i] - buf[i])
			}
		}
		if ev.HasJacobian() {
			f.Jacobian = func(dst *mat.Dense, p []float64) {
				ev.Jacobian(dst, p)
				raw := dst.RawMatrix()
				for i := range n {
					row := raw.Data[i*raw.Stride : i*raw.Stride+k]
					for j := range row {
						row[j] *= -sw[i]
					}
				}
			}
		}
	} else {
		// T_slab inlined with per-point constants a = (1 − R)², R², in
		// the operation order of optics.SlabTransmittance (so the values
		// are identical); x = e^(−αd) of the last residual evaluation is
		// kept for the Jacobian at the same p, which the engine asks for
		// after accepting a step.
		a := sized(pb.a, n)[:n]
		r2 := sized(pb.r2, n)[:n]
		for i, r := range refl {
			a[i], r2[i] = (1-r)*(1-r), r*r
		}
		x := sized(pb.x, n)[:n]
		pb.a, pb.r2, pb.x = a, r2, x
		lastP := make([]float64, k)
		have := false
		eval := func(p []float64) {
			ev.Eval(buf, p)
			for i, al := range buf {
				x[i] = math.Exp(-al * dcm)
			}
			copy(lastP, p)
			have = true
		}
		f.Residuals = func(dst, p []float64) {
			eval(p)
			for i := range dst {
				xi := x[i]
				t := math.NaN()
				if refl[i]*xi < 1 {
					t = a[i] * xi / (1 - r2[i]*xi*xi)
				}
				dst[i] = sw[i] * (y[i] - t)
			}
		}
		if ev.HasJacobian() {
			f.Jacobian = func(dst *mat.Dense, p []float64) {
				if !have || !floats.Equal(p, lastP) {
					eval(p)
				}
				ev.Jacobian(dst, p)
				raw := dst.RawMatrix()
				for i := range n {
					// dT/dα = −d·a x (1 + R²x²)/(1 − R²x²)²
					// (optics.SlabTransmittanceGrad).
					xi := x[i]
					q := r2[i] * xi * xi
					den := 1 - q
					g := math.NaN()
					if refl[i]*xi < 1 {
						g = -dcm * a[i] * xi * (1 + q) / (den * den)
					}
					row := raw.Data[i*raw.Stride : i*raw.Stride+k]
					for j := range row {
						row[j] *= -sw[i] * g
					}
				}
			}
		}
	}
	pb.e, pb.y, pb.sw, pb.refl, pb.buf = e, y, sw, refl, buf
	return problem{f: f, set: &fit.Settings{AbsoluteSigma: d.SigmaKnown}, buf: pb}
}

// FitResiduals returns, for every point of d, the normalised residual of
// the fit of m at p in d's space (what the fit minimised the squares of):
// (T_i − T_slab(α(E_i; p)))/σ_T in transmittance space, (α_i − α(E_i;
// p))/σ_i in α space; NaN at the points not marked in.
func FitResiduals(d Data, m model.Model, p []float64, in []bool) []float64 {
	out := make([]float64, len(d.E))
	for i := range out {
		out[i] = math.NaN()
	}
	pr := newProblem(d, m, in)
	defer pr.release()
	if pr.f.M == 0 {
		return out
	}
	r := make([]float64, pr.f.M)
	pr.f.Residuals(r, p)
	k := 0
	for i, ok := range in {
		if ok {
			out[i] = r[k]
			k++
		}
	}
	return out
}
