package strd_test

import (
	"context"
	"errors"
	"math"
	"testing"
	"time"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"bandedge/fit"
	"bandedge/fit/strd"
)

// nistSuite lists the 27 NIST StRD nonlinear regression datasets with
// NIST's difficulty level and the numbers of observations and parameters,
// as NIST publishes them (https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml;
// table in testdata/nist-strd/SOURCE.md).
var nistSuite = []struct {
	name, level string
	n, k        int
}{
	{"Misra1a", "lower", 14, 2},
	{"Chwirut2", "lower", 54, 3},
	{"Chwirut1", "lower", 214, 3},
	{"Lanczos3", "lower", 24, 6},
	{"Gauss1", "lower", 250, 8},
	{"Gauss2", "lower", 250, 8},
	{"DanWood", "lower", 6, 2},
	{"Misra1b", "lower", 14, 2},
	{"Kirby2", "average", 151, 5},
	{"Hahn1", "average", 236, 7},
	{"Nelson", "average", 128, 3},
	{"MGH17", "average", 33, 5},
	{"Lanczos1", "average", 24, 6},
	{"Lanczos2", "average", 24, 6},
	{"Gauss3", "average", 250, 8},
	{"Misra1c", "average", 14, 2},
	{"Misra1d", "average", 14, 2},
	{"Roszman1", "average", 25, 4},
	{"ENSO", "average", 168, 9},
	{"MGH09", "higher", 11, 4},
	{"Thurber", "higher", 37, 7},
	{"BoxBOD", "higher", 6, 2},
	{"Rat42", "higher", 9, 3},
	{"MGH10", "higher", 16, 3},
	{"Eckerle4", "higher", 35, 3},
	{"Rat43", "higher", 15, 4},
	{"Bennett5", "higher", 154, 3},
}

func loadByName(t testing.TB) map[string]strd.Problem {
	t.Helper()
	ps, err := strd.Load()
	if err != nil {
		t.Fatal(err)
	}
	m := make(map[string]strd.Problem, len(ps))
	for _, p := range ps {
		m[p.Name] = p
	}
	return m
}

// TestLoad checks the embedded data against NIST's listing: 27 datasets
// with the published level, n and k, and n − k degrees of freedom (NIST
// prints 9 for Rat43 where n − k = 11; SOURCE.md, "Rat43").
func TestLoad(t *testing.T) {
	ps, err := strd.Load()
	if err != nil {
		t.Fatal(err)
	}
	if len(ps) != len(nistSuite) {
		t.Fatalf("%d datasets, want %d", len(ps), len(nistSuite))
	}
	byName := loadByName(t)
	for _, tc := range nistSuite {
		t.Run(tc.name, func(t *testing.T) {
			p, ok := byName[tc.name]
			if !ok {
				t.Fatal("missing")
			}
			if p.Difficulty != tc.level || p.N() != tc.n || p.K() != tc.k {
				t.Errorf("level %s, n %d, k %d; NIST: %s, %d, %d", p.Difficulty, p.N(), p.K(), tc.level, tc.n, tc.k)
			}
			if p.DoF() != tc.n-tc.k {
				t.Errorf("DoF %d, want %d", p.DoF(), tc.n-tc.k)
			}
			if tc.name != "Rat43" && p.PrintedDoF != p.DoF() {
				t.Errorf("printed DoF %d != n − k = %d", p.PrintedDoF, p.DoF())
			}
		})
	}
}

