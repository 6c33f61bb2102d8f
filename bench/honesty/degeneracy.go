package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"text/tabwriter"

	"gonum.org/v1/gonum/stat/distuv"
)

// printDegeneracy tabulates, for every row that runs edge.Analyze (the
// tool rows, fitted in transmittance, and the α pipelines before the fix),
// what the tool told the user about each replica and how honest the
// intervals it presented were: the share of replicas whose E_g was
// reported as not determined (tail only), whose statistical term of E_g
// was withheld (near-degenerate: |corr(E_g, C)| > 0.999 or condition
// number > 1e12), and whose E_g carries the curvature-bias warning
// (|predicted bias| > 0.3 SE); then bias and coverage of E_g and C over
// the fits presented as reliable (converged, covariance available, not
// tail-only, not withheld). The fit's own corr and condition number are
// functions of the estimate, so conditioning on them selects on the
// error: a per-fit threshold is judged here by the regimes it separates.
func printDegeneracy(out io.Writer, rows []row) {
	fmt.Fprintln(out, "\nWhat edge.Analyze presented, per regime: % of all replicas reported as E_g not determined (tail only), with the statistical term of E_g withheld (near-degenerate), with the curvature-bias warning on E_g; median |corr(E_g, C)| of the fits; then over the fits presented as reliable: bias/SE (mean z) and Student-t coverage of E_g and C")
	tw := tabwriter.NewWriter(out, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "regime\tn\tnot determined %\twithheld %\tbias warning %\tmedian |corr|\tpresented\tE_g mean z\tE_g t68.3\tE_g t95\tC mean z\tC t68.3\tC t95\t")
	for _, r := range rows {
		if !(r.s.r.noise == tTool || r.s.r.analyze) {
			continue
		}
		var undet, withheld, warned, pres int
		var corrs []float64
		var zs [nPar]float64
		var h68, h95 [nPar]int
		for _, o := range r.out {
			if o.undetermined {
				undet++
			}
			if o.statNaN {
				withheld++
			}
			if !o.statNaN && math.Abs(o.curv[iEg]) > 0.3 {
				warned++
			}
			if !math.IsNaN(o.corr) {
				corrs = append(corrs, math.Abs(o.corr))
			}
			if o.undetermined || o.statNaN || math.IsNaN(o.se[iEg]) || (o.status != okFit && o.status != failNearSingular) {
				continue
			}
			pres++
			t68 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(o.dof)}.Quantile((1 + 0.683) / 2)
			t95 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(o.dof)}.Quantile((1 + 0.95) / 2)
			for j := range nPar {
				z := (o.est[j] - r.s.r.truth[j]) / o.se[j]
				zs[j] += z
				if math.Abs(z) <= t68 {
					h68[j]++
				}
				if math.Abs(z) <= t95 {
					h95[j]++
				}
			}
		}
		n := float64(len(r.out))
		sort.Float64s(corrs)
		med := math.NaN()
		if len(corrs) > 0 {
			med = corrs[len(corrs)/2]
		}
		cov := func(j int) string {
			if pres == 0 {
				return "\t\t\t"
			}
			fp := float64(pres)
			return fmt.Sprintf("%+.3f\t%.2f\t%.2f\t", zs[j]/fp, 100*float64(h68[j])/fp, 100*float64(h95[j])/fp)
		}
		fmt.Fprintf(tw, "%s\t%d\t%.1f\t%.1f\t%.1f\t%.5f\t%d\t%s%s\n", r.s.r.name, len(r.out), 100*float64(undet)/n, 100*float64(withheld)/n,
			100*float64(warned)/n, med, pres, cov(iEg), cov(iAmp))
	}
	tw.Flush()
}

// dumpCSV writes one line per replica: regime, status, the estimates'
// errors in standard errors (z), the fit's corr(E_g, C), condition number,
// predicted curvature biases in standard errors, and the tool's verdicts.
func dumpCSV(path string, rows []row) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := csv.NewWriter(f)
	w.Write([]string{"regime", "status", "dof", "z_eg", "z_c", "z_eu", "corr", "cond", "curv_eg", "curv_c", "curv_eu", "tail_only", "stat_withheld", "warned", "se_eg"})
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }
	for _, r := range rows {
		for _, o := range r.out {
			var z [nPar]float64
			for j := range nPar {
				z[j] = (o.est[j] - r.s.r.truth[j]) / o.se[j]
			}
			w.Write([]string{r.s.r.name, strconv.Itoa(o.status), strconv.Itoa(o.dof), g(z[0]), g(z[1]), g(z[2]), g(o.corr), g(o.cond),
				g(o.curv[0]), g(o.curv[1]), g(o.curv[2]), strconv.FormatBool(o.tailOnly), strconv.FormatBool(o.statNaN), strconv.FormatBool(o.warned), g(o.se[0])})
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
