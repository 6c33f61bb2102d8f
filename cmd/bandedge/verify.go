package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"slices"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"bandedge/fit"
	"bandedge/fit/selfcheck"
	"bandedge/fit/strd"
	"bandedge/io/atomicfile"
	"bandedge/io/results"
)

// Suites of the verify command, as --only spells them.
const (
	suiteNIST    = "nist"
	suitePhysics = "physics"
)

// nistLevels are NIST's difficulty levels in NIST's order.
var nistLevels = []string{"lower", "average", "higher"}

// verifyOptions are the inputs of the verify command.
type verifyOptions struct {
	Out, ErrOut io.Writer
	// JSON prints the record as one JSON object instead of text.
	JSON bool
	// Only is "" (every suite), suiteNIST or suitePhysics.
	Only string
	// OutFile, if set, also receives the JSON record (written atomically).
	OutFile string
	// Now is the clock of the record (time.Now).
	Now func() time.Time
	// Checks returns the physics checks (selfcheck.All); a test seam.
	Checks func() []selfcheck.Check
	// Settings are the fit settings of the NIST runs; nil, the defaults,
	// is what verify always uses. A test seam, not a flag: the suite is
	// run with no tuning.
	Settings *fit.Settings
}

func newVerifyCmd(runF func(context.Context, *verifyOptions) error) *cobra.Command {
	opts := &verifyOptions{Now: time.Now, Checks: selfcheck.All}
	cmd := &cobra.Command{
		Use:   "verify",
		Short: "Validate the fitting engine and the physics on this machine",
		Long: "verify runs the embedded reference suite on this machine and prints a validation record:\n" +
			"the 27 NIST StRD nonlinear regression problems from both starting points with the default\n" +
			"fit settings (log relative error LRE ≥ 6 on every parameter, ≥ 4 on the standard deviations\n" +
			"and the residual SD), and the physics reference checks (slab inversion, unit constants,\n" +
			"broadened edge against quadrature, Kane worked example). The record names the tool and Go\n" +
			"versions, the platform, the host and the time. verify exits with status 5 if any check fails.",
		Example: "  bandedge verify\n" +
			"  bandedge verify --json --out validation-2025-01.json\n" +
			"  bandedge verify --only nist",
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) > 0 {
				return flagErrorf("verify takes no arguments, got %q", args)
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, _ []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			switch opts.Only {
			case "", suiteNIST, suitePhysics:
			default:
				return flagErrorf("--only %q: give %s or %s", opts.Only, suiteNIST, suitePhysics)
			}
			if cmd.Flags().Changed("out") && strings.TrimSpace(opts.OutFile) == "" {
				return flagErrorf("--out: give a file name for the JSON record")
			}
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runVerify(cmd.Context(), opts)
		},
	}
	cmd.Flags().BoolVar(&opts.JSON, "json", false, "print the validation record as one JSON object instead of text")
	cmd.Flags().StringVar(&opts.Only, "only", "", "run one suite only: nist or physics")
	cmd.Flags().StringVar(&opts.OutFile, "out", "", "also write the JSON record to this file (atomically)")
	return cmd
}

// verifyRecord is the validation record: the --json and --out output, and
// what the text output is printed from.
type verifyRecord struct {
	Tool      string         `json:"tool"`
	Version   string         `json:"version"`
	GoVersion string         `json:"go_version"`
	OS        string         `json:"os"`
	Arch      string         `json:"arch"`
	CPUs      int            `json:"cpus"`
	Hostname  string         `json:"hostname"`
	Time      string         `json:"time"`
	ElapsedS  results.Num    `json:"elapsed_s"`
	Suites    []string       `json:"suites"`
	Criteria  verifyCriteria `json:"criteria"`
	NIST      []nistRow      `json:"nist"`
	Physics   []physicsRow   `json:"physics"`
	Summary   verifySummary  `json:"summary"`
	Verdict   string         `json:"verdict"`
	Pass      bool           `json:"pass"`
}

// verifyCriteria states the pass rules, so the record reads on its own.
type verifyCriteria struct {
	NISTSource  string  `json:"nist_source"`
	LRESource   string  `json:"lre_source"`
	MinParamLRE float64 `json:"nist_min_param_lre"`
	MinSDLRE    float64 `json:"nist_min_sd_lre"`
	MaxLRE      float64 `json:"lre_cap"`
	FitSettings string  `json:"nist_fit_settings"`
	PhysicsRule string  `json:"physics_rule"`
}