// TestRSSAtCertified evaluates every model at NIST's certified parameters
// and compares the residual sum of squares with the certified RSS. This
// checks the data, the expression parser and the double-double residuals
// independently of the solver. NIST certifies 11 digits; the printed
// parameters are rounded to 11 digits, which moves the RSS by a relative
// ≲ 10⁻¹⁰ (VERIFY.txt of the shared reference, check C: largest 1.0·10⁻¹⁰,
// Lanczos2), so LRE ≥ 9. Lanczos1 is the exception (SOURCE.md): the
// printed parameters are not its optimum, so its RSS there,
// 3.9833639891·10⁻²¹ (50-digit value in VERIFY.txt), is not the
// certified 1.43·10⁻²⁵ and even moves in the sixth digit when the
// parameters are rounded to float64. The reference is therefore the RSS at
// float64(certified), 3.98334107204186·10⁻²¹, computed with mpmath 1.3 at
// 50 digits from the decimal data (outside this repository); the
// double-double residuals must reproduce it to LRE ≥ 10 (plain float64
// residuals give about 4 digits, VERIFY.txt).
func TestRSSAtCertified(t *testing.T) {
	byName := loadByName(t)
	for _, tc := range nistSuite {
		t.Run(tc.name, func(t *testing.T) {
			p := byName[tc.name]
			f := p.Func()
			r := make([]float64, f.M)
			f.Residuals(r, p.Certified)
			rss := 0.0
			for _, v := range r {
				rss += v * v
			}
			want, min := p.CertifiedRSS, 9.0
			if tc.name == "Lanczos1" {
				want, min = 3.98334107204186e-21, 10
			}
			if l := strd.LRE(rss, want); l < min {
				t.Errorf("RSS %v, want %v (LRE %.1f < %g)", rss, want, l, min)
			}
		})
	}
}

// TestJacobianAD checks the automatic-differentiation Jacobian of every
// model against gonum's fd.Jacobian with fd.Central at both NIST starts.
// fd.Jacobian takes one absolute step for every coordinate, which is far
// too large for Misra1c's b2 ≈ 10⁻⁴ or Hahn1's b7 ≈ 10⁻⁹; so it
// differentiates in scaled variables b = s∘u with s_j = |b_j| (each step
// then relative), and the columns are divided by s_j. Tolerance: relTol
// 1e-6 for the central difference's O(h²) error, plus an absolute part
// for its rounding error, ε‖r‖∞/h_j with h_j ≈ 6·10⁻⁶ s_j, i.e.
// ≈ 4·10⁻¹¹ ‖r‖∞/s_j (allowed 25×: 1e-9 ‖r‖∞/s_j), and 1e-8 × the largest
// entry of the column.
func TestJacobianAD(t *testing.T) {
	byName := loadByName(t)
	for _, tc := range nistSuite {
		for start := 1; start <= 2; start++ {
			t.Run(tc.name, func(t *testing.T) {
				p := byName[tc.name]
				f := p.Func()
				b := p.Start(start)
				got := mat.NewDense(f.M, len(b), nil)
				f.Jacobian(got, b)
				r := make([]float64, f.M)
				f.Residuals(r, b)
				rmax := floats.Norm(r, math.Inf(1))
				want := mat.NewDense(f.M, len(b), nil)
				scale := make([]float64, len(b))
				u := make([]float64, len(b))
				for j, v := range b {
					scale[j] = math.Abs(v)
					if scale[j] == 0 {
						scale[j] = 1
					}
					u[j] = v / scale[j]
				}
				bu := make([]float64, len(b))
				fd.Jacobian(want, func(y, u []float64) {
					for j := range u {
						bu[j] = scale[j] * u[j]
					}
					f.Residuals(y, bu)
				}, u, &fd.JacobianSettings{Formula: fd.Central})
				for j := range b {
					for i := range f.M {
						want.Set(i, j, want.At(i, j)/scale[j])
					}
				}
				for j := range b {
					colMax := mat.Norm(want.ColView(j), math.Inf(1))
					for i := range f.M {
						if !scalar.EqualWithinAbsOrRel(got.At(i, j), want.At(i, j), 1e-8*colMax+1e-9*rmax/scale[j], 1e-6) {
							t.Errorf("start %d: J[%d,%d] = %v, central differences %v", start, i, j, got.At(i, j), want.At(i, j))
						}
					}
				}
			})
		}
	}
}

