package specfun

import (
	"math"
	"math/big"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// The references below are computed here, independently of the float64
// code paths, with math/big at a working precision chosen so that at least
// 60 correct decimal digits survive every cancellation (the 60-digit
// references of the brief). π comes from Machin's formula
// π = 16·atan(1/5) − 4·atan(1/239) (Machin 1706), so no digit is typed in.

const refDigitsBits = 200 // ≥ 60 decimal digits after all cancellations

// bigAtanInv returns atan(1/n) = Σ (−1)^k / ((2k+1)·n^{2k+1}).
func bigAtanInv(n int64, prec uint) *big.Float {
	nn := new(big.Float).SetPrec(prec).SetInt64(n * n)
	pow := new(big.Float).SetPrec(prec).SetInt64(n) // n^{2k+1}
	sum := new(big.Float).SetPrec(prec)
	eps := new(big.Float).SetPrec(prec).SetMantExp(big.NewFloat(1), -int(prec)-8)
	for k := int64(0); ; k++ {
		t := new(big.Float).SetPrec(prec).Quo(big.NewFloat(1), pow)
		t.Quo(t, new(big.Float).SetPrec(prec).SetInt64(2*k+1))
		if k%2 == 0 {
			sum.Add(sum, t)
		} else {
			sum.Sub(sum, t)
		}
		if t.Cmp(eps) < 0 {
			return sum
		}
		pow.Mul(pow, nn)
	}
}

// bigSqrtPi returns √π by Machin's formula, at 4096 bits (computed once;
// every reference below needs fewer) rounded to prec.
func bigSqrtPi(prec uint) *big.Float {
	if sqrtPi4096 == nil {
		const p0 = 4096
		p := new(big.Float).SetPrec(p0).Mul(big.NewFloat(16), bigAtanInv(5, p0))
		p.Sub(p, new(big.Float).SetPrec(p0).Mul(big.NewFloat(4), bigAtanInv(239, p0)))
		sqrtPi4096 = p.Sqrt(p)
	}
	if prec > 4096 {
		panic("specfun test: precision above 4096 bits")
	}
	return new(big.Float).SetPrec(prec).Set(sqrtPi4096)
}

var sqrtPi4096 *big.Float // cache of bigSqrtPi; tests run sequentially

// bigExpPos returns exp(a) for a ≥ 0 by its Taylor series (positive terms).
func bigExpPos(a *big.Float, prec uint) *big.Float {
	sum := new(big.Float).SetPrec(prec).SetInt64(1)
	term := new(big.Float).SetPrec(prec).SetInt64(1)
	for n := int64(1); ; n++ {
		term.Mul(term, a)
		term.Quo(term, new(big.Float).SetPrec(prec).SetInt64(n))
		sum.Add(sum, term)
		if term.Sign() == 0 || term.MantExp(nil)-sum.MantExp(nil) < -int(prec)-8 {
			return sum
		}
	}
}

// refErfcx returns erfcx(x) from
//
//	erfcx(x) = exp(x²) − (2/√π)·Σ 2ⁿ x^{2n+1}/(2n+1)!!     (|x| ≤ 16)
//
// (the second term is exp(x²)·erf(x), a series of positive terms), with
// enough bits to absorb the cancellation of about 1.44·x² bits, and from the
// asymptotic series with its rigorous remainder bound (first neglected term,
// below e^{−256} relative at x > 16) beyond. Negative x by reflection.
func refErfcx(x float64) float64 {
	if x < 0 {
		prec := uint(refDigitsBits + 2*x*x)
		bx := new(big.Float).SetPrec(prec).SetFloat64(x)
		e := bigExpPos(new(big.Float).SetPrec(prec).Mul(bx, bx), prec)
		e.Mul(e, big.NewFloat(2))
		e.Sub(e, big.NewFloat(refErfcx(-x)))
		f, _ := e.Float64()
		return f
	}
	if x <= 16 {
		prec := uint(refDigitsBits + 2*x*x)
		bx := new(big.Float).SetPrec(prec).SetFloat64(x)
		x2 := new(big.Float).SetPrec(prec).Mul(bx, bx)
		e := bigExpPos(x2, prec)
		sum := new(big.Float).SetPrec(prec).Set(bx)
		term := new(big.Float).SetPrec(prec).Set(bx)
		twoX2 := new(big.Float).SetPrec(prec).Mul(x2, big.NewFloat(2))
		for n := int64(0); ; n++ {
			term.Mul(term, twoX2)
			term.Quo(term, new(big.Float).SetPrec(prec).SetInt64(2*n+3))
			sum.Add(sum, term)
			if term.Sign() == 0 || term.MantExp(nil)-sum.MantExp(nil) < -int(prec)-8 {
				break
			}
		}
		sum.Mul(sum, big.NewFloat(2))
		sum.Quo(sum, bigSqrtPi(prec))
		e.Sub(e, sum)
		f, _ := e.Float64()
		return f
	}
	const prec = refDigitsBits
	bx := new(big.Float).SetPrec(prec).SetFloat64(x)
	t := new(big.Float).SetPrec(prec).Mul(bx, bx)
	t.Mul(t, big.NewFloat(2))
	t.Quo(big.NewFloat(1), t)
	sum := new(big.Float).SetPrec(prec).SetInt64(1)
	term := new(big.Float).SetPrec(prec).SetInt64(1)
	for n := int64(1); n < 400; n++ {
		term.Mul(term, t)
		term.Mul(term, new(big.Float).SetInt64(-(2*n - 1)))
		sum.Add(sum, term)
		if term.Sign() == 0 || term.MantExp(nil) < -int(prec)-8 {
			break
		}
	}
	sum.Quo(sum, bx)
	sum.Quo(sum, bigSqrtPi(prec))
	f, _ := sum.Float64()
	return f
}

// refDawson returns D(x) = S/E with S = Σ x^{2n+1}/(n!(2n+1)) and
// E = Σ x^{2n}/n! = exp(x²), both series of positive terms (no cancellation),
// for |x| ≤ 30, and the asymptotic series beyond (smallest term below
// e^{−900}).
func refDawson(x float64) float64 {
	ax := math.Abs(x)
	const prec = refDigitsBits
	var r *big.Float
	if ax <= 30 {
		bx := new(big.Float).SetPrec(prec).SetFloat64(ax)
		x2 := new(big.Float).SetPrec(prec).Mul(bx, bx)
		s := new(big.Float).SetPrec(prec).Set(bx)
		pw := new(big.Float).SetPrec(prec).Set(bx) // x^{2n+1}/n!
		for n := int64(1); ; n++ {
			pw.Mul(pw, x2)
			pw.Quo(pw, new(big.Float).SetPrec(prec).SetInt64(n))
			t := new(big.Float).SetPrec(prec).Quo(pw, new(big.Float).SetPrec(prec).SetInt64(2*n+1))
			s.Add(s, t)
			if t.Sign() == 0 || t.MantExp(nil)-s.MantExp(nil) < -int(prec)-8 {
				break
			}
		}
		r = s.Quo(s, bigExpPos(x2, prec))
	} else {
		bx := new(big.Float).SetPrec(prec).SetFloat64(ax)
		t := new(big.Float).SetPrec(prec).Mul(bx, bx)
		t.Mul(t, big.NewFloat(2))
		t.Quo(big.NewFloat(1), t)
		sum := new(big.Float).SetPrec(prec).SetInt64(1)
		term := new(big.Float).SetPrec(prec).SetInt64(1)
		for n := int64(1); n < 400; n++ {
			term.Mul(term, t)
			term.Mul(term, new(big.Float).SetInt64(2*n-1))
			sum.Add(sum, term)
			if term.MantExp(nil) < -int(prec)-8 {
				break
			}
		}
		r = sum.Quo(sum, bx.Mul(bx, big.NewFloat(2)))
	}
	f, _ := r.Float64()
	return math.Copysign(f, x)
}

// testPoints returns the arguments checked against the references: a dense
// grid over the ranges where the algorithms switch, and decades out to the
// float64 limits, both signs.
func testPoints(maxNeg float64) []float64 {
	step := 0.0497 // off-round step: hits no branch point exactly
	if testing.Short() {
		step = 0.497 // the math/big references take seconds on the dense grid
	}
	var xs []float64
	for _, x := range []float64{0, 1e-300, 1e-100, 1e-20, 1e-12, 1e-8, 1e-6, 1e-4, 1e-3, 0.01} {
		xs = append(xs, x)
	}
	for x := 0.025; x <= 30; x += step {
		xs = append(xs, x)
	}
	// each side of every branch point of Erfcx and Dawson and of math.Erfc
	for _, b := range []float64{0.84375, 1.25, 1 / 0.35, 6, 6.5, 12, 26.7, 28} {
		xs = append(xs, math.Nextafter(b, 0), b, math.Nextafter(b, math.Inf(1)))
	}
	for _, x := range []float64{35, 50, 100, 1e3, 1e5, 1e8, 1.0000001e8, 1e10, 1e50, 1e100, 1e200, 1e300} {
		xs = append(xs, x)
	}
	n := len(xs)
	for _, x := range xs[:n] {
		if x > 0 && x <= maxNeg {
			xs = append(xs, -x)
		}
	}
	return xs
}

// TestErfcxReference checks Erfcx against refErfcx (60-digit math/big).
// Tolerance 1e-14 relative: the brief's target; a few ulp are expected.
func TestErfcxReference(t *testing.T) {
	const relTol = 1e-14
	var worst, worstX float64
	// below −26.6 the true value overflows float64 (checked separately)
	for _, x := range testPoints(26.5) {
		want := refErfcx(x)
		got := Erfcx(x)
		if !scalar.EqualWithinRel(got, want, relTol) {
			t.Errorf("Erfcx(%v) = %.17g, want %.17g (rel err %.3g)", x, got, want, math.Abs(got-want)/want)
		}
		if e := math.Abs(got-want) / want; e > worst {
			worst, worstX = e, x
		}
	}
	t.Logf("Erfcx: worst relative error %.3g at x = %v", worst, worstX)
}

// TestDawsonReference checks Dawson against refDawson (60-digit math/big).
// Tolerance 1e-14 relative: the brief's target.
func TestDawsonReference(t *testing.T) {
	const relTol = 1e-14
	var worst, worstX float64
	for _, x := range testPoints(math.Inf(1)) {
		want := refDawson(x)
		got := Dawson(x)
		if want == 0 {
			if got != 0 {
				t.Errorf("Dawson(%v) = %g, want 0", x, got)
			}
			continue
		}
		e := math.Abs(got-want) / math.Abs(want)
		if e > relTol {
			t.Errorf("Dawson(%v) = %.17g, want %.17g (rel err %.3g)", x, got, want, e)
		}
		if e > worst {
			worst, worstX = e, x
		}
	}
	t.Logf("Dawson: worst relative error %.3g at x = %v", worst, worstX)
}

// TestReferencesAgainstPublished checks the math/big references themselves
// against values printed in Abramowitz & Stegun (1964), Table 7.5 (Dawson's
// integral) and elementary closed forms, so that a wrong reference cannot
// agree with a wrong implementation. The A&S values are from memory and
// carry 9-10 digits; tolerance 1e-9 relative.
func TestReferencesAgainstPublished(t *testing.T) {
	tests := []struct {
		name   string
		got    float64
		want   float64
		relTol float64
	}{
		// D(x) maximum value 0.5410442246 at x = 0.9241388730 (from memory,
		// A&S 1964 Table 7.5 notes); the maximum is where D' = 1 − 2xD = 0,
		// so check both the value and the stationarity.
		{name: "Dawson max value", got: refDawson(0.9241388730), want: 0.5410442246, relTol: 1e-9},
		{name: "Dawson stationarity", got: 2 * 0.9241388730 * refDawson(0.9241388730), want: 1, relTol: 1e-9},
		// D(1) = 0.5380795069 (from memory, A&S Table 7.5).
		{name: "Dawson(1)", got: refDawson(1), want: 0.5380795069, relTol: 1e-9},
		// erfcx(0) = 1 exactly; erfc(1) = 0.1572992070502851 (from memory,
		// A&S Table 7.1), so erfcx(1) = e·erfc(1).
		{name: "erfcx(0)", got: refErfcx(0), want: 1, relTol: 1e-15},
		{name: "erfcx(1)", got: refErfcx(1), want: math.E * 0.1572992070502851, relTol: 1e-14},
		// erfc(−x) = 2 − erfc(x): erfcx(−1) = e·(2 − erfc(1)).
		{name: "erfcx(-1)", got: refErfcx(-1), want: math.E * (2 - 0.1572992070502851), relTol: 1e-14},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if !scalar.EqualWithinRel(tc.got, tc.want, tc.relTol) {
				t.Errorf("got %.15g, want %.15g (relTol %g)", tc.got, tc.want, tc.relTol)
			}
		})
	}
}

