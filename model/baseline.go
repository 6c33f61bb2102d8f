package model

import (
	"errors"
	"fmt"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// ErrBaseline is returned by WithBaseline for an unknown kind or a model it
// cannot wrap.
var ErrBaseline = errors.New("model: bad baseline")

// Baselined is a model of this package plus a sub-gap baseline,
//
//	α(E) = α_m(E) + b₀                     ("const")
//	α(E) = α_m(E) + b₀ + b₁·(E − E_g)      ("linear")
//
// with b₀ in cm⁻¹ and b₁ in cm⁻¹/eV, both unbounded (a reference mismatch
// can make the apparent background negative). The reference energy of the
// slope is the model's own gap E_g, so b₀ is the background at the gap.
// A weakly absorbing sample, scattering or a substrate mismatch add such a
// background below the gap, and ignoring it biases a Tauc or edge fit
// (Makuła, Pacia & Macyk, J. Phys. Chem. Lett. 9, 6814, 2018). The
// baseline is added at every energy (a NaN energy stays NaN).
//
// The parameters are those of the wrapped model followed by "b0"
// (and "b1"); Name is the model's name + "+const" or "+linear".
type Baselined struct {
	m      baseModel
	linear bool
	n, ieg int // parameters of m; index of eg
}

// TailedBaselined is a Baselined whose model has a tail (Tailed).
type TailedBaselined struct{ Baselined }

type baseModel interface {
	Model
	Jacobianer
	rawJacobianer
	Tauc
}

// WithBaseline returns m with a baseline of the given kind, "const" or
// "linear" (Baselines). m must be a model of this package (from New or
// Lookup, not already with a baseline); otherwise, or for an unknown kind,
// the error wraps ErrBaseline.
func WithBaseline(m Model, kind string) (Model, error) {
	var linear bool
	switch strings.ToLower(strings.TrimSpace(kind)) {
	case "const":
	case "linear":
		linear = true
	default:
		return nil, fmt.Errorf("%w: kind %q (known: %s)", ErrBaseline, kind, strings.Join(Baselines(), ", "))
	}
	bm, ok := m.(baseModel)
	if !ok {
		return nil, fmt.Errorf("%w: cannot wrap model %q", ErrBaseline, m.Name())
	}
	switch m.(type) {
	case Baselined, TailedBaselined:
		return nil, fmt.Errorf("%w: model %q already has a baseline", ErrBaseline, m.Name())
	}
	b := Baselined{m: bm, linear: linear, n: len(m.Params()), ieg: ParamIndex(m, "eg")}
	if b.ieg < 0 {
		return nil, fmt.Errorf("%w: model %q has no gap parameter", ErrBaseline, m.Name())
	}
	if _, ok := m.(Tailed); ok {
		return TailedBaselined{b}, nil
	}
	return b, nil
}

// Name returns the wrapped name + "+const" or "+linear".
func (b Baselined) Name() string {
	if b.linear {
		return b.m.Name() + "+linear"
	}
	return b.m.Name() + "+const"
}

// Params returns the wrapped model's parameters, then b0 (and b1).
func (b Baselined) Params() []Param {
	ps := append(b.m.Params(), Param{Name: "b0", Symbol: "b₀", Unit: "cm⁻¹", Min: negInf, Max: posInf})
	if b.linear {
		ps = append(ps, Param{Name: "b1", Symbol: "b₁", Unit: "cm⁻¹/eV", Min: negInf, Max: posInf})
	}
	return ps
}

func (b Baselined) np() int {
	if b.linear {
		return b.n + 2
	}
	return b.n + 1
}

// Eval fills dst with α_m + baseline.
func (b Baselined) Eval(dst, e, p []float64) {
	checkLen(dst, e, p, b.np())
	b.m.Eval(dst, e, p[:b.n])
	b0 := p[b.n]
	if !b.linear {
		for i := range dst {
			dst[i] += b0
		}
		return
	}
	b1, eg := p[b.n+1], p[b.ieg]
	for i, ei := range e {
		dst[i] += b0 + b1*(ei-eg)
	}
}

// Jacobian fills dst with the wrapped Jacobian and the baseline columns
// (∂/∂b₀ = 1, ∂/∂b₁ = E − E_g, and −b₁ added to ∂/∂E_g).
func (b Baselined) Jacobian(dst *mat.Dense, e, p []float64) {
	checkJac(dst, e, p, b.np())
	raw := dst.RawMatrix()
	b.jacobianRaw(raw.Data, raw.Stride, e, p)
}

func (b Baselined) jacobianRaw(data []float64, stride int, e, p []float64) {
	b.m.jacobianRaw(data, stride, e, p[:b.n])
	for i, ei := range e {
		row := data[i*stride : i*stride+b.np()]
		row[b.n] = 1
		if b.linear {
			row[b.n+1] = ei - p[b.ieg]
			row[b.ieg] -= p[b.n+1]
		}
	}
}

// Start starts the wrapped model's extra parameters (Starter) and sets
// b0 = b1 = 0.
func (b Baselined) Start(p []float64) {
	if len(p) != b.np() {
		panic("model: wrong number of parameters")
	}
	if s, ok := b.m.(Starter); ok {
		s.Start(p[:b.n])
	}
	for i := b.n; i < len(p); i++ {
		p[i] = 0
	}
}

// TaucExponent returns the wrapped model's exponent.
func (b Baselined) TaucExponent() float64 { return b.m.TaucExponent() }

// TailWidth returns the wrapped model's tail width.
func (b TailedBaselined) TailWidth(p []float64) float64 {
	if len(p) != b.np() {
		panic("model: wrong number of parameters")
	}
	return b.m.(Tailed).TailWidth(p[:b.n])
}
