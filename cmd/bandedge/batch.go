package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"
	"gonum.org/v1/gonum/stat"

	"bandedge/fit/lot"
	"bandedge/fit/scan"
	"bandedge/io/atomicfile"
	"bandedge/io/quantity"
	"bandedge/io/results"
	"bandedge/io/sheet"
	"bandedge/io/specio"
	"bandedge/model"
	"bandedge/reports"
)

// batchOptions are the inputs of the batch command.
type batchOptions struct {
	Out, ErrOut io.Writer
	// Inputs are folders, glob patterns or files.
	Inputs []string
	OutDir string
	// Samples and Spec are the sample sheet and spec file ("" if none).
	Samples, Spec string
	Workers       int
	NoReports     bool
	// WaferDiameter is the text of --wafer-diameter; DiameterMM its value.
	WaferDiameter string
	DiameterMM    float64
	Flags         analysisFlags
	Settings      scan.Settings
	// ThicknessErrAbs: --thickness-err was a length, not a percentage.
	ThicknessErrAbs bool
	Now             func() time.Time
	// IsTerminal reports whether progress goes to a terminal (a bar) or not
	// (plain lines).
	IsTerminal func(w io.Writer) bool
	// OnProgress, when set, is called after each finished scan (tests).
	OnProgress func(done, total int)
	// Resume: reuse the results of an earlier run into OutDir where the
	// input and the settings are unchanged (--resume).
	Resume bool
	// Analyze, when set, analyses each scan instead of scan.Analyze
	// (tests count the analyses with it).
	Analyze func(ctx context.Context, name string, b []byte, s scan.Settings) (*scan.Outcome, error)
}

func newBatchCmd(runF func(context.Context, *batchOptions) error) *cobra.Command {
	opts := &batchOptions{Now: time.Now, IsTerminal: isTerminal}
	cmd := &cobra.Command{
		Use:   "batch DIR|GLOB|FILE... --out OUTDIR",
		Short: "Fit every scan of a lot, apply spec limits, roll up per wafer and map the wafers",
		Long: "batch fits every scan in the given folders (files ending in .csv .txt .tsv .dat .jdx .dx .jcamp,\n" +
			"sorted by name), glob patterns and files with one set of analysis flags, in parallel. A sample\n" +
			"sheet (--samples) gives per-scan thickness, index, wafer, lot and position; a spec file (--spec)\n" +
			"gives limits judged with a guard band from each scan's expanded uncertainty U. OUTDIR receives\n" +
			"summary.csv, summary.json, failures.txt, rollup.csv, rollup.json, results/<scan>.json,\n" +
			"reports/<scan>.png and maps/<wafer>.png. A bad file never stops the batch.\n\n" +
			"Ctrl-C (or SIGTERM) stops the running fits; every finished scan's files are kept and the summary\n" +
			"lists the rest as cancelled. The same command with --resume then completes the batch: a scan whose\n" +
			"results/<scan>.json has the same input SHA-256, settings and tool version is not fitted again.\n\n" +
			"Exit status: 5 if any scan or wafer fails its spec, else 3 if any scan could not be read or\n" +
			"fitted, else 6 if any verdict is indeterminate, else 0 (see the README).",
		Example: "  bandedge batch scans/ --out lot-out --samples samples.csv --spec spec.txt --index 3.6\n" +
			"  bandedge batch 'scans/W0*.csv' extra.jdx --out lot-out --thickness 2um --no-reports",
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Out, opts.ErrOut = cmd.OutOrStdout(), cmd.ErrOrStderr()
			opts.Inputs = args
			if opts.OutDir == "" {
				return flagErrorf("--out must name the output folder")
			}
			if opts.Workers < 0 {
				return flagErrorf("--workers %d: want a positive number (0: all cores)", opts.Workers)
			}
			s, err := opts.Flags.settings()
			if err != nil {
				return err
			}
			opts.Settings = s
			opts.ThicknessErrAbs = opts.Flags.ThicknessErr != "" && !strings.HasSuffix(strings.TrimSpace(opts.Flags.ThicknessErr), "%")
			d, err := quantity.ParseLength(opts.WaferDiameter)
			if err != nil {
				return flagErrorf("--wafer-diameter: %v", err)
			}
			opts.DiameterMM = d * 10
			if opts.DiameterMM < 10 || opts.DiameterMM > 1000 {
				return flagErrorf("--wafer-diameter %s: want 10 mm to 1000 mm", opts.WaferDiameter)
			}
			if runF != nil {
				return runF(cmd.Context(), opts)
			}
			return runBatch(cmd.Context(), opts)
		},
	}
	opts.Flags.register(cmd.Flags())
	f := cmd.Flags()
	f.StringVar(&opts.OutDir, "out", "", "output folder (created if needed; required)")
	f.StringVar(&opts.Samples, "samples", "", "sample sheet (CSV): per-scan thickness, index, wafer, lot, x/y position, temperature, notes")
	f.StringVar(&opts.Spec, "spec", "", "spec-limits file (see the README)")
	f.IntVar(&opts.Workers, "workers", 0, "scans fitted at once (default: all cores, GOMAXPROCS)")
	f.BoolVar(&opts.NoReports, "no-reports", false, "do not draw a PNG report per scan (the wafer maps are still drawn)")
	f.StringVar(&opts.WaferDiameter, "wafer-diameter", "100mm", "wafer diameter for the wafer maps, with a unit: 100mm, 150mm, 200mm")
	f.BoolVar(&opts.Resume, "resume", false, "complete an interrupted batch into the same --out: reuse every results/<scan>.json whose input SHA-256, settings and tool version match, refit the rest")
	return cmd
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// batchRun is what runBatch found, for the text summary.
type batchRun struct {
	scans   []lot.Scan
	rollup  lot.Rollup
	summary *results.Summary
	maps    []string
	elapsed time.Duration
	workers int
}

