package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// cbrtEpsilon is ε^⅓ for float64, the step factor that balances the O(h²)
// truncation error of a central difference against its O(ε/h) rounding
// error (Dennis and Schnabel, Numerical Methods for Unconstrained
// Optimization and Nonlinear Equations, Prentice-Hall 1983, section 5.6).
const cbrtEpsilon = 6.0554544523933395e-06

// fdJacobian fills w.jt (Jᵀ, see work) with a finite-difference Jacobian at x, where
// fx = r(x), and reports whether every residual it needed was finite.
//
// We do not use gonum's fd.Jacobian here: it takes one step (Settings.Step)
// for every coordinate, which is wrong for parameters that differ by orders
// of magnitude (NIST Misra1a has b1 ≈ 239 and b2 ≈ 5.5·10⁻⁴; a step right
// for one is useless for the other), and it cannot keep to bounds. Instead
// each parameter gets its own step
//
//	h_j = ε^⅓ · max(|p_j|, typ_j)
//
// (typ_j from Settings.TypicalScale), rounded so that p_j + h_j − p_j = h_j
// exactly. Inside the box the derivative is the central difference
//
//	∂r/∂p_j ≈ (r(p + h_j e_j) − r(p − h_j e_j)) / (2 h_j),
//
// and within h_j of a bound the one-sided second-order formula
//
//	∂r/∂p_j ≈ (−3 r(p) + 4 r(p + h e_j) − r(p + 2h e_j)) / (2h),  h = ±h_j,
//
// which keeps the O(h²) accuracy without leaving the box. Where the box is
// narrower than that, a forward or backward difference over the room left
// is used, and a parameter with Lower = Upper gets a zero column.
func (w *work) fdJacobian(x, fx []float64) bool {
	n := w.n
	copy(w.xfd, x)
	for j := range n {
		xj := x[j]
		lo, hi := w.lower[j], w.upper[j]
		h := cbrtEpsilon * math.Max(math.Abs(xj), w.typ[j])
		if t := xj + h; t != xj {
			h = t - xj
		}
		canUp := xj+h <= hi
		canDown := xj-h >= lo
		var ok bool
		switch {
		case canUp && canDown:
			ok = w.fdColumn(j, xj, []float64{1, -1}, []float64{h, -h}, 1/(2*h), nil)
		case canUp && xj+2*h <= hi:
			ok = w.fdColumn(j, xj, []float64{4, -1}, []float64{h, 2 * h}, 1/(2*h), fx)
		case canDown && xj-2*h >= lo:
			ok = w.fdColumn(j, xj, []float64{-4, 1}, []float64{-h, -2 * h}, 1/(2*h), fx)
		default:
			// Less room than 2h on the open side: first-order difference
			// over the larger room.
			up, down := hi-xj, xj-lo
			switch {
			case up <= 0 && down <= 0:
				clear(w.jtCol(j))
				ok = true
			case up >= down:
				hh := math.Min(h, up)
				ok = w.fdColumn(j, xj, []float64{1}, []float64{hh}, 1/hh, fx)
			default:
				hh := math.Min(h, down)
				ok = w.fdColumn(j, xj, []float64{-1}, []float64{-hh}, 1/hh, fx)
			}
		}
		w.xfd[j] = xj
		if !ok {
			return false
		}
	}
	return true
}

// fdColumn evaluates column j of the difference formula
//
//	J_·j = scale · (Σ_k c_k r(p + d_k e_j) + c₀ r(p)),
//
// with c₀ = −Σ c_k (zero for a central difference, where fx is nil).
// The coefficient and offset slices have at most two entries and are not
// retained, so the compiler keeps them on the stack.
func (w *work) fdColumn(j int, xj float64, c, d []float64, scale float64, fx []float64) bool {
	bufs := [2][]float64{w.fp, w.fm}
	for k := range c {
		w.xfd[j] = xj + d[k]
		if _, ok := w.eval(bufs[k], w.xfd); !ok {
			return false
		}
	}
	c0 := 0.0
	for _, ck := range c {
		c0 -= ck
	}
	col := w.jtCol(j)
	for i := range col {
		s := 0.0
		for k, ck := range c {
			s += ck * bufs[k][i]
		}
		if fx != nil {
			s += c0 * fx[i]
		}
		col[i] = scale * s
	}
	return true
}

// JacobianAt returns the Jacobian ∂r_i/∂p_j of f at p, m × len(p), as
// LeastSquares forms it: f.Jacobian when f has one, else the engine's
// finite differences (central, scaled to each parameter, one-sided at a
// bound of f). ok is false when a residual at p or an entry is not finite.
// Callers that need J at an estimate (a bias or degeneracy analysis after
// the fit) use it rather than differencing f themselves.
func JacobianAt(f Func, p []float64) (j *mat.Dense, ok bool) {
	w := getWork(f.M, len(p))
	defer putWork(w)
	w.init(f, p, nil)
	if _, ok := w.eval(w.f0, p); !ok {
		return nil, false
	}
	if !w.jacobian(p, w.f0) {
		return nil, false
	}
	j = mat.NewDense(f.M, len(p), nil)
	for c := range len(p) {
		for i, v := range w.jtCol(c) {
			j.Set(i, c, v)
		}
	}
	return j, true
}
