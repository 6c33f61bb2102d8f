// Command scipycmp fits the same synthetic absorption spectra with bandedge
// (fit.Fit) and with SciPy's scipy.optimize.least_squares, and prints the
// time per fit of each, their ratio and the agreement of the fitted
// parameters.
//
// Both tools get identical problems, written to a JSON file: the energies,
// α and σ_α of each spectrum inside a fixed window, the start vector and the
// parameter bounds of model.DirectUrbach. Both minimise
// Σ ((α_i − f(E_i; p))/σ_i)² (weights 1/σ_i²) with the analytic Jacobian of
// the same closed form (the SciPy side evaluates it vectorised in NumPy with
// scipy.special.dawsn and scipy.special.erfcx; see bench/scipy_fit.py).
// SciPy runs method "trf" with the same bounds and, for reference, "lm"
// without bounds, both with x_scale="jac" (the column scaling bandedge's
// Levenberg–Marquardt uses) and ftol = xtol = gtol = 1e-15 (bandedge's
// defaults), each single-threaded (OMP/OpenBLAS/MKL threads = 1), as
// fit.Fit is.
//
//	go run ./bench/scipycmp                      # 50 spectra, 7 repetitions
//	go run ./bench/scipycmp -window auto         # edge.Analyze's window
//	bench/compare.sh                             # installs SciPy if needed
//
// Times are medians over the repetitions of each spectrum, then the median
// over spectra; bandedge is timed before and after SciPy, so a change of
// machine load during the run shows as a difference between the two.
package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"text/tabwriter"
	"time"

	"bandedge/fit"
	"bandedge/fit/edge"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

func main() {
	os.Exit(run(context.Background(), os.Args[1:], os.Stdout, os.Stderr))
}

type options struct {
	n, reps   int
	seed      uint64
	window    string
	python    string
	script    string
	keep      string
	tol       float64
	thickness float64
	sigmaT    float64
}

// problem is one fit handed to both tools (JSON field names are read by
// scipy_fit.py).
type problem struct {
	E      []float64  `json:"e"`
	Alpha  []float64  `json:"alpha"`
	Sigma  []float64  `json:"sigma"`
	Start  []float64  `json:"start"`
	Window [2]float64 `json:"window"`
}

// problemFile is the file scipy_fit.py reads. Bounds use null for ±∞
// (JSON has no infinity).
type problemFile struct {
	Model    string     `json:"model"`
	Seed     uint64     `json:"seed"`
	Reps     int        `json:"reps"`
	Tol      float64    `json:"tol"`
	Lower    []*float64 `json:"lower"`
	Upper    []*float64 `json:"upper"`
	Problems []problem  `json:"problems"`
}

// pyFit is one SciPy fit as scipy_fit.py reports it.
type pyFit struct {
	Params  []float64 `json:"params"`
	Times   []float64 `json:"times"` // seconds, one per repetition
	Cost    float64   `json:"cost"`  // ½ Σ r²
	Nfev    int       `json:"nfev"`
	Njev    int       `json:"njev"`
	Status  int       `json:"status"`
	Message string    `json:"message"`
}

type pyResults struct {
	Python  string             `json:"python"`
	NumPy   string             `json:"numpy"`
	SciPy   string             `json:"scipy"`
	Methods map[string][]pyFit `json:"methods"`
	Order   []string           `json:"order"`
	Labels  map[string]string  `json:"labels"`
}

func run(ctx context.Context, args []string, out, errOut io.Writer) int {
	var o options
	fs := flag.NewFlagSet("scipycmp", flag.ContinueOnError)
	fs.SetOutput(errOut)
	fs.IntVar(&o.n, "n", 50, "number of synthetic spectra")
	fs.IntVar(&o.reps, "reps", 7, "timed repetitions of every fit (after one untimed warm-up)")
	fs.Uint64Var(&o.seed, "seed", 1, "random seed of the spectra")
	fs.StringVar(&o.window, "window", "full", `fit window: "full" (every usable point of the 1000) or "auto" (edge.Analyze's automatic window)`)
	fs.StringVar(&o.python, "python", "", "Python interpreter with NumPy and SciPy (default: /usr/bin/python3 if it has SciPy, else python3)")
	fs.StringVar(&o.script, "script", "", "path of scipy_fit.py (default: beside this program's source)")
	fs.StringVar(&o.keep, "keep", "", "write problems.json and scipy.json into this folder and keep them")
	fs.Float64Var(&o.tol, "tol", 1e-15, "ftol = xtol = gtol of both tools")
	fs.Float64Var(&o.thickness, "thickness", 2e-4, "sample thickness in cm")
	fs.Float64Var(&o.sigmaT, "sigma-t", 0.002, "transmittance noise σ_T (fraction)")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if o.window != "full" && o.window != "auto" {
		fmt.Fprintf(errOut, "scipycmp: -window %q: want full or auto\n", o.window)
		return 2
	}
	if err := compare(ctx, o, out, errOut); err != nil {
		fmt.Fprintf(errOut, "scipycmp: %v\n", err)
		return 1
	}
	return 0
}

