// Command honesty is the long statistical-honesty study of the bandedge
// fit: over many noisy replicas of a synthetic GaAs-like scan it compares
// the spread of the fitted parameters with the Cramér–Rao bound, the mean
// reported standard error with the spread, and the nominal 68.3 % and 95 %
// intervals with their actual coverage, in a well-behaved case and in the
// regimes where the linearised covariance is expected to fail
// (near-threshold windows, thick samples that show only the tail, strong
// tail/gap correlation). Optionally it compares a residual-resampling
// bootstrap with the covariance intervals.
//
// The A, W, D, U and F rows fit α directly (fit.Fit, or edge.Analyze on α
// data with σ_α from the noisy T: the tool before it fitted in
// transmittance). The T and P rows are the tool's own path since then:
// scan.Convert and edge.Analyze, fitted in transmittance (T: window forced
// at the truth; P: the whole pipeline). A last table says what
// edge.Analyze presented per regime (gap not determined, statistics
// withheld, curvature-bias warning) and how honest the presented
// intervals were; -dump writes every replica for further analysis.
//
//	go run ./bench/honesty                 # 20,000 replicas per regime
//	go run ./bench/honesty -n 2000 -boot 0 # quick look
//
// The seed is printed; every replica's noise comes from its own PCG stream
// (seed, hash(regime name)·2³² + replica), so results depend neither on
// -workers nor on which other regimes run.
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime"
	"strings"
	"text/tabwriter"
	"time"

	"bandedge/model"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

type options struct {
	n, nPipe, workers int
	seed              uint64
	boot, bootB       int
	only, dump        string
}

func run(args []string, out, errOut io.Writer) int {
	var o options
	fs := flag.NewFlagSet("honesty", flag.ContinueOnError)
	fs.SetOutput(errOut)
	fs.IntVar(&o.n, "n", 20000, "replicas per fixed-window regime")
	fs.IntVar(&o.nPipe, "npipe", 2000, "replicas of the regimes that run the whole edge.Analyze pipeline")
	fs.Uint64Var(&o.seed, "seed", 20240607, "random seed")
	fs.IntVar(&o.workers, "workers", runtime.GOMAXPROCS(0), "parallel workers")
	fs.IntVar(&o.boot, "boot", 400, "replicas of the bootstrap comparison (0: skip)")
	fs.IntVar(&o.bootB, "B", 400, "bootstrap resamples per replica")
	fs.Float64Var(&gridStep, "step", 0.3, "wavelength step of the scan in nm (0.3: 1000 points)")
	fs.StringVar(&o.only, "only", "", "run only the regimes whose name contains this text")
	fs.StringVar(&o.dump, "dump", "", "write every replica's outcome as CSV to this file (for further analysis)")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	ctx := context.Background()
	fmt.Fprintf(out, "bandedge statistical-honesty study: seed %d, %d replicas per fixed-window regime, %d per pipeline regime, %d workers\n",
		o.seed, o.n, o.nPipe, o.workers)
	fmt.Fprintf(out, "scan: %d points, %.4g–1000 nm in %g nm steps; GaAs-like truth E_g = 1.424 eV, C = %.6g cm⁻¹·eV^½ (E_P 28.8 eV, n 3.6, m_e 0.067, m_h 0.51), E_U as listed; R = Fresnel(n = 3.6)\n\n",
		len(grid()), model.HCeVnm/grid()[len(grid())-1], gridStep, gaAsC())
	start := time.Now()
	var rows []row
	for _, r := range regimes(o) {
		if o.only != "" && !strings.Contains(r.name, o.only) {
			continue
		}
		s, err := newSetup(r)
		if err != nil {
			fmt.Fprintf(errOut, "honesty: %s: %v\n", r.name, err)
			return 1
		}
		n := r.n
		if n == 0 {
			n = o.n
		}
		t0 := time.Now()
		res := s.run(ctx, o.seed, n, o.workers)
		rows = append(rows, row{s: s, out: res, dt: time.Since(t0)})
		fmt.Fprintf(errOut, "  %-44s %6d replicas in %v\n", r.name, n, time.Since(t0).Round(time.Millisecond))
	}
	printTables(out, rows)
	printDegeneracy(out, rows)
	if o.dump != "" {
		if err := dumpCSV(o.dump, rows); err != nil {
			fmt.Fprintf(errOut, "honesty: %v\n", err)
			return 1
		}
	}
	if o.boot > 0 && o.only == "" {
		if err := bootstrapStudy(ctx, out, o); err != nil {
			fmt.Fprintf(errOut, "honesty: bootstrap: %v\n", err)
			return 1
		}
	}
	fmt.Fprintf(out, "\ntotal wall time %v\n", time.Since(start).Round(time.Millisecond))
	return 0
}

func gaAsC() float64 { return model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51)) }

// truthEU returns the GaAs-like truth with Urbach energy eu (eV).
func truthEU(eu float64) [nPar]float64 { return [nPar]float64{1.424, gaAsC(), eu} }