func runBatch(ctx context.Context, opts *batchOptions) error {
	start := time.Now()
	files, err := lot.List(opts.Inputs, opts.Samples, opts.Spec)
	if err != nil {
		return &exitError{code: exitInput, msg: err.Error()}
	}
	var samples *sheet.Samples
	if opts.Samples != "" {
		if samples, err = readSheet(opts.Samples); err != nil {
			return err
		}
	}
	var spec *sheet.Spec
	if opts.Spec != "" {
		if spec, err = readSpec(opts.Spec); err != nil {
			return err
		}
	}
	names := lot.Names(files)
	jobs := make([]lot.Job, len(files))
	defaults := lot.Defaults{Settings: opts.Settings, ThicknessErrAbsolute: opts.ThicknessErrAbs}
	unmatched := 0
	for i, f := range files {
		jobs[i] = lot.Job{Path: f, Name: names[i], Settings: opts.Settings}
		if samples == nil {
			continue
		}
		smp, ok := samples.Lookup(f)
		if !ok {
			unmatched++
			continue
		}
		jobs[i].Sample = &smp
		jobs[i].Settings, jobs[i].Err = lot.ApplySample(defaults, &smp, opts.Samples)
	}
	if unmatched > 0 {
		fmt.Fprintf(opts.ErrOut, "bandedge: warning: %d of %d scans have no row in %s and use the command-line values\n", unmatched, len(files), opts.Samples)
	}
	if samples != nil {
		if n := len(samples.Rows) - (len(files) - unmatched); n > 0 {
			fmt.Fprintf(opts.ErrOut, "bandedge: warning: %d rows of %s match no scan file\n", n, opts.Samples)
		}
	}
	resDir, repDir, mapDir := filepath.Join(opts.OutDir, "results"), filepath.Join(opts.OutDir, "reports"), filepath.Join(opts.OutDir, "maps")
	dirs := []string{opts.OutDir, resDir, mapDir}
	if !opts.NoReports {
		dirs = append(dirs, repDir)
	}
	for _, d := range dirs {
		if err := os.MkdirAll(d, 0o755); err != nil {
			return flagErrorf("--out %s: cannot create the output folder: %v", opts.OutDir, err)
		}
	}
	now := opts.Now().UTC()
	prov := func(s scan.Settings) results.Provenance { return results.NewProvenance(version, s, now) }
	var resume *results.Resume
	var reuse func(lot.Job, string) (*results.Record, string)
	if opts.Resume {
		// A process killed while writing leaves temporary files: the
		// files they were to replace are intact, the temporaries are not.
		n, err := atomicfile.RemoveStale(opts.OutDir, resDir, repDir, mapDir)
		if err != nil {
			return err
		}
		resume = &results.Resume{StaleRemoved: n, Refitted: []results.Refit{}}
		reuse = func(j lot.Job, sum string) (*results.Record, string) {
			return reusable(opts, j, sum, resDir, repDir)
		}
	}
	workers := opts.Workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	progress := newProgress(opts, len(jobs))
	// The per-scan records are written atomically as each scan finishes
	// and flushed to disk together before the summary that lists them
	// (atomicfile.Deferred: one fsync per record in turn cost a fifth of
	// the batch's wall time).
	var records atomicfile.Deferred
	set := &lot.Settings{
		Workers: workers, Spec: spec, Provenance: prov, Progress: progress.update, Reuse: reuse, Analyze: opts.Analyze,
		Done: func(ctx context.Context, sc *lot.Scan, o *scan.Outcome) error {
			return writeScanFiles(opts, &records, sc, o, resDir, repDir)
		},
	}
	scans, runErr := lot.Run(ctx, jobs, set)
	progress.finish()
	if err := records.Sync(); err != nil {
		return fmt.Errorf("batch outputs: flushing the result records to disk: %w", err)
	}

	br := &batchRun{scans: scans, workers: workers}
	br.rollup = lot.Roll(scans, spec)
	br.summary = buildSummary(opts, scans, samples, spec, now)
	if resume != nil {
		for _, sc := range scans {
			switch {
			case sc.Reused:
				resume.Reused++
			case sc.Refit != "":
				resume.Refitted = append(resume.Refitted, results.Refit{File: sc.Job.Path, Reason: sc.Refit})
			case sc.Row.Status != results.StatusCancelled:
				resume.New++
			}
		}
		br.summary.Resume = resume
	}
	if err := writeBatchFiles(opts, br, spec, now); err != nil {
		return err
	}
	if err := drawWaferMaps(opts, br, spec, mapDir, now); err != nil {
		return err
	}
	br.elapsed = time.Since(start)
	printBatch(opts.Out, opts, br, spec)
	var outErrs []error
	for _, sc := range scans {
		if sc.OutputErr != nil {
			outErrs = append(outErrs, sc.OutputErr)
		}
	}
	if len(outErrs) > 0 {
		return fmt.Errorf("batch outputs: %w", errors.Join(outErrs...))
	}
	if runErr != nil {
		c := br.summary.Counts
		return &exitError{code: exitCancelled, err: runErr,
			msg: fmt.Sprintf("interrupted: %d of %d scans finished and kept in %s, %d cancelled; run the same command with --resume to complete the batch",
				c.Scans-c.Cancelled, c.Scans, opts.OutDir, c.Cancelled)}
	}
	return batchExit(br)
}

