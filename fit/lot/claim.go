package lot

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Thresholds of the claim check (stated in the README).
const (
	// ClaimConsistentZ: |z| at or below it is consistent (about the 95 %
	// two-sided level of a normal distribution, p ≥ 0.046).
	ClaimConsistentZ = 2
	// ClaimInconsistentZ: |z| above it is inconsistent (p < 0.0027).
	ClaimInconsistentZ = 3
	// ClaimMaxRelU: a measurement whose combined standard uncertainty u_c
	// exceeds this fraction of the claimed gap (1 %, about 14 meV for GaAs)
	// cannot discriminate between gaps that matter in practice, so a small
	// |z| is not called consistent. Our choice: 1 % of E_g is of the order
	// of the gap shift of a 1 % change of alloy composition in the III–V
	// compounds (from memory), which a check of a supplier's gap must see.
	ClaimMaxRelU = 0.01
)

// ClaimVerdict is the outcome of a claim check.
type ClaimVerdict int

const (
	// CannotTell: the data cannot decide (2 < |z| ≤ 3, u_c unknown, or
	// u_c too large to discriminate).
	CannotTell ClaimVerdict = iota
	// Consistent: |z| ≤ 2 with a discriminating measurement.
	Consistent
	// Inconsistent: |z| > 3.
	Inconsistent
)

// String returns "consistent", "inconsistent" or "cannot tell".
func (v ClaimVerdict) String() string {
	switch v {
	case Consistent:
		return "consistent"
	case Inconsistent:
		return "inconsistent"
	}
	return "cannot tell"
}

// Claim is a supplier's stated gap.
type Claim struct {
	// Gap is the claimed E_g in eV.
	Gap float64
	// Tol is the claim's own tolerance half-width in eV (0: none). It is
	// treated as the half-width of a rectangular distribution, whose
	// standard uncertainty is Tol/√3 (JCGM 100:2008, §4.3.7).
	Tol float64
}

// UClaim returns the claim's standard uncertainty Tol/√3.
func (c Claim) UClaim() float64 { return c.Tol / math.Sqrt(3) }

// ClaimResult is a claim compared with one measured gap.
type ClaimResult struct {
	Claim Claim
	// Measured is the measured E_g and UC its combined standard
	// uncertainty u_c (eV).
	Measured, UC float64
	// UClaim = Tol/√3 and UTotal = √(u_c² + u_claim²).
	UClaim, UTotal float64
	// Z = (Measured − Gap)/UTotal and P its two-sided p-value under a
	// normal distribution, 2·Φ(−|z|).
	Z, P float64
	// Verdict and Reason, in plain words; Dominant names the largest
	// source of u_c ("" if unknown).
	Verdict  ClaimVerdict
	Reason   string
	Dominant string
}

