package model

import (
	"math"
)

// Octave tables: a smooth function g(x) of x > 0 tabulated on octaves
// [2^(k−1), 2^k), k = kLo … kHi, in the local variable
//
//	t = 4m − 3 ∈ [−1, 1),   x = m·2^k,   m ∈ [½, 1)  (m, k from math.Frexp).
//
// The octave grid is graded towards x = 0 and towards large x alike, which
// suits the broadened edges: they have a weak singularity |z|^{r+θ+1} at
// the gap (z = 0) that a uniform grid would not resolve, and vary on the
// scale of z itself far from it.
//
// Building: each octave is first fitted by a Chebyshev interpolant at
// nested Chebyshev–Lobatto nodes of degree 6, 12 or 24, until the last two
// coefficients are below the requested tolerance (the table's measured
// truncation error, tailErr). For speed of evaluation — a Clenshaw sum of
// degree 24 is a chain of 48 dependent operations — that series is then
// re-expanded on P = 1, 2 or 4 equal pieces of the octave as polynomials
// of degree 9 in a local variable s ∈ [−1, 1], in monomial form for Horner's
// rule, with the smallest P whose largest deviation from the octave's
// series, measured at 15 points per piece, is below the same tolerance
// (pieceErr). Evaluation is then a Frexp, an index and 9 multiply-adds.
// (Degree 9 on quarter octaves resolves a logarithmic singularity at x = 0
// to 3e-13, from the Bernstein-ellipse bound 17.9^{−10}; degree 7 would
// need eighth octaves and twice the cache.)
//
// A two-variable table g(x, y) holds, for every coefficient of every
// piece, a Chebyshev series in a second variable y ∈ [y0, y1] (the kernel
// exponent θ or the exciton ratio R_x/γ, on a log scale). A model's
// parameters are fixed during one Eval or Jacobian call, so y is fixed too:
// an octView collapses the octaves it meets to one-variable pieces once
// per call, and each point then costs one Horner sum.

const (
	octDeg0      = 6  // first Chebyshev degree tried per octave; then 2·, 4·
	octMaxDeg    = 24 // largest degree per octave (4·octDeg0)
	octMaxOct    = 32 // octaves per side (bit mask and caches of octView)
	pieceDeg     = 9  // degree of the evaluation pieces
	pieceN       = pieceDeg + 1
	octMaxPieces = 4
	octSlots     = octMaxPieces * pieceN // cache slots per octave
)

// octSide is one tabulated function of x on octaves kLo … kHi.
type octSide struct {
	kLo, kHi int
	ny       int       // coefficients in y per piece coefficient (1: no y)
	np       []int     // pieces per octave
	off      []int     // start of octave o's pieces in c, in units of ny
	c        []float64 // c[(off[o] + j·pieceN + i)·ny + y]: piece j, power i
	tailErr  float64   // largest |last two Chebyshev coefficients| per octave
	pieceErr float64   // largest deviation of the pieces from the octave series
	yTailErr float64   // two-variable: largest |last two y-coefficients| of the octave series
}

// lo and hi return the table's range [2^(kLo−1), 2^kHi).
func (s *octSide) lo() float64 { return math.Ldexp(1, s.kLo-1) }
func (s *octSide) hi() float64 { return math.Ldexp(1, s.kHi) }

// octX returns the Chebyshev–Lobatto node t_i = cos(πi/n) mapped to x in
// octave k.
func octX(k, n, i int) float64 {
	t := math.Cos(math.Pi * float64(i) / float64(n))
	return math.Ldexp((t+3)/4, k)
}

// lobattoCoeffs returns the Chebyshev coefficients of the degree-n
// interpolant through v_i = g(cos(πi/n)), i = 0 … n (a type-I discrete
// cosine transform).
func lobattoCoeffs(v []float64) []float64 {
	n := len(v) - 1
	c := make([]float64, n+1)
	for j := 0; j <= n; j++ {
		var s float64
		for i := 0; i <= n; i++ {
			w := 1.0
			if i == 0 || i == n {
				w = 0.5
			}
			s += w * v[i] * math.Cos(math.Pi*float64(i*j)/float64(n))
		}
		c[j] = 2 * s / float64(n)
	}
	c[0] /= 2
	c[n] /= 2
	return c
}

