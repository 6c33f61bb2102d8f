package model

import "math"

// The power-law bands α₀ = (C/E)·ε^r Θ(ε) (r = 1/2 direct, 3/2
// direct-forbidden) with each tail; see Edge for the formulas.
//
// With a convolution tail of width γ, z = (E − E_g)/γ and F = F_r(z) the
// kernel's universal function (UrbachEdgeF, lapF32, powtab.go),
//
//	α        = (C/E)·γ^r·F(z)
//	∂α/∂E_g  = −(C/E)·γ^{r−1}·F'(z)
//	∂α/∂C    = γ^r·F(z)/E
//	∂α/∂γ    = (C/E)·γ^{r−1}·(rF − zF')   (from an asymptotic series at large z)
//	∂α/∂θ    = (C/E)·γ^r·∂F/∂θ.
//
// With the joined tail, ε_j from the joining condition, E_j = E_g + ε_j and
// α_j = C·ε_j^r/E_j, below E_j: α = α_j·exp((E − E_j)/E_U), and, because
// the joining condition makes ∂ ln α/∂ε_j vanish (envelope theorem),
//
//	∂α/∂E_g = −α·r/ε_j,   ∂α/∂C = α/C,   ∂α/∂E_U = −α·(E − E_j)/E_U²
//
// (using r/ε_j − 1/E_j = 1/E_U); above E_j the band's own derivatives, 0
// for E_U.

func (m Edge) powKind() (powKind, float64) {
	if m.band == bandForbidden {
		return powThreeHalf, 1.5
	}
	return powHalf, 0.5
}

// gammaPow returns γ^r for r = 1/2 or 3/2.
func gammaPow(g float64, k powKind) float64 {
	if k == powThreeHalf {
		return g * math.Sqrt(g)
	}
	return math.Sqrt(g)
}

func (m Edge) runPower(dst, jac []float64, stride int, e, p []float64) {
	np := m.nParams()
	k, r := m.powKind()
	eg, c := p[0], p[1]
	switch m.tail {
	case tailNone:
		for i, ei := range e {
			if outside(ei, dst, i, jac, stride, np) {
				continue
			}
			eps := ei - eg
			if dst != nil {
				if eps > 0 {
					dst[i] = c * bandOverE(eps, ei, k)
				} else {
					dst[i] = 0
				}
				continue
			}
			row := jac[i*stride : i*stride+np]
			if eps > 0 {
				b := bandOverE(eps, ei, k)
				row[0] = -c * r * b / eps
				row[1] = b
			} else {
				row[0], row[1] = 0, 0
			}
		}
	case tailJoined:
		m.runPowerJoined(dst, jac, stride, e, p, k, r)
	case tailUrbach:
		g := p[2]
		ig := 1 / g
		gr := gammaPow(g, k)
		for i, ei := range e {
			if outside(ei, dst, i, jac, stride, np) {
				continue
			}
			z := (ei - eg) * ig
			if z > farZ {
				m.powFar(dst, jac, stride, i, ei, ei-eg, c, k, r)
				continue
			}
			var f, df, h float64
			if k == powHalf {
				f, df, h = urbachEdge(z)
			} else {
				f, df, h = lapF32(z)
			}
			m.powRow(dst, jac, stride, i, ei, c, ig, gr, f, df, h, 0)
		}
	case tailGauss:
		var pe powEval
		pe.init(gaussPair(k), 2, jac != nil)
		m.powLoop(dst, jac, stride, e, p, &pe, nil)
	case tailTheta:
		var pe powEval
		var caches powCaches
		pe.init(thetaPair(k), p[3], jac != nil)
		m.powLoop(dst, jac, stride, e, p, &pe, &caches)
	}
}

// powLoop runs a tabulated kernel over the energies.
func (m Edge) powLoop(dst, jac []float64, stride int, e, p []float64, pe *powEval, pc *powCaches) {
	np := m.nParams()
	eg, c, g := p[0], p[1], p[2]
	ig := 1 / g
	gr := gammaPow(g, pe.k)
	for i, ei := range e {
		if outside(ei, dst, i, jac, stride, np) {
			continue
		}
		z := (ei - eg) * ig
		if z > farZ {
			m.powFar(dst, jac, stride, i, ei, ei-eg, c, pe.k, pe.a)
			continue
		}
		o := pe.eval(z, jac != nil, pc)
		m.powRow(dst, jac, stride, i, ei, c, ig, gr, o.f, o.df, o.h, o.ft)
	}
}

// farZ is the z beyond which a broadened power law equals the bare one to
// double precision (the first correction is C(r,2)μ₂/z² < 1e-40).
const farZ = 1e20

// bandOverE returns ε^r/E for r = k/2 without overflow in ε^r.
func bandOverE(eps, e float64, k powKind) float64 {
	if k == powThreeHalf {
		return math.Sqrt(eps) * (eps / e)
	}
	return spow(eps, k) / e
}

// powFar stores α = Cε^r/E (or its Jacobian row) for z > farZ.
func (m Edge) powFar(dst, jac []float64, stride, i int, ei, eps, c float64, k powKind, r float64) {
	b := bandOverE(eps, ei, k)
	if dst != nil {
		dst[i] = c * b
		return
	}
	row := jac[i*stride : i*stride+m.nParams()]
	for j := range row {
		row[j] = 0
	}
	row[0] = -c * r * b / eps
	row[1] = b
}

// powRow stores α or its Jacobian row for a convolution tail (ig = 1/γ;
// one division per point, which costs more here than all the rest).
func (m Edge) powRow(dst, jac []float64, stride, i int, ei, c, ig, gr, f, df, h, ft float64) {
	if dst != nil {
		dst[i] = c * gr * f / ei
		return
	}
	inv := 1 / ei
	pre := c * inv * gr
	row := jac[i*stride : i*stride+m.nParams()]
	row[0] = -pre * ig * df
	row[1] = gr * f * inv
	row[2] = pre * ig * h
	if m.tail == tailTheta {
		row[3] = pre * ft
	}
}

// joinEps returns ε_j, the positive root of r/ε − 1/(E_g + ε) = 1/E_U, in
// a form free of cancellation.
func joinEps(r, eg, eu float64) float64 {
	b := eg + (1-r)*eu
	return 2 * r * eu * eg / (b + math.Sqrt(b*b+4*r*eu*eg))
}

func (m Edge) runPowerJoined(dst, jac []float64, stride int, e, p []float64, k powKind, r float64) {
	np := m.nParams()
	eg, c, eu := p[0], p[1], p[2]
	ej := joinEps(r, eg, eu)
	Ej := eg + ej
	aj := c * spow(ej, k) / Ej
	for i, ei := range e {
		if outside(ei, dst, i, jac, stride, np) {
			continue
		}
		eps := ei - eg
		if eps >= ej {
			b := bandOverE(eps, ei, k)
			if dst != nil {
				dst[i] = c * b
				continue
			}
			row := jac[i*stride : i*stride+np]
			row[0] = -c * r * b / eps
			row[1] = b
			row[2] = 0
			continue
		}
		a := aj * math.Exp((ei-Ej)/eu)
		if dst != nil {
			dst[i] = a
			continue
		}
		row := jac[i*stride : i*stride+np]
		row[0] = -a * r / ej
		row[1] = a / c
		if c == 0 {
			row[1] = spow(ej, k) / Ej * math.Exp((ei-Ej)/eu)
		}
		row[2] = -a * (ei - Ej) / (eu * eu)
	}
}