// reusable decides, for --resume, whether a scan's earlier record can
// stand for a new analysis: it must be readable, of this record schema
// and tool version, for the same input path, of the same bytes (SHA-256)
// and the same settings (their digest), and its report must exist when
// reports are drawn. It returns the record, or nil and the reason the
// scan is analysed again ("" when there is no earlier record).
func reusable(opts *batchOptions, j lot.Job, sum, resDir, repDir string) (*results.Record, string) {
	path := filepath.Join(resDir, j.Name+".json")
	f, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, ""
	}
	if err != nil {
		return nil, fmt.Sprintf("its earlier result cannot be opened: %v", err)
	}
	defer f.Close()
	rec, err := results.ReadRecord(f, path)
	if err != nil {
		return nil, fmt.Sprintf("its earlier result cannot be read: %v", err)
	}
	p := &rec.Provenance
	switch {
	case p.Schema != results.SchemaVersion:
		return nil, fmt.Sprintf("its earlier result has record schema %d, this tool writes %d", p.Schema, results.SchemaVersion)
	case p.Version != version:
		return nil, fmt.Sprintf("its earlier result was made by bandedge %s, this is %s", p.Version, version)
	case rec.File != j.Path:
		return nil, fmt.Sprintf("its earlier result is of %s", rec.File)
	case rec.SHA256 != sum:
		return nil, fmt.Sprintf("the file changed (sha256 %.12s… then, %.12s… now)", rec.SHA256, sum)
	case p.SettingsSHA256 != results.SettingsDigest(j.Settings):
		return nil, "the settings changed: " + settingsDiff(p.Settings, j.Settings)
	}
	if !opts.NoReports {
		if _, err := os.Stat(filepath.Join(repDir, j.Name+".png")); err != nil {
			return nil, "its report is missing"
		}
	}
	return rec, ""
}

