package model

import (
	"math"
	"testing"
)

// TestTableBuild checks the truncation estimates that the table builders
// measure (octtab.go): the last Chebyshev coefficients of each octave
// (tailErr), the deviation of the evaluation pieces from the octave series
// (pieceErr) and, for two-variable tables, the last Chebyshev coefficients
// in y (yTail), each against its build tolerance (powtab.go, exctab.go),
// with a factor 2 for the pieces (tolerance of the series plus that of the
// re-expansion). These bound the interpolation error; the accuracy against
// the defining integrals is tested separately (TestFamilyQuadrature,
// TestExcitonQuadrature).
func TestTableBuild(t *testing.T) {
	if testing.Short() {
		t.Skip("builds every table (about 1.5 s)")
	}
	sides := func(p *powPair) []*octSide { return []*octSide{&p.fl, &p.fr, &p.gl, &p.gr} }
	for _, k := range []powKind{powHalf, powThreeHalf, powTwo} {
		for _, tc := range []struct {
			name     string
			p        *powPair
			tol, yTo float64
		}{
			{"gauss", gaussPair(k), 2e-12, 0},
			{"theta", thetaPair(k), 2e-10, 1e-10},
		} {
			var tail, piece, y float64
			for _, s := range sides(tc.p) {
				tail = math.Max(tail, s.tailErr)
				piece = math.Max(piece, s.pieceErr)
				if s.ny > 1 {
					y = math.Max(y, s.yTail())
				}
			}
			if tail > tc.tol || piece > 2*tc.tol || (tc.yTo > 0 && y > tc.yTo) {
				t.Errorf("%s a=%v: tails %.2g, pieces %.2g, y %.2g (tolerance %.2g, y %.2g)", tc.name, k.a(), tail, piece, y, tc.tol, tc.yTo)
			}
			t.Logf("%s a=%v: %d quadratures; tails %.2g, pieces %.2g, y-tails %.2g", tc.name, k.a(), tc.p.nodes, tail, piece, y)
		}
	}
	for _, theta := range []float64{1, 2} {
		tab := excTable(theta)
		piece := math.Max(tab.right.pieceErr, tab.left.pieceErr)
		if tab.tail > 1e-11 || piece > 2e-11 || tab.yTail > 1e-9 {
			t.Errorf("exciton θ=%v: tails %.2g, pieces %.2g, y %.2g", theta, tab.tail, piece, tab.yTail)
		}
		t.Logf("exciton θ=%v: %d quadratures; tails %.2g, pieces %.2g, y-tails %.2g", theta, tab.nodes, tab.tail, piece, tab.yTail)
	}
}