// nistRow is one NIST problem from one start.
type nistRow struct {
	Name          string      `json:"name"`
	Difficulty    string      `json:"difficulty"`
	Start         int         `json:"start"`
	ParamLRE      results.Num `json:"min_param_lre"`
	StdDevLRE     results.Num `json:"min_sd_lre"`
	ResidualSDLRE results.Num `json:"residual_sd_lre"`
	RSSLRE        results.Num `json:"rss_lre"`
	Iterations    int         `json:"iterations"`
	Fallback      bool        `json:"fallback"`
	Strategy      string      `json:"strategy"`
	Status        string      `json:"status"`
	Pass          bool        `json:"pass"`
	Error         string      `json:"error,omitempty"`
}

// physicsRow is one selfcheck.Check.
type physicsRow struct {
	Name     string      `json:"name"`
	Source   string      `json:"source"`
	Quantity string      `json:"quantity"`
	Got      results.Num `json:"got"`
	Want     results.Num `json:"want"`
	RelErr   results.Num `json:"rel_err"`
	Tol      results.Num `json:"rel_tol"`
	Pass     bool        `json:"pass"`
	Note     string      `json:"note,omitempty"`
}

// verifySummary counts the checks; Levels has one entry per NIST level
// that ran.
type verifySummary struct {
	Checks        int            `json:"checks"`
	Failed        int            `json:"failed"`
	NISTRuns      int            `json:"nist_runs"`
	NISTFailed    int            `json:"nist_failed"`
	FallbackRuns  int            `json:"nist_fallback_runs"`
	PhysicsChecks int            `json:"physics_checks"`
	PhysicsFailed int            `json:"physics_failed"`
	Levels        []levelSummary `json:"nist_levels"`
}

// levelSummary is the worst of one NIST difficulty level.
type levelSummary struct {
	Difficulty       string      `json:"difficulty"`
	Runs             int         `json:"runs"`
	Failed           int         `json:"failed"`
	MinParamLRE      results.Num `json:"min_param_lre"`
	MinSDLRE         results.Num `json:"min_sd_lre"`
	MinResidualSDLRE results.Num `json:"min_residual_sd_lre"`
	FallbackRuns     int         `json:"fallback_runs"`
}

func runVerify(ctx context.Context, opts *verifyOptions) error {
	now := opts.Now
	if now == nil {
		now = time.Now
	}
	checks := opts.Checks
	if checks == nil {
		checks = selfcheck.All
	}
	start := now()
	host, err := os.Hostname()
	if err != nil {
		host = ""
	}
	rec := &verifyRecord{
		Tool:      "bandedge",
		Version:   version,
		GoVersion: runtime.Version(),
		OS:        runtime.GOOS,
		Arch:      runtime.GOARCH,
		CPUs:      runtime.NumCPU(),
		Hostname:  host,
		Time:      start.UTC().Format(time.RFC3339),
		Criteria: verifyCriteria{
			NISTSource:  "NIST StRD nonlinear regression, https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml (embedded)",
			LRESource:   "McCullough, The American Statistician 53, 149, 1999",
			MinParamLRE: strd.MinParamLRE, MinSDLRE: strd.MinSDLRE, MaxLRE: strd.MaxLRE,
			FitSettings: "defaults, the same for every problem and start (no per-problem tuning)",
			PhysicsRule: "|got - want| <= rel_tol * |want|",
		},
		NIST:    []nistRow{},
		Physics: []physicsRow{},
	}
	if opts.Settings != nil {
		rec.Criteria.FitSettings = fmt.Sprintf("NOT the defaults: %+v", *opts.Settings)
	}
	if opts.Only != suitePhysics {
		rec.Suites = append(rec.Suites, suiteNIST)
		problems, err := strd.Load()
		if err != nil {
			return fmt.Errorf("verify: load the embedded NIST data: %w", err)
		}
		outcomes := strd.Run(ctx, problems, opts.Settings)
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("verify: %w", err)
		}
		for _, o := range outcomes {
			rec.NIST = append(rec.NIST, newNISTRow(o))
		}
		// NIST lists the problems by level; keep the name order within one.
		slices.SortStableFunc(rec.NIST, func(a, b nistRow) int {
			return slices.Index(nistLevels, a.Difficulty) - slices.Index(nistLevels, b.Difficulty)
		})
	}
	if opts.Only != suiteNIST {
		rec.Suites = append(rec.Suites, suitePhysics)
		for _, c := range checks() {
			rec.Physics = append(rec.Physics, physicsRow{
				Name: c.Name, Source: c.Source, Quantity: c.Quantity,
				Got: results.Num(c.Got), Want: results.Num(c.Want), RelErr: results.Num(c.RelErr()),
				Tol: results.Num(c.Tol), Pass: c.Pass, Note: c.Note,
			})
		}
	}
	rec.summarize()
	rec.ElapsedS = results.Num(now().Sub(start).Seconds())

	if opts.OutFile != "" {
		if err := atomicfile.Write(opts.OutFile, rec.writeJSON); err != nil {
			return fmt.Errorf("verify: %w", err)
		}
	}
	if opts.JSON {
		if err := rec.writeJSON(opts.Out); err != nil {
			return fmt.Errorf("verify: %w", err)
		}
	} else {
		rec.writeText(opts.Out)
	}
	if opts.OutFile != "" && opts.ErrOut != nil {
		fmt.Fprintf(opts.ErrOut, "verify: record written to %s\n", opts.OutFile)
	}
	if !rec.Pass {
		return &exitError{code: exitFail, msg: "verify: " + rec.Verdict}
	}
	return nil
}

