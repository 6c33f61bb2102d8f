package model

import "math"

// Double-exponential quadrature used once, when a table is built (never per
// residual): Takahasi & Mori, Publ. RIMS Kyoto Univ. 9, 721, 1974.
// gonum/integrate offers fixed-order Gauss rules and Romberg/Simpson on
// samples, but nothing that converges fast at the algebraic endpoint
// singularities of these integrands (s^{−1/2} at the band edge, |u|^θ at the
// kernel's peak); the tanh-sinh and exp-sinh rules do, whatever the
// endpoint behaviour, so they are written here. The tests check the tables
// against the separately written adaptive rules of quad_test.go.
//
// The rules integrate two integrands at once (sharing abscissae and the
// expensive kernel evaluation), refining the step h = 1/2, 1/4, … until both
// sums change by less than tol relative (at most h = 1/128).

const (
	deLevels = 7   // h = 1/2 … 1/128
	deTanhT  = 4.5 // tanh-sinh: |t| ≤ 4.5 reaches distances e^{−140} of the ends
	deExpLo  = -4.5
	deExpHi  = 3.5 // exp-sinh: x − a from L·e^{−70} to L·e^{26}
)

// deNode is one abscissa of the finest level with its precomputed mapping.
type deNode struct {
	// tanh-sinh: distance fractions from the two ends and weight per unit
	// length, for t ≥ 0 (t < 0 swaps the fractions).
	near, far, wt float64
	// exp-sinh at +t and −t: x − a = L·e, dx = L·we·dt.
	ep, wep, em, wem float64
}

// deTable holds the nodes at step 1/2^deLevels for t = k·h, k ≥ 0.
type deTable struct {
	tanhN, expN int
	nodes       []deNode
}

func newDETable() *deTable {
	hmin := 1 / float64(int(1)<<deLevels)
	n := int(math.Max(deTanhT, math.Max(-deExpLo, deExpHi))/hmin) + 1
	d := &deTable{
		tanhN: int(deTanhT / hmin),
		expN:  n,
		nodes: make([]deNode, n+1),
	}
	for k := range d.nodes {
		t := float64(k) * hmin
		u := math.Pi / 2 * math.Sinh(t)
		ch := math.Cosh(u)
		nd := &d.nodes[k]
		nd.near = 1 / (1 + math.Exp(2*u)) // fraction of the length from the near end (t ≥ 0: end b)
		nd.far = 1 / (1 + math.Exp(-2*u))
		nd.wt = math.Pi / 4 * math.Cosh(t) / (ch * ch)
		nd.ep = math.Exp(u)
		nd.wep = nd.ep * math.Pi / 2 * math.Cosh(t)
		nd.em = math.Exp(-u)
		nd.wem = nd.em * math.Pi / 2 * math.Cosh(t)
	}
	return d
}

// stride returns the node stride of level l (l = 0 is h = 1/2).
func deStride(l int) int { return 1 << (deLevels - 1 - l) }

// tanhSinh2 integrates f over [a, b]; f receives the distances da = x − a
// and db = b − x (each without cancellation) and returns two integrand
// values. It returns both integrals and the larger relative last change.
func (d *deTable) tanhSinh2(f func(da, db float64) (float64, float64), a, b, tol float64) (s0, s1, change float64) {
	L := b - a
	var acc0, acc1 float64
	// first node index beyond which a side is known to give 0: set when a
	// zero follows a non-zero value (the integrand has passed its peak and
	// underflowed, and only decreases further out)
	cutA, cutB := d.tanhN+1, d.tanhN+1
	var seenA, seenB bool
	var prev0, prev1 float64
	for l := 0; l < deLevels; l++ {
		st := deStride(l)
		start, step := 0, st
		if l > 0 {
			start, step = st, 2*st
		}
		for k := start; k <= d.tanhN; k += step {
			nd := &d.nodes[k]
			w := L * nd.wt
			if w == 0 {
				break
			}
			if k == 0 {
				v0, v1 := f(L/2, L/2)
				acc0 += w * v0
				acc1 += w * v1
				continue
			}
			if da := L * nd.near; k < cutA && da > 0 { // t < 0: near a
				v0, v1 := f(da, L*nd.far)
				if v0 == 0 && v1 == 0 {
					if seenA && l == 0 {
						cutA = k
					}
				} else {
					seenA = true
				}
				acc0 += w * v0
				acc1 += w * v1
			}
			if db := L * nd.near; k < cutB && db > 0 { // t > 0: near b
				v0, v1 := f(L*nd.far, db)
				if v0 == 0 && v1 == 0 {
					if seenB && l == 0 {
						cutB = k
					}
				} else {
					seenB = true
				}
				acc0 += w * v0
				acc1 += w * v1
			}
		}
		h := float64(st) / float64(int(1)<<deLevels)
		s0, s1 = acc0*h, acc1*h
		if l > 0 {
			change = math.Max(relChange(s0, prev0), relChange(s1, prev1))
			if l >= 2 && change <= deStop(tol) {
				return s0, s1, change
			}
		}
		prev0, prev1 = s0, s1
	}
	return s0, s1, change
}

// deStop is the change between successive levels below which the finer
// level is taken as converged to tol: the error of a double-exponential
// rule roughly squares when h halves, so the last change overestimates the
// error of the finer level by far; requiring change ≤ √(tol·1e-2) leaves a
// wide margin (1e-13 → 3e-8).
func deStop(tol float64) float64 { return math.Sqrt(tol * 1e-2) }

// expSinh2 integrates f over [a, ∞) with x − a = L·exp((π/2) sinh t); f
// receives the distance x − a. L is the integrand's decay length.
func (d *deTable) expSinh2(f func(da float64) (float64, float64), L, tol float64) (s0, s1, change float64) {
	var acc0, acc1 float64
	nLo, nHi := int(-deExpLo*float64(int(1)<<deLevels)), int(deExpHi*float64(int(1)<<deLevels))
	cutP, cutM := nHi+1, nLo+1 // as in tanhSinh2
	var seenP, seenM bool
	var prev0, prev1 float64
	for l := 0; l < deLevels; l++ {
		st := deStride(l)
		start, step := 0, st
		if l > 0 {
			start, step = st, 2*st
		}
		for k := start; k <= d.expN; k += step {
			nd := &d.nodes[k]
			if k < cutP {
				v0, v1 := f(L * nd.ep)
				if v0 == 0 && v1 == 0 {
					if seenP && l == 0 {
						cutP = k
					}
				} else {
					seenP = true
				}
				acc0 += L * nd.wep * v0
				acc1 += L * nd.wep * v1
			}
			if k > 0 && k < cutM {
				v0, v1 := f(L * nd.em)
				if v0 == 0 && v1 == 0 {
					if seenM && l == 0 {
						cutM = k
					}
				} else {
					seenM = true
				}
				acc0 += L * nd.wem * v0
				acc1 += L * nd.wem * v1
			}
		}
		h := float64(st) / float64(int(1)<<deLevels)
		s0, s1 = acc0*h, acc1*h
		if l > 0 {
			change = math.Max(relChange(s0, prev0), relChange(s1, prev1))
			if l >= 2 && change <= deStop(tol) {
				return s0, s1, change
			}
		}
		prev0, prev1 = s0, s1
	}
	return s0, s1, change
}

func relChange(a, b float64) float64 {
	if a == b {
		return 0
	}
	return math.Abs(a-b) / math.Max(math.Abs(a), math.Abs(b))
}