// settingsDiff names the settings that differ between a and b, as their
// JSON fields: "thickness_cm 0.0002 → 0.00019".
func settingsDiff(a, b scan.Settings) string {
	fields := func(s scan.Settings) map[string]string {
		m := map[string]json.RawMessage{}
		raw, _ := json.Marshal(s)
		json.Unmarshal(raw, &m)
		out := map[string]string{}
		for k, v := range m {
			out[k] = string(v)
		}
		return out
	}
	fa, fb := fields(a), fields(b)
	var keys []string
	for k := range fa {
		keys = append(keys, k)
	}
	for k := range fb {
		if _, ok := fa[k]; !ok {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	var diff []string
	for _, k := range keys {
		if fa[k] != fb[k] {
			diff = append(diff, fmt.Sprintf("%s %s → %s", k, orDashText(fa[k]), orDashText(fb[k])))
		}
	}
	if len(diff) == 0 {
		return "the recorded digest does not match"
	}
	return strings.Join(diff, ", ")
}

func readSheet(path string) (*sheet.Samples, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &exitError{code: exitInput, msg: fmt.Sprintf("sample sheet: %v", err)}
	}
	defer f.Close()
	s, err := sheet.ReadSamples(f, path)
	return s, inputError("sample sheet", err)
}

func readSpec(path string) (*sheet.Spec, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &exitError{code: exitInput, msg: fmt.Sprintf("spec: %v", err)}
	}
	defer f.Close()
	s, err := sheet.ReadSpec(f, path)
	return s, inputError("spec", err)
}

// inputError classifies an error reading the sample sheet or spec file
// as an input error (exit 3): a *specio.ParseError already is; any other
// (a folder given as the file, a read error) is wrapped.
func inputError(what string, err error) error {
	var pe *specio.ParseError
	if err == nil || errors.As(err, &pe) {
		return err
	}
	return &exitError{code: exitInput, msg: fmt.Sprintf("%s: %v", what, err), err: err}
}

// writeScanFiles writes one scan's result record and report as soon as it
// is finished (called in the worker).
func writeScanFiles(opts *batchOptions, records *atomicfile.Deferred, sc *lot.Scan, o *scan.Outcome, resDir, repDir string) error {
	if sc.Record == nil {
		return nil
	}
	rel := filepath.Join("results", sc.Job.Name+".json")
	if sc.Reused {
		// The earlier run wrote them; reusable checked the report exists.
		sc.Row.ResultFile = rel
		if !opts.NoReports {
			sc.Row.ReportFile = filepath.Join("reports", sc.Job.Name+".png")
		}
		return nil
	}
	if err := records.Write(filepath.Join(resDir, sc.Job.Name+".json"), func(w io.Writer) error {
		return results.WriteJSON(w, sc.Record)
	}); err != nil {
		return err
	}
	sc.Row.ResultFile = rel
	if opts.NoReports || o == nil {
		return nil
	}
	rep := filepath.Join("reports", sc.Job.Name+".png")
	if err := writeBatchReport(filepath.Join(repDir, sc.Job.Name+".png"), o, sc); err != nil {
		if errors.Is(err, reports.ErrNothingToDraw) {
			sc.Row.Warnings = append(sc.Row.Warnings, "no report drawn: "+err.Error())
			return nil
		}
		return err
	}
	sc.Row.ReportFile = rep
	return nil
}

// writeBatchReport writes a scan's edge report with its place in the lot:
// wafer, lot, position and verdict.
func writeBatchReport(path string, o *scan.Outcome, sc *lot.Scan) error {
	title := filepath.Base(o.Path)
	r := &sc.Row
	var id []string
	if r.Wafer != "" {
		id = append(id, "wafer "+r.Wafer)
	}
	if r.Lot != "" {
		id = append(id, "lot "+r.Lot)
	}
	if x, y := r.XMM.Float(), r.YMM.Float(); !math.IsNaN(x) && !math.IsNaN(y) {
		id = append(id, fmt.Sprintf("site (%g, %g) mm", x, y))
	}
	if len(id) > 0 {
		title += " · " + strings.Join(id, " · ")
	}
	lines := describeInput(o)
	if r.Verdict != "" {
		var parts []string
		for _, v := range r.Verdicts {
			parts = append(parts, v.Quantity+" "+v.Verdict)
		}
		lines = append([]string{fmt.Sprintf("spec verdict: %s (%s)", strings.ToUpper(r.Verdict), strings.Join(parts, ", "))}, lines...)
	}
	fig, err := reports.EdgeFigure(reports.EdgeReport{Title: title, Data: o.Data, Result: o.Result, Model: o.Model,
		InputLines: lines, Footer: footer(sc.Record)})
	if err != nil {
		return fmt.Errorf("report for %s: %w", o.Path, err)
	}
	return reports.WritePNG(path, fig)
}

