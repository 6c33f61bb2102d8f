package strd

import (
	"math"
	"math/big"
)

// dd is a double-double number hi + lo with |lo| ≤ ulp(hi)/2, carrying
// about 106 significant bits (32 decimal digits).
//
// It exists for one reason. Lanczos1's certified RSS, 1.4·10⁻²⁵, means
// residuals of about 8·10⁻¹⁴ on responses of order 1, so the float64
// rounding of the printed data and of the model evaluation (≈2·10⁻¹⁶ each)
// is only three digits below the residuals, and so the RSS, the residual
// SD and the standard deviations come out with LRE ≈ 3 whatever the solver
// does. Evaluating the residuals r_i = y_i − f(x_i; b) in double-double from
// the exact decimal data, and rounding once, takes that noise away; the
// solver itself still works in float64 on the rounded r_i. Neither gonum
// nor the standard library has extended-precision elementary functions
// (math/big has no exp, log or trigonometric functions), so they are
// written here.
//
// The algorithms are the error-free transformations of Knuth (TwoSum) and
// Dekker ("A floating-point technique for extending the available
// precision", Numer. Math. 18, 224, 1971; the exact product via FMA) and
// the double-double routines of Hida, Li and Bailey ("Algorithms for
// quad-double precision floating point arithmetic", ARITH-15, 2001): the
// accurate addition, exp by argument reduction, log by one Newton step on
// exp, and Taylor series for sin and cos.
type dd struct{ hi, lo float64 }

// Double-double constants, from their 40-digit decimal expansions (parsed
// with math/big, see ddParse): π/2, ln 2.
var (
	ddPi     = ddParse("3.141592653589793238462643383279502884197")
	ddHalfPi = ddParse("1.570796326794896619231321691639751442099")
	ddLn2    = ddParse("0.6931471805599453094172321214581765680755")
)

// invFact[n] is 1/n! in double-double, for the Taylor series.
var invFact = func() [32]dd {
	var t [32]dd
	f := new(big.Float).SetPrec(256).SetInt64(1)
	for n := range t {
		if n > 0 {
			f.Mul(f, new(big.Float).SetInt64(int64(n)))
		}
		inv := new(big.Float).SetPrec(256).Quo(new(big.Float).SetPrec(256).SetInt64(1), f)
		hi, _ := inv.Float64()
		lo, _ := new(big.Float).SetPrec(256).Sub(inv, new(big.Float).SetFloat64(hi)).Float64()
		t[n] = dd{hi, lo}
	}
	return t
}()

// ddParse converts a decimal string to the nearest double-double; it
// returns NaN for a string that is not a number.
func ddParse(s string) dd {
	f, ok := new(big.Float).SetPrec(256).SetString(s)
	if !ok {
		return dd{math.NaN(), 0}
	}
	hi, _ := f.Float64()
	if math.IsInf(hi, 0) {
		return dd{hi, 0}
	}
	rem := new(big.Float).SetPrec(256).Sub(f, new(big.Float).SetFloat64(hi))
	lo, _ := rem.Float64()
	return dd{hi, lo}
}

func twoSum(a, b float64) (s, e float64) {
	s = a + b
	bb := s - a
	e = (a - (s - bb)) + (b - bb)
	return
}

func quickTwoSum(a, b float64) (s, e float64) {
	s = a + b
	e = b - (s - a)
	return
}

func twoProd(a, b float64) (p, e float64) {
	p = a * b
	e = math.FMA(a, b, -p)
	return
}

func ddFrom(v float64) dd { return dd{v, 0} }

func (x dd) float() float64 { return x.hi + x.lo }

func (x dd) neg() dd { return dd{-x.hi, -x.lo} }

func (x dd) add(y dd) dd {
	s, e := twoSum(x.hi, y.hi)
	t, f := twoSum(x.lo, y.lo)
	e += t
	s, e = quickTwoSum(s, e)
	e += f
	s, e = quickTwoSum(s, e)
	if math.IsInf(s, 0) || math.IsNaN(s) {
		return dd{s, 0}
	}
	return dd{s, e}
}

func (x dd) sub(y dd) dd { return x.add(y.neg()) }

func (x dd) mul(y dd) dd {
	p, e := twoProd(x.hi, y.hi)
	e += x.hi*y.lo + x.lo*y.hi
	p, e = quickTwoSum(p, e)
	if math.IsInf(p, 0) || math.IsNaN(p) {
		return dd{p, 0}
	}
	return dd{p, e}
}

// mulPow2 multiplies by 2^k exactly (barring underflow).
func (x dd) mulPow2(k int) dd { return dd{math.Ldexp(x.hi, k), math.Ldexp(x.lo, k)} }

