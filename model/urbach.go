package model

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// quarterSqrtPi is √π/4 = Γ(3/2)/2.
const quarterSqrtPi = 0.25 * 1.772453850905516027298167483341145182797549456122387128213807789852911284591025

// urbachAsymZ is the z above which UrbachEdgeF uses its asymptotic series:
// the series of D and erfcx it is built from are then exact up to terms of
// order exp(−z) < 2e-22, while the direct form F/2 − zF' would lose
// about log10(z²) digits to cancellation.
const urbachAsymZ = 50

// DirectUrbach is the parabolic direct edge of Direct convolved with a
// normalised exponential ("θ = 1") broadening kernel
// (Katahara & Hillhouse, J. Appl. Phys. 116, 173504, 2014):
//
//	α(E) = (C/E) ∫ G(E − E′) √(E′ − E_g) Θ(E′ − E_g) dE′,
//	G(u) = exp(−|u|/γ) / (2γ),
//
// which has the closed form
//
//	α(E) = (C/E) · γ^½ · F((E − E_g)/γ),
//
// with F the universal function of UrbachEdgeF. E is the photon energy
// (eV), E_g the band gap (eV), C the amplitude (cm⁻¹·eV^½, the same C as in
// Direct), γ = E_U the broadening, equal to the Urbach energy (eV), and α
// is in cm⁻¹.
//
// At and below the gap (E ≤ E_g) the model is exactly an Urbach tail
// (Urbach, Phys. Rev. 92, 1324, 1953),
//
//	α(E) = (C/E)·(√π/4)·E_U^½ · exp((E − E_g)/E_U),
//
// so ln(α·E) has slope exactly 1/E_U there (ln α has slope 1/E_U − 1/E,
// within E_U/E of the Urbach rule).
// Far above it (E − E_g ≫ E_U) α → C·√(E − E_g)/E, the Direct model. The
// model is smooth (C² in E at E = E_g, analytic elsewhere), positive for
// every E > 0, and underflows to 0 more than about 745·E_U below the gap;
// E ≤ 0 (no photon) gives 0.
//
// The parameter vector is p = [eg, amp, eu] (see Params for bounds).
// Outside the bounds, eu ≤ 0 gives NaN (γ^½ is undefined); within them
// and for finite E, α is finite and ≥ 0 (checked by the tests).
//
// F is taken from a table of its closed form (UrbachEdgeF), identical to
// it within 3e-13 relative and about ten times faster: Eval and Jacobian
// cost about 10 and 16 ns per energy (BenchmarkDirectUrbachEval).
type DirectUrbach struct{}

// Name returns "direct+urbach".
func (DirectUrbach) Name() string { return "direct+urbach" }

// Params returns [eg, amp, eu].
func (DirectUrbach) Params() []Param { return []Param{egParam(), ampParam(), euParam()} }

// Eval fills dst[i] with α(e[i]) for p = [eg, amp, eu].
func (DirectUrbach) Eval(dst, e, p []float64) {
	checkLen(dst, e, p, 3)
	eg, c, g := p[0], p[1], p[2]
	sg := math.Sqrt(g)
	csg := c * sg
	ig := 1 / g
	tab := lapTable()
	for i, ei := range e {
		z := (ei - eg) * ig // within an ulp of (E − E_g)/γ
		if ei > 0 {         // the two common branches of urbachEdge, inlined
			switch {
			case z > 0 && z < urbachAsymZ:
				_, k, t := lapIndex(z)
				dst[i] = csg * horner6(&tab.p[k], t) / ei
				continue
			case z <= 0 && z > -700:
				dst[i] = csg * quarterSqrtPi * math.Exp(z) / ei
				continue
			}
		}
		if !(ei > 0) {
			if math.IsNaN(ei) {
				dst[i] = ei
			} else {
				dst[i] = 0
			}
			continue
		}
		f, _, _ := urbachEdge(z)
		dst[i] = c / ei * sg * f
	}
}

// Jacobian fills row i of dst with (∂α/∂E_g, ∂α/∂C, ∂α/∂E_U) at e[i].
// With z = (E − E_g)/γ and F, F' from UrbachEdgeF,
//
//	∂α/∂E_g = −(C/E) γ^{−½} F'(z),
//	∂α/∂C   =  γ^½ F(z) / E,
//	∂α/∂γ   =  (C/E) γ^{−½} (F(z)/2 − z F'(z)).
//
// The last bracket tends to −1/(2z^{3/2}) for large z and is computed from
// an asymptotic series there (see urbachEdge), not by cancellation.
func (m DirectUrbach) Jacobian(dst *mat.Dense, e, p []float64) {
	checkJac(dst, e, p, 3)
	raw := dst.RawMatrix()
	m.jacobianRaw(raw.Data, raw.Stride, e, p)
}

// EvalJacobian fills dst with α and jac with the Jacobian in one pass
// (model.ValueJacobianer): α = C·∂α/∂C.
func (m DirectUrbach) EvalJacobian(dst []float64, jac *mat.Dense, e, p []float64) {
	checkLen(dst, e, p, 3)
	checkJac(jac, e, p, 3)
	raw := jac.RawMatrix()
	m.jacobianRaw(raw.Data, raw.Stride, e, p)
	valuesFromAmp(dst, raw.Data, raw.Stride, 1, p[1])
}

