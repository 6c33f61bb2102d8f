package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// qrCase is a matrix for TestPivotedQR, given by columns.
type qrCase struct {
	name    string
	m, n    int
	col     func(i, j int) float64
	pivots  bool // compare the pivot order with LAPACK (full rank, distinct norms)
	relTol  float64
	rankDef bool // rank deficient: compare RᵀR only, not R itself
}

// qrCases are the matrices of TestPivotedQR, seeded (seed 7).
func qrCases() []qrCase {
	rng := rand.New(rand.NewPCG(7, 7))
	random := func(m, n int, scales []float64) func(i, j int) float64 {
		v := make([]float64, m*n)
		for k := range v {
			v[k] = rng.NormFloat64() * scales[k%n]
		}
		return func(i, j int) float64 { return v[i*n+j] }
	}
	// Columns exp(−b_j x_i) on x ∈ [0, 1.15]: the nearly dependent
	// exponentials of NIST's Lanczos problems (condition number ~10⁸).
	lanczos := func(i, j int) float64 {
		b := []float64{0.95, 2.5, 4.5, 1.5, 3.5, 5.5}[j]
		return math.Exp(-b * 0.05 * float64(i))
	}
	return []qrCase{
		// 1000×3 with the column scales of a direct+Urbach Jacobian
		// (∂α/∂E_g ~ 10⁵, ∂α/∂C ~ 1, ∂α/∂E_U ~ 10⁴ after weighting).
		{name: "tall 1000x3, scales 1e5, 1, 1e4", m: 1000, n: 3, col: random(1000, 3, []float64{1e5, 1, 1e4}), pivots: true, relTol: 1e-12},
		{name: "50x8 random", m: 50, n: 8, col: random(50, 8, []float64{1, 2, 3, 4, 5, 6, 7, 8}), pivots: true, relTol: 1e-13},
		{name: "Lanczos-like 24x6", m: 24, n: 6, col: lanczos, relTol: 1e-13},
		{name: "square 4x4", m: 4, n: 4, col: random(4, 4, []float64{1, 10, 100, 0.1}), pivots: true, relTol: 1e-14},
		{name: "rank deficient: a zero column and a multiple", m: 30, n: 4, rankDef: true, relTol: 1e-13,
			col: func(i, j int) float64 {
				switch j {
				case 0:
					return math.Sin(float64(i))
				case 1:
					return 0
				case 2:
					return 3 * math.Sin(float64(i))
				}
				return math.Cos(float64(i))
			}},
		// Entries near 10⁻³⁰⁰ and 10³⁰⁰: the sums of squares leave the
		// float64 range, so norm2 and the reflector must take their
		// overflow- and underflow-safe paths (gonum's scaled norm and
		// dlarfg's rescaling).
		{name: "tiny entries 1e-300", m: 40, n: 3, col: random(40, 3, []float64{1e-300, 3e-301, 2e-299}), pivots: true, relTol: 1e-13},
		{name: "huge entries 1e300", m: 40, n: 3, col: random(40, 3, []float64{1e300, 3e299, 2e301}), pivots: true, relTol: 1e-13},
	}
}