func (x dd) div(y dd) dd {
	q1 := x.hi / y.hi
	if math.IsInf(q1, 0) || math.IsNaN(q1) || y.hi == 0 {
		return dd{q1, 0}
	}
	r := x.sub(y.mul(ddFrom(q1)))
	q2 := r.hi / y.hi
	r = r.sub(y.mul(ddFrom(q2)))
	q3 := r.hi / y.hi
	q1, q2 = quickTwoSum(q1, q2)
	return dd{q1, q2}.add(ddFrom(q3))
}

// ddExp returns eˣ: x = k·ln2 + r, |r| ≤ ln2/2, then e^(r/1024) by its
// Taylor series and ten squarings of the form s ← s(s + 2) on s = e^t − 1.
func ddExp(x dd) dd {
	switch {
	case math.IsNaN(x.hi):
		return x
	case x.hi > 709.78:
		return dd{math.Inf(1), 0}
	case x.hi < -745.2:
		return dd{}
	case x.hi == 0 && x.lo == 0:
		return ddFrom(1)
	}
	k := math.Round(x.hi / ddLn2.hi)
	r := x.sub(ddLn2.mul(ddFrom(k))).mulPow2(-10)
	// s = r + r²/2! + ... + r¹⁰/10! by Horner's rule; |r| < 3.4·10⁻⁴,
	// so the first omitted term is below 10⁻³⁸.
	acc := invFact[10]
	for i := 9; i >= 1; i-- {
		acc = acc.mul(r).add(invFact[i])
	}
	s := acc.mul(r)
	for range 10 {
		s = s.mul(s.add(ddFrom(2)))
	}
	return s.add(ddFrom(1)).mulPow2(int(k))
}

// ddLog returns ln x by one Newton step y ← y + x·e^(−y) − 1 from the
// float64 logarithm, which doubles its 16 digits.
func ddLog(x dd) dd {
	switch {
	case math.IsNaN(x.hi) || x.hi < 0:
		return dd{math.NaN(), 0}
	case x.hi == 0:
		return dd{math.Inf(-1), 0}
	case math.IsInf(x.hi, 1):
		return x
	}
	y := ddFrom(math.Log(x.hi))
	return y.add(x.mul(ddExp(y.neg()))).sub(ddFrom(1))
}

// ddSinCos returns sin x and cos x: x = k·π/2 + t, |t| ≤ π/4, and the
// Taylor series of sin t and cos t to 10⁻³³. The reduction keeps full
// double-double accuracy for |x| up to about 10⁶, far beyond the NIST
// arguments (ENSO: |x| < 90).
func ddSinCos(x dd) (sin, cos dd) {
	if math.IsNaN(x.hi) || math.IsInf(x.hi, 0) {
		return dd{math.NaN(), 0}, dd{math.NaN(), 0}
	}
	k := math.Round(x.hi / ddHalfPi.hi)
	t := x.sub(ddHalfPi.mul(ddFrom(k)))
	// sin t = t·Σ (−t²)ⁱ/(2i+1)!, cos t = Σ (−t²)ⁱ/(2i)!, i ≤ 14, by
	// Horner's rule in u = −t²; |t| ≤ π/4 makes the first omitted term of
	// either series smaller than 10⁻³³.
	u := t.mul(t).neg()
	s, c := invFact[29], invFact[28]
	for i := 13; i >= 0; i-- {
		s = s.mul(u).add(invFact[2*i+1])
		c = c.mul(u).add(invFact[2*i])
	}
	s = s.mul(t)
	switch int(math.Mod(k, 4)+4) % 4 {
	case 0:
		return s, c
	case 1:
		return c, s.neg()
	case 2:
		return s.neg(), c.neg()
	default:
		return c.neg(), s
	}
}

// ddAtan returns the principal arctangent of x by one Newton step on
// tan z = x from the float64 arctangent:
//
//	z ← z + (x·cos z − sin z) / (cos z + x·sin z).
func ddAtan(x dd) dd {
	if math.IsNaN(x.hi) {
		return x
	}
	if math.IsInf(x.hi, 0) {
		if x.hi < 0 {
			return ddHalfPi.neg()
		}
		return ddHalfPi
	}
	z := ddFrom(math.Atan(x.hi))
	s, c := ddSinCos(z)
	num := x.mul(c).sub(s)
	den := c.add(x.mul(s))
	return z.add(num.div(den))
}

// ddPow returns uᵛ: by repeated squaring for an integer v with |v| ≤ 64,
// else e^(v·ln u) (NaN for u < 0, as math.Pow).
func ddPow(u, v dd) dd {
	if v.lo == 0 && v.hi == math.Trunc(v.hi) && math.Abs(v.hi) <= 64 {
		n := int(math.Abs(v.hi))
		r, b := ddFrom(1), u
		for n > 0 {
			if n&1 == 1 {
				r = r.mul(b)
			}
			b = b.mul(b)
			n >>= 1
		}
		if v.hi < 0 {
			r = ddFrom(1).div(r)
		}
		return r
	}
	if u.hi == 0 && u.lo == 0 {
		return ddFrom(math.Pow(0, v.hi))
	}
	return ddExp(v.mul(ddLog(u)))
}
