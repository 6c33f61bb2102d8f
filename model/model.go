// Package model holds the physics of the absorption edge: small value types
// whose methods are pure functions of photon energy and parameters.
//
// Units: photon energy E in eV, absorption coefficient α in cm⁻¹. Units are
// converted once, at the edges of the program (io/specio, cmd); nothing in
// this package reads files, logs, keeps global state or draws random numbers,
// and every model is safe for concurrent use.
package model

import (
	"gonum.org/v1/gonum/mat"
)

// Param describes one entry of the parameter vector p that an optimizer sees.
type Param struct {
	// Name is the short machine name used in JSON output, e.g. "eg".
	Name string
	// Symbol is the printed name, e.g. "E_g".
	Symbol string
	// Unit is the unit of the parameter, e.g. "eV" or "cm⁻¹·eV^½".
	Unit string
	// Min and Max bound the physically meaningful range. Use -Inf and +Inf
	// for an unbounded side.
	Min, Max float64
}

// Model is an absorption-edge model α(E; p).
//
// Eval fills dst[i] with α(e[i]; p). It must not modify e or p and panics
// (prefixed "model:") only when len(dst) != len(e) or len(p) is wrong, which
// are programmer errors. Its doc comment gives the formula, the source, and
// what is returned below the gap; it never returns NaN for finite inputs
// within the parameter bounds.
type Model interface {
	// Name is the model's identifier as used on the command line and in
	// JSON, e.g. "direct+urbach".
	Name() string
	// Params describes the parameter vector, in order.
	Params() []Param
	// Eval fills dst with α(e; p) in cm⁻¹.
	Eval(dst, e, p []float64)
}

// Jacobianer is implemented by models with an analytic derivative.
// Jacobian fills dst (len(e) × len(p)) with ∂α(e[i]; p)/∂p[j].
type Jacobianer interface {
	Jacobian(dst *mat.Dense, e, p []float64)
}

// ParamIndex returns the index of the parameter called name in m.Params(),
// or -1 when there is none.
func ParamIndex(m Model, name string) int {
	for i, p := range m.Params() {
		if p.Name == name {
			return i
		}
	}
	return -1
}

// checkLen panics with a prefixed message on mismatched slice lengths.
func checkLen(dst, e, p []float64, np int) {
	if len(dst) != len(e) {
		panic("model: len(dst) != len(e)")
	}
	if len(p) != np {
		panic("model: wrong number of parameters")
	}
}
