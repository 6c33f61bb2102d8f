package model

import "math"

// The excitonic edge of Elliott (Phys. Rev. 108, 1384, 1957), broadened by
// the Laplace (urbach) or Gaussian (gauss) kernel of width γ; see Edge.
//
// Normalisation of the lines. The continuum's √ε is the free-pair density
// of states g₀(ε) = (2μ/ħ²)^{3/2}√ε/(4π²) in units of its prefactor; the
// Sommerfeld factor multiplies it. A bound s-state n carries the weight
// |φ_n(0)|² = 1/(π a_x³ n³) (hydrogenic, a_x = ħ/√(2μR_x), so a_x^{−3} =
// (2μR_x/ħ²)^{3/2}), which in the same units is
//
//	|φ_n(0)|² / [(2μ/ħ²)^{3/2}/(4π²)] = 4π R_x^{3/2} / n³.
//
// Check (Elliott 1957): the lines at ε_n = −R_x/n² are 2R_x/n³ apart, so
// spread over their spacing they give the density 4πR_x^{3/2}/n³ ÷ 2R_x/n³ =
// 2π√R_x, the continuum's value 2π√(R_x/ε)√ε/(1 − e^{−2π√(R_x/ε)}) → 2π√R_x
// at ε → 0⁺: absorption is continuous across the gap once the lines merge.
//
// With z = ε/γ, ρ = R_x/γ and Y = lines + continuum in units of γ,
//
//	α = (C/E)·√γ·Y(z, ρ),
//	Y = Σ_n (4πρ^{3/2}/n³)·K(z + ρ/n²) + X(z, ρ)      (X: exctab.go)
//
// and, with Y_z = ∂Y/∂z and Y_u = ρ ∂Y/∂ρ,
//
//	∂α/∂E_g = −(C/E) γ^{−1/2} Y_z,   ∂α/∂C = √γ Y/E,
//	∂α/∂γ   =  (C/E) γ^{−1/2} (Y/2 − z Y_z − Y_u),   ∂α/∂R_x = (C/E) √γ Y_u / R_x.
//
// The line series: lines n < N (N = max(10, ⌈(20ρ)^{1/3}⌉), where the line
// spacing 2ρ/N³ is at most a tenth of the kernel width) are summed; the
// rest by the Euler–Maclaurin formula with the f', f''' and f⁽⁵⁾ terms,
// whose integral is closed-form, ∫_a^b f dn = 2π√ρ [Kcdf(z + ρ/a²) −
// Kcdf(z + ρ/b²)]. The Laplace kernel's cusp at the line lying at z splits
// the sum into two smooth pieces, each summed this way.

func (m Edge) runExciton(dst, jac []float64, stride int, e, p []float64) {
	np := m.nParams()
	eg, c, g, rx := p[0], p[1], p[2], p[3]
	theta := 1.0
	if m.tail == tailGauss {
		theta = 2
	}
	var ev excEval
	var caches excCaches
	ev.init(theta, rx/g)
	sg := math.Sqrt(g)
	ig, irx := 1/g, 1/rx
	for i, ei := range e {
		if outside(ei, dst, i, jac, stride, np) {
			continue
		}
		z := (ei - eg) * ig
		y, yz, yu := ev.eval(z, jac != nil, &caches)
		if dst != nil {
			dst[i] = c / ei * sg * y
			continue
		}
		row := jac[i*stride : i*stride+np]
		inv := 1 / ei
		pre := c * inv / sg
		row[0] = -pre * yz
		row[1] = sg * y * inv
		row[2] = pre * (y/2 - z*yz - yu)
		row[3] = c * inv * sg * yu * irx
	}
}

// excCaches holds the collapse caches of an excEval.
type excCaches struct {
	rc, rcy, lc, lcy octCache
}

