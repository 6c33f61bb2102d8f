package model

import "math"

// Double-exponential quadrature, used only by the tests to integrate the
// broadening convolution numerically (Takahasi & Mori, Publ. RIMS Kyoto
// Univ. 9, 721, 1974). gonum/integrate has fixed-order rules (quad.Fixed
// with Gauss-Legendre on finite intervals or Gauss-Hermite) and Romberg or
// Simpson on sampled data, but no adaptive or double-exponential rule: those
// converge slowly at the √(E′−E_g) endpoint singularity and give no error
// estimate. The tanh-sinh and exp-sinh rules below converge
// double-exponentially for integrands analytic inside the interval whatever
// their algebraic endpoint behaviour, so they are written here.

// tanhSinh integrates f over [a, b]. f receives x together with the
// distances x − a and b − x, each computed without cancellation, so an
// endpoint singularity such as √(x − a) is evaluated accurately. It refines
// the step until two successive levels agree to relTol and returns the
// estimate and the last change.
func tanhSinh(f func(x, da, db float64) float64, a, b, relTol float64) (sum, change float64) {
	m := (b - a) / 2
	const tmax = 4.5
	point := func(t float64) float64 {
		u := math.Pi / 2 * math.Sinh(t)
		if math.Abs(u) > 350 {
			return 0
		}
		da := 2 * m / (1 + math.Exp(-2*u))
		db := 2 * m / (1 + math.Exp(2*u))
		ch := math.Cosh(u)
		w := m * math.Pi / 2 * math.Cosh(t) / (ch * ch)
		if w == 0 {
			return 0
		}
		return w * f(a+da, da, db)
	}
	h := 0.5
	s := point(0)
	for k := 1; float64(k)*h <= tmax; k++ {
		s += point(float64(k)*h) + point(-float64(k)*h)
	}
	est := s * h
	for level := 0; level < 12; level++ {
		h /= 2
		for k := 1; float64(k)*h <= tmax; k += 2 {
			s += point(float64(k)*h) + point(-float64(k)*h)
		}
		next := s * h
		change = math.Abs(next - est)
		est = next
		if level >= 2 && change <= relTol*math.Abs(est) {
			break
		}
	}
	return est, change
}

// expSinh integrates f over [a, ∞) with the substitution
// x = a + L·exp((π/2) sinh t); f receives x and the distance x − a. L is
// the decay length of the integrand.
func expSinh(f func(x, da float64) float64, a, scale, relTol float64) (sum, change float64) {
	const tmin, tmax = -5.0, 4.0
	point := func(t float64) float64 {
		u := math.Pi / 2 * math.Sinh(t)
		if u > 700 || u < -700 {
			return 0
		}
		da := scale * math.Exp(u)
		w := da * math.Pi / 2 * math.Cosh(t)
		v := f(a+da, da)
		if v == 0 {
			return 0
		}
		return w * v
	}
	h := 0.5
	var s float64
	for k := int(tmin / h); float64(k)*h <= tmax; k++ {
		s += point(float64(k) * h)
	}
	est := s * h
	for level := 0; level < 12; level++ {
		h /= 2
		for k := int(tmin/h) | 1; float64(k)*h <= tmax; k += 2 {
			s += point(float64(k) * h)
		}
		next := s * h
		change = math.Abs(next - est)
		est = next
		if level >= 2 && change <= relTol*math.Abs(est) {
			break
		}
	}
	return est, change
}
