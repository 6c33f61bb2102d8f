package optics

import (
	"errors"
	"fmt"
	"math"
)

// Kind says what the ordinate of a spectrum is.
type Kind int

const (
	// Transmittance is T as a fraction (not percent).
	Transmittance Kind = iota + 1
	// Absorbance is the decadic absorbance A = −log₁₀ T.
	Absorbance
	// AlphaInput is the absorption coefficient α in cm⁻¹, already
	// converted by the instrument software or another tool.
	AlphaInput
)

func (k Kind) String() string {
	switch k {
	case Transmittance:
		return "transmittance"
	case Absorbance:
		return "absorbance"
	case AlphaInput:
		return "alpha"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Reason says why a point of a converted spectrum is masked.
type Reason uint8

const (
	// Usable marks a point that may enter a fit.
	Usable Reason = iota
	// NonFinite: the ordinate (or the measured R there) is NaN or ±Inf, or
	// the computed α or σ_α is not finite or σ_α is not positive (overflow
	// or underflow with extreme inputs).
	NonFinite
	// NonPositive: T ≤ 0, so α = −ln(x)/d is undefined; for AlphaInput,
	// α ≤ 0, so ln α and a relative weight are undefined.
	NonPositive
	// BelowFloor: the absorbance exceeds Settings.MaxAbsorbance, below the
	// instrument's photometric floor (stray light, detector offset).
	BelowFloor
	// BelowNoise: T < 5σ_T, so ln T cannot be linearised (the relative
	// error σ_T/T exceeds 0.2) and σ_α from first-order propagation is
	// not meaningful.
	BelowNoise
	// AboveMaximum: T exceeds the slab maximum (1 − R)/(1 + R) by more than
	// 5σ_T, which noise does not explain (a baseline or reference error, or
	// a wrong R); α would be negative and insensitive to T.
	AboveMaximum

	numReasons = iota
)

func (r Reason) String() string {
	switch r {
	case Usable:
		return "usable"
	case NonFinite:
		return "non-finite value"
	case NonPositive:
		return "T ≤ 0 (α undefined)"
	case BelowFloor:
		return "absorbance above the instrument floor"
	case BelowNoise:
		return "T below 5 σ_T (ln T not linearisable)"
	case AboveMaximum:
		return "T above the slab maximum by more than 5 σ_T"
	}
	return fmt.Sprintf("Reason(%d)", int(r))
}

// Text is String in the words of the ordinate kind k: for AlphaInput the
// NonPositive reason is α ≤ 0, not T ≤ 0.
func (r Reason) Text(k Kind) string {
	if k == AlphaInput && r == NonPositive {
		return "α ≤ 0 (no logarithm or relative weight)"
	}
	return r.String()
}

// Reasons lists every Reason, Usable first, for printing counts in a fixed
// order.
func Reasons() []Reason {
	r := make([]Reason, numReasons)
	for i := range r {
		r[i] = Reason(i)
	}
	return r
}

// Defaults and fixed rules of ToAlpha.
const (
	// DefaultMaxAbsorbance is the absorbance above which points are masked
	// when Settings.MaxAbsorbance is 0. Common practice: absorbance above
	// about 3–4 is unreliable on a typical double-beam instrument.
	DefaultMaxAbsorbance = 3.5
	// NoiseMultiple is k in the rule "mask T < k·σ_T".
	NoiseMultiple = 5
	// MinRelNoise floors the relative noise of AlphaInput spectra (1 %):
	// a smooth α exported by software carries at least this much error
	// from its own conversion, and a zero estimate would give infinite
	// weights.
	MinRelNoise = 0.01
	// MinSigmaT is the smallest transmittance noise ToAlpha accepts from
	// its own estimate. Photometric noise of real instruments is of order
	// 1e-5 to 1e-3 in T (common practice); an estimate below 1e-7 means
	// the data are noiseless (synthetic, or smoothed by the instrument
	// software), and ToAlpha returns ErrNoise rather than near-infinite
	// weights.
	MinSigmaT = 1e-7
)

// Errors returned by ToAlpha. Each is wrapped with the detail.
var (
	ErrNoData      = errors.New("optics: no data points")
	ErrLength      = errors.New("optics: slice length mismatch")
	ErrEnergy      = errors.New("optics: energies must be finite, positive and strictly ascending")
	ErrThickness   = errors.New("optics: thickness must be positive and finite")
	ErrKind        = errors.New("optics: unknown ordinate kind")
	ErrReflectance = errors.New("optics: bad reflectance")
	ErrSettings    = errors.New("optics: bad settings")
	ErrNoise       = errors.New("optics: cannot estimate the transmittance noise")
)

// Settings configures ToAlpha. A nil *Settings means all defaults.
// At most one of R, RConst and Index may be set: they are three ways to
// give the single-face reflectance used in the slab inversion.
type Settings struct {
	// R is a measured single-face reflectance per point (fraction in
	// [0, 1)), nil if none. A measured sample reflectance also contains the
	// return from the back face; it equals the single-face value only
	// where αd ≫ 1, so in the transparent region this over-corrects.
	R []float64
	// RConst is a constant single-face reflectance in [0, 1). Zero (the
	// default) with R and Index unset means no reflection correction:
	// α = −ln T/d.
	RConst float64
	// Index, if not nil, gives R(E) = FresnelR(n(E), 0) at each energy.
	Index Index
	// SigmaR is the standard uncertainty of R (absolute, fraction). It
	// adds |∂α/∂R|·σ_R in quadrature to σ_α; it dominates where αd ≪ 1.
	// Zero (the default) means none.
	SigmaR float64
	// SigmaT is the standard deviation of the transmittance noise
	// (fraction). Zero (the default) estimates it from the spectrum with
	// NoiseSigma on T.
	SigmaT float64
	// MaxAbsorbance masks points with A = −log₁₀ T above it. Zero means
	// DefaultMaxAbsorbance (3.5).
	MaxAbsorbance float64
}

// Result is a spectrum converted to α.
type Result struct {
	// Kind is the ordinate kind the spectrum was converted from.
	Kind Kind
	// Alpha is α in cm⁻¹ at each energy; NaN where it is undefined
	// (Reason NonFinite or NonPositive, or an absorbance so large that
	// 10^(−A) underflows). Masked points with a defined α (BelowFloor,
	// BelowNoise, AboveMaximum) keep it, so reports can draw them.
	Alpha []float64
	// Sigma is the standard deviation of Alpha in cm⁻¹ by first-order
	// propagation, σ_α = √[(∂α/∂T·σ_T)² + (∂α/∂R·σ_R)²] (T and R
	// independent); NaN where α is undefined.
	// When RelativeWeights is true it is only relative: σ_α = RelNoise·α.
	Sigma []float64
	// Mask is true for usable points.
	Mask []bool
	// Reason says why each point is masked (Usable where Mask is true).
	Reason []Reason
	// Counts holds the number of points for every Reason, Usable included.
	Counts map[Reason]int
	// T is the transmittance used (converted from absorbance if needed);
	// nil for AlphaInput.
	T []float64
	// R is the single-face reflectance used at each point (all zeros
	// without correction; NaN where a measured R is not finite); nil for
	// AlphaInput.
	R []float64
	// SigmaT is the transmittance noise used (fraction); 0 for AlphaInput.
	SigmaT float64
	// SigmaTEstimated is true when SigmaT was estimated with NoiseSigma.
	SigmaTEstimated bool
	// MaxAbsorbance is the absorbance floor used (NaN for AlphaInput).
	MaxAbsorbance float64
	// RelativeWeights is true when Sigma is relative only (AlphaInput): a
	// fit must scale its covariance by the reduced χ².
	RelativeWeights bool
	// RelNoise is the relative noise used for AlphaInput: NoiseSigma of
	// ln α, floored at MinRelNoise. 0 for the other kinds.
	RelNoise float64
}

// ToAlpha converts a spectrum to the absorption coefficient.
//
// e are photon energies (eV, finite, positive, strictly ascending), y the
// ordinates of the given kind, d the sample thickness in cm (ignored for
// AlphaInput). Transmittance is inverted with the thick-slab formula of
// SlabAlpha (Pankove 1971) with the reflectance from s; absorbance is
// first converted to T = 10^(−A). The noise σ_T is s.SigmaT or, if zero,
// NoiseSigma(T), and is propagated to σ_α by SlabAlphaGrad.
//
// Points are masked, not rejected; the first rule that applies gives the
// Reason: NonFinite, NonPositive, BelowFloor (A > MaxAbsorbance), BelowNoise
// (T < 5σ_T), AboveMaximum (T > (1 − R)/(1 + R) + 5σ_T). Noisy T slightly
// above the slab maximum (within 5σ_T) is kept as data with a negative α.
//
// For AlphaInput, y is copied, σ_α = RelNoise·α with RelNoise from
// NoiseSigma of ln α floored at 1 %, RelativeWeights is set, and points
// with α ≤ 0 are masked as NonPositive.
//
// Errors (all wrapped sentinels, never panics): ErrNoData, ErrLength,
// ErrEnergy, ErrThickness (d not positive and finite), ErrKind,
// ErrReflectance (more than one reflectance source, R outside [0, 1)),
// ErrSettings (negative or non-finite SigmaT, SigmaR, MaxAbsorbance) and
// ErrNoise (σ_T could not be estimated: fewer than 5 points, or an
// estimate below MinSigmaT because T is noiseless or quantised more coarsely
// than its noise; set SigmaT). Smoothing by the instrument software
// correlates the noise and makes the estimate too small: give SigmaT then.
func ToAlpha(e, y []float64, kind Kind, d float64, s *Settings) (*Result, error) {
	if s == nil {
		s = &Settings{}
	}
	n := len(e)
	if n == 0 {
		return nil, ErrNoData
	}
	if len(y) != n {
		return nil, fmt.Errorf("%w: %d energies, %d ordinates", ErrLength, n, len(y))
	}
	for i, v := range e {
		if !(v > 0) || math.IsInf(v, 1) || (i > 0 && !(v > e[i-1])) {
			return nil, fmt.Errorf("%w (point %d: %v)", ErrEnergy, i, v)
		}
	}
	if err := s.validate(n); err != nil {
		return nil, err
	}
	switch kind {
	case AlphaInput:
		res := alphaInput(y)
		res.Kind = AlphaInput
		return res, nil
	case Transmittance, Absorbance:
	default:
		return nil, fmt.Errorf("%w: %v", ErrKind, kind)
	}
	if !(d > 0) || math.IsInf(d, 1) {
		return nil, fmt.Errorf("%w: d = %v cm", ErrThickness, d)
	}

	res := &Result{
		Kind:          kind,
		Alpha:         make([]float64, n),
		Sigma:         make([]float64, n),
		Mask:          make([]bool, n),
		Reason:        make([]Reason, n),
		T:             make([]float64, n),
		R:             make([]float64, n),
		MaxAbsorbance: s.MaxAbsorbance,
	}
	if res.MaxAbsorbance == 0 {
		res.MaxAbsorbance = DefaultMaxAbsorbance
	}
	absorb := make([]float64, n) // decadic absorbance, for the floor rule
	for i, v := range y {
		if kind == Absorbance {
			absorb[i] = v
			res.T[i] = math.Pow(10, -v)
		} else {
			res.T[i] = v
			absorb[i] = -math.Log10(v) // NaN for v < 0: rule NonPositive first
		}
	}
	if err := s.reflectance(e, res.R); err != nil {
		return nil, err
	}

	res.SigmaT = s.SigmaT
	if res.SigmaT == 0 {
		st := NoiseSigma(res.T)
		if !(st >= MinSigmaT) {
			return nil, fmt.Errorf("%w: NoiseSigma(T) = %v from %d points; set SigmaT", ErrNoise, st, n)
		}
		res.SigmaT, res.SigmaTEstimated = st, true
	}

	for i, t := range res.T {
		r := res.R[i]
		reason := Usable
		switch {
		case math.IsNaN(y[i]) || math.IsInf(y[i], 0) || math.IsNaN(r):
			reason = NonFinite
		case t <= 0 && kind == Transmittance:
			reason = NonPositive
		case absorb[i] > res.MaxAbsorbance:
			reason = BelowFloor
		case t < NoiseMultiple*res.SigmaT:
			reason = BelowNoise
		case t > (1-r)/(1+r)+NoiseMultiple*res.SigmaT:
			reason = AboveMaximum
		}
		a, dT, dR, ok := SlabAlphaGrad(t, r, d)
		if ok {
			res.Alpha[i] = a
			res.Sigma[i] = math.Hypot(dT*res.SigmaT, dR*s.SigmaR)
		} else {
			res.Alpha[i], res.Sigma[i] = math.NaN(), math.NaN()
		}
		if reason == Usable && !finiteSigma(res.Alpha[i], res.Sigma[i]) {
			reason = NonFinite
		}
		res.Reason[i] = reason
		res.Mask[i] = reason == Usable
	}
	res.count()
	return res, nil
}

// alphaInput fills a Result for an α spectrum.
func alphaInput(y []float64) *Result {
	n := len(y)
	res := &Result{
		Alpha:           append([]float64(nil), y...),
		Sigma:           make([]float64, n),
		Mask:            make([]bool, n),
		Reason:          make([]Reason, n),
		MaxAbsorbance:   math.NaN(),
		RelativeWeights: true,
	}
	lnA := make([]float64, n)
	for i, v := range y {
		lnA[i] = math.Log(v) // NaN or −Inf for v ≤ 0: skipped by NoiseSigma
	}
	rel := NoiseSigma(lnA)
	if !(rel >= MinRelNoise) { // also NaN: too few points
		rel = MinRelNoise
	}
	res.RelNoise = rel
	for i, v := range y {
		switch {
		case math.IsNaN(v) || math.IsInf(v, 0):
			res.Reason[i] = NonFinite
			res.Sigma[i] = math.NaN()
		case v <= 0:
			res.Reason[i] = NonPositive
			res.Sigma[i] = math.NaN()
		default:
			res.Sigma[i] = rel * v
			if finiteSigma(v, res.Sigma[i]) {
				res.Mask[i] = true
			} else {
				res.Reason[i] = NonFinite
			}
		}
	}
	res.count()
	return res
}

// finiteSigma reports whether a point has a finite α and a finite,
// positive σ_α, as a weight needs.
func finiteSigma(a, sigma float64) bool {
	return !math.IsNaN(a) && !math.IsInf(a, 0) && sigma > 0 && !math.IsInf(sigma, 1)
}

func (r *Result) count() {
	r.Counts = make(map[Reason]int, numReasons)
	for _, q := range Reasons() {
		r.Counts[q] = 0
	}
	for _, q := range r.Reason {
		r.Counts[q]++
	}
}

// validate checks the settings that do not depend on the kind.
func (s *Settings) validate(n int) error {
	set := 0
	if s.R != nil {
		set++
		if len(s.R) != n {
			return fmt.Errorf("%w: %d energies, %d reflectances", ErrLength, n, len(s.R))
		}
	}
	if s.RConst != 0 {
		set++
	}
	if s.Index != nil {
		set++
	}
	if set > 1 {
		return fmt.Errorf("%w: give at most one of R, RConst and Index", ErrReflectance)
	}
	if !(s.RConst >= 0 && s.RConst < 1) {
		return fmt.Errorf("%w: RConst = %v, want [0, 1)", ErrReflectance, s.RConst)
	}
	for _, c := range []struct {
		name string
		v    float64
	}{{"SigmaT", s.SigmaT}, {"SigmaR", s.SigmaR}, {"MaxAbsorbance", s.MaxAbsorbance}} {
		if !(c.v >= 0) || math.IsInf(c.v, 1) {
			return fmt.Errorf("%w: %s = %v, want finite and ≥ 0", ErrSettings, c.name, c.v)
		}
	}
	return nil
}

// reflectance fills r with the single-face reflectance at each energy.
// A non-finite measured R is left as NaN (the point is masked NonFinite);
// a finite one outside [0, 1) is an error.
func (s *Settings) reflectance(e, r []float64) error {
	for i := range r {
		var v float64
		switch {
		case s.R != nil:
			v = s.R[i]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				r[i] = math.NaN()
				continue
			}
		case s.Index != nil:
			nv := s.Index.N(e[i])
			if !(nv > 0) || math.IsInf(nv, 1) {
				return fmt.Errorf("%w: refractive index %v at %v eV", ErrReflectance, nv, e[i])
			}
			v = FresnelR(nv, 0)
		default:
			v = s.RConst
		}
		if !(v >= 0 && v < 1) {
			return fmt.Errorf("%w: R = %v at %v eV, want [0, 1)", ErrReflectance, v, e[i])
		}
		r[i] = v
	}
	return nil
}