func newNISTRow(o strd.Outcome) nistRow {
	r := nistRow{
		Name: o.Name, Difficulty: o.Difficulty, Start: o.Start,
		ParamLRE: results.Num(o.ParamLRE), StdDevLRE: results.Num(o.StdDevLRE),
		ResidualSDLRE: results.Num(o.ResidualSDLRE), RSSLRE: results.Num(o.RSSLRE),
		Iterations: o.Iterations, Fallback: o.Fallback, Strategy: o.Strategy,
		Status: o.Status.String(), Pass: o.Pass,
	}
	if o.Err != nil {
		r.Error = o.Err.Error()
	}
	if o.Result == nil {
		r.Status = "not run"
	}
	return r
}

// summarize fills Summary, Verdict and Pass from the rows.
func (r *verifyRecord) summarize() {
	s := verifySummary{NISTRuns: len(r.NIST), PhysicsChecks: len(r.Physics)}
	for _, level := range nistLevels {
		l := levelSummary{Difficulty: level, MinParamLRE: strd.MaxLRE, MinSDLRE: strd.MaxLRE, MinResidualSDLRE: strd.MaxLRE}
		for _, n := range r.NIST {
			if n.Difficulty != level {
				continue
			}
			l.Runs++
			l.MinParamLRE = minNum(l.MinParamLRE, n.ParamLRE)
			l.MinSDLRE = minNum(l.MinSDLRE, n.StdDevLRE)
			l.MinResidualSDLRE = minNum(l.MinResidualSDLRE, n.ResidualSDLRE)
			if n.Fallback {
				l.FallbackRuns++
			}
			if !n.Pass {
				l.Failed++
			}
		}
		if l.Runs > 0 {
			s.Levels = append(s.Levels, l)
		}
	}
	for _, n := range r.NIST {
		if n.Fallback {
			s.FallbackRuns++
		}
		if !n.Pass {
			s.NISTFailed++
		}
	}
	for _, p := range r.Physics {
		if !p.Pass {
			s.PhysicsFailed++
		}
	}
	s.Checks = s.NISTRuns + s.PhysicsChecks
	s.Failed = s.NISTFailed + s.PhysicsFailed
	r.Summary = s
	r.Pass = s.Failed == 0 && s.Checks > 0
	switch {
	case s.Checks == 0:
		r.Verdict = "no checks ran"
	case r.Pass:
		r.Verdict = fmt.Sprintf("all %d checks passed on this machine", s.Checks)
	default:
		r.Verdict = fmt.Sprintf("%d of %d checks FAILED", s.Failed, s.Checks)
	}
}

