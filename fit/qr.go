package fit

import (
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack/gonum"
)

// safmin is LAPACK's threshold below which Dlarfg rescales a reflector
// (dlamch('S')/dlamch('E') = 2⁻¹⁰²²/2⁻⁵³).
const safmin = 0x1p-969

// norm2 returns ‖x‖₂: the square root of the plain sum of squares (a
// vectorised dot product) when that sum lies safely between underflow and
// overflow, else gonum's scaled, overflow-safe floats.Norm. Entries whose
// squares underflow contribute at most len(x)·2⁻¹⁰²² to a sum of at least
// 2⁻⁹⁰⁰, far below its rounding, so the fast path loses no accuracy.
func norm2(x []float64) float64 {
	ss := floats.Dot(x, x)
	if ss > 0x1p-900 && ss < 0x1p900 {
		return math.Sqrt(ss)
	}
	return floats.Norm(x, 2)
}

// pivotedQR computes the column-pivoted Householder QR factorisation
//
//	A·P = Q·R
//
// of the m×nc matrix A whose columns are stored contiguously, column l at
// a[l*m : l*m+m] (i.e. Aᵀ row-major, which is how the solver keeps J), and
// overwrites b (length m) with Qᵀb in its first nc entries (the rest is
// left partly transformed: the solver needs only those). On entry nrm[l]
// holds ‖A_·l‖₂, the norm of column l. On return r (nc×nc, row-major)
// holds the upper-triangular R, jpvt[k] the index of the column of A at
// pivot position k, and a and nrm are destroyed. Requires nc ≤ m.
//
// It is the algorithm of LAPACK's dgeqp3 (Businger and Golub, Numer. Math.
// 7, 269, 1965): at step k the remaining column with the largest norm over
// rows k…m−1 is moved to position k (the first on a tie), and a Householder
// reflector H_k = I − τ·u·uᵀ (u_k = 1) zeroes its rows k+1…m−1, leaving
// R_kk = β = −sign(α)·‖c_k:m‖ with α = c_k, τ = (β − α)/β and
// u_k+1:m = c_k+1:m/(α − β), as in LAPACK's dlarfg.
//
// Why not gonum's lapack64.Geqp3: it works on row-major matrices, where a
// column of a tall, narrow J (m ≈ 1000, n = 3) is a strided vector, and
// spends most of its time in the scaled, division-per-element dnrm2 and in
// general dgemv/dger calls on three columns. Here every operation is a
// contiguous dot product or axpy (gonum's assembly kernels through
// floats.Dot and floats.AddScaled); the column norms over the remaining
// rows are recomputed exactly after each step (norm2) instead of being
// downdated; u is not formed, its scale 1/(α − β) goes into the
// coefficients (unless a norm is outside [2⁻⁴⁰⁰, 2⁴⁰⁰], where products of
// unscaled entries could overflow or underflow); pivots are swapped by index, not by moving columns. A
// reflector with |β| below LAPACK's safe minimum is left to gonum's dlarfg,
// which rescales. For the 1000×3 Jacobian of a direct+Urbach fit this is
// several times faster than the gonum Gelqf + Ormlq + Geqp3 + Ormqr
// sequence it replaces (BenchmarkPivotedQR); TestPivotedQR checks it
// against lapack64.Geqp3.
func pivotedQR(a []float64, m, nc int, b, r []float64, jpvt []int, nrm []float64) {
	if nc > m {
		panic("fit: pivotedQR needs nc ≤ m")
	}
	col := func(l int) []float64 { return a[l*m : l*m+m] }
	// Products of unscaled entries stay far from overflow while every
	// norm is below 2⁴⁰⁰ (the reflectors keep ‖b‖ and shrink the columns).
	big := norm2(b)
	for l := range nc {
		jpvt[l] = l
		big = max(big, nrm[l])
	}
	foldOK := big <= 0x1p400
	for k := range nc {
		p := k
		for l := k + 1; l < nc; l++ {
			if nrm[jpvt[l]] > nrm[jpvt[p]] {
				p = l
			}
		}
		jpvt[k], jpvt[p] = jpvt[p], jpvt[k]
		c := col(jpvt[k])
		v := c[k+1:]

		// The reflector of column c over rows k…m−1.
		alpha := c[k]
		tau, scale := 0.0, 0.0 // scale = 1/(α − β)
		if cn := nrm[jpvt[k]]; cn != 0 {
			beta := -math.Copysign(cn, alpha)
			if math.Abs(beta) < safmin {
				// Tiny column: let LAPACK's dlarfg rescale it; v then
				// holds u itself.
				beta, tau = gonum.Implementation{}.Dlarfg(m-k, alpha, v, 1)
				scale = 1
			} else {
				tau = (beta - alpha) / beta
				scale = 1 / (alpha - beta)
				if !foldOK || cn < 0x1p-400 || cn > 0x1p400 {
					// Far from 1: form u as LAPACK does, so that
					// uᵀd neither overflows nor underflows.
					floats.Scale(scale, v)
					scale = 1
				}
			}
			c[k] = beta
		}

		// Apply H_k to the remaining columns and to b: d ← d − τ·u·(uᵀd).
		if tau != 0 {
			for l := k + 1; l < nc; l++ {
				d := col(jpvt[l])
				t := tau * (d[k] + scale*floats.Dot(v, d[k+1:]))
				d[k] -= t
				floats.AddScaled(d[k+1:], -t*scale, v)
			}
			t := tau * (b[k] + scale*floats.Dot(v, b[k+1:]))
			b[k] -= t
			if k+1 < nc {
				floats.AddScaled(b[k+1:], -t*scale, v)
			}
		}
		// Norms of the remaining columns over rows k+1…m−1.
		for l := k + 1; l < nc; l++ {
			nrm[jpvt[l]] = norm2(col(jpvt[l])[k+1:])
		}
	}
	for i := range nc {
		for j := range nc {
			if j >= i {
				r[i*nc+j] = a[jpvt[j]*m+i]
			} else {
				r[i*nc+j] = 0
			}
		}
	}
}
