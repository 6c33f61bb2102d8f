package model

import (
	"math"
	"sync"

	"bandedge/model/specfun"
)

// Tables of the exponentially broadened ("θ = 1") power-law edges,
//
//	F_r(z) = ½ ∫_0^∞ exp(−|z − s|) s^r ds,   r = 1/2 and r = 3/2,
//
// for 0 < z < urbachAsymZ. Their closed forms (UrbachEdgeF and lapF32 below)
// need Dawson's integral, whose series costs about 1 µs at the largest
// arguments; a fit evaluates them 10⁴–10⁵ times, so they are tabulated once
// on a grid in y = √z and interpolated by quintic Hermite polynomials.
//
// Why y and not z: F_r has a z^{r+2} singularity at z = 0 (F_{1/2}” =
// F_{1/2} − √z), which would spoil any polynomial interpolation in z, but
// P(y) = F_{1/2}(y²) = y − D(y)/2 + (√π/4) erfcx(y) is an entire function
// of y. Why quintic: every derivative needed at the nodes is exact, from the
// identities (derived in UrbachEdgeF)
//
//	F_{1/2}'' = F_{1/2} − √z,   F_{1/2}''' = F_{1/2}' − 1/(2√z),
//	F_{3/2}'  = (3/2)·F_{1/2},
//
// so value, first and second derivative in y are known to the accuracy of
// D and erfcx (≈1e-14) and the interpolation error is h⁶/46080·max|f⁽⁶⁾|.
// With h = 1/48 the measured error against the closed forms is below 3e-13
// relative (TestLapTableAccuracy; largest near y ≈ 0.2, where erfcx's sixth
// derivative is ~100), within the 1e-12 asked of the reference model.
const (
	lapTabInvH = 48                                     // nodes per unit of y
	lapTabN    = 340                                    // intervals: 340/48 = 7.083 > √50
	sqrtPi     = 1.772453850905516027298167483341145182 // √π
)

// lapTab holds, per interval, the six monomial coefficients (in the local
// variable t ∈ [0, 1)) of three quintic pieces: P(y) = F_{1/2}(y²),
// Q(y) = F_{1/2}'(y²) and R(y) = F_{3/2}(y²).
type lapTab struct {
	p, q, r [lapTabN][6]float64
}

var (
	lapOnce sync.Once
	lapData *lapTab
)

// lapTable returns the θ = 1 tables, building them at first use (about
// 0.15 ms: 341 evaluations each of D and erfcx).
func lapTable() *lapTab {
	lapOnce.Do(func() { lapData = buildLapTab() })
	return lapData
}

func buildLapTab() *lapTab {
	type node struct{ p, dp, d2p, q, dq, d2q, r, dr, d2r float64 }
	var nd [lapTabN + 1]node
	for i := range nd {
		y := float64(i) / lapTabInvH
		dw := specfun.Dawson(y)
		ex := quarterSqrtPi * specfun.Erfcx(y)
		f := y - dw/2 + ex // F_{1/2}
		df := dw/2 + ex    // F_{1/2}'
		d2f := f - y       // F_{1/2}''
		z := y * y
		// d/dy of g(y²) is 2y g'; d²/dy² is 2g' + 4y² g''.
		nd[i].p, nd[i].dp, nd[i].d2p = f, 2*y*df, 2*df+4*z*d2f
		// F_{1/2}''' = F' − 1/(2y); 4y²·F''' = 4y²F' − 2y (finite at y = 0).
		nd[i].q, nd[i].dq, nd[i].d2q = df, 2*y*d2f, 2*d2f+4*z*df-2*y
		// R = F_{3/2}(y²) = y³ + (3/4)D(y) + (3√π/8) erfcx(y), R' = 3yP,
		// R'' = 3P + 6y²Q.
		nd[i].r = z*y + 0.75*dw + 1.5*ex
		nd[i].dr, nd[i].d2r = 3*y*f, 3*f+6*z*df
	}
	t := new(lapTab)
	const h = 1.0 / lapTabInvH
	for i := 0; i < lapTabN; i++ {
		a, b := nd[i], nd[i+1]
		t.p[i] = quinticHermite(a.p, a.dp, a.d2p, b.p, b.dp, b.d2p, h)
		t.q[i] = quinticHermite(a.q, a.dq, a.d2q, b.q, b.dq, b.d2q, h)
		t.r[i] = quinticHermite(a.r, a.dr, a.d2r, b.r, b.dr, b.d2r, h)
	}
	return t
}