// TestErfcxIdentity compares Erfcx with exp(x²)·math.Erfc(x) where that
// product is itself accurate: for |x| ≤ 3 the rounding of x·x costs at most
// x²·2⁻⁵³ ≈ 1e-15 relative. Tolerance 1e-14.
func TestErfcxIdentity(t *testing.T) {
	for x := -3.0; x <= 3; x += 0.01 {
		want := math.Exp(x*x) * math.Erfc(x)
		if got := Erfcx(x); !scalar.EqualWithinRel(got, want, 1e-14) {
			t.Errorf("Erfcx(%v) = %.17g, exp(x²)erfc(x) = %.17g", x, got, want)
		}
	}
}

// TestDawsonODE checks D'(x) = 1 − 2x·D(x) (differentiate the definition)
// with a central difference of step h = 1e-4: truncation h²·|D‴|/6 and
// rounding 1e-16/h both stay below 1e-8, the tolerance.
func TestDawsonODE(t *testing.T) {
	const h = 1e-4
	for x := -20.0; x <= 20; x += 0.0731 {
		fd := (Dawson(x+h) - Dawson(x-h)) / (2 * h)
		want := 1 - 2*x*Dawson(x)
		if !scalar.EqualWithinAbsOrRel(fd, want, 1e-8, 1e-8) {
			t.Errorf("x=%v: central difference %.12g, 1−2xD = %.12g", x, fd, want)
		}
	}
}