// excEval evaluates Y at one ρ for the duration of one call (on the
// caller's stack; not safe for concurrent use).
type excEval struct {
	kern        excKernel
	tab         *excTab
	rho, srho   float64 // ρ, √ρ
	mode        int     // excModeSmall, excModeTable, excModeLarge
	yb          yBasis
	right, left octView
	pe          powEval // F_{1/2} of the Gaussian kernel
	r0, r0u     float64
	xe          float64
	edgeDone    [2]bool
	edgeR       [2][2]float64 // R, R_u at ±xe
	edgeRz      [2]float64
	endDone     bool
	endR, endRu float64 // Gaussian left end
	nLines      int
}

const (
	excModeSmall = iota
	excModeTable
	excModeLarge
)

func (v *excEval) init(theta, rho float64) {
	*v = excEval{kern: excKernel{theta}, rho: rho, srho: math.Sqrt(rho)}
	if theta == 2 {
		v.pe.init(gaussPair(powHalf), 2, true)
	}
	v.nLines = int(math.Max(10, math.Ceil(math.Cbrt(20*rho))))
	switch {
	case rho < excRhoLo:
		v.mode = excModeSmall
		return
	case rho > excRhoHi:
		v.mode = excModeLarge
		return
	}
	v.mode = excModeTable
	v.tab = excTable(theta)
	u0, u1 := math.Log(excRhoLo), math.Log(excRhoHi)
	v.yb.set(math.Log(rho), u0, u1, excNY)
	// the y caches even for Eval: the chord ends need R_u
	v.right.init(&v.tab.right, true)
	if theta == 2 {
		v.left.init(&v.tab.left, true)
	}
	for j, a := range v.tab.r0 {
		v.r0 += a * v.yb.t[j]
		v.r0u += a * v.yb.dt[j]
	}
	v.xe = v.tab.right.lo()
}

// half returns F_{1/2}(z), F_{1/2}'(z) and F_{1/2}”(z) of the kernel.
func (v *excEval) half(z float64) (f, df, d2f float64) {
	f, df = excHalf(v.kern.theta, z, &v.pe)
	if v.kern.theta == 1 {
		d2f = f
		if z > 0 {
			d2f -= math.Sqrt(z) // F'' = F − √z·Θ(z)
		}
		return f, df, d2f
	}
	return f, df, f - 2*z*df // Gaussian: F'' = 2aF − 2zF' with a = 1/2
}

// eval returns Y, Y_z and Y_u at z; c holds the collapse caches.
func (v *excEval) eval(z float64, jac bool, c *excCaches) (y, yz, yu float64) {
	if z != z {
		return z, z, z
	}
	lz, lzz, lzu := v.lines(z, jac)
	x, xz, xu := v.cont(z, jac, c)
	return lz + x, lzz + xz, lzu + xu
}

