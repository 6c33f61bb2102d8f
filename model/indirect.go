package model

import "math"

// The indirect edge of Macfarlane & Roberts (Phys. Rev. 97, 1714, 1955)
// with each tail; see Edge. With n = 1/(exp(E_ph/kT) − 1) (math.Expm1: no
// cancellation when E_ph ≪ kT; n → 0 as T → 0, where only the emission
// branch survives), the absorption branch sits at ε_a = ε + E_ph with
// weight n and the emission branch at ε_e = ε − E_ph with weight n + 1.
//
// Convolution tails: each branch is a shifted square, broadened to
// γ²F_2((ε ± E_ph)/γ):
//
//	α = A·γ²·[n·F_2(z_a) + (n+1)·F_2(z_e)],   z_{a,e} = (ε ± E_ph)/γ,
//
// with F_2' = 2F_1, h = 2F_2 − zF_2' for ∂/∂γ as for the power laws, and
//
//	∂α/∂E_ph = A·γ²·n'·[F_2(z_a) + F_2(z_e)] + A·γ·[n·F_2'(z_a) − (n+1)·F_2'(z_e)],
//	n' = dn/dE_ph = −n(n+1)/kT.
//
// For the exponential kernel F_2 is elementary (lapF2).
//
// Joined tail: each branch x² (x = ε ± E_ph) is replaced below x_j = 2E_U
// by 4E_U²·exp(x/E_U − 2) (value and slope continuous at x_j).

// lapF2 returns F_2(z) = ½ ∫_0^∞ exp(−|z − s|) s² ds, F_2' and
// h = 2F_2 − zF_2':
//
//	F_2 = eᶻ,                 F_2' = eᶻ,            h = (2 − z)eᶻ         (z ≤ 0)
//	F_2 = z² + 2 − e^{−z},    F_2' = 2z + e^{−z},   h = 4 − (2 + z)e^{−z} (z > 0)
//
// Derivation: for z ≤ 0, ½eᶻ∫_0^∞ e^{−s}s² ds = eᶻ; for z > 0,
// ½∫_z^∞ e^{z−s}s² ds = ½(z² + 2z + 2) and ½∫_0^z e^{s−z}s² ds =
// ½(z² − 2z + 2 − 2e^{−z}). All three are continuous at z = 0.
func lapF2(z float64) (f, df, h float64) {
	switch {
	case z != z:
		return z, z, z
	case z <= 0:
		ez := math.Exp(z)
		if ez == 0 {
			return 0, 0, 0
		}
		return ez, ez, (2 - z) * ez
	case math.IsInf(z, 1):
		return z, z, 4
	}
	ez := math.Exp(-z)
	return z*z + 2 - ez, 2*z + ez, 4 - (2+z)*ez
}

// bose returns n = 1/(e^x − 1) and dn/dx = −n(n+1) for x = E_ph/kT > 0.
func bose(x float64) (n, dn float64) {
	n = 1 / math.Expm1(x)
	return n, -n * (n + 1)
}

func (m Edge) runIndirect(dst, jac []float64, stride int, e, p []float64) {
	np := m.nParams()
	eg, a := p[0], p[1]
	eph := p[np-1]
	n, dnx := bose(eph / m.kT)
	dn := dnx / m.kT // dn/dE_ph
	n1 := n + 1
	iph := np - 1 // column of ∂/∂E_ph
	switch m.tail {
	case tailNone:
		for i, ei := range e {
			if outside(ei, dst, i, jac, stride, np) {
				continue
			}
			xa, xe := ei-eg+eph, ei-eg-eph
			xa, xe = math.Max(xa, 0), math.Max(xe, 0)
			if dst != nil {
				dst[i] = a * (n*xa*xa + n1*xe*xe)
				continue
			}
			row := jac[i*stride : i*stride+np]
			row[0] = -2 * a * (n*xa + n1*xe)
			row[1] = n*xa*xa + n1*xe*xe
			row[iph] = a*dn*(xa*xa+xe*xe) + 2*a*(n*xa-n1*xe)
		}
	case tailJoined:
		eu := p[2]
		for i, ei := range e {
			if outside(ei, dst, i, jac, stride, np) {
				continue
			}
			ja, dja, eja := joinedSquare(ei-eg+eph, eu)
			je, dje, eje := joinedSquare(ei-eg-eph, eu)
			if dst != nil {
				dst[i] = a * (n*ja + n1*je)
				continue
			}
			row := jac[i*stride : i*stride+np]
			row[0] = -a * (n*dja + n1*dje)
			row[1] = n*ja + n1*je
			row[2] = a * (n*eja + n1*eje)
			row[iph] = a*dn*(ja+je) + a*(n*dja-n1*dje)
		}
	default:
		g := p[2]
		var pe powEval
		var caches powCaches
		var pc *powCaches
		switch m.tail {
		case tailUrbach:
		case tailGauss:
			pe.init(gaussPair(powTwo), 2, jac != nil)
		case tailTheta:
			pe.init(thetaPair(powTwo), p[3], jac != nil)
			pc = &caches
		}
		g2 := g * g
		ig := 1 / g
		for i, ei := range e {
			if outside(ei, dst, i, jac, stride, np) {
				continue
			}
			za, ze := (ei-eg+eph)*ig, (ei-eg-eph)*ig
			var oa, oe powOut
			if m.tail == tailUrbach {
				oa.f, oa.df, oa.h = lapF2(za)
				oe.f, oe.df, oe.h = lapF2(ze)
			} else {
				oa, oe = pe.eval(za, jac != nil, pc), pe.eval(ze, jac != nil, pc)
			}
			if dst != nil {
				dst[i] = a * g2 * (n*oa.f + n1*oe.f)
				continue
			}
			row := jac[i*stride : i*stride+np]
			row[0] = -a * g * (n*oa.df + n1*oe.df)
			row[1] = g2 * (n*oa.f + n1*oe.f)
			row[2] = a * g * (n*oa.h + n1*oe.h)
			if m.tail == tailTheta {
				row[3] = a * g2 * (n*oa.ft + n1*oe.ft)
			}
			row[iph] = a*g2*dn*(oa.f+oe.f) + a*g*(n*oa.df-n1*oe.df)
		}
	}
}

// joinedSquare returns the joined branch J(x) = x² (x ≥ 2E_U) or
// 4E_U²·exp(x/E_U − 2) (x < 2E_U), J' = dJ/dx and ∂J/∂E_U.
func joinedSquare(x, eu float64) (j, dj, deu float64) {
	if xj := 2 * eu; x >= xj {
		return x * x, 2 * x, 0
	}
	j = 4 * eu * eu * math.Exp(x/eu-2)
	return j, j / eu, j * (2*eu - x) / (eu * eu)
}
