// Package edge turns an absorption spectrum α(E) into band-edge results:
// starting values from linearised constructions, an automatic and stated fit
// window, the weighted fit of an edge model, derived quantities (the Kane
// energy E_P) and an uncertainty budget for each headline number.
//
// It is pure analysis: it reads no files and draws nothing. The caller
// converts an instrument export into Data (io/specio and model/optics) and
// renders the Result (io/results and reports).
package edge

import (
	"errors"
	"fmt"
	"math"
)

// Data is an absorption spectrum ready for fitting.
type Data struct {
	// E are photon energies in eV, strictly ascending.
	E []float64
	// Alpha are absorption coefficients in cm⁻¹.
	Alpha []float64
	// Sigma are the standard deviations of Alpha in cm⁻¹.
	Sigma []float64
	// Mask marks usable points (true); nil means all points are usable.
	// Points with non-finite values or Sigma ≤ 0 are never used.
	Mask []bool
	// SigmaKnown is true when Sigma are absolute standard deviations (the
	// noise level was given by the user); false when they are estimated
	// from the data or only relative, in which case covariances are scaled
	// by the reduced χ².
	SigmaKnown bool
	// RelativeSigma is true when Sigma are only relative weights (α
	// exported by other software, with no noise information): the reduced
	// χ² then says nothing about the goodness of fit.
	RelativeSigma bool
	// Transmission, when not nil, is the measured transmittance Alpha was
	// converted from. Analyze then fits the model in transmittance space
	// (see Transmission); Alpha, Sigma and Mask still give the start
	// values, the linearised constructions and what a report draws. It is
	// ignored when RelativeSigma is true.
	Transmission *Transmission
}

// ErrData is wrapped by every error about malformed Data.
var ErrData = errors.New("edge: bad data")

// Validate checks lengths and ordering.
func (d Data) Validate() error {
	n := len(d.E)
	if len(d.Alpha) != n || len(d.Sigma) != n || (d.Mask != nil && len(d.Mask) != n) {
		return fmt.Errorf("%w: lengths E %d, alpha %d, sigma %d, mask %d", ErrData, n, len(d.Alpha), len(d.Sigma), len(d.Mask))
	}
	if d.tSpace() {
		if err := d.Transmission.validate(n); err != nil {
			return err
		}
	}
	for i := 1; i < n; i++ {
		if !(d.E[i] > d.E[i-1]) {
			return fmt.Errorf("%w: energies not strictly ascending at point %d", ErrData, i)
		}
	}
	return nil
}

// usable reports whether point i may enter a fit.
func (d Data) usable(i int) bool {
	if d.Mask != nil && !d.Mask[i] {
		return false
	}
	return isFinite(d.E[i]) && isFinite(d.Alpha[i]) && isFinite(d.Sigma[i]) && d.Sigma[i] > 0 && d.E[i] > 0
}

// Usable returns the number of usable points.
func (d Data) Usable() int {
	n := 0
	for i := range d.E {
		if d.usable(i) {
			n++
		}
	}
	return n
}

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
