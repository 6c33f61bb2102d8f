// Package model holds the physics of the absorption edge: small value types
// whose methods are pure functions of photon energy and parameters.
//
// Units: photon energy E in eV, absorption coefficient α in cm⁻¹. Units are
// converted once, at the edges of the program (io/specio, cmd); nothing in
// this package reads files, logs, draws random numbers or keeps mutable
// global state, and every model is safe for concurrent use. The only
// package-level data are read-only tables of the broadened edges' universal
// functions, each built once, at its first use, under a sync.Once.
//
// The models: Direct and DirectUrbach (the parabolic direct edge, bare and
// with an exponential tail), and the family of Edge / TailedEdge values
// built by New from a band shape (direct, direct-forbidden, indirect,
// exciton) and a tail (none, urbach, gauss, theta, joined); WithBaseline
// adds a constant or linear sub-gap background to any of them. Every
// model has an analytic Jacobian (Jacobianer) and a Tauc exponent (Tauc);
// models with a tail report its decay length (Tailed); those with extra
// parameters can start them (Starter). Lookup and LookupConfig resolve the
// names used on the command line ("indirect+gauss+linear").
//
// Speed: no model integrates numerically while it is evaluated. Closed
// forms are used where they exist (exponential tail with the indirect
// band) or tabulated once from them (exponential tail with the direct
// bands); the Gaussian and free-θ kernels and the Elliott continuum are
// tabulated once by quadrature (see powtab.go, exctab.go and octtab.go for
// the representation, tolerances and measured accuracy, and
// BenchmarkTableBuild for the cost of the first use).
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

// ValueJacobianer is implemented by models that give α and its Jacobian
// from one pass over the energies, for a solver that wants the Jacobian
// at most of the points it evaluates (a Levenberg–Marquardt step asks
// for J exactly where the last residuals were accepted). EvalJacobian fills
// dst as Eval would, to within a few ulp, and jac as Jacobian does.
//
// Every model of this package whose amplitude is a plain factor,
// α = C·s(E; other parameters), implements it as the Jacobian plus
// α_i = C·∂α_i/∂C: the values cost one multiplication per point.
type ValueJacobianer interface {
	EvalJacobian(dst []float64, jac *mat.Dense, e, p []float64)
}

// valuesFromAmp sets dst[i] = c·data[i*stride+j], α from the column of an
// amplitude that multiplies the whole model.
func valuesFromAmp(dst, data []float64, stride, j int, c float64) {
	for i := range dst {
		dst[i] = c * data[i*stride+j]
	}
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

// Tailed is implemented by models with a sub-gap tail. TailWidth returns
// the energy scale (eV) over which the tail decays by 1/e below the gap,
// for the parameters p; the automatic window rule extends the fit window a
// few of these below E_g. For an exponential (Urbach) tail it is E_U at
// any depth. For a kernel exp(−|u/γ|^θ), whose local 1/e length
// γ^θ/(θ|u|^{θ−1}) shrinks with depth when θ > 1, it is that length one
// width below the gap (u = −γ), γ/θ: γ/2 for the Gaussian. The model's
// doc comment states its choice.
type Tailed interface {
	TailWidth(p []float64) float64
}

// Starter is implemented by models that may have parameters besides the
// gap, the amplitude and the Urbach energy ("eg", "amp", "eu"), which the
// caller estimates from the data. Start sets those other entries of p to
// typical starting values (stated in the model's doc comment) and leaves
// eg, amp and eu untouched (a model without such parameters leaves p
// unchanged). It panics if len(p) is wrong.
type Starter interface {
	Start(p []float64)
}

// Tauc is implemented by models whose band shape has a Tauc exponent r
// (Tauc, Grigorovici & Vancu, phys. stat. sol. 15, 627, 1966): (αE)^{1/r}
// is linear in E above the gap for a direct edge. r is 1/2 for direct
// allowed, 3/2 for direct forbidden and 2 for indirect allowed transitions.
type Tauc interface {
	TaucExponent() float64
}

// rawJacobianer is implemented by every model of this package: it writes
// the Jacobian into the leading len(p) columns of a row-major array (row i
// at data[i*stride:]), so that a wrapper (WithBaseline) can fill its own
// columns of the same matrix without a sub-matrix view.
type rawJacobianer interface {
	jacobianRaw(data []float64, stride int, e, p []float64)
}
