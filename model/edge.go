package model

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Edge is one member of the model family "band shape + tail": an
// unbroadened band shape b(ε), ε = E − E_g, with a prefactor P(E),
// combined with a sub-gap tail. New builds it from the names (Bands,
// Tails); Name returns "band+tail" ("band" alone for no tail). All
// energies are in eV and α in cm⁻¹.
//
// Band shapes (parameter "amp" and its unit):
//
//	direct            α₀ = (C/E)·ε^{1/2}Θ(ε)    C in cm⁻¹·eV^{1/2} (Tauc r = 1/2)
//	direct-forbidden  α₀ = (C/E)·ε^{3/2}Θ(ε)    C in cm⁻¹·eV^{−1/2} (r = 3/2)
//	indirect          α₀ = A·[n·(ε+E_ph)²Θ(ε+E_ph) + (n+1)·(ε−E_ph)²Θ(ε−E_ph)]
//	                  A in cm⁻¹·eV⁻² (r = 2), n = 1/(exp(E_ph/k_BT) − 1)
//	exciton           α₀ = (C/E)·[Σ_n (4πR_x^{3/2}/n³) δ(ε + R_x/n²)
//	                          + Θ(ε)·2π√R_x / (1 − exp(−2π√(R_x/ε)))]
//	                  C in cm⁻¹·eV^{1/2} (r = 1/2)
//
// Direct allowed and forbidden edges are the parabolic-band joint densities
// of states with a constant (allowed) or k-linear (forbidden) matrix element
// (Bardeen, Blatt & Hall 1956, from memory; Tauc, Grigorovici & Vancu
// 1966). The
// indirect edge is that of Macfarlane & Roberts (Phys. Rev. 97, 1714, 1955)
// with one phonon of energy E_ph absorbed (weight n, the Bose–Einstein
// occupation) or emitted (weight n + 1) at the sample temperature T, a
// fixed setting (Config.Temperature), with k_B = 8.617333262e-5 eV/K
// (exact in the 2019 SI). As written there it has no 1/E prefactor, so
// √α, not √(αE), is exactly linear above each threshold. The excitonic edge
// is Elliott's (Phys. Rev. 108, 1384, 1957) for a hydrogenic exciton of
// binding energy R_x; the line weights 4πR_x^{3/2}/n³ are those of
// hydrogenic s-states in the continuum's normalisation (derived at
// runExciton in exciton.go: spread over their spacing they join the
// continuum's step 2π√R_x at the gap).
//
// Tails:
//
//	none    α = α₀
//	urbach  α = P(E)·∫ G(E − E′) b(E′ − E_g) dE′, G(u) = exp(−|u|/E_U)/(2E_U)
//	gauss   as urbach with G(u) = exp(−(u/γ)²)/(γ√π)
//	theta   as urbach with G(u) = exp(−|u/γ|^θ)/(2γΓ(1 + 1/θ)), θ ∈ [0.8, 3]
//	joined  α = α₀ above a joining energy E_j, α₀(E_j)·exp((E − E_j)/E_U)
//	        below it, with value and slope continuous (see below)
//
// The convolution tails are those of Katahara & Hillhouse (J. Appl. Phys.
// 116, 173504, 2014): the kernel broadens the band shape only, not the
// prefactor. θ = 1 gives an Urbach tail α ∝ exp((E − E_g)/E_U)/E far below
// the gap (Urbach, Phys. Rev. 92, 1324, 1953); θ = 2 a Gaussian one. Their
// closed forms, tables and accuracy are described at UrbachEdgeF, lapF32,
// lapF2 and in powtab.go and exctab.go.
//
// Joining condition (tail "joined"): the exponential must have the band's
// value and slope at E_j, i.e. d ln α₀/dE = 1/E_U there. For the power laws
// with the 1/E prefactor, r/ε − 1/(E_g + ε) = 1/E_U, whose positive root is
//
//	ε_j = 2r·E_U·E_g / [(E_g + (1−r)E_U) + √((E_g + (1−r)E_U)² + 4r·E_U·E_g)]
//
// (≈ r·E_U for E_U ≪ E_g). For the indirect edge the sum of the two phonon
// branches is not log-concave at ε = E_ph, so a single slope match is not
// unique; each branch x² (x = ε ± E_ph) is joined on its own at x_j = 2E_U,
// where d ln x²/dx = 1/E_U, and the branches are added. The excitonic edge
// has no joined form: its lines are delta functions that only a
// convolution can broaden.
//
// Parameters, in order: "eg" (E_g, eV, in (0, 20)), "amp" (as above,
// ≥ 0), the tail width "eu" (E_U, eV, urbach and joined) or "gw" (γ, eV,
// gauss and theta), both in [1e-4, 1]; "theta" (θ, theta only); "eph"
// (E_ph, eV, in [0.002, 0.2], indirect) or "rx" (R_x, eV, in [1e-4, 0.5],
// exciton).
//
// Domain: E ≤ 0 (no photon) gives 0; for finite E and parameters within
// the bounds α is finite and ≥ 0 (checked by the tests over wide random
// ranges); a NaN energy gives NaN. Without a tail α is 0 below the lowest
// threshold (E_g, or E_g − E_ph for indirect) and the Jacobian there is a
// row of zeros (one-sided derivative from below).
type Edge struct {
	band bandKind
	tail tailKind
	kT   float64 // k_B·T in eV (indirect)
}