func compare(ctx context.Context, o options, out, errOut io.Writer) error {
	py, err := findPython(o.python)
	if err != nil {
		return err
	}
	script := o.script
	if script == "" {
		_, file, _, _ := runtime.Caller(0)
		script = filepath.Join(filepath.Dir(file), "..", "scipy_fit.py")
	}
	dir := o.keep
	if dir == "" {
		if dir, err = os.MkdirTemp("", "scipycmp"); err != nil {
			return err
		}
		defer os.RemoveAll(dir)
	} else if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}

	m := model.DirectUrbach{}
	truth := gaAsLike()
	pf, err := makeProblems(ctx, o, m, truth)
	if err != nil {
		return err
	}
	npts := 0
	for _, p := range pf.Problems {
		npts += len(p.E)
	}
	fmt.Fprintf(out, "bandedge vs scipy.optimize.least_squares: %d synthetic direct+urbach spectra, seed %d\n", o.n, o.seed)
	fmt.Fprintf(out, "truth E_g = %.4g eV, C = %.6g cm⁻¹·eV^½, E_U = %.4g eV; d = %g µm, σ_T = %g, R = %.4f (n = 3.6); 1000 points, 700.3–1000 nm\n",
		truth[0], truth[1], truth[2], o.thickness*1e4, o.sigmaT, optics.FresnelR(3.6, 0))
	fmt.Fprintf(out, "window %s: %.1f points per fit on average; start values from edge.Analyze (Tauc, Urbach plot, linear amplitude); tolerances %g; %d timed repetitions\n",
		o.window, float64(npts)/float64(o.n), o.tol, o.reps)
	fmt.Fprintf(out, "machine: %s/%s, %d CPUs, GOMAXPROCS %d, %s; load average at start %s\n", runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version(), loadavg())

	probPath := filepath.Join(dir, "problems.json")
	resPath := filepath.Join(dir, "scipy.json")
	if err := writeJSON(probPath, pf); err != nil {
		return err
	}

	set := &fit.Settings{AbsoluteSigma: true, GradTol: o.tol, StepTol: o.tol, FuncTol: o.tol}
	goRes, goTimes1, err := timeBandedge(ctx, pf, m, set, o.reps)
	if err != nil {
		return err
	}
	cmd := exec.CommandContext(ctx, py, script, probPath, resPath)
	cmd.Env = append(os.Environ(), "OMP_NUM_THREADS=1", "OPENBLAS_NUM_THREADS=1", "MKL_NUM_THREADS=1")
	var stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = errOut, &stderr
	if err := cmd.Run(); err != nil {
		return fmt.Errorf("%s %s: %w\n%s", py, script, err, stderr.String())
	}
	if stderr.Len() > 0 {
		fmt.Fprintf(errOut, "scipy_fit.py stderr:\n%s", stderr.String())
	}
	_, goTimes2, err := timeBandedge(ctx, pf, m, set, o.reps)
	if err != nil {
		return err
	}
	var pr pyResults
	b, err := os.ReadFile(resPath)
	if err != nil {
		return err
	}
	if err := json.Unmarshal(b, &pr); err != nil {
		return fmt.Errorf("read %s: %w", resPath, err)
	}
	fmt.Fprintf(out, "SciPy side: Python %s, NumPy %s, SciPy %s (%s); load average at end %s\n\n", pr.Python, pr.NumPy, pr.SciPy, py, loadavg())
	return report(out, pf, m, goRes, goTimes1, goTimes2, pr)
}

// gaAsLike is the GaAs-like truth [E_g, C, E_U]: E_g = 1.424 eV (room
// temperature, from memory), C from E_P = 28.8 eV, n = 3.6, m_e = 0.067,
// m_h = 0.51 (from memory: Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89,
// 5815, 2001), E_U = 8 meV (typical of good epitaxial GaAs, from memory).
func gaAsLike() []float64 {
	return []float64{1.424, model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51)), 0.008}
}