func buildSummary(opts *batchOptions, scans []lot.Scan, samples *sheet.Samples, spec *sheet.Spec, now time.Time) *results.Summary {
	s := &results.Summary{Schema: results.SummarySchema, Tool: "bandedge", Version: version, GoVersion: runtime.Version(),
		Platform: runtime.GOOS + "/" + runtime.GOARCH, Time: now.Format(time.RFC3339), Settings: opts.Settings,
		SettingsSHA256: results.SettingsDigest(opts.Settings), Model: modelOf(opts.Settings), Tail: tailOf(opts.Settings),
		Samples: opts.Samples, SpecFile: opts.Spec, Limits: []results.LimitBound{}, ExtraColumns: []string{}}
	if samples != nil {
		s.ExtraColumns = append(s.ExtraColumns, samples.ExtraColumns...)
	}
	if spec != nil {
		s.SpecTitle = spec.Title
		s.DecisionRule = lot.DecisionRule(spec, opts.Settings.Coverage)
		for _, l := range spec.Limits {
			s.Limits = append(s.Limits, results.LimitBound{Quantity: l.Quantity, Lo: finiteNum(l.Lo), Hi: finiteNum(l.Hi)})
		}
	}
	for i := range scans {
		r := scans[i].Row
		s.Rows = append(s.Rows, r)
		s.Counts.Scans++
		switch r.Status {
		case results.StatusOK:
			s.Counts.OK++
		case results.StatusNotConverged:
			s.Counts.NotConverged++
		case results.StatusSingular:
			s.Counts.Singular++
		case results.StatusAtBound:
			s.Counts.AtBound++
		case results.StatusCancelled:
			s.Counts.Cancelled++
		default:
			s.Counts.Failed++
		}
		switch r.Verdict {
		case "pass":
			s.Counts.Pass++
		case "fail":
			s.Counts.Fail++
		case "indeterminate":
			s.Counts.Indeterminate++
		}
	}
	return s
}

// modelOf is the model the settings name ("direct+urbach" when none).
func modelOf(s scan.Settings) string {
	if s.Model == "" {
		return "direct+urbach"
	}
	return s.Model
}

// tailOf is the tail of the model the settings name ("auto" for a
// comparison).
func tailOf(s scan.Settings) string {
	m := modelOf(s)
	if m == scan.Auto {
		return scan.Auto
	}
	if _, tail, _, err := model.ParseName(m); err == nil {
		return tail
	}
	return ""
}

func finiteNum(v float64) results.Num {
	if math.IsInf(v, 0) {
		return results.Num(math.NaN())
	}
	return results.Num(v)
}

// writeBatchFiles writes the summary, failures and roll-up files.
func writeBatchFiles(opts *batchOptions, br *batchRun, spec *sheet.Spec, now time.Time) error {
	ru := &results.Rollup{Schema: results.SummarySchema, Tool: "bandedge", Version: version, Platform: br.summary.Platform,
		Time: now.Format(time.RFC3339), SettingsSHA256: br.summary.SettingsSHA256, DecisionRule: br.summary.DecisionRule,
		Groups: br.rollup.Rows(spec)}
	files := []struct {
		name  string
		write func(w io.Writer) error
	}{
		{"summary.csv", func(w io.Writer) error { return results.WriteSummaryCSV(w, br.summary) }},
		{"summary.json", func(w io.Writer) error { return results.WriteSummaryJSON(w, br.summary) }},
		{"failures.txt", func(w io.Writer) error { return results.WriteFailures(w, br.summary.Rows) }},
		{"rollup.csv", func(w io.Writer) error { return results.WriteRollupCSV(w, ru) }},
		{"rollup.json", func(w io.Writer) error { return results.WriteRollupJSON(w, ru) }},
	}
	for _, f := range files {
		if err := atomicfile.Write(filepath.Join(opts.OutDir, f.name), f.write); err != nil {
			return err
		}
	}
	return nil
}

// mapPanels are the quantities of the wafer maps: field, symbol, unit,
// display scale and decimals.
var mapPanels = []struct {
	field, symbol, unit string
	scale               float64
	digits              int
}{
	{"eg_ev", "E_g", "eV", 1, 4},
	{"urbach_ev", "E_U", "meV", 1e3, 2},
}