type bandKind int

const (
	bandDirect bandKind = iota
	bandForbidden
	bandIndirect
	bandExciton
)

type tailKind int

const (
	tailNone tailKind = iota
	tailUrbach
	tailGauss
	tailTheta
	tailJoined
)

var bandNames = [...]string{"direct", "direct-forbidden", "indirect", "exciton"}
var tailNames = [...]string{"none", "urbach", "gauss", "theta", "joined"}

// Boltzmann is k_B in eV/K (exact: k_B = 1.380649e-23 J/K and e are exact
// in the 2019 SI; CODATA 2018).
const Boltzmann = 1.380649e-23 / ElementaryCharge

// Parameter bounds of the family (common practice; see Edge):
//   - gw, the kernel width γ: as eu, [1e-4, 1] eV;
//   - theta: [0.8, 3], the range tabulated (Katahara & Hillhouse report
//     fitted θ between about 1 and 2 for thin-film absorbers, from memory);
//   - eph: [2, 200] meV, from acoustic phonons (a few meV) to the optical
//     phonons of light elements (diamond about 0.14–0.165 eV, from
//     memory; Si TO 58 meV);
//   - rx: [0.1, 500] meV (GaAs 4.2 meV, ZnO 60 meV, Cu₂O about 98 meV,
//     from memory).
const (
	thetaStart = 1.5
	ephMin     = 0.002
	ephMax     = 0.2
	ephStart   = 0.03
	rxMin      = 1e-4
	rxMax      = 0.5
	rxStart    = 0.005
	gwStart    = 0.02
)

func (m Edge) ampParam() Param {
	p := ampParam()
	switch m.band {
	case bandForbidden:
		p.Unit = "cm⁻¹·eV^-½"
	case bandIndirect:
		p.Symbol, p.Unit = "A", "cm⁻¹·eV⁻²"
	}
	return p
}

func gwParam() Param {
	return Param{Name: "gw", Symbol: "γ", Unit: "eV", Min: euMin, Max: euMax}
}

func thetaParam() Param {
	return Param{Name: "theta", Symbol: "θ", Unit: "", Min: thetaMin, Max: thetaMax}
}

func ephParam() Param {
	return Param{Name: "eph", Symbol: "E_ph", Unit: "eV", Min: ephMin, Max: ephMax}
}

func rxParam() Param {
	return Param{Name: "rx", Symbol: "R_x", Unit: "eV", Min: rxMin, Max: rxMax}
}

// Name returns "band+tail", or "band" without a tail.
func (m Edge) Name() string {
	if m.tail == tailNone {
		return bandNames[m.band]
	}
	return bandNames[m.band] + "+" + tailNames[m.tail]
}

// Params returns [eg, amp, (eu|gw), (theta), (eph|rx)].
func (m Edge) Params() []Param {
	ps := []Param{egParam(), m.ampParam()}
	switch m.tail {
	case tailUrbach, tailJoined:
		ps = append(ps, euParam())
	case tailGauss:
		ps = append(ps, gwParam())
	case tailTheta:
		ps = append(ps, gwParam(), thetaParam())
	}
	switch m.band {
	case bandIndirect:
		ps = append(ps, ephParam())
	case bandExciton:
		ps = append(ps, rxParam())
	}
	return ps
}

// nParams returns len(Params()) without allocating.
func (m Edge) nParams() int {
	n := 2
	switch m.tail {
	case tailUrbach, tailJoined, tailGauss:
		n++
	case tailTheta:
		n += 2
	}
	if m.band == bandIndirect || m.band == bandExciton {
		n++
	}
	return n
}