// makeProblems makes the synthetic scans, converts them with
// optics.ToAlpha and fixes window and start values with edge.Analyze.
func makeProblems(ctx context.Context, o options, m model.Model, truth []float64) (*problemFile, error) {
	e := synth.WavelengthGrid(700.3, 1000, 0.3)
	if len(e) != 1000 {
		return nil, fmt.Errorf("grid has %d points, want 1000", len(e))
	}
	r := optics.FresnelR(3.6, 0)
	pf := &problemFile{Model: m.Name(), Seed: o.seed, Reps: o.reps, Tol: o.tol}
	for _, q := range m.Params() {
		pf.Lower = append(pf.Lower, finiteOrNil(q.Min))
		pf.Upper = append(pf.Upper, finiteOrNil(q.Max))
	}
	for i := range o.n {
		rng := rand.New(rand.NewPCG(o.seed, uint64(i)))
		sc := synth.Transmittance(synth.Spec{Model: m, Params: truth, E: e, Thickness: o.thickness, R: r, SigmaT: o.sigmaT}, rng)
		conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, o.thickness, &optics.Settings{RConst: r, SigmaT: o.sigmaT})
		if err != nil {
			return nil, fmt.Errorf("spectrum %d: %w", i, err)
		}
		d := edge.Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true}
		ar, err := edge.Analyze(ctx, d, edge.Options{Model: m, NoWindowBudget: true})
		if err != nil {
			return nil, fmt.Errorf("spectrum %d: edge.Analyze: %w", i, err)
		}
		win := [2]float64{math.Inf(-1), math.Inf(1)}
		if o.window == "auto" {
			win = ar.Window
		}
		p := problem{Start: ar.Start}
		for k := range e {
			if conv.Mask[k] && e[k] >= win[0] && e[k] <= win[1] {
				p.E = append(p.E, e[k])
				p.Alpha = append(p.Alpha, conv.Alpha[k])
				p.Sigma = append(p.Sigma, conv.Sigma[k])
			}
		}
		p.Window = [2]float64{p.E[0], p.E[len(p.E)-1]}
		pf.Problems = append(pf.Problems, p)
	}
	return pf, nil
}

func finiteOrNil(v float64) *float64 {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil
	}
	return &v
}

// timeBandedge fits every problem once untimed, then reps times timed, and
// returns the results of the last pass and the times[problem][rep] in
// seconds.
func timeBandedge(ctx context.Context, pf *problemFile, m model.Model, set *fit.Settings, reps int) ([]*fit.Result, [][]float64, error) {
	fp := make([]fit.Problem, len(pf.Problems))
	for i, p := range pf.Problems {
		w := make([]float64, len(p.Sigma))
		for k, s := range p.Sigma {
			w[k] = 1 / (s * s)
		}
		fp[i] = fit.Problem{E: p.E, Alpha: p.Alpha, Weights: w, Model: m, Init: p.Start}
	}
	res := make([]*fit.Result, len(fp))
	times := make([][]float64, len(fp))
	for rep := -1; rep < reps; rep++ {
		for i := range fp {
			t0 := time.Now()
			r, err := fit.Fit(ctx, fp[i], set)
			dt := time.Since(t0).Seconds()
			if err != nil {
				return nil, nil, fmt.Errorf("bandedge fit %d: %w", i, err)
			}
			if rep >= 0 {
				times[i] = append(times[i], dt)
			}
			res[i] = r
		}
	}
	return res, times, nil
}

// medianPerFit is the median over problems of each problem's median time.
func medianPerFit(times [][]float64) float64 {
	per := make([]float64, len(times))
	for i, t := range times {
		per[i] = median(t)
	}
	return median(per)
}