// drawWaferMaps draws maps/<lot>_<wafer>.png for every wafer with at least
// one positioned site. The colour scales are common to each lot.
func drawWaferMaps(opts *batchOptions, br *batchRun, spec *sheet.Spec, dir string, now time.Time) error {
	// Colour ranges per lot and panel: the 1st to 99th percentile of the
	// lot's values, so that a few failed fits do not squash the scale of
	// every wafer (sites beyond it are drawn in its end colours, and the
	// map says how many).
	type lotRange struct{ vals [2][]float64 }
	ranges := map[string]*lotRange{}
	for _, sc := range br.scans {
		if !sc.Fitted() {
			continue
		}
		lr := ranges[sc.Row.Lot]
		if lr == nil {
			lr = &lotRange{}
			ranges[sc.Row.Lot] = lr
		}
		for k, p := range mapPanels {
			if v, _ := sc.Row.Value(p.field); !math.IsNaN(v) && !math.IsInf(v, 0) {
				lr.vals[k] = append(lr.vals[k], v*p.scale)
			}
		}
	}
	scaleRange := func(lr *lotRange, k int) [2]float64 {
		if lr == nil || len(lr.vals[k]) == 0 {
			return [2]float64{}
		}
		v := lr.vals[k]
		sort.Float64s(v)
		return [2]float64{stat.Quantile(0.01, stat.Empirical, v, nil), stat.Quantile(0.99, stat.Empirical, v, nil)}
	}
	lotMeans := map[string]lot.Group{}
	for _, g := range br.rollup.Lots {
		lotMeans[g.Lot] = g
	}
	used := map[string]bool{}
	for _, g := range br.rollup.Wafers {
		m := reports.WaferMap{Wafer: g.Wafer, Lot: g.Lot, Diameter: opts.DiameterMM, Footer: mapFooter(br.summary)}
		if spec != nil {
			m.Verdict = g.Verdict.String()
			m.Rule = lot.DecisionRule(spec, opts.Settings.Coverage)
		}
		hasEU := false
		for _, i := range g.Indices {
			if v, _ := br.scans[i].Row.Value("urbach_ev"); !math.IsNaN(v) {
				hasEU = true
			}
		}
		np := 1
		if hasEU {
			np = 2
		}
		for k := 0; k < np; k++ {
			mp := mapPanels[k]
			st := g.Stats[mp.field]
			p := reports.MapPanel{Symbol: mp.symbol, Unit: mp.unit, Scale: mp.scale, Digits: mp.digits,
				Lo: math.NaN(), Hi: math.NaN(), Markers: "the scan's overall verdict (all its limits)",
				Stats: reports.MapStats{Count: st.Count, Skipped: st.Skipped, Mean: st.Mean, StdDev: st.StdDev, Min: st.Min,
					Max: st.Max, Range: st.Range, Nonuniformity: st.Nonuniformity, LotMean: lotMeans[g.Lot].Stats[mp.field].Mean}}
			p.Range = scaleRange(ranges[g.Lot], k)
			if l, ok := spec.Limit(mp.field); ok {
				if !math.IsInf(l.Lo, 0) {
					p.Lo = l.Lo * mp.scale
				}
				if !math.IsInf(l.Hi, 0) {
					p.Hi = l.Hi * mp.scale
				}
			}
			if spec == nil {
				p.Markers = "no spec: every site a circle"
			}
			m.Panels = append(m.Panels, p)
		}
		for _, i := range g.Indices {
			sc := &br.scans[i]
			x, y := sc.Row.XMM.Float(), sc.Row.YMM.Float()
			if math.IsNaN(x) || math.IsNaN(y) {
				continue
			}
			site := reports.WaferSite{X: x, Y: y}
			for k := 0; k < np; k++ {
				v, _ := sc.Row.Value(mapPanels[k].field)
				site.Values = append(site.Values, v)
				site.Verdicts = append(site.Verdicts, siteVerdict(sc, spec))
			}
			m.Sites = append(m.Sites, site)
		}
		if len(m.Sites) == 0 {
			continue
		}
		m.Notes = append(m.Notes, fmt.Sprintf("scans %d: fitted %d, not fitted %d", g.Scans, g.Fitted, g.Failed))
		if spec != nil {
			m.Notes[0] += fmt.Sprintf("; scan verdicts: pass %d · fail %d · indeterminate %d", g.Pass, g.Fail, g.Indeterminate)
			for _, j := range g.Judgements {
				m.Notes = append(m.Notes, fmt.Sprintf("wafer limit %s: %s (value %s)", j.Limit, j.Verdict, fmtSig(j.Value, 4)))
			}
		}
		fig, err := reports.WaferFigure(m)
		if err != nil {
			fmt.Fprintf(opts.ErrOut, "bandedge: warning: wafer map of %s not drawn: %v\n", g.Wafer, err)
			continue
		}
		name := mapName(g.Lot, g.Wafer, used)
		if err := reports.WritePNG(filepath.Join(dir, name), fig); err != nil {
			return err
		}
		br.maps = append(br.maps, filepath.Join("maps", name))
	}
	return nil
}