// quinticHermite returns the monomial coefficients in t = (x − x₀)/h of the
// quintic that matches value, first and second derivative (with respect to
// x) at both ends of an interval of length h.
func quinticHermite(f0, d0, s0, f1, d1, s1, h float64) [6]float64 {
	d0, d1 = d0*h, d1*h
	s0, s1 = s0*h*h, s1*h*h
	df := f1 - f0
	return [6]float64{
		f0,
		d0,
		s0 / 2,
		10*df - 6*d0 - 4*d1 - (3*s0-s1)/2,
		-15*df + 8*d0 + 7*d1 + (3*s0-2*s1)/2,
		6*df - 3*(d0+d1) - (s0-s1)/2,
	}
}

// horner6 evaluates c₀ + c₁t + … + c₅t⁵.
func horner6(c *[6]float64, t float64) float64 {
	return c[0] + t*(c[1]+t*(c[2]+t*(c[3]+t*(c[4]+t*c[5]))))
}

// lapIndex returns the interval and local variable of y = √z for
// 0 < z < urbachAsymZ.
func lapIndex(z float64) (y float64, i int, t float64) {
	y = math.Sqrt(z)
	u := y * lapTabInvH
	i = int(u)
	if i >= lapTabN { // unreachable for z < 50; kept for safety
		i = lapTabN - 1
	}
	return y, i, u - float64(i)
}

// lapHalf returns F_{1/2}(z) and F_{1/2}'(z) from the table, 0 < z < 50.
func (l *lapTab) half(z float64) (f, df float64) {
	_, i, t := lapIndex(z)
	return horner6(&l.p[i], t), horner6(&l.q[i], t)
}

// threeHalves returns F_{3/2}(z) and F_{1/2}(z) from the table, 0 < z < 50.
func (l *lapTab) threeHalves(z float64) (f32, f12 float64) {
	_, i, t := lapIndex(z)
	return horner6(&l.r[i], t), horner6(&l.p[i], t)
}

// lapF32 returns F_{3/2}(z) = ½ ∫_0^∞ exp(−|z − s|) s^{3/2} ds, its
// derivative F_{3/2}' = (3/2)F_{1/2}, and h = (3/2)F_{3/2} − z·F_{3/2}' (the
// bracket of ∂α/∂γ), for every z:
//
//	F_{3/2}(z) = (3√π/8) eᶻ                                    (z ≤ 0),
//	F_{3/2}(z) = z^{3/2} + (3/4) D(√z) + (3√π/8) erfcx(√z)       (z > 0).
//
// Derivation: as in UrbachEdgeF, with e^z Γ(5/2, z) = z^{3/2} + (3/2)√z +
// (3√π/4) erfcx(√z) for the part s > z, and by parts ∫_0^z e^{s−z} s^{3/2} ds
// = z^{3/2} − (3/2)(√z − D(√z)) for s < z. Tabulated for 0 < z < 50 (see
// lapTab); beyond, the asymptotic series F_r = Σ_k r(r−1)…(r−2k+1) z^{r−2k}
// (the Laplace kernel's moments are (2k)!), with h = Σ_k 2k·(same term).
func lapF32(z float64) (f, df, h float64) {
	switch {
	case math.IsNaN(z):
		return z, z, z
	case z <= 0:
		f = 1.5 * quarterSqrtPi * math.Exp(z) // Γ(5/2)/2 = 3√π/8
		if f == 0 {
			return 0, 0, 0
		}
		return f, f, (1.5 - z) * f // F' = (3/2)F_{1/2} = F here
	case z < urbachAsymZ:
		f32, f12 := lapTable().threeHalves(z)
		df = 1.5 * f12
		return f32, df, 1.5*f32 - z*df
	case math.IsInf(z, 1):
		return z, z, 0
	}
	f, df, h = lapAsym(1.5, z)
	return f, df, h
}

// lapAsym returns the large-z series of the Laplace-broadened power law,
//
//	F_r  = Σ_k c_k z^{r−2k},  c_k = r(r−1)…(r−2k+1),
//	F_r' = Σ_k (r−2k) c_k z^{r−1−2k},   h = r F_r − z F_r' = Σ_k 2k c_k z^{r−2k},
//
// summed until a term falls below 1e-17 of the sum (z ≥ 50: at most a dozen
// terms; the series is asymptotic with its smallest term near e^{−z}).
func lapAsym(r, z float64) (f, df, h float64) {
	zr := math.Pow(z, r)
	inv2 := 1 / (z * z)
	c, zk := 1.0, 1.0 // c_k and z^{−2k}
	for k := 0; k < 60; k++ {
		term := c * zk
		f += term
		df += (r - float64(2*k)) * term
		h += float64(2*k) * term
		next := c * (r - float64(2*k)) * (r - float64(2*k+1))
		if math.Abs(next*zk*inv2) < 1e-17*math.Abs(f) || next == 0 {
			break
		}
		c, zk = next, zk*inv2
	}
	return f * zr, df * zr / z, h * zr
}
