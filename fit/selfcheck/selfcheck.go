// Package selfcheck holds the physics reference checks that bandedge
// verify runs on the user's machine beside the NIST StRD suite (package
// fit/strd): each compares a number the program computes with a published
// reference value or with an independent computation of the same
// quantity, and reports the comparison as a Check.
//
// The checks are
//
//   - Slab: the thick-slab transmittance and its inversion
//     (optics.SlabTransmittance, optics.SlabAlpha) round trip over
//     αd ∈ [1e-4, 20] and R ∈ {0, 0.05, 0.3, 0.6}, and the R → 0 limit
//     α = −ln T / d (Pankove, Optical Processes in Semiconductors, 1971);
//   - Units: hc/e from the exact SI defining constants h, c and e (CODATA
//     2018) against model.HCeVnm, specio.HC, specio.HCWavenumber and
//     E(1000 nm) = 1.239841984 eV;
//   - Broadening: the closed form of model.DirectUrbach against numerical
//     quadrature of its convolution integral (Katahara & Hillhouse,
//     J. Appl. Phys. 116, 173504, 2014), the quadrature written here;
//   - Kane: the GaAs-like worked example of the Kane chain (model.KaneAP,
//     model.AmplitudeFromKane), inputs from memory.
//
// Every check is deterministic; All runs them all in a few milliseconds.
package selfcheck

import (
	"fmt"
	"math"
)

// Check is the outcome of one reference check.
type Check struct {
	// Name identifies the check, e.g. "slab round trip R=0.3".
	Name string
	// Source is the published reference of Want, e.g. "Pankove 1971".
	Source string
	// Quantity says what Got and Want are, with the unit.
	Quantity string
	// Got is the value the program computes, Want the reference value.
	Got, Want float64
	// Tol is the relative tolerance: the check passes when
	// |Got − Want| ≤ Tol·|Want| (and both are finite).
	Tol float64
	// Pass reports whether the check passed.
	Pass bool
	// Note adds detail: the worst grid point of a grid check, or why a
	// check failed that is not a plain mismatch.
	Note string
}

// RelErr returns |Got − Want| / |Want| (+Inf if Want is 0 and Got is not,
// NaN if either is NaN).
func (c Check) RelErr() float64 {
	d := math.Abs(c.Got - c.Want)
	if d == 0 {
		return 0
	}
	return d / math.Abs(c.Want)
}

// newCheck returns the check with Pass set from the tolerance.
func newCheck(name, source, quantity string, got, want, tol float64) Check {
	c := Check{Name: name, Source: source, Quantity: quantity, Got: got, Want: want, Tol: tol}
	c.Pass = finite(got) && finite(want) && c.RelErr() <= tol
	return c
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// All runs every check, in the order Slab, Units, Broadening, Kane.
func All() []Check {
	var out []Check
	out = append(out, Slab()...)
	out = append(out, Units()...)
	out = append(out, Broadening()...)
	out = append(out, Kane()...)
	return out
}

// worst keeps the grid point with the largest relative error; a point
// that is not finite counts as worse than any finite one.
type worst struct {
	got, want, rel float64
	where          string
	n              int
}

func (w *worst) add(got, want float64, where string) {
	w.n++
	rel := math.Abs(got-want) / math.Abs(want)
	if !finite(got) || !finite(want) {
		rel = math.Inf(1)
	}
	if w.n == 1 || rel > w.rel {
		w.got, w.want, w.rel, w.where = got, want, rel, where
	}
}

func (w *worst) check(name, source, quantity string, tol float64) Check {
	c := newCheck(name, source, quantity, w.got, w.want, tol)
	c.Note = fmt.Sprintf("worst of %d points: %s", w.n, w.where)
	return c
}