// cont returns the continuum X, X_z, X_u.
func (v *excEval) cont(z float64, jac bool, c *excCaches) (x, xz, xu float64) {
	k := v.kern
	sr := v.srho
	switch {
	case v.mode == excModeSmall:
		f, df, d2f := v.half(z)
		fm, dfm := 2*df, 2*d2f // F_{−1/2} = 2F_{1/2}', and its derivative
		var kd [2]float64
		side := 1
		if z < 0 {
			side = -1
		}
		k.derivs(z, side, kd[:])
		kc := k.cdf(z)
		c3 := -2 * zeta3 * math.Pi * v.rho * sr
		x = f + math.Pi*sr*kc + math.Pi*math.Pi*v.rho/3*fm + c3*kd[0]
		if jac {
			xz = df + math.Pi*sr*kd[0] + math.Pi*math.Pi*v.rho/3*dfm + c3*kd[1]
			xu = math.Pi/2*sr*kc + math.Pi*math.Pi*v.rho/3*fm + 1.5*c3*kd[0]
		}
		return x, xz, xu
	case v.mode == excModeLarge || z >= math.Ldexp(1, excKHiR):
		return v.moments(z, jac)
	}
	// table: X = R·N, N = 2π√ρ·Kcdf + F_{1/2}
	f, df, _ := v.half(z)
	kc := k.cdf(z)
	n := 2*math.Pi*sr*kc + f
	nz := 2*math.Pi*sr*k.k(z) + df
	nu := math.Pi * sr * kc
	var r, rz, ru float64
	switch {
	case z > v.xe:
		if jac {
			r, rz, ru = v.right.all(z, &v.yb, &c.rc, &c.rcy)
		} else {
			r = v.right.value(z, &v.yb, &c.rc, &c.rcy)
		}
	case z >= -v.xe:
		r, rz, ru = v.chord(z, c)
	case k.theta == 1:
		r, ru = v.r0, v.r0u // X = X(0)·eᶻ exactly: R is constant below the gap
	default:
		w := -z
		if w < v.tab.left.hi() {
			var rw float64
			if jac {
				r, rw, ru = v.left.all(w, &v.yb, &c.lc, &c.lcy)
			} else {
				r = v.left.value(w, &v.yb, &c.lc, &c.lcy)
			}
			rz = -rw
		} else {
			if !v.endDone {
				v.endR, _, v.endRu = v.left.all(math.Nextafter(v.tab.left.hi(), 0), &v.yb, &c.lc, &c.lcy)
				v.endDone = true
			}
			r, ru = v.endR, v.endRu
		}
	}
	x = r * n
	if jac {
		xz = rz*n + r*nz
		xu = ru*n + r*nu
	}
	return x, xz, xu
}

// chord returns R, R_z, R_u on |z| ≤ xe from the chord between R(0) and
// the first octave node.
func (v *excEval) chord(z float64, c *excCaches) (r, rz, ru float64) {
	side, x := 0, z
	if z < 0 {
		side, x = 1, -z
	}
	if v.kern.theta == 1 && side == 1 {
		return v.r0, 0, v.r0u
	}
	if !v.edgeDone[side] {
		xe := math.Nextafter(v.xe, 2*v.xe)
		var a, au float64
		if side == 0 {
			a, _, au = v.right.all(xe, &v.yb, &c.rc, &c.rcy)
		} else {
			a, _, au = v.left.all(xe, &v.yb, &c.lc, &c.lcy)
		}
		v.edgeR[side] = [2]float64{a, au}
		v.edgeRz[side] = (a - v.r0) / xe
		if side == 1 {
			v.edgeRz[side] = -v.edgeRz[side]
		}
		v.edgeDone[side] = true
	}
	t := x / v.xe
	r = v.r0 + (v.edgeR[side][0]-v.r0)*t
	ru = v.r0u + (v.edgeR[side][1]-v.r0u)*t
	return r, v.edgeRz[side], ru
}

// moments returns X from the moment expansion (see exctab.go).
func (v *excEval) moments(z float64, jac bool) (x, xz, xu float64) {
	k := v.kern
	sr := v.srho
	kc := k.cdf(z)
	x = 2 * math.Pi * sr * kc
	if jac {
		xz = 2 * math.Pi * sr * k.k(z)
		xu = math.Pi * sr * kc
	}
	if !(z > 0) {
		return x, xz, xu
	}
	var q jet
	q.sommerfeld(z, v.rho)
	fact := 1.0 // (2i)!
	for i := 0; i <= excMom; i++ {
		if i > 0 {
			fact *= float64(2*i-1) * float64(2*i)
		}
		mk := k.momentCoeff(i)
		q2 := fact * q[2*i]                    // q^{(2i)}
		q3 := fact * float64(2*i+1) * q[2*i+1] // q^{(2i+1)}
		x += mk * q2
		if jac {
			xz += mk * q3
			xu += mk * (q2/2 - z*q3 - float64(2*i)*q2)
		}
	}
	return x, xz, xu
}

// jetN is the number of Taylor coefficients of a jet (orders 0 … 11).
const jetN = 2*excMom + 2