func (DirectUrbach) jacobianRaw(data []float64, stride int, e, p []float64) {
	eg, c, g := p[0], p[1], p[2]
	sg := math.Sqrt(g)
	cs := c / sg
	ig := 1 / g
	tab := lapTable()
	for i, ei := range e {
		row := data[i*stride : i*stride+3]
		if !(ei > 0) {
			v := 0.0
			if math.IsNaN(ei) {
				v = ei
			}
			row[0], row[1], row[2] = v, v, v
			continue
		}
		z := (ei - eg) * ig // within an ulp of (E − E_g)/γ
		var f, df, h float64
		switch { // the two common branches of urbachEdge, inlined
		case z > 0 && z < urbachAsymZ:
			_, k, t := lapIndex(z)
			f, df = horner6(&tab.p[k], t), horner6(&tab.q[k], t)
			h = f/2 - z*df
		case z <= 0 && z > -700:
			f = quarterSqrtPi * math.Exp(z)
			df, h = f, f*(0.5-z)
		default:
			f, df, h = urbachEdge(z)
		}
		inv := 1 / ei
		pre := cs * inv // (C/E)·γ^{−½}
		row[0] = -pre * df
		row[1] = sg * f * inv
		row[2] = pre * h
	}
}

// TailWidth returns E_U = p[2]: the tail is exactly exponential below the
// gap, α ∝ exp((E − E_g)/E_U)/E.
func (DirectUrbach) TailWidth(p []float64) float64 { return p[2] }

// TaucExponent returns 1/2 (direct allowed).
func (DirectUrbach) TaucExponent() float64 { return 0.5 }

// UrbachEdgeF returns the universal function of the exponentially broadened
// parabolic edge and its derivative,
//
//	F(z) = ½ ∫_0^∞ exp(−|z − s|) √s ds,
//
//	F(z)  = (√π/4) eᶻ                                  (z ≤ 0),
//	F(z)  = √z − D(√z)/2 + (√π/4) erfcx(√z)            (z > 0),
//	F'(z) = (√π/4) eᶻ                                  (z ≤ 0),
//	F'(z) = D(√z)/2 + (√π/4) erfcx(√z)                 (z > 0),
//
// with D Dawson's integral and erfcx(x) = exp(x²) erfc(x) (package
// specfun). z is dimensionless (z = (E − E_g)/E_U in DirectUrbach).
//
// Derivation (θ = 1 case of Katahara & Hillhouse 2014): put
// E′ = E_g + γs, E = E_g + γz in the integral of DirectUrbach, which gives
// γ^½ F(z). For z ≤ 0, |z − s| = s − z and ½ eᶻ ∫_0^∞ e^{−s} √s ds =
// ½ eᶻ Γ(3/2). For z > 0 split at s = z:
// ∫_z^∞ e^{z−s} √s ds = eᶻ Γ(3/2, z) = √z + (√π/2) erfcx(√z), and with
// s = t², y = √z, ∫_0^z e^{s−z} √s ds = e^{−y²} ∫_0^y 2t² e^{t²} dt =
// y − D(y) (by parts). F' follows from differentiating the two pieces
// (d/dz of each is ∓√z ± itself). F and F' are continuous at z = 0 (both
// √π/4), and F″ = F − √z·Θ(z), so F is C² there. For large z,
// F = √z − 1/(4 z^{3/2}) + O(z^{−7/2}) and F' = 1/(2√z) + O(z^{−5/2}).
//
// For 0 < z < 50 F and F' come from a table built at first use from this
// closed form and interpolated by quintic Hermite polynomials in √z (see
// lapTab: identical to the closed form within 3e-13 relative, and about
// ten times faster than evaluating D and erfcx).
// Far below (z < −745) eᶻ underflows and F = F' = 0. For z ≥ 50 F and F'
// come from the asymptotic series of D and erfcx combined term by term:
// with aₙ = (2n−1)!!/(2z)ⁿ,
//
//	F = √z − (a₁ + a₃ + …)/(2√z),   F' = (1 + a₂ + a₄ + …)/(2√z).
func UrbachEdgeF(z float64) (f, df float64) {
	f, df, _ = urbachEdge(z)
	return f, df
}

// urbachEdge returns F(z), F'(z) and h(z) = F(z)/2 − z·F'(z) (the bracket
// of ∂α/∂γ), h computed without cancellation for large z:
//
//	h = −[(a₁ + a₃ + …)/(4√z) + √z (a₂ + a₄ + …)/2]      (z ≥ 50).
func urbachEdge(z float64) (f, df, h float64) {
	switch {
	case math.IsNaN(z):
		return z, z, z
	case z <= 0:
		f = quarterSqrtPi * math.Exp(z)
		if f == 0 {
			return 0, 0, 0 // z < −745 (or −Inf): avoid 0·Inf below
		}
		return f, f, f * (0.5 - z)
	case z < urbachAsymZ:
		f, df = lapTable().half(z)
		return f, df, f/2 - z*df
	case math.IsInf(z, 1):
		return z, 0, 0
	}
	y := math.Sqrt(z)
	t := 1 / (2 * z)
	a := 1.0
	var odd, even float64 // a₁+a₃+…, a₂+a₄+…
	a2 := 3 * t * t
	for n := 1; n < 200; n++ {
		a *= float64(2*n-1) * t
		if n%2 == 1 {
			odd += a
		} else {
			even += a
		}
		if a < 1e-17*a2 || a == 0 {
			break
		}
	}
	f = y - odd/(2*y)
	df = (1 + even) / (2 * y)
	h = -(odd/(4*y) + y*even/2)
	return f, df, h
}