// mapFooter is the short provenance of a wafer map: as a report's footer,
// with the command-line settings' digest (the summary and every result
// record carry the full settings) and "summary.json" for the inputs.
func mapFooter(s *results.Summary) string {
	p := results.Provenance{Tool: s.Tool, Version: s.Version, Platform: s.Platform, Time: s.Time, Model: s.Model,
		SettingsSHA256: s.SettingsSHA256}
	return p.Short("") + " · inputs and sha256 in summary.json"
}

// siteVerdict is the verdict a site's marker shows: the scan's overall
// verdict (every limit), the same on every panel, so that each site that
// makes its wafer fail or indeterminate is marked as such wherever it is
// looked at.
func siteVerdict(sc *lot.Scan, spec *sheet.Spec) string {
	if !sc.Fitted() {
		return reports.SiteNotFitted
	}
	if spec == nil {
		return ""
	}
	return sc.Verdict.String()
}

// mapName is a file name for a wafer map: lot and wafer with characters
// outside [A-Za-z0-9._-] replaced, made unique.
func mapName(lotID, wafer string, used map[string]bool) string {
	clean := func(s string) string {
		return strings.Map(func(r rune) rune {
			if r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '.' || r == '-' || r == '_' {
				return r
			}
			return '_'
		}, s)
	}
	base := clean(wafer)
	if base == "" {
		base = "no-wafer"
	}
	if lotID != "" {
		base = clean(lotID) + "_" + base
	}
	name := base + ".png"
	for k := 2; used[name]; k++ {
		name = fmt.Sprintf("%s-%d.png", base, k)
	}
	used[name] = true
	return name
}

// batchExit maps the batch's outcome to the documented exit status: any
// fail (scan or wafer) 5; else any scan not read or fitted 3; else any
// indeterminate verdict 6; else 0.
func batchExit(br *batchRun) error {
	c := br.summary.Counts
	anyWafer := func(v string) int {
		n := 0
		for _, g := range br.rollup.Wafers {
			if g.Verdict.String() == v {
				n++
			}
		}
		return n
	}
	notFitted := c.Failed + c.NotConverged + c.Singular + c.AtBound + c.Cancelled
	switch {
	case c.Fail > 0 || anyWafer("fail") > 0:
		return &exitError{code: exitFail, msg: fmt.Sprintf("spec failed: %s and %s fail", count(anyWafer("fail"), "wafer"), count(c.Fail, "scan"))}
	case notFitted > 0:
		return &exitError{code: exitInput, msg: fmt.Sprintf("%s of %d could not be read or fitted (see failures.txt)", count(notFitted, "scan"), c.Scans)}
	case c.Indeterminate > 0 || anyWafer("indeterminate") > 0:
		return &exitError{code: exitIndeterminate, msg: fmt.Sprintf("no decision: %s and %s are indeterminate under the decision rule",
			count(anyWafer("indeterminate"), "wafer"), count(c.Indeterminate, "scan"))}
	}
	return nil
}