// TestSuite is the NIST StRD nonlinear regression suite: every dataset
// from both starts with default fit.Settings (no per-problem tuning).
// Certified values: NIST StRD, 11 significant digits (128-bit
// computation). The bar (PHYSICS.md section 4): parameters LRE ≥ 6;
// standard deviations and residual SD LRE ≥ 4, McCullough's (1999)
// threshold for a correct answer. The run must also converge (no Early
// status) without error.
func TestSuite(t *testing.T) {
	byName := loadByName(t)
	start := time.Now()
	fallbacks := 0
	for _, tc := range nistSuite {
		for st := 1; st <= 2; st++ {
			t.Run(tc.name, func(t *testing.T) {
				o := strd.Score(context.Background(), byName[tc.name], st, nil)
				t.Logf("start %d: LRE params %.1f, sd %.1f, residual sd %.1f, RSS %.1f; %d iterations, %s (%v)",
					st, o.ParamLRE, o.StdDevLRE, o.ResidualSDLRE, o.RSSLRE, o.Iterations, o.Strategy, o.Status)
				if o.Err != nil {
					t.Fatalf("start %d: %v", st, o.Err)
				}
				if o.Status.Early() {
					t.Errorf("start %d: status %v", st, o.Status)
				}
				if o.ParamLRE < strd.MinParamLRE {
					t.Errorf("start %d: parameter LRE %.2f < %d: %v, certified %v", st, o.ParamLRE, strd.MinParamLRE, o.Result.Params, byName[tc.name].Certified)
				}
				if o.StdDevLRE < strd.MinSDLRE || o.ResidualSDLRE < strd.MinSDLRE {
					t.Errorf("start %d: std-dev LRE %.2f, residual-SD LRE %.2f < %d", st, o.StdDevLRE, o.ResidualSDLRE, strd.MinSDLRE)
				}
				if !o.Pass {
					t.Errorf("start %d: Pass false", st)
				}
				if o.Fallback {
					fallbacks++
				}
			})
		}
	}
	t.Logf("54 runs in %v, %d with the fallback", time.Since(start), fallbacks)
}

// TestSuiteFloat64 runs the suite with the residuals in plain float64
// (Problem.FuncFloat64) and the parameter bar, LRE ≥ 6: the solver must
// not depend on the extended-precision residuals for the estimates. The
// standard deviations are only logged: for Lanczos1 they are limited to
// LRE ≈ 3 by the float64 rounding of the data (see Problem.Func).
func TestSuiteFloat64(t *testing.T) {
	if testing.Short() {
		t.Skip("second full suite run")
	}
	byName := loadByName(t)
	for _, tc := range nistSuite {
		for st := 1; st <= 2; st++ {
			t.Run(tc.name, func(t *testing.T) {
				p := byName[tc.name]
				res, err := fit.LeastSquares(context.Background(), p.FuncFloat64(), p.Start(st), nil)
				if err != nil {
					t.Fatal(err)
				}
				pl, sl := strd.MaxLRE+0.0, strd.MaxLRE+0.0
				for j, c := range p.Certified {
					pl = math.Min(pl, strd.LRE(res.Params[j], c))
					sl = math.Min(sl, strd.LRE(res.StdErr[j], p.CertifiedStdDev[j]))
				}
				t.Logf("start %d: LRE params %.1f, sd %.1f", st, pl, sl)
				if pl < strd.MinParamLRE || res.Status.Early() {
					t.Errorf("start %d: parameter LRE %.2f, status %v", st, pl, res.Status)
				}
			})
		}
	}
}