// regimes lists the study. Thickness in cm (2e-4 = 2 µm).
func regimes(o options) []regime {
	base := regime{truth: truthEU(0.008), thick: 2e-4, sigmaT: 0.002, loTail: 6, hiAbove: 0.25, noise: alphaGauss}
	var rs []regime
	add := func(name string, f func(r *regime)) {
		r := base
		r.name = name
		f(&r)
		rs = append(rs, r)
	}
	add("A1 baseline, α Gaussian", func(r *regime) {})
	add("A2 baseline, T noise, true σ", func(r *regime) { r.noise = tTrueWeights })
	add("A3 baseline, T noise, σ from data", func(r *regime) { r.noise = tDataWeights })
	add("A4 pipeline (Analyze), 2 µm", func(r *regime) { r.noise, r.analyze, r.n = tDataWeights, true, o.nPipe })
	add("A5 baseline, σ_T 0.0005, σ from data", func(r *regime) { r.noise, r.sigmaT = tDataWeights, 0.0005 })
	add("A6 baseline, σ_T 0.005, σ from data", func(r *regime) { r.noise, r.sigmaT = tDataWeights, 0.005 })
	// Near-threshold windows: the upper end k·E_U above the gap.
	for _, k := range []float64{10, 5, 3, 2, 1, 0.5, 0} {
		add(fmt.Sprintf("W window to E_g + %g·E_U", k), func(r *regime) { r.hiAbove = k * r.truth[iEU] })
	}
	add("W window to E_g + 3·E_U, σ from data", func(r *regime) { r.hiAbove, r.noise = 3*r.truth[iEU], tDataWeights })
	for _, k := range []float64{5, 2, 1} {
		add(fmt.Sprintf("W window to E_g + %g·E_U, σ_T 0.01", k), func(r *regime) { r.hiAbove, r.sigmaT = k*r.truth[iEU], 0.01 })
	}
	// Thick samples: the photometric floor and the 5σ_T rule mask the band.
	for _, um := range []float64{5, 10, 20, 30, 40, 50} {
		add(fmt.Sprintf("D thickness %g µm", um), func(r *regime) { r.thick = um * 1e-4 })
	}
	add("D thickness 20 µm, σ_T 0.01", func(r *regime) { r.thick, r.sigmaT = 20e-4, 0.01 })
	add("D thickness 10 µm, σ from data", func(r *regime) { r.thick, r.noise = 10e-4, tDataWeights })
	add("D thickness 20 µm, σ from data", func(r *regime) { r.thick, r.noise = 20e-4, tDataWeights })
	for _, um := range []float64{10, 20, 50} {
		add(fmt.Sprintf("D pipeline (Analyze), %g µm", um), func(r *regime) { r.thick, r.noise, r.analyze, r.n = um*1e-4, tDataWeights, true, o.nPipe })
	}
	// Strong tail/gap correlation: broad tails (disordered material).
	for _, eu := range []float64{0.015, 0.025, 0.040} {
		add(fmt.Sprintf("U E_U = %g meV", eu*1000), func(r *regime) { r.truth = truthEU(eu) })
	}
	add("U E_U = 40 meV, window to E_g + 0.10 eV", func(r *regime) { r.truth, r.hiAbove = truthEU(0.040), 0.10 })
	add("U E_U = 40 meV, window to E_g + 2·E_U", func(r *regime) { r.truth, r.hiAbove = truthEU(0.040), 0.08 })
	add("U E_U = 25 meV, pipeline (Analyze)", func(r *regime) { r.truth, r.noise, r.analyze, r.n = truthEU(0.025), tDataWeights, true, o.nPipe })
	// Remedies for the data-dependent weights: T noise with the true σ (the
	// non-Gaussian α noise alone), one reweighting pass with σ from the
	// fitted model, and the fit in T itself.
	for _, c := range []struct {
		um, sigmaT float64
	}{{2, 0.005}, {10, 0.002}, {20, 0.002}} {
		for _, k := range []noiseKind{tTrueWeights, tDataWeights, tModelWeights, tSpace, tSpaceTrueMask} {
			add(fmt.Sprintf("F %g µm, σ_T %g, %s", c.um, c.sigmaT, k), func(r *regime) { r.thick, r.sigmaT, r.noise = c.um*1e-4, c.sigmaT, k })
		}
	}
	// Before the fix, the pipeline at the remaining regimes of the tool
	// rows below (α fitted with σ_α from the measured T, α mask).
	add("A7 pipeline (Analyze), 2 µm, σ_T 0.005", func(r *regime) { r.sigmaT, r.noise, r.analyze, r.n = 0.005, tDataWeights, true, o.nPipe })
	for _, um := range []float64{30, 40} {
		add(fmt.Sprintf("D pipeline (Analyze), %g µm", um), func(r *regime) { r.thick, r.noise, r.analyze, r.n = um*1e-4, tDataWeights, true, o.nPipe })
	}
	// After the fix: the tool's own path, scan.Convert and edge.Analyze,
	// which fits in transmittance with the model-predicted floor. T rows
	// force the window at the truth; P rows run the whole pipeline.
	tool := func(name string, f func(r *regime)) {
		add(name, func(r *regime) { r.noise = tTool; f(r) })
	}
	tool("T 2 µm, tool", func(r *regime) {})
	tool("T 2 µm, σ_T 0.005, tool", func(r *regime) { r.sigmaT = 0.005 })
	for _, um := range []float64{10, 20, 25, 30, 40, 50} {
		tool(fmt.Sprintf("T %g µm, tool", um), func(r *regime) { r.thick = um * 1e-4 })
	}
	for _, k := range []float64{3, 1} {
		tool(fmt.Sprintf("T window to E_g + %g·E_U, tool", k), func(r *regime) { r.hiAbove = k * r.truth[iEU] })
	}
	tool("T window to E_g + 1·E_U, σ_T 0.01, tool", func(r *regime) { r.hiAbove, r.sigmaT = r.truth[iEU], 0.01 })
	tool("T E_U = 25 meV, tool", func(r *regime) { r.truth = truthEU(0.025) })
	pipe := func(name string, f func(r *regime)) {
		tool(name, func(r *regime) { r.analyze, r.n = true, o.nPipe; f(r) })
	}
	pipe("P pipeline (tool), 2 µm", func(r *regime) {})
	pipe("P pipeline (tool), 2 µm, σ_T 0.005", func(r *regime) { r.sigmaT = 0.005 })
	for _, um := range []float64{10, 20, 25, 30, 40, 50} {
		pipe(fmt.Sprintf("P pipeline (tool), %g µm", um), func(r *regime) { r.thick = um * 1e-4 })
	}
	pipe("P pipeline (tool), E_U = 25 meV", func(r *regime) { r.truth = truthEU(0.025) })
	return rs
}