// TestPivotedQR checks pivotedQR against gonum's LAPACK column-pivoted QR
// (lapack64.Geqp3 and lapack64.Ormqr for Qᵀb) on matrices from well
// conditioned to rank deficient and at the ends of the float64 range.
// Both are backward stable Householder factorisations, so R agrees up to
// the sign of each row (Q's columns may differ in sign) within a small
// multiple of the backward error γ·‖A‖ with γ ≈ m·ε (Higham, Accuracy and
// Stability of Numerical Algorithms, 2nd ed., SIAM 2002, theorem 19.4):
// relTol·‖A‖_F per entry, relTol 1e-12 for m = 1000 and 1e-13 or less for
// the small matrices. For the rank-deficient matrix R is not unique beyond
// the rank, so RᵀR = PᵀAᵀAP is compared instead. Independent of LAPACK,
// b = A·x must give R·Pᵀx = (Qᵀb)₁..ₙ.
func TestPivotedQR(t *testing.T) {
	for _, tc := range qrCases() {
		t.Run(tc.name, func(t *testing.T) {
			m, n := tc.m, tc.n
			at := make([]float64, n*m) // our layout: columns contiguous
			rm := make([]float64, m*n) // LAPACK's: row-major
			for i := range m {
				for j := range n {
					at[j*m+i] = tc.col(i, j)
					rm[i*n+j] = tc.col(i, j)
				}
			}
			anorm := floats.Norm(at, 2)
			x := make([]float64, n)
			for j := range x {
				x[j] = float64(j+1) / (floats.Norm(at[j*m:j*m+m], 2) + 1e-300)
			}
			b := make([]float64, m)
			for i := range m {
				for j := range n {
					b[i] += rm[i*n+j] * x[j]
				}
			}
			bnorm := floats.Norm(b, 2)
			qtb := append([]float64(nil), b...)
			nrm := make([]float64, n)
			for j := range n {
				nrm[j] = floats.Norm(at[j*m:j*m+m], 2)
			}
			r := make([]float64, n*n)
			jpvt := make([]int, n)
			pivotedQR(at, m, n, qtb, r, jpvt, nrm)

			// LAPACK.
			ga := blas64.General{Rows: m, Cols: n, Stride: n, Data: rm}
			lp := make([]int, n)
			for j := range lp {
				lp[j] = -1
			}
			tau := make([]float64, n)
			var q [1]float64
			lapack64.Geqp3(ga, lp, tau, q[:], -1)
			wk := make([]float64, int(q[0]))
			lapack64.Geqp3(ga, lp, tau, wk, len(wk))
			lb := append([]float64(nil), b...)
			bg := blas64.General{Rows: m, Cols: 1, Stride: 1, Data: lb}
			lapack64.Ormqr(blas.Left, blas.Trans, ga, tau, bg, q[:], -1)
			wk = make([]float64, int(q[0]))
			lapack64.Ormqr(blas.Left, blas.Trans, ga, tau, bg, wk, len(wk))

			tol := tc.relTol * anorm
			if tc.pivots {
				for k := range n {
					if jpvt[k] != lp[k] {
						t.Fatalf("pivots %v, LAPACK %v", jpvt, lp)
					}
				}
			}
			if !tc.rankDef {
				for i := range n {
					s, ls := math.Copysign(1, r[i*n+i]), math.Copysign(1, rm[i*n+i])
					for j := i; j < n; j++ {
						if d := math.Abs(s*r[i*n+j] - ls*rm[i*n+j]); !(d <= tol) {
							t.Errorf("R[%d,%d] = %v, LAPACK %v (|diff| %.3g > %.3g)", i, j, s*r[i*n+j], ls*rm[i*n+j], d, tol)
						}
					}
					if d := math.Abs(s*qtb[i] - ls*lb[i]); !(d <= tc.relTol*bnorm) {
						t.Errorf("(Qᵀb)[%d] = %v, LAPACK %v", i, s*qtb[i], ls*lb[i])
					}
				}
			}
			// RᵀR against PᵀAᵀAP, entries to relTol·‖A‖_F² (scaled to
			// avoid overflow at 1e300).
			sc := 1 / anorm
			for j := range n {
				for k := j; k < n; k++ {
					var rr, aa float64
					for i := 0; i <= j; i++ {
						rr += (r[i*n+j] * sc) * (r[i*n+k] * sc)
					}
					for i := range m {
						aa += (tc.col(i, jpvt[j]) * sc) * (tc.col(i, jpvt[k]) * sc)
					}
					if d := math.Abs(rr - aa); !(d <= 10*tc.relTol) {
						t.Errorf("(RᵀR)[%d,%d]/‖A‖² = %v, (PᵀAᵀAP) %v", j, k, rr, aa)
					}
				}
			}
			// R·Pᵀx = (Qᵀb)₁..ₙ for b = A·x.
			for i := range n {
				s := 0.0
				for j := i; j < n; j++ {
					s += r[i*n+j] * x[jpvt[j]]
				}
				if d := math.Abs(s - qtb[i]); !(d <= 10*tc.relTol*bnorm) {
					t.Errorf("(R·Pᵀx)[%d] = %v, (Qᵀb)[%d] = %v", i, s, i, qtb[i])
				}
			}
		})
	}
}

// BenchmarkPivotedQR times the factorisation of one 1000×3 Jacobian with
// Qᵀr: pivotedQR against the gonum sequence it replaced (the LQ of Jᵀ by
// lapack64.Gelqf and Ormlq, then lapack64.Geqp3 and Ormqr of the 3×3
// factor), on the same data and layout (Jᵀ contiguous).
func BenchmarkPivotedQR(b *testing.B) {
	const m, n = 1000, 3
	tc := qrCases()[0]
	src := make([]float64, n*m)
	for i := range m {
		for j := range n {
			src[j*m+i] = tc.col(i, j)
		}
	}
	rhs := make([]float64, m)
	for i := range rhs {
		rhs[i] = math.Sin(float64(i))
	}
	a := make([]float64, n*m)
	qtb := make([]float64, m)
	r := make([]float64, n*n)
	jpvt := make([]int, n)
	nrm := make([]float64, n)
	b.Run("pivotedQR", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			copy(a, src)
			copy(qtb, rhs)
			for j := range n {
				nrm[j] = norm2(a[j*m : j*m+m])
			}
			pivotedQR(a, m, n, qtb, r, jpvt, nrm)
		}
	})
	b.Run("gonum-Gelqf-Geqp3", func(b *testing.B) {
		tau := make([]float64, n)
		tau2 := make([]float64, n)
		lw := 4 * m
		wk := make([]float64, lw)
		b.ReportAllocs()
		for b.Loop() {
			copy(a, src)
			copy(qtb, rhs)
			ga := blas64.General{Rows: n, Cols: m, Stride: m, Data: a}
			lapack64.Gelqf(ga, tau, wk, lw)
			lapack64.Ormlq(blas.Left, blas.NoTrans, ga, tau, blas64.General{Rows: m, Cols: 1, Stride: 1, Data: qtb}, wk, lw)
			for i := range n {
				for j := range n {
					if j >= i {
						r[i*n+j] = a[j*m+i]
					} else {
						r[i*n+j] = 0
					}
				}
			}
			for j := range jpvt {
				jpvt[j] = -1
			}
			gr := blas64.General{Rows: n, Cols: n, Stride: n, Data: r}
			lapack64.Geqp3(gr, jpvt, tau2, wk, lw)
			lapack64.Ormqr(blas.Left, blas.Trans, gr, tau2, blas64.General{Rows: n, Cols: 1, Stride: 1, Data: qtb[:n]}, wk, lw)
		}
	})
}
