package model

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Parameter bounds shared by the edge models (common practice, stated so
// that an optimizer and a reader see the same numbers):
//
//   - eg, the band gap E_g, lies in the open interval (0, 20) eV: every
//     semiconductor and insulator gap is inside (diamond 5.5 eV, AlN 6.2 eV,
//     LiF about 14 eV, from memory).
//   - amp, the amplitude C, is positive (absorption is positive); it has no
//     upper bound.
//   - eu, the Urbach energy E_U, lies in [1e-4, 1] eV: 0.1 meV is well below
//     any measured room-temperature Urbach energy (crystalline GaAs is about
//     6 meV, from memory), and above about 1 eV the "tail" is as wide as the
//     spectrum and no longer describes an edge. The lower bound also keeps
//     g^{−1/2} in the Jacobian finite.
const (
	egMin, egMax = 0, 20
	euMin, euMax = 1e-4, 1
)

func egParam() Param {
	return Param{Name: "eg", Symbol: "E_g", Unit: "eV", Min: egMin, Max: egMax}
}

func ampParam() Param {
	return Param{Name: "amp", Symbol: "C", Unit: "cm⁻¹·eV^½", Min: 0, Max: math.Inf(1)}
}

func euParam() Param {
	return Param{Name: "eu", Symbol: "E_U", Unit: "eV", Min: euMin, Max: euMax}
}

// checkJac panics with a prefixed message when dst is not len(e) × np.
func checkJac(dst *mat.Dense, e, p []float64, np int) {
	if r, c := dst.Dims(); r != len(e) || c != np {
		panic("model: Jacobian dst must be len(e) × len(p)")
	}
	if len(p) != np {
		panic("model: wrong number of parameters")
	}
}

// Direct is the parabolic direct allowed absorption edge,
//
//	α(E) = C·√(E − E_g) / E    for E > E_g,
//	α(E) = 0                   for E ≤ E_g,
//
// with E the photon energy (eV), E_g the band gap (eV), C the amplitude
// (cm⁻¹·eV^½) and α in cm⁻¹. It is the joint density of states of two
// parabolic bands with a constant momentum matrix element (Kane k·p; e.g.
// Chuang, Physics of Photonic Devices, 2nd ed., 2009); C is related to the
// Kane energy E_P by AmplitudeFromKane.
//
// The parameter vector is p = [eg, amp] (see Params for bounds).
//
// Below the gap α is 0, and a photon energy E ≤ 0 (no photon) also gives 0.
// At E = E_g the model has a kink: α is continuous but its slope jumps from
// 0 to +∞, and ∂α/∂E_g = −C/(2E√(E − E_g)) diverges as E → E_g from above.
// Jacobian uses the one-sided derivative from below at E ≤ E_g, i.e. a row
// of zeros there.
type Direct struct{}

// Name returns "direct".
func (Direct) Name() string { return "direct" }

// Params returns [eg, amp].
func (Direct) Params() []Param { return []Param{egParam(), ampParam()} }

// Eval fills dst[i] with α(e[i]) for p = [eg, amp].
func (Direct) Eval(dst, e, p []float64) {
	checkLen(dst, e, p, 2)
	eg, c := p[0], p[1]
	for i, ei := range e {
		switch {
		case ei > eg && ei > 0:
			dst[i] = c * math.Sqrt(ei-eg) / ei
		case math.IsNaN(ei):
			dst[i] = ei
		default:
			dst[i] = 0
		}
	}
}

// Jacobian fills row i of dst with (∂α/∂E_g, ∂α/∂C) at e[i]:
//
//	∂α/∂E_g = −C / (2E·√(E − E_g)),   ∂α/∂C = √(E − E_g) / E   (E > E_g),
//
// and zeros for E ≤ E_g (one-sided from below; see the kink in Direct).
func (m Direct) Jacobian(dst *mat.Dense, e, p []float64) {
	checkJac(dst, e, p, 2)
	raw := dst.RawMatrix()
	m.jacobianRaw(raw.Data, raw.Stride, e, p)
}

func (Direct) jacobianRaw(data []float64, stride int, e, p []float64) {
	eg, c := p[0], p[1]
	for i, ei := range e {
		row := data[i*stride : i*stride+2]
		switch {
		case ei > eg && ei > 0:
			s := math.Sqrt(ei - eg)
			row[0] = -c / (2 * ei * s)
			row[1] = s / ei
		case math.IsNaN(ei):
			row[0], row[1] = ei, ei
		default:
			row[0], row[1] = 0, 0
		}
	}
}

// TaucExponent returns 1/2 (direct allowed).
func (Direct) TaucExponent() float64 { return 0.5 }

var negInf, posInf = math.Inf(-1), math.Inf(1)