// TestErfcxODE checks erfcx'(x) = 2x·erfcx(x) − 2/√π (differentiate the
// definition) with the step of TestDawsonODE. For x < 0, erfcx ≈ 2·exp(x²)
// and the relative truncation error of the central difference is about
// h²·(2x)²/6, which is 6e-8 at x = −3: hence x ≥ −3 and relTol 1e-7.
func TestErfcxODE(t *testing.T) {
	const h = 1e-4
	for x := -3.0; x <= 40; x += 0.0731 {
		fd := (Erfcx(x+h) - Erfcx(x-h)) / (2 * h)
		want := 2*x*Erfcx(x) - 2/math.Sqrt(math.Pi)
		if !scalar.EqualWithinAbsOrRel(fd, want, 1e-8, 1e-7) {
			t.Errorf("x=%v: central difference %.12g, 2x·erfcx−2/√π = %.12g", x, fd, want)
		}
	}
}

// TestSpecialValues checks the limits and special cases stated in the doc
// comments.
func TestSpecialValues(t *testing.T) {
	if got := Erfcx(math.Inf(1)); got != 0 {
		t.Errorf("Erfcx(+Inf) = %v, want 0", got)
	}
	if got := Erfcx(math.Inf(-1)); !math.IsInf(got, 1) {
		t.Errorf("Erfcx(-Inf) = %v, want +Inf", got)
	}
	if got := Erfcx(-27); !math.IsInf(got, 1) { // 2·exp(729) > MaxFloat64
		t.Errorf("Erfcx(-27) = %v, want +Inf", got)
	}
	if got := Erfcx(-26.6); math.IsInf(got, 0) || got < 1e307 { // 2·exp(707.56) ≈ 2.1e307
		t.Errorf("Erfcx(-26.6) = %v, want finite ≈ 2e307", got)
	}
	if got := Erfcx(math.MaxFloat64); got <= 0 || math.IsInf(got, 0) {
		t.Errorf("Erfcx(MaxFloat64) = %v, want a tiny positive number", got)
	}
	if !math.IsNaN(Erfcx(math.NaN())) || !math.IsNaN(Dawson(math.NaN())) {
		t.Error("NaN must propagate")
	}
	if got := Dawson(math.Inf(1)); got != 0 || math.Signbit(got) {
		t.Errorf("Dawson(+Inf) = %v, want +0", got)
	}
	if got := Dawson(math.Inf(-1)); got != 0 || !math.Signbit(got) {
		t.Errorf("Dawson(-Inf) = %v, want -0", got)
	}
	if got := Dawson(math.MaxFloat64); got <= 0 {
		t.Errorf("Dawson(MaxFloat64) = %v, want tiny positive", got)
	}
	for _, x := range []float64{0.3, 2, 7, 1e3} { // odd function
		if Dawson(-x) != -Dawson(x) {
			t.Errorf("Dawson(-%v) != -Dawson(%v)", x, x)
		}
	}
}

func BenchmarkDawson(b *testing.B) {
	b.ReportAllocs()
	var s float64
	for i := 0; b.Loop(); i++ {
		s += Dawson(float64(i%1000) * 0.01) // 0 … 10
	}
	_ = s
}

func BenchmarkErfcx(b *testing.B) {
	b.ReportAllocs()
	var s float64
	for i := 0; b.Loop(); i++ {
		s += Erfcx(float64(i%1000) * 0.01)
	}
	_ = s
}