// printBatch prints the short text summary.
func printBatch(w io.Writer, opts *batchOptions, br *batchRun, spec *sheet.Spec) {
	c := br.summary.Counts
	fmt.Fprintf(w, "batch       %d scans, %d workers, %.1f s\n", c.Scans, br.workers, br.elapsed.Seconds())
	line := fmt.Sprintf("fitted      %d", c.OK)
	if n := c.Failed + c.NotConverged + c.Singular + c.AtBound + c.Cancelled; n > 0 {
		line += fmt.Sprintf("; not fitted or not to be trusted %d (failed %d, not converged %d, singular covariance %d, on a bound %d, cancelled %d: see failures.txt)",
			n, c.Failed, c.NotConverged, c.Singular, c.AtBound, c.Cancelled)
	}
	fmt.Fprintln(w, line)
	if r := br.summary.Resume; r != nil {
		fmt.Fprintf(w, "resume      reused %d, refitted %d, new %d", r.Reused, len(r.Refitted), r.New)
		if r.StaleRemoved > 0 {
			fmt.Fprintf(w, "; removed %s of an interrupted write", count(r.StaleRemoved, "temporary file"))
		}
		fmt.Fprintln(w)
		for _, f := range r.Refitted {
			fmt.Fprintf(w, "  refitted %s: %s\n", f.File, f.Reason)
		}
	}
	if spec != nil {
		title := spec.Title
		if title == "" {
			title = opts.Spec
		}
		fmt.Fprintf(w, "spec        %s\n", title)
		fmt.Fprintf(w, "rule        %s\n", br.summary.DecisionRule)
		fmt.Fprintf(w, "verdicts    pass %d · fail %d · indeterminate %d (scans)\n", c.Pass, c.Fail, c.Indeterminate)
	} else {
		fmt.Fprintln(w, "spec        none (no verdicts)")
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "%-10s %-8s %5s %6s %12s %8s %9s %9s %13s  %s\n", "lot", "wafer", "scans", "fitted", "E_g mean/eV", "s/meV", "range/meV", "non-unif.", "E_U mean/meV", "verdict")
	row := func(g lot.Group, wafer string) {
		eg, eu := g.Stats["eg_ev"], g.Stats["urbach_ev"]
		v := "-"
		if spec != nil {
			v = g.Verdict.String()
		}
		fmt.Fprintf(w, "%-10s %-8s %5d %6d %12s %8s %9s %9s %13s  %s\n", orDashText(g.Lot), wafer, g.Scans, g.Fitted,
			fmtFixedNaN(eg.Mean, 5), fmtFixedNaN(1e3*eg.StdDev, 2), fmtFixedNaN(1e3*eg.Range, 2), pctText(eg.Nonuniformity),
			fmtFixedNaN(1e3*eu.Mean, 2), v)
	}
	for _, g := range br.rollup.Wafers {
		row(g, orDashText(g.Wafer))
	}
	for _, g := range br.rollup.Lots {
		row(g, "(lot)")
	}
	for _, g := range br.rollup.Wafers {
		for _, r := range g.Reasons {
			fmt.Fprintf(w, "  %s %s: %s\n", orDashText(g.Lot), orDashText(g.Wafer), r)
		}
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "summary     %s (and summary.json)\n", filepath.Join(opts.OutDir, "summary.csv"))
	fmt.Fprintf(w, "roll-up     %s (and rollup.json)\n", filepath.Join(opts.OutDir, "rollup.csv"))
	fmt.Fprintf(w, "failures    %s (%s)\n", filepath.Join(opts.OutDir, "failures.txt"), count(c.Failed+c.NotConverged+c.Singular+c.AtBound+c.Cancelled, "line"))
	fmt.Fprintf(w, "results     %s/ (one JSON record per fitted scan)\n", filepath.Join(opts.OutDir, "results"))
	if !opts.NoReports {
		fmt.Fprintf(w, "reports     %s/ (one PNG per fitted scan)\n", filepath.Join(opts.OutDir, "reports"))
	}
	if len(br.maps) > 0 {
		fmt.Fprintf(w, "wafer maps  %s/ (%d: %s)\n", filepath.Join(opts.OutDir, "maps"), len(br.maps), strings.Join(baseNames(br.maps), ", "))
	} else {
		fmt.Fprintln(w, "wafer maps  none (no positions: give x_mm and y_mm in the sample sheet)")
	}
}

// count writes "1 scan", "3 scans".
func count(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}

func baseNames(p []string) []string {
	out := make([]string, len(p))
	for i, s := range p {
		out[i] = filepath.Base(s)
	}
	return out
}

func orDashText(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

func fmtFixedNaN(v float64, dec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return fmt.Sprintf("%.*f", dec, v)
}

func pctText(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	return fmt.Sprintf("%.3f %%", 100*v)
}

// progress shows how far the batch is: a bar on a terminal, plain lines
// at every tenth otherwise.
type progress struct {
	opts  *batchOptions
	bar   *progressbar.ProgressBar
	total int
	next  int // next tenth to print
}

func newProgress(opts *batchOptions, total int) *progress {
	p := &progress{opts: opts, total: total, next: 1}
	if opts.IsTerminal != nil && opts.IsTerminal(opts.ErrOut) {
		p.bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(opts.ErrOut), progressbar.OptionSetDescription("fitting"),
			progressbar.OptionShowCount(), progressbar.OptionSetPredictTime(true), progressbar.OptionThrottle(100*time.Millisecond),
			progressbar.OptionClearOnFinish(), progressbar.OptionSetWidth(30))
	}
	return p
}

// update is called by lot.Run from one goroutine.
func (p *progress) update(done, total, failed int) {
	if p.opts.OnProgress != nil {
		p.opts.OnProgress(done, total)
	}
	if p.bar != nil {
		if failed > 0 {
			p.bar.Describe(fmt.Sprintf("fitting (%d not fitted)", failed))
		}
		p.bar.Add(1)
		return
	}
	if p.next > 10 || done*10 < p.next*total {
		return
	}
	for p.next <= 10 && done*10 >= p.next*total {
		p.next++
	}
	fmt.Fprintf(p.opts.ErrOut, "batch: %d/%d scans done (%d%%), %d not fitted\n", done, total, 100*done/max(total, 1), failed)
}

func (p *progress) finish() {
	if p.bar != nil {
		p.bar.Finish()
	}
}
