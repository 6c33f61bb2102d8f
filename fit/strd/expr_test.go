package strd_test

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"

	"bandedge/fit/strd"
)

var (
	exprParams = []string{"b1", "b2", "b3"}
	exprPreds  = []string{"x"}
)

// TestParseExpr checks values and exact gradients of small expressions
// against hand-computed results, and Python's precedence rules, which the
// NIST formulas in model_expr follow (Python Language Reference, section
// 6.17 "Operator precedence": ** binds tighter than unary minus on its
// left and is right-associative). Values are exact in float64 or to
// rounding (relTol 1e-15).
func TestParseExpr(t *testing.T) {
	b := []float64{2, 3, 0.5}
	x := []float64{1.5}
	ln2 := math.Ln2
	tests := []struct {
		name     string
		src      string
		want     float64
		wantGrad []float64 // nil: not checked
	}{
		{"precedence -x**2", "-2**2", -4, nil},
		{"power of negative exponent", "2**-1", 0.5, nil},
		{"right-associative power", "2**3**2", 512, nil},
		{"parentheses", "(1+2)*3", 9, nil},
		{"left-associative minus", "10-4-3", 3, nil},
		{"left-associative divide", "8/4/2", 1, nil},
		{"leading-dot number", ".5+1.5E0", 2, nil},
		{"pi", "arctan(1)*4-pi", 0, nil},
		{"exp log", "log(exp(2))", 2, nil},
		{"sin cos", "sin(x)**2+cos(x)**2", 1, nil},
		{"linear", "b1*x+b2", 6, []float64{1.5, 1, 0}},
		{"product rule", "b1*b2*x", 9, []float64{4.5, 3, 0}},
		{"quotient", "b1/b2", 2.0 / 3, []float64{1.0 / 3, -2.0 / 9, 0}},
		{"power, parameter base and exponent", "b1**b2", 8, []float64{12, 8 * ln2, 0}},
		{"constant negative exponent", "(1+b1*x)**(-2)", 1.0 / 16, []float64{-2 * 1.5 / 64, 0, 0}},
		{"exp chain rule", "exp(-b3*x)", math.Exp(-0.75), []float64{0, 0, -1.5 * math.Exp(-0.75)}},
		{"arctan", "arctan(b3)", math.Atan(0.5), []float64{0, 0, 1 / 1.25}},
		{"unary minus gradient", "-b1", -2, []float64{-1, 0, 0}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			e, err := strd.ParseExpr(tc.src, exprParams, exprPreds, nil)
			if err != nil {
				t.Fatal(err)
			}
			grad := make([]float64, 3)
			got := e.Eval(x, b, grad)
			if !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-15, 1e-15) {
				t.Errorf("value %v, want %v", got, tc.want)
			}
			if tc.wantGrad != nil && !floats.EqualApprox(grad, tc.wantGrad, 1e-15) {
				t.Errorf("gradient %v, want %v", grad, tc.wantGrad)
			}
		})
	}
}

// TestParseExprGradientFD checks the forward-mode gradient of every kind of
// operation against gonum's fd.Gradient with fd.Central (STYLE.md);
// relTol 1e-7 covers the central difference's error.
func TestParseExprGradientFD(t *testing.T) {
	src := "b1*(b2+x)**(-1/b3)+exp(-b1*x)/(b2+b3*x)-arctan(b3/(x-b1))/pi+sin(b2*x)*cos(b3)+log(b1)"
	e, err := strd.ParseExpr(src, exprParams, exprPreds, nil)
	if err != nil {
		t.Fatal(err)
	}
	b := []float64{1.3, 2.1, 0.7}
	x := []float64{0.4}
	got := make([]float64, 3)
	e.Eval(x, b, got)
	want := fd.Gradient(nil, func(p []float64) float64 { return e.Eval(x, p, nil) }, b, &fd.Settings{Formula: fd.Central})
	if !floats.EqualApprox(got, want, 1e-7) {
		t.Errorf("AD gradient %v, central differences %v", got, want)
	}
}

// TestParseExprErrors checks that malformed expressions give a
// *SyntaxError wrapping ErrSyntax at the right 1-based column.
func TestParseExprErrors(t *testing.T) {
	tests := []struct {
		name    string
		src     string
		wantCol int
	}{
		{"empty", "", 1},
		{"dangling operator", "b1+", 4},
		{"missing paren", "(b1*x", 6},
		{"extra paren", "b1)", 3},
		{"unknown name", "b1*y", 4},
		{"unknown function", "tan(x)", 1},
		{"function without parens", "exp x", 5},
		{"bad number", "1.2.3*x", 1},
		{"bad character", "b1 $ 2", 4},
		{"double operator", "b1**/2", 5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := strd.ParseExpr(tc.src, exprParams, exprPreds, nil)
			if !errors.Is(err, strd.ErrSyntax) {
				t.Fatalf("error %v, want ErrSyntax", err)
			}
			var se *strd.SyntaxError
			if !errors.As(err, &se) || se.Col != tc.wantCol {
				t.Errorf("error %v: column %d, want %d", err, se.Col, tc.wantCol)
			}
		})
	}
}

// FuzzParseExpr states two properties: parsing never panics (it returns an
// Expr or a *SyntaxError), and an expression that parses survives
// printing: String() parses again to an expression with bit-identical value
// and gradient at a fixed point.
func FuzzParseExpr(f *testing.F) {
	for _, s := range []string{
		"b1*(1-exp(-b2*x))",
		"b1*(b2+x)**(-1/b3)",
		"b1-b2*x-arctan(b3/(x-b1))/pi",
		"b1+b2*cos(2*pi*x/12)+b3*sin(2*pi*x/12)",
		"(b1+b2*x+b3*x**2)/(1+b2*x+b3*x**2)",
		"-(x-b1)**2/b2**2",
		"--b1**-+-2", "((((x))))", "1e308*10", ".5e-3", "log(y)", "b1**", "(",
	} {
		f.Add(s)
	}
	b := []float64{1.25, -0.75, 2.5}
	x := []float64{0.625}
	f.Fuzz(func(t *testing.T, src string) {
		e, err := strd.ParseExpr(src, exprParams, exprPreds, nil)
		if err != nil {
			var se *strd.SyntaxError
			if !errors.As(err, &se) {
				t.Fatalf("%q: error %v is not a *SyntaxError", src, err)
			}
			return
		}
		e2, err := strd.ParseExpr(e.String(), exprParams, exprPreds, nil)
		if err != nil {
			t.Fatalf("%q printed as %q does not parse: %v", src, e.String(), err)
		}
		g1, g2 := make([]float64, 3), make([]float64, 3)
		v1, v2 := e.Eval(x, b, g1), e2.Eval(x, b, g2)
		same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
		if !same(v1, v2) {
			t.Fatalf("%q: value %v, reprinted %q: %v", src, v1, e.String(), v2)
		}
		for j := range g1 {
			if !same(g1[j], g2[j]) {
				t.Fatalf("%q: gradient %v, reprinted %q: %v", src, g1, e.String(), g2)
			}
		}
	})
}