// clenshaw returns Σ_{i=0}^{n} c[i] T_i(t).
func clenshaw(c []float64, n int, t float64) float64 {
	var b1, b2 float64
	t2 := 2 * t
	for i := n; i >= 1; i-- {
		b1, b2 = t2*b1-b2+c[i], b1
	}
	return t*b1 - b2 + c[0]
}

// chebToMonomial returns the monomial coefficients of Σ c_k T_k(s).
func chebToMonomial(c []float64) []float64 {
	n := len(c)
	out := make([]float64, n)
	prev := make([]float64, n) // T_{k−1}
	cur := make([]float64, n)  // T_k
	prev[0] = 1
	if n > 0 {
		out[0] += c[0]
	}
	if n > 1 {
		cur[1] = 1
		out[1] += c[1]
	}
	for k := 2; k < n; k++ {
		next := make([]float64, n)
		for i := 0; i < n-1; i++ {
			next[i+1] += 2 * cur[i]
		}
		for i := range next {
			next[i] -= prev[i]
		}
		for i := range next {
			out[i] += c[k] * next[i]
		}
		prev, cur = cur, next
	}
	return out
}

// horner returns p(s) = Σ c_i s^i for the pieceN coefficients at c[0:].
func horner(c []float64, s float64) float64 {
	c = c[:pieceN]
	p := c[pieceDeg]
	for i := pieceDeg - 1; i >= 0; i-- {
		p = p*s + c[i]
	}
	return p
}

// horner2 returns p(s) and p'(s).
func horner2(c []float64, s float64) (p, dp float64) {
	c = c[:pieceN]
	p = c[pieceDeg]
	for i := pieceDeg - 1; i >= 0; i-- {
		dp = dp*s + p
		p = p*s + c[i]
	}
	return p, dp
}

// locate returns the octave o (0-based from kLo), the piece j, the local
// variable s ∈ [−1, 1) and ds/dx for x in the table's range; ok is false
// outside it.
func (s *octSide) locate(x float64) (o, j int, sv, dsdx float64, ok bool) {
	m, k := math.Frexp(x)
	if k < s.kLo || k > s.kHi {
		return 0, 0, 0, 0, false
	}
	o = k - s.kLo
	p := float64(s.np[o])
	u := (2*m - 1) * p // ∈ [0, P)
	j = int(u)
	if j >= s.np[o] { // rounding at the octave's top
		j = s.np[o] - 1
	}
	return o, j, 2*(u-float64(j)) - 1, 4 * p / math.Ldexp(1, k), true
}

// octFit fits one octave by Chebyshev interpolation at nested Lobatto
// nodes (degrees octDeg0, 2·, 4·) until the tail is below tol; val(n, i)
// returns g at node i of degree n. It returns the series and its tail.
func octFit(val func(n, i int) float64, tol float64) ([]float64, float64) {
	var c []float64
	var tail float64
	for n := octDeg0; n <= octMaxDeg; n *= 2 {
		v := make([]float64, n+1)
		for i := range v {
			v[i] = val(n, i)
		}
		c = lobattoCoeffs(v)
		tail = math.Abs(c[n]) + math.Abs(c[n-1])
		if tail <= tol {
			break
		}
	}
	return c, tail
}

// pieces re-expands the octave series ch on P equal pieces of degree
// pieceDeg (monomial in s) and returns their coefficients and the largest
// deviation, measured at 15 points per piece.
func pieces(ch []float64, P int) ([]float64, float64) {
	n := len(ch) - 1
	var out []float64
	var worst float64
	for j := 0; j < P; j++ {
		tOf := func(s float64) float64 { return -1 + (2*float64(j)+1+s)/float64(P) }
		v := make([]float64, pieceN)
		for i := range v {
			v[i] = clenshaw(ch, n, tOf(math.Cos(math.Pi*float64(i)/pieceDeg)))
		}
		mono := chebToMonomial(lobattoCoeffs(v))
		for i := 0; i < 15; i++ {
			s := -1 + 2*(float64(i)+0.5)/15
			worst = math.Max(worst, math.Abs(horner(mono, s)-clenshaw(ch, n, tOf(s))))
		}
		out = append(out, mono...)
	}
	return out, worst
}