// Eval fills dst[i] with α(e[i]; p).
func (m Edge) Eval(dst, e, p []float64) {
	checkLen(dst, e, p, m.nParams())
	m.run(dst, nil, 0, e, p)
}

// Jacobian fills row i of dst with ∂α(e[i]; p)/∂p in the order of Params.
func (m Edge) Jacobian(dst *mat.Dense, e, p []float64) {
	checkJac(dst, e, p, m.nParams())
	raw := dst.RawMatrix()
	m.run(nil, raw.Data, raw.Stride, e, p)
}

// EvalJacobian fills dst with α and jac with the Jacobian in one pass
// (model.ValueJacobianer): every band of Edge is proportional to its
// amplitude, α = C·∂α/∂C.
func (m Edge) EvalJacobian(dst []float64, jac *mat.Dense, e, p []float64) {
	checkLen(dst, e, p, m.nParams())
	checkJac(jac, e, p, m.nParams())
	raw := jac.RawMatrix()
	m.run(nil, raw.Data, raw.Stride, e, p)
	valuesFromAmp(dst, raw.Data, raw.Stride, 1, p[1])
}

func (m Edge) jacobianRaw(data []float64, stride int, e, p []float64) {
	m.run(nil, data, stride, e, p)
}

// run evaluates α into dst (when not nil) or the Jacobian into jac.
func (m Edge) run(dst, jac []float64, stride int, e, p []float64) {
	switch m.band {
	case bandDirect, bandForbidden:
		m.runPower(dst, jac, stride, e, p)
	case bandIndirect:
		m.runIndirect(dst, jac, stride, e, p)
	case bandExciton:
		m.runExciton(dst, jac, stride, e, p)
	}
}

// TaucExponent returns r: 1/2 (direct, exciton), 3/2 (direct-forbidden) or
// 2 (indirect).
func (m Edge) TaucExponent() float64 {
	switch m.band {
	case bandForbidden:
		return 1.5
	case bandIndirect:
		return 2
	}
	return 0.5
}

// Start sets the parameters other than eg, amp and eu to typical starting
// values (common practice): γ = 0.02 eV, θ = 1.5, E_ph = 0.03 eV,
// R_x = 0.005 eV.
func (m Edge) Start(p []float64) {
	if len(p) != m.nParams() {
		panic("model: wrong number of parameters")
	}
	i := 2
	switch m.tail {
	case tailUrbach, tailJoined:
		i++
	case tailGauss:
		p[i] = gwStart
		i++
	case tailTheta:
		p[i], p[i+1] = gwStart, thetaStart
		i += 2
	}
	switch m.band {
	case bandIndirect:
		p[i] = ephStart
	case bandExciton:
		p[i] = rxStart
	}
}

// tailWidth returns the sub-gap 1/e decay length (see Tailed): E_U for
// urbach and joined, γ/θ for the kernel exp(−|u/γ|^θ) (γ/2 for gauss).
func (m Edge) tailWidth(p []float64) float64 {
	switch m.tail {
	case tailUrbach, tailJoined:
		return p[2]
	case tailGauss:
		return p[2] / 2
	case tailTheta:
		return p[2] / p[3]
	}
	return math.NaN()
}

// TailedEdge is an Edge with a tail; it adds TailWidth (interface Tailed).
type TailedEdge struct{ Edge }

// TailWidth returns the energy over which the tail decays by 1/e below the
// gap: E_U for the urbach and joined tails (exact at every depth), and the
// local decay length γ/θ one width below the gap for a kernel
// exp(−|u/γ|^θ): γ/2 for gauss. The Gaussian tail steepens with depth
// (γ²/(2|u|) at depth u), so a window of six such lengths, three widths,
// reaches α/α(E_g) ≈ e^{−9}, where a Gaussian tail is rarely measurable.
func (m TailedEdge) TailWidth(p []float64) float64 {
	if len(p) != m.nParams() {
		panic("model: wrong number of parameters")
	}
	return m.tailWidth(p)
}

// outside handles E ≤ 0 and NaN for every model: it returns true and sets
// the value (or the Jacobian row) when e is not a photon energy.
func outside(ei float64, dst []float64, i int, jac []float64, stride, np int) bool {
	if ei > 0 {
		return false
	}
	v := 0.0
	if math.IsNaN(ei) {
		v = ei
	}
	if dst != nil {
		dst[i] = v
	} else {
		row := jac[i*stride : i*stride+np]
		for j := range row {
			row[j] = v
		}
	}
	return true
}
