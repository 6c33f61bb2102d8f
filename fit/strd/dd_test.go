package strd

import (
	"math"
	"math/big"
	"testing"
)

// ddRelErr returns |x − want|/|want| with x taken exactly (hi + lo in
// big.Float) and want parsed from its decimal expansion.
func ddRelErr(x dd, want string) float64 {
	w, _ := new(big.Float).SetPrec(300).SetString(want)
	got := new(big.Float).SetPrec(300).SetFloat64(x.hi)
	got.Add(got, new(big.Float).SetFloat64(x.lo))
	d := new(big.Float).SetPrec(300).Sub(got, w)
	d.Quo(d, w)
	r, _ := d.Float64()
	return math.Abs(r)
}

// TestDD checks the double-double elementary functions against 40-digit
// reference values computed with mpmath 1.3 (arbitrary-precision Python
// library, mp.dps = 45), independent of this code. Tolerance: relative
// 1e-30, two digits short of the 106-bit (≈10⁻³²) format, for the
// argument reduction and the Newton steps; exp of a large argument x is
// limited by the reduction x − k·ln2 with ln2 held to 2⁻¹⁰⁶, i.e. to
// |x|·2⁻¹⁰⁶ ≈ |x|·1.2·10⁻³², so exp(700) gets 1e-29. (Numbers below
// about 10⁻²⁹² cannot be held in double-double at all: their low word is
// subnormal. The NIST data stay far from that.)
func TestDD(t *testing.T) {
	p := ddParse
	tests := []struct {
		name string
		got  dd
		want string
		tol  float64 // 0 means 1e-30
	}{
		{"exp(1)", ddExp(p("1")), "2.718281828459045235360287471352662497757", 0},
		{"exp(-1)", ddExp(p("-1")), "0.3678794411714423215955237701614608674458", 0},
		{"exp(10)", ddExp(p("10")), "22026.46579480671651695790064528424436635", 0},
		{"exp(-0.00055)", ddExp(p("-0.00055")), "0.999450151222274645674384796480370886213", 0},
		{"exp(700)", ddExp(p("700")), "1.014232054735004509455329595231267615205e+304", 1e-29},
		{"log(10)", ddLog(p("10")), "2.302585092994045684017991454684364207601", 0},
		{"log(2.5134)", ddLog(p("2.5134")), "0.9216364181989071366860164458759771631415", 0},
		{"log(1e-30)", ddLog(p("1e-30")), "-69.07755278982137052053974364053092622803", 0},
		{"sin(1)", first(ddSinCos(p("1"))), "0.8414709848078965066525023216302989996226", 0},
		{"cos(1)", second(ddSinCos(p("1"))), "0.5403023058681397174009366074429766037323", 0},
		{"sin(88.5)", first(ddSinCos(p("88.5"))), "0.5101900080017630296452775774202092100897", 0},
		{"cos(88.5)", second(ddSinCos(p("88.5"))), "0.8600617162362018400354822756218624677889", 0},
		{"sin(-3)", first(ddSinCos(p("-3"))), "-0.1411200080598672221007448028081102798469", 0},
		{"arctan(0.5)", ddAtan(p("0.5")), "0.4636476090008061162142562314612144020285", 0},
		{"arctan(-7.25)", ddAtan(p("-7.25")), "-1.433730152484708986640471909669887364861", 0},
		{"arctan(1e-5)", ddAtan(p("1e-5")), "0.000009999999999666666666686666666665238095238", 0},
		{"1.1**-0.5", ddPow(p("1.1"), p("-0.5")), "0.9534625892455923154467759215272159986139", 0},
		{"46.7**(1/0.93)", ddPow(p("46.7"), p("1").div(p("0.93"))), "62.3683691111763117548429038453145497614", 0},
		{"3**-2", ddPow(p("3"), p("-2")), "0.1111111111111111111111111111111111111111", 0},
		{"0.1*3", p("0.1").mul(p("3")), "0.3", 0},
		{"1/3", p("1").div(p("3")), "0.3333333333333333333333333333333333333333", 0},
		{"0.1+0.2", p("0.1").add(p("0.2")), "0.3", 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tol := tc.tol
			if tol == 0 {
				tol = 1e-30
			}
			if e := ddRelErr(tc.got, tc.want); !(e <= tol) {
				t.Errorf("got %v + %v, relative error %.3g > %g", tc.got.hi, tc.got.lo, e, tol)
			}
		})
	}
}

func first(a, _ dd) dd  { return a }
func second(_, b dd) dd { return b }

// TestDDSpecial checks the edge cases the NIST models can reach during a
// fit: overflow, underflow, logarithms of 0 and negative numbers (as
// math.Exp, math.Log and math.Pow do).
func TestDDSpecial(t *testing.T) {
	tests := []struct {
		name string
		got  float64
		want float64
	}{
		{"exp(800)", ddExp(ddFrom(800)).float(), math.Inf(1)},
		{"exp(-800)", ddExp(ddFrom(-800)).float(), 0},
		{"log(0)", ddLog(ddFrom(0)).float(), math.Inf(-1)},
		{"log(-1)", ddLog(ddFrom(-1)).float(), math.NaN()},
		{"(-2)**0.5", ddPow(ddFrom(-2), ddFrom(0.5)).float(), math.NaN()},
		{"(-2)**3", ddPow(ddFrom(-2), ddFrom(3)).float(), -8},
		{"0**2", ddPow(ddFrom(0), ddFrom(2)).float(), 0},
		{"0**-1", ddPow(ddFrom(0), ddFrom(-1)).float(), math.Inf(1)},
		{"0**0.5", ddPow(ddFrom(0), ddFrom(0.5)).float(), 0},
		{"arctan(+Inf)", ddAtan(ddFrom(math.Inf(1))).float(), math.Pi / 2},
		{"1/0", ddFrom(1).div(ddFrom(0)).float(), math.Inf(1)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if tc.got != tc.want && !(math.IsNaN(tc.got) && math.IsNaN(tc.want)) {
				t.Errorf("got %v, want %v", tc.got, tc.want)
			}
		})
	}
}