// choosePieces returns the smallest number of pieces meeting tol for all
// the series chs (one per y-node).
func choosePieces(chs [][]float64, tol float64) int {
	for P := 1; P < octMaxPieces; P *= 2 {
		ok := true
		for _, ch := range chs {
			if _, e := pieces(ch, P); e > tol {
				ok = false
				break
			}
		}
		if ok {
			return P
		}
	}
	return octMaxPieces
}

// buildOct1 tabulates g on octaves kLo … kHi to absolute tolerance tol.
// g receives x and the octave k whose polynomial the value is for (the end
// node x = 2^k is shared with octave k+1, which may use another
// representation).
func buildOct1(kLo, kHi int, g func(x float64, k int) float64, tol float64) octSide {
	return buildOct2(kLo, kHi, 1, func(x float64, k, _ int) float64 { return g(x, k) }, tol)
}

// buildOct2 tabulates g(x, y_j) on octaves kLo … kHi for the ny
// Chebyshev–Lobatto nodes y_j (j = 0 … ny−1) of the second variable; g
// receives x, the octave k (as in buildOct1) and j. The Chebyshev degree
// and the number of pieces of an octave are those needed by the worst
// y-node; the pieces' coefficients are then Chebyshev-transformed along y.
func buildOct2(kLo, kHi, ny int, g func(x float64, k, j int) float64, tol float64) octSide {
	if kHi-kLo+1 > octMaxOct || ny > octMaxY {
		panic("model: table too large")
	}
	s := octSide{kLo: kLo, kHi: kHi, ny: ny}
	for k := kLo; k <= kHi; k++ {
		vals := map[[2]int]float64{}
		val := func(n, i, j int) float64 {
			key := [2]int{i * (octMaxDeg / n), j}
			if v, ok := vals[key]; ok {
				return v
			}
			v := g(octX(k, n, i), k, j)
			vals[key] = v
			return v
		}
		// common Chebyshev degree: refit every y-node at the largest
		// degree any of them needs (the nodes are nested, so cached)
		n := octDeg0
		for j := 0; j < ny; j++ {
			c, _ := octFit(func(m, i int) float64 { return val(m, i, j) }, tol)
			n = max(n, len(c)-1)
		}
		chs := make([][]float64, ny)
		for j := range chs {
			v := make([]float64, n+1)
			for i := range v {
				v[i] = val(n, i, j)
			}
			chs[j] = lobattoCoeffs(v)
			s.tailErr = math.Max(s.tailErr, math.Abs(chs[j][n])+math.Abs(chs[j][n-1]))
		}
		if ny > 1 { // the y truncation, measured on the octave series
			col := make([]float64, ny)
			for i := 0; i <= n; i++ {
				for j := range col {
					col[j] = chs[j][i]
				}
				yc := lobattoCoeffs(col)
				s.yTailErr = math.Max(s.yTailErr, math.Abs(yc[ny-1])+math.Abs(yc[ny-2]))
			}
		}
		P := choosePieces(chs, tol)
		pcs := make([][]float64, ny)
		for j, ch := range chs {
			var e float64
			pcs[j], e = pieces(ch, P)
			s.pieceErr = math.Max(s.pieceErr, e)
		}
		s.np = append(s.np, P)
		s.off = append(s.off, len(s.c)/ny)
		col := make([]float64, ny)
		for i := 0; i < P*pieceN; i++ {
			if ny == 1 {
				s.c = append(s.c, pcs[0][i])
				continue
			}
			for j := 0; j < ny; j++ {
				col[j] = pcs[j][i]
			}
			s.c = append(s.c, lobattoCoeffs(col)...)
		}
	}
	return s
}

// yBasis holds T_j(ŷ) and dT_j/dy for the y of one call.
type yBasis struct {
	n     int
	t, dt [octMaxY]float64
}

// octMaxY is the largest number of y-coefficients of a two-variable table.
const octMaxY = 72