// minNum is the smaller of a and b, NaN if either is NaN (a NaN LRE must
// not hide behind a finite minimum).
func minNum(a, b results.Num) results.Num {
	if a != a || b != b {
		return results.Num(math.NaN())
	}
	return min(a, b)
}

func (r *verifyRecord) writeJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(r)
}

// writeText prints the record for a reader; every number comes from the
// record, as in the JSON.
func (r *verifyRecord) writeText(w io.Writer) {
	fmt.Fprintf(w, "bandedge %s validation record\n", r.Version)
	fmt.Fprintf(w, "%-9s %s %s/%s, %d CPUs\n", "go", r.GoVersion, r.OS, r.Arch, r.CPUs)
	fmt.Fprintf(w, "%-9s %s\n", "host", orUnknown(r.Hostname))
	fmt.Fprintf(w, "%-9s %s (%.2f s)\n", "time", r.Time, r.ElapsedS.Float())

	if slices.Contains(r.Suites, suiteNIST) {
		c := r.Criteria
		fmt.Fprintf(w, "\nNIST StRD nonlinear regression, %d runs (27 problems × 2 starts), fit settings: %s\n", len(r.NIST), c.FitSettings)
		fmt.Fprintf(w, "pass: LRE ≥ %g on every parameter, ≥ %g on the std devs and the residual SD (LRE capped at %g; McCullough 1999)\n\n",
			c.MinParamLRE, c.MinSDLRE, c.MaxLRE)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "problem\tlevel\tstart\tLRE param\tLRE sd\tLRE res sd\titer\tfallback\tresult")
		for _, n := range r.NIST {
			fb := "no"
			if n.Fallback {
				fb = n.Strategy
			}
			res := passFail(n.Pass)
			if n.Error != "" {
				res += ": " + n.Error
			} else if !n.Pass {
				res += " (" + n.Status + ")"
			}
			fmt.Fprintf(tw, "%s\t%s\t%d\t%s\t%s\t%s\t%d\t%s\t%s\n", n.Name, n.Difficulty, n.Start,
				lreText(n.ParamLRE), lreText(n.StdDevLRE), lreText(n.ResidualSDLRE), n.Iterations, fb, res)
		}
		tw.Flush()
		fmt.Fprintln(w)
		for _, l := range r.Summary.Levels {
			fmt.Fprintf(w, "%-8s %2d runs, %d failed: min LRE param %s, sd %s, res sd %s; fallback in %d\n", l.Difficulty, l.Runs, l.Failed,
				lreText(l.MinParamLRE), lreText(l.MinSDLRE), lreText(l.MinResidualSDLRE), l.FallbackRuns)
		}
		fmt.Fprintf(w, "fallback used in %d of %d runs\n", r.Summary.FallbackRuns, r.Summary.NISTRuns)
	}

	if slices.Contains(r.Suites, suitePhysics) {
		fmt.Fprintf(w, "\nphysics reference checks, %d (pass: |got − want| ≤ tol·|want|)\n\n", len(r.Physics))
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "check\tgot\twant\trel err\ttol\tresult\tsource")
		for _, p := range r.Physics {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%.1e\t%s\t%s\n", p.Name, numText(p.Got), numText(p.Want), relText(p.RelErr),
				p.Tol.Float(), passFail(p.Pass), p.Source)
		}
		tw.Flush()
		for _, p := range r.Physics {
			if !p.Pass {
				fmt.Fprintf(w, "FAILED %s: %s; %s\n", p.Name, p.Quantity, p.Note)
			}
		}
	}
	fmt.Fprintf(w, "\n%s\n", r.Verdict)
}

func passFail(ok bool) string {
	if ok {
		return "pass"
	}
	return "FAIL"
}

func lreText(x results.Num) string {
	if x != x {
		return "-"
	}
	return fmt.Sprintf("%.1f", x.Float())
}

func numText(x results.Num) string {
	if x != x {
		return "NaN"
	}
	return fmt.Sprintf("%.12g", x.Float())
}

func relText(x results.Num) string {
	if x != x {
		return "NaN"
	}
	return fmt.Sprintf("%.1e", x.Float())
}

func orUnknown(s string) string {
	if s == "" {
		return "(unknown)"
	}
	return s
}