// jet holds Taylor coefficients c_j = f^{(j)}(s₀)/j! of a function at s₀.
type jet [jetN]float64

// sommerfeld sets j to the jet at s of q(s) = 2π√ρ/(e^{2π√(ρ/s)} − 1)
// (Taylor arithmetic: power, exponential and quotient of series).
func (j *jet) sommerfeld(s, rho float64) {
	*j = jet{}
	c := 2 * math.Pi * math.Sqrt(rho)
	var x jet // x(s) = c·s^{−1/2}
	x[0] = c / math.Sqrt(s)
	for n := 1; n < jetN; n++ {
		x[n] = x[n-1] * (-0.5 - float64(n-1)) / float64(n) / s
	}
	if x[0] > 700 {
		return // q < e^{−700}·c: zero to double precision
	}
	var ex jet // exp(−x)
	ex[0] = math.Exp(-x[0])
	for n := 1; n < jetN; n++ {
		var a float64
		for k := 1; k <= n; k++ {
			a -= float64(k) * x[k] * ex[n-k]
		}
		ex[n] = a / float64(n)
	}
	d0 := -math.Expm1(-x[0]) // 1 − e^{−x}
	for n := 0; n < jetN; n++ {
		a := c * ex[n]
		for k := 1; k <= n; k++ {
			a += ex[k] * j[n-k] // denominator coefficients are −ex[k] for k ≥ 1
		}
		j[n] = a / d0
	}
}

// lines returns the line series L and its derivatives L_z, L_u.
func (v *excEval) lines(z float64, jac bool) (l, lz, lu float64) {
	k := v.kern
	rho := v.rho
	amp := 4 * math.Pi * rho * v.srho
	var kd [2]float64
	nl := v.nLines
	for n := 1; n < nl; n++ {
		fn := float64(n)
		inv2 := 1 / (fn * fn)
		w := amp * inv2 / fn
		u := z + rho*inv2
		if !jac {
			l += w * k.k(u)
			continue
		}
		side := 1
		if u < 0 {
			side = -1
		}
		k.derivs(u, side, kd[:])
		l += w * kd[0]
		lz += w * kd[1]
		lu += 1.5*w*kd[0] + w*rho*inv2*kd[1]
	}
	// Euler–Maclaurin for n ≥ N, split at the Laplace kernel's cusp
	a := float64(nl)
	if k.theta == 1 && z < 0 {
		ns := math.Sqrt(rho / -z) // the line at z
		if nk := math.Floor(ns); nk >= a && nk < 1e15 {
			s, sz, su := v.emPiece(z, a, nk, 1, jac)
			t, tz, tu := v.emPiece(z, nk+1, math.Inf(1), -1, jac)
			return l + s + t, lz + sz + tz, lu + su + tu
		}
		s, sz, su := v.emPiece(z, a, math.Inf(1), -1, jac)
		return l + s, lz + sz, lu + su
	}
	s, sz, su := v.emPiece(z, a, math.Inf(1), 1, jac)
	return l + s, lz + sz, lu + su
}

// emOrder is the highest derivative used by the Euler–Maclaurin sums.
const emOrder = 5

// emJet holds Taylor coefficients (orders 0 … emOrder) in n.
type emJet [emOrder + 1]float64

func (a emJet) mul(b emJet) (c emJet) {
	for i := range a {
		for j := 0; i+j <= emOrder; j++ {
			c[i+j] += a[i] * b[j]
		}
	}
	return c
}