// set fills the basis for y in [y0, y1] with n coefficients.
func (b *yBasis) set(y, y0, y1 float64, n int) {
	if n > octMaxY {
		panic("model: too many y coefficients")
	}
	b.n = n
	s := 2 / (y1 - y0)
	u := (2*y - y0 - y1) / (y1 - y0)
	// T_j and U_j recurrences; dT_j/du = j·U_{j−1}.
	tPrev, tCur := 1.0, u
	uPrev, uCur := 1.0, 2*u // U_0, U_1
	b.t[0], b.dt[0] = 1, 0
	if n > 1 {
		b.t[1], b.dt[1] = u, s
	}
	for j := 2; j < n; j++ {
		tPrev, tCur = tCur, 2*u*tCur-tPrev
		b.t[j] = tCur
		b.dt[j] = float64(j) * uCur * s
		uPrev, uCur = uCur, 2*u*uCur-uPrev
	}
}

// octCache holds the collapsed coefficients of one side for one call:
// octSlots per octave.
type octCache [octMaxOct * octSlots]float64

// octView is an octSide seen at one y: for a one-variable side it is the
// side itself; for a two-variable side it collapses each octave to
// one-variable pieces on first use, into caches the caller supplies on
// every call (c for values, cy for d/dy when the view is set up withY).
// Views and caches live on the caller's stack for one Eval or Jacobian
// call; they hold no pointers to each other, so that escape analysis keeps
// them there.
type octView struct {
	s     *octSide
	done  uint64 // octaves collapsed so far
	withY bool   // collapses also fill cy
}

func (v *octView) init(s *octSide, withY bool) {
	*v = octView{s: s, withY: withY}
}

func (v *octView) collapse(o int, b *yBasis, c, cy *octCache) {
	s := v.s
	n := s.np[o] * pieceN
	base := o * octSlots
	for i := 0; i < n; i++ {
		row := s.c[(s.off[o]+i)*s.ny : (s.off[o]+i+1)*s.ny]
		var a, ay float64
		for j, x := range row {
			a += x * b.t[j]
			ay += x * b.dt[j]
		}
		c[base+i] = a
		if v.withY {
			cy[base+i] = ay
		}
	}
	v.done |= 1 << uint(o)
}

// coeffs returns the piece's value coefficients (and, withY, those of
// d/dy) for x, with s and ds/dx.
func (v *octView) coeffs(x float64, b *yBasis, c, cy *octCache) (pc, py []float64, s, dsdx float64) {
	o, j, s, dsdx, ok := v.s.locate(x)
	if !ok {
		panic("model: octave table argument out of range")
	}
	if v.s.ny == 1 {
		off := v.s.off[o] + j*pieceN
		return v.s.c[off : off+pieceN], nil, s, dsdx
	}
	if v.done&(1<<uint(o)) == 0 {
		v.collapse(o, b, c, cy)
	}
	off := o*octSlots + j*pieceN
	pc = c[off : off+pieceN]
	if v.withY {
		py = cy[off : off+pieceN]
	}
	return pc, py, s, dsdx
}

// value returns g(x); x must be in range.
func (v *octView) value(x float64, b *yBasis, c, cy *octCache) float64 {
	pc, _, s, _ := v.coeffs(x, b, c, cy)
	return horner(pc, s)
}

// valueY returns g(x) and dg/dy (0 for a one-variable side or a view
// without withY).
func (v *octView) valueY(x float64, b *yBasis, c, cy *octCache) (g, gy float64) {
	pc, py, s, _ := v.coeffs(x, b, c, cy)
	g = horner(pc, s)
	if py != nil {
		gy = horner(py, s)
	}
	return g, gy
}

// all returns g(x), dg/dx and dg/dy.
func (v *octView) all(x float64, b *yBasis, c, cy *octCache) (g, dg, gy float64) {
	pc, py, s, dsdx := v.coeffs(x, b, c, cy)
	g, dg = horner2(pc, s)
	if py != nil {
		gy = horner(py, s)
	}
	return g, dg * dsdx, gy
}

// yTail returns the y truncation error of a two-variable side: the
// largest |last| + |last but one| Chebyshev coefficient in y of the octave
// series (which bounds the error in value, |T_k| ≤ 1).
func (s *octSide) yTail() float64 { return s.yTailErr }