// JudgeClaim compares a claim with a measured gap of combined standard
// uncertainty uc, whose largest budget term is dominant (u in eV):
//
//	z = (E_meas − E_claim) / √(u_c² + u_claim²),   u_claim = tol/√3
//	p = 2·Φ(−|z|)
//
// inconsistent when |z| > 3; else cannot tell when E_meas or u_c is not
// available (NaN) or u_c > 1 % of the claimed gap (ClaimMaxRelU); else
// consistent when |z| ≤ 2; else (2 < |z| ≤ 3) cannot tell.
func JudgeClaim(c Claim, measured, uc float64, dominant string, dominantU float64) ClaimResult {
	r := ClaimResult{Claim: c, Measured: measured, UC: uc, UClaim: c.UClaim(), Dominant: dominant}
	r.UTotal = math.Hypot(uc, r.UClaim)
	r.Z = (measured - c.Gap) / r.UTotal
	r.P = math.NaN()
	if !math.IsNaN(r.Z) {
		r.P = 2 * distuv.UnitNormal.CDF(-math.Abs(r.Z))
	}
	dom := ""
	if dominant != "" && !math.IsNaN(dominantU) {
		dom = fmt.Sprintf("; the largest term of u_c is %s (%.2g eV)", dominant, dominantU)
	}
	diff := fmt.Sprintf("the measured %.4f eV differs from the claimed %.4f eV by %+.1f meV", measured, c.Gap, 1e3*(measured-c.Gap))
	switch {
	case math.IsNaN(measured):
		r.Verdict = CannotTell
		r.Reason = "E_g is not determined by these data (e.g. only the tail below the gap is seen), so the claim cannot be checked"
	case math.IsNaN(uc) || math.IsInf(uc, 0):
		r.Verdict = CannotTell
		r.Reason = fmt.Sprintf("the measured gap is %.4f eV but its uncertainty is not known (a budget term could not be evaluated), so no comparison can be made", measured)
	case math.Abs(r.Z) > ClaimInconsistentZ:
		r.Verdict = Inconsistent
		r.Reason = fmt.Sprintf("%s, %.1f times the combined uncertainty %.2g eV (|z| > %d, p = %.2g): the data contradict the claim%s",
			diff, math.Abs(r.Z), r.UTotal, ClaimInconsistentZ, r.P, dom)
	case uc > ClaimMaxRelU*math.Abs(c.Gap):
		r.Verdict = CannotTell
		r.Reason = fmt.Sprintf("%s, but u_c = %.2g eV is more than %.0f %% of the claimed gap: this measurement cannot discriminate%s",
			diff, uc, 100*ClaimMaxRelU, dom)
	case math.Abs(r.Z) <= ClaimConsistentZ:
		r.Verdict = Consistent
		r.Reason = fmt.Sprintf("%s, within %d combined uncertainties (|z| = %.2f, p = %.2g)%s", diff, ClaimConsistentZ, math.Abs(r.Z), r.P, dom)
	default:
		r.Verdict = CannotTell
		r.Reason = fmt.Sprintf("%s, between %d and %d combined uncertainties (|z| = %.2f, p = %.2g): neither confirmed nor contradicted; more or better data would tell%s",
			diff, ClaimConsistentZ, ClaimInconsistentZ, math.Abs(r.Z), r.P, dom)
	}
	return r
}

// LotMean is the mean gap of a lot with its uncertainty.
type LotMean struct {
	// N is the number of scans with a determined gap and known u_c.
	N int
	// Mean and StdDev (sample, n − 1) of their gaps; SE = StdDev/√N, the
	// standard error of the mean from the site-to-site scatter (Type A,
	// JCGM 100:2008, §4.2.3; NaN for N < 2).
	Mean, StdDev, SE float64
	// MeanUC is the mean of the scans' u_c; U is the standard uncertainty
	// of the lot mean, √(SE² + MeanUC²): the scatter's standard error plus
	// the per-scan budget treated as fully correlated between scans (same
	// instrument, settings and window rule; JCGM 100:2008, §5.2 with
	// r = 1), an upper bound since the statistical part of each u_c is
	// partly counted in the scatter too. For one scan U = MeanUC.
	MeanUC, U float64
}

// MeanGap computes the lot mean of the gaps eg with combined standard
// uncertainties uc, skipping pairs where either is not finite. With no
// usable pair every number is NaN.
func MeanGap(eg, uc []float64) LotMean {
	var xs, us []float64
	for i := range eg {
		if isFinite(eg[i]) && isFinite(uc[i]) {
			xs = append(xs, eg[i])
			us = append(us, uc[i])
		}
	}
	nan := math.NaN()
	m := LotMean{N: len(xs), Mean: nan, StdDev: nan, SE: nan, MeanUC: nan, U: nan}
	if m.N == 0 {
		return m
	}
	m.Mean = stat.Mean(xs, nil)
	m.MeanUC = stat.Mean(us, nil)
	m.U = m.MeanUC
	if m.N > 1 {
		m.StdDev = stat.StdDev(xs, nil)
		m.SE = m.StdDev / math.Sqrt(float64(m.N))
		m.U = math.Hypot(m.SE, m.MeanUC)
	}
	return m
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