// TestRun checks Run's order and its stop on a cancelled context.
func TestRun(t *testing.T) {
	byName := loadByName(t)
	ps := []strd.Problem{byName["Misra1a"], byName["DanWood"]}
	out := strd.Run(context.Background(), ps, nil)
	want := []struct {
		name  string
		start int
	}{{"Misra1a", 1}, {"Misra1a", 2}, {"DanWood", 1}, {"DanWood", 2}}
	if len(out) != len(want) {
		t.Fatalf("%d outcomes, want %d", len(out), len(want))
	}
	for i, w := range want {
		if out[i].Name != w.name || out[i].Start != w.start || !out[i].Pass {
			t.Errorf("outcome %d: %s start %d pass %v, want %s start %d passing", i, out[i].Name, out[i].Start, out[i].Pass, w.name, w.start)
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if out := strd.Run(ctx, ps, nil); len(out) != 0 {
		t.Errorf("%d outcomes after cancel, want 0", len(out))
	}
}

// TestLRE checks the log relative error (McCullough 1999): digits of
// agreement, the cap at 11, the floor at 0, and NaN.
func TestLRE(t *testing.T) {
	tests := []struct {
		x, c, want float64
	}{
		{1.000001, 1, 6},
		{-2.0002, -2, 4},
		{5, 5, 11},
		{5 + 5e-13, 5, 11},
		{3, 1, 0},
		{math.NaN(), 1, 0},
		{math.Inf(1), 1, 0},
	}
	for _, tc := range tests {
		if got := strd.LRE(tc.x, tc.c); !scalar.EqualWithinAbs(got, tc.want, 1e-6) {
			t.Errorf("LRE(%v, %v) = %v, want %v", tc.x, tc.c, got, tc.want)
		}
	}
}

// TestDecodeErrors checks that malformed dataset files give ErrFormat (or
// ErrSyntax for a bad model expression), never a panic.
func TestDecodeErrors(t *testing.T) {
	valid := `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1],"start2":[1],
		"certified":[1],"certified_std_dev":[1],"n_observations":2,"x":[1,2],"y":[1,2],
		"model_lhs":"y","model_expr":"b1*x","predictors":["x"]}`
	if _, err := strd.Decode([]byte(valid)); err != nil {
		t.Fatalf("valid file: %v", err)
	}
	tests := []struct {
		name    string
		src     string
		wantErr error
	}{
		{"not JSON", `{`, strd.ErrFormat},
		{"bad difficulty", `{"name":"T","difficulty":"easy"}`, strd.ErrFormat},
		{"start length", `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1,2],"start2":[1],"certified":[1],"certified_std_dev":[1]}`, strd.ErrFormat},
		{"x count", `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1],"start2":[1],"certified":[1],"certified_std_dev":[1],"n_observations":2,"x":[1],"y":[1,2],"model_lhs":"y","model_expr":"b1*x","predictors":["x"]}`, strd.ErrFormat},
		{"x not a number", `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1],"start2":[1],"certified":[1],"certified_std_dev":[1],"n_observations":2,"x":[1,"a"],"y":[1,2],"model_lhs":"y","model_expr":"b1*x","predictors":["x"]}`, strd.ErrFormat},
		{"x pair expected", `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1],"start2":[1],"certified":[1],"certified_std_dev":[1],"n_observations":2,"x":[[1,2],[3]],"y":[1,2],"model_lhs":"y","model_expr":"b1*x1","predictors":["x1","x2"]}`, strd.ErrFormat},
		{"bad lhs", `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1],"start2":[1],"certified":[1],"certified_std_dev":[1],"n_observations":2,"x":[1,2],"y":[1,2],"model_lhs":"sqrt(y)","model_expr":"b1*x","predictors":["x"]}`, strd.ErrFormat},
		{"bad expression", `{"name":"T","difficulty":"lower","parameters":["b1"],"start1":[1],"start2":[1],"certified":[1],"certified_std_dev":[1],"n_observations":2,"x":[1,2],"y":[1,2],"model_lhs":"y","model_expr":"b1*z","predictors":["x"]}`, strd.ErrSyntax},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := strd.Decode([]byte(tc.src)); !errors.Is(err, tc.wantErr) {
				t.Errorf("error %v, want %v", err, tc.wantErr)
			}
		})
	}
}

// BenchmarkSuite times the whole NIST suite (54 fits).
func BenchmarkSuite(b *testing.B) {
	ps, err := strd.Load()
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		strd.Run(context.Background(), ps, nil)
	}
}