type row struct {
	s   *setup
	out []outcome
	dt  time.Duration
}

func printTables(out io.Writer, rows []row) {
	fmt.Fprintln(out, "Regime setup: window at the truth (fixed-window regimes) and correlations from the Cramér–Rao matrix (JᵀWJ)⁻¹ at the truth")
	tw := tabwriter.NewWriter(out, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "regime\tnoise\td (µm)\tσ_T\tE_U (meV)\twindow (eV)\tpoints\tρ(E_g,E_U)\tρ(E_g,C)\tfailed\ttime\t")
	for _, r := range rows {
		s := r.s
		win := fmt.Sprintf("%.4f–%.4f", s.win[0], s.win[1])
		if s.r.analyze {
			win = "automatic"
		}
		sm := summarize(s, r.out, iEg)
		fmt.Fprintf(tw, "%s\t%s\t%g\t%g\t%g\t%s\t%d\t%.4f\t%.4f\t%s\t%v\t\n", s.r.name, s.r.noise, s.r.thick*1e4, s.r.sigmaT, s.r.truth[iEU]*1000,
			win, len(s.inWin), s.corrEgU, s.corrEgC, failText(sm), r.dt.Round(time.Millisecond))
	}
	tw.Flush()
	for j := range nPar {
		fmt.Fprintf(out, "\n%s: sd/√CRB is the efficiency ratio (1 = efficient); SE/sd compares the mean reported standard error with the actual spread; bias/SE is in units of the mean standard error, predicted is the first-order bias from the T-noise model of the α fits (in √CRB; mask selection not included); curv. is the mean curvature bias edge.Analyze predicts for itself (Result.PredictedBias, Box 1971, in SE; tool rows); coverage in %% (±2σ_binom beside 68.3 and 95)\n", parNames[j])
		tw := tabwriter.NewWriter(out, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "regime\tok\t√CRB\tsd/√CRB\tSE/sd\tbias/SE\tpredicted\tcurv.\tt68.3\tt95\t±1SE\t±1.96SE\t±u_c\t±2u_c\ttail-only\twarned\t")
		for _, r := range rows {
			sm := summarize(r.s, r.out, j)
			uc1, uc2 := "", ""
			to, wa := "", ""
			if r.s.r.analyze {
				uc1, uc2 = pct(sm.covU1), pct(sm.covU2)
				to, wa = fmt.Sprint(sm.tailOnly), fmt.Sprint(sm.warned)
			}
			curv := ""
			if r.s.r.noise == tTool {
				curv = fmt.Sprintf("%+.3f", sm.curv)
			}
			fmt.Fprintf(tw, "%s\t%d\t%.3g\t%.3f\t%.3f\t%+.3f\t%+.3f\t%s\t%s±%.1f\t%s±%.1f\t%s\t%s\t%s\t%s\t%s\t%s\t\n", r.s.r.name, sm.n, sm.crbSD, sm.sd/sm.crbSD, sm.meanSE/sm.sd, sm.bias/sm.meanSE, r.s.predBias[j], curv,
				pct(sm.covT68), 200*binomSE(0.683, max(sm.n, 1)), pct(sm.covT95), 200*binomSE(0.95, max(sm.n, 1)), pct(sm.covZ1), pct(sm.covZ196), uc1, uc2, to, wa)
		}
		tw.Flush()
	}
}

func pct(q float64) string { return fmt.Sprintf("%.2f", 100*q) }