// emPiece returns Σ_{n=a}^{b} f(n) (b may be +Inf) of f(n) = (4πρ^{3/2}/n³)
// K(z + ρ/n²) on a piece where K has no cusp (Laplace branch side), by the
// Euler–Maclaurin formula (Bernoulli numbers B₂ = 1/6, B₄ = −1/30,
// B₆ = 1/42)
//
//	Σ = ∫_a^b f + (f(a)+f(b))/2 + [f'/12 − f'''/720 + f⁽⁵⁾/30240]_a^b,
//
// and its derivatives with respect to z and u = ln ρ.
func (v *excEval) emPiece(z, a, b float64, side int, jac bool) (s, sz, su float64) {
	k := v.kern
	rho, sr := v.rho, v.srho
	va := z + rho/(a*a)
	vb := z
	if !math.IsInf(b, 1) {
		vb = z + rho/(b*b)
	}
	s = 2 * math.Pi * sr * k.cdfDiff(va, vb)
	if jac {
		sz = 2 * math.Pi * sr * (k.k(va) - k.k(vb))
		su = math.Pi*sr*k.cdfDiff(va, vb) + 2*math.Pi*sr*k.k(va)*rho/(a*a)
		if !math.IsInf(b, 1) {
			su -= 2 * math.Pi * sr * k.k(vb) * rho / (b * b)
		}
	}
	// with Taylor coefficients c_j = f^{(j)}/j!: f' = c₁, f''' = 6c₃, f⁽⁵⁾ = 120c₅
	bern := func(c *emJet) float64 { return c[1]/12 - 6*c[3]/720 + 120*c[5]/30240 }
	end := func(n, sign float64) { // sign −1 at the lower end, +1 at the upper
		f, fz, fu := v.emJets(z, n, side, jac)
		s += f[0]/2 + sign*bern(&f)
		if jac {
			sz += fz[0]/2 + sign*bern(&fz)
			su += fu[0]/2 + sign*bern(&fu)
		}
	}
	end(a, -1)
	if !math.IsInf(b, 1) {
		end(b, 1)
	}
	return s, sz, su
}

// emJets returns the Taylor coefficients in n at n of f = A n^{−3} K(v),
// f_z = A n^{−3} K'(v) and f_u = (3/2) f + A ρ n^{−5} K'(v), with
// v = z + ρ/n², A = 4πρ^{3/2}.
func (v *excEval) emJets(z, n float64, side int, jac bool) (f, fz, fu emJet) {
	rho := v.rho
	amp := 4 * math.Pi * rho * v.srho
	// v(n+h) − v(n) = ρ Σ_{j≥1} C(−2, j) n^{−2−j} h^j, C(−2, j) = (−1)^j (j+1)
	var d, n3, n5 emJet
	inv := 1 / n
	pw := rho * inv * inv
	p3, p5 := amp*inv*inv*inv, amp*rho*inv*inv*inv*inv*inv
	sign := 1.0
	for j := 0; j <= emOrder; j++ {
		fj := float64(j)
		if j > 0 {
			d[j] = sign * (fj + 1) * pw
		}
		n3[j] = sign * (fj + 1) * (fj + 2) / 2 * p3                        // C(−3, j) n^{−3−j}
		n5[j] = sign * (fj + 1) * (fj + 2) * (fj + 3) * (fj + 4) / 24 * p5 // C(−5, j) n^{−5−j}
		sign = -sign
		pw *= inv
		p3 *= inv
		p5 *= inv
	}
	var kd [emOrder + 2]float64
	v.kern.derivs(z+rho*inv*inv, side, kd[:])
	var pows [emOrder + 1]emJet // powers of the increment d (no constant term)
	pows[0][0] = 1
	for m := 1; m <= emOrder; m++ {
		pows[m] = pows[m-1].mul(d)
	}
	compose := func(off int) (g emJet) { // jet of K^{(off)}(v(n))
		fact := 1.0
		for m := 0; m <= emOrder; m++ {
			if m > 0 {
				fact *= float64(m)
			}
			c := kd[off+m] / fact
			for j := range g {
				g[j] += c * pows[m][j]
			}
		}
		return g
	}
	f = n3.mul(compose(0))
	if jac {
		k1 := compose(1)
		fz = n3.mul(k1)
		g := n5.mul(k1)
		for i := range fu {
			fu[i] = 1.5*f[i] + g[i]
		}
	}
	return f, fz, fu
}