func median(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	n := len(s)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// agreement holds the largest relative difference of each parameter, the
// largest difference in units of bandedge's standard error, and the largest
// relative difference of the weighted SSR, over all problems.
type agreement struct {
	rel, inSE [3]float64
	ssr       float64
	worst     int // problem with the largest relative parameter difference
	failed    int // SciPy fits that did not converge (status ≤ 0)
}

func agree(goRes []*fit.Result, py []pyFit) agreement {
	var a agreement
	worst := -1.0
	for i, g := range goRes {
		p := py[i]
		if p.Status <= 0 {
			a.failed++
		}
		for j := range g.Params {
			d := math.Abs(g.Params[j] - p.Params[j])
			rel := d / math.Abs(p.Params[j])
			if rel > a.rel[j] {
				a.rel[j] = rel
			}
			if rel > worst {
				worst, a.worst = rel, i
			}
			a.inSE[j] = math.Max(a.inSE[j], d/g.StdErr[j])
		}
		a.ssr = math.Max(a.ssr, math.Abs(g.SSR-2*p.Cost)/g.SSR)
	}
	return a
}

func report(out io.Writer, pf *problemFile, m model.Model, goRes []*fit.Result, go1, go2 [][]float64, pr pyResults) error {
	tGo1, tGo2 := medianPerFit(go1), medianPerFit(go2)
	tGo := math.Min(tGo1, tGo2)
	var iters, fev, jev []float64
	for _, r := range goRes {
		iters = append(iters, float64(r.Stats.MajorIterations))
		fev = append(fev, float64(r.Stats.FuncEvaluations))
		jev = append(jev, float64(r.Stats.GradEvaluations))
	}
	tw := tabwriter.NewWriter(out, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "tool\ttime per fit (median)\tratio to bandedge\tf evals (median)\tJ evals (median)\tmax rel. diff E_g, C, E_U\tmax diff / SE\tmax rel. diff SSR\tnot converged")
	fmt.Fprintf(tw, "bandedge fit.Fit (before SciPy)\t%s\t1\t%.0f\t%.0f\t–\t–\t–\t%d\n", dur(tGo1), median(fev), median(jev), countEarly(goRes))
	fmt.Fprintf(tw, "bandedge fit.Fit (after SciPy)\t%s\t%.2f\t\t\t\t\t\t\n", dur(tGo2), tGo2/tGo1)
	order := pr.Order
	if len(order) == 0 {
		for k := range pr.Methods {
			order = append(order, k)
		}
		slices.Sort(order)
	}
	for _, name := range order {
		fits := pr.Methods[name]
		if len(fits) != len(goRes) {
			return fmt.Errorf("scipy method %s: %d results for %d problems", name, len(fits), len(goRes))
		}
		times := make([][]float64, len(fits))
		var nf, nj []float64
		for i, f := range fits {
			times[i] = f.Times
			nf = append(nf, float64(f.Nfev))
			nj = append(nj, float64(f.Njev))
		}
		t := medianPerFit(times)
		a := agree(goRes, fits)
		label := name
		if l, ok := pr.Labels[name]; ok {
			label = l
		}
		fmt.Fprintf(tw, "%s\t%s\t%.1f\t%.0f\t%.0f\t%.1e, %.1e, %.1e\t%.1e\t%.1e\t%d\n", label, dur(t), t/tGo, median(nf), median(nj),
			a.rel[0], a.rel[1], a.rel[2], math.Max(a.inSE[0], math.Max(a.inSE[1], a.inSE[2])), a.ssr, a.failed)
	}
	tw.Flush()
	fmt.Fprintf(out, "\nratio = SciPy time / the faster of the two bandedge medians; bandedge iterations per fit: median %.0f, max %.0f\n", median(iters), slices.Max(iters))
	if tr, ok := pr.Methods["trf"]; ok {
		a := agree(goRes, tr)
		verdict := "meets"
		if math.Max(a.rel[0], math.Max(a.rel[1], a.rel[2])) > 1e-6 {
			verdict = "MISSES"
		}
		tTrf := medianPerFit(timesOf(tr))
		speed := "meets"
		if tTrf/tGo < 10 {
			speed = "MISSES"
		}
		fmt.Fprintf(out, "agreement with trf (same bounds) %s the 1e-6 relative target; speed ratio %.1f %s the 10× target\n", verdict, tTrf/tGo, speed)
	}
	return nil
}

func timesOf(f []pyFit) [][]float64 {
	t := make([][]float64, len(f))
	for i := range f {
		t[i] = f[i].Times
	}
	return t
}

func countEarly(r []*fit.Result) int {
	n := 0
	for _, x := range r {
		if x.Status.Early() {
			n++
		}
	}
	return n
}

func dur(s float64) string {
	return time.Duration(s * float64(time.Second)).Round(100 * time.Nanosecond).String()
}

func loadavg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return "unknown"
	}
	f := strings.Fields(string(b))
	if len(f) < 3 {
		return "unknown"
	}
	return strings.Join(f[:3], " ")
}

func writeJSON(path string, v any) error {
	b, err := json.Marshal(v)
	if err != nil {
		return err
	}
	return os.WriteFile(path, b, 0o644)
}

// findPython returns the interpreter to use: the flag's value, else
// Debian's /usr/bin/python3 when it imports SciPy (a pyenv python3 earlier
// on PATH usually lacks it), else python3 from PATH if it does.
func findPython(flagValue string) (string, error) {
	if flagValue != "" {
		return flagValue, nil
	}
	for _, c := range []string{"/usr/bin/python3", "python3"} {
		if exec.Command(c, "-c", "import numpy, scipy.optimize, scipy.special").Run() == nil {
			return c, nil
		}
	}
	return "", errors.New("no Python 3 with NumPy and SciPy found: run bench/compare.sh (installs Debian's python3-scipy) or give -python")
}
