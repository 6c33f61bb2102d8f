package results

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"bandedge/fit/scan"
)

// SummarySchema identifies the layout of summary.json and rollup.json; it
// changes when a field changes meaning.
const SummarySchema = 1

// Scan statuses of a summary row.
const (
	StatusOK           = "ok"              // fitted and converged, with a covariance, no parameter on a bound
	StatusNotConverged = IssueNotConverged // fitted, but the solver stopped early: numbers are not estimates
	StatusSingular     = IssueSingular     // fitted, but the covariance could not be computed: no statistical uncertainty
	StatusAtBound      = IssueAtBound      // fitted, but a parameter ended on its bound: the interval is not meaningful
	StatusFailed       = "failed"          // could not be read, converted or fitted
	StatusCancelled    = "cancelled"       // not analysed: the batch was interrupted
)

// Fitted reports whether a status is that of a scan whose fit ran (ok,
// or with an issue), as against one that failed or was not analysed.
func Fitted(status string) bool {
	switch status {
	case StatusOK, StatusNotConverged, StatusSingular, StatusAtBound:
		return true
	}
	return false
}

// Row is one scan of a batch summary: where it came from, how it ended, every
// fitted quantity with its combined standard uncertainty u_c (the *_err
// fields) and expanded uncertainty U (the *_expanded fields), and the
// verdicts. Numbers that are not available are NaN (null in JSON, an empty
// cell in CSV). When E_g is not determined (the data show only the tail),
// EgEV, Amplitude and EPEV are NaN, EgDetermined is false, and the record in
// the per-scan result file keeps the extrapolated value.
type Row struct {
	File   string `json:"file"`
	SHA256 string `json:"sha256"`
	Lot    string `json:"lot"`
	Wafer  string `json:"wafer"`
	XMM    Num    `json:"x_mm"`
	YMM    Num    `json:"y_mm"`
	Status string `json:"status"`
	// Verdict is the overall verdict of the scan ("pass", "fail",
	// "indeterminate"; "" without a spec or when the scan was not fitted).
	Verdict string `json:"verdict"`
	// Error is the one-line reason a scan failed (file and line when known).
	Error string `json:"error,omitempty"`

	Model             string `json:"model"`
	EgEV              Num    `json:"eg_ev"`
	EgErrEV           Num    `json:"eg_err_ev"`
	EgExpandedEV      Num    `json:"eg_expanded_ev"`
	EgStatErrEV       Num    `json:"eg_stat_err_ev"`
	EgDetermined      bool   `json:"eg_determined"`
	EgDominant        string `json:"eg_dominant"`
	EgDominantU       Num    `json:"eg_dominant_u_ev"`
	UrbachEV          Num    `json:"urbach_ev"`
	UrbachErrEV       Num    `json:"urbach_err_ev"`
	UrbachExpandedEV  Num    `json:"urbach_expanded_ev"`
	Amplitude         Num    `json:"amplitude"`
	AmplitudeErr      Num    `json:"amplitude_err"`
	AmplitudeExpanded Num    `json:"amplitude_expanded"`
	EPEV              Num    `json:"ep_ev"`
	EPErrEV           Num    `json:"ep_err_ev"`
	EPExpandedEV      Num    `json:"ep_expanded_ev"`
	CoverageK         Num    `json:"coverage_k"`
	Chi2Reduced       Num    `json:"chi2_reduced"`
	PointsUsed        int    `json:"points_used"`
	WindowEV          [2]Num `json:"window_ev"`
	Converged         bool   `json:"converged"`

	// The settings this scan was analysed with (after the sample sheet's
	// overrides) and the sheet's other columns.
	ThicknessCM  Num    `json:"thickness_cm"`
	Index        Num    `json:"index"`
	TemperatureK Num    `json:"temperature_k"`
	Notes        string `json:"notes"`

	// Verdicts holds one verdict per scan-level limit of the spec, in the
	// spec's order.
	Verdicts []LimitVerdict `json:"verdicts"`
	Warnings []string       `json:"warnings"`

	// ResultFile and ReportFile are relative to the batch folder ("" if
	// not written).
	ResultFile string `json:"result_file"`
	ReportFile string `json:"report_file"`

	// Extra are the sample sheet's unknown columns, passed through.
	Extra []Column `json:"extra"`

	// Provenance is the provenance of the scan's record: tool version,
	// build, time of the analysis, model and tail, and the settings it was
	// analysed with (nil for a scan that was not fitted).
	Provenance *Provenance `json:"provenance"`
}

// LimitVerdict is the verdict of one limit.
type LimitVerdict struct {
	Quantity string `json:"quantity"`
	Verdict  string `json:"verdict"`
}

// Column is a pass-through cell of the sample sheet.
type Column struct {
	Name  string `json:"column"`
	Value string `json:"value"`
}

// NewRow returns a row with every number NaN.
func NewRow(file string) Row {
	n := Num(math.NaN())
	return Row{File: file, XMM: n, YMM: n, EgEV: n, EgErrEV: n, EgExpandedEV: n, EgStatErrEV: n, EgDominantU: n,
		UrbachEV: n, UrbachErrEV: n, UrbachExpandedEV: n, Amplitude: n, AmplitudeErr: n, AmplitudeExpanded: n,
		EPEV: n, EPErrEV: n, EPExpandedEV: n, CoverageK: n, Chi2Reduced: n, WindowEV: [2]Num{n, n},
		ThicknessCM: n, Index: n, TemperatureK: n, Warnings: []string{}, Verdicts: []LimitVerdict{}, Extra: []Column{}}
}

// RowFromOutcome fills a row's fit fields from an analysed scan's record
// (built from o.Result by FromOutcome): it is RowFromRecord(rec), kept so
// that callers holding the outcome need not know that the row depends on
// the record alone.
func RowFromOutcome(_ *scan.Outcome, rec *Record) Row { return RowFromRecord(rec) }

// RowFromRecord fills a row's fit fields from a result record alone, so
// that a record read back from its file (batch --resume) gives the same
// row as the analysis that wrote it. The status is the record's first
// issue, StatusOK without one. The identification and verdict fields are
// left to the caller.
func RowFromRecord(rec *Record) Row {
	r := NewRow(rec.File)
	r.SHA256, r.Model = rec.SHA256, rec.Model
	r.Status = StatusOK
	if len(rec.Issues) > 0 {
		r.Status = rec.Issues[0]
	}
	r.Converged = rec.Converged
	r.EgDetermined = !rec.TailOnly
	r.EgEV, r.EgErrEV, r.EgExpandedEV, r.EgStatErrEV = rec.EgEV, rec.EgErrEV, rec.EgExpandedEV, rec.EgStatErrEV
	r.CoverageK = rec.CoverageK
	if b, ok := rec.Budget("eg"); ok {
		r.EgDominant, r.EgDominantU = b.Dominant, b.DominantU
	}
	if rec.UrbachEV != nil {
		r.UrbachEV, r.UrbachErrEV = *rec.UrbachEV, *rec.UrbachErrEV
		if b, ok := rec.Budget("eu"); ok {
			r.UrbachExpandedEV = b.Expanded
		}
	}
	r.Amplitude, r.AmplitudeErr = rec.Amplitude, rec.AmplitudeErr
	if b, ok := rec.Budget("amp"); ok {
		r.AmplitudeExpanded = b.Expanded
	}
	if rec.EPEV != nil {
		r.EPEV, r.EPErrEV = *rec.EPEV, *rec.EPErrEV
		if b, ok := rec.Budget("ep"); ok {
			r.EPExpandedEV = b.Expanded
		}
	}
	if rec.TailOnly {
		// Not determined: the extrapolated values stay in the record only.
		nan := Num(math.NaN())
		r.EgEV, r.Amplitude, r.EPEV = nan, nan, nan
	}
	r.Chi2Reduced, r.PointsUsed, r.WindowEV = rec.Chi2Reduced, rec.PointsUsed, rec.WindowEV
	r.Warnings = append([]string{}, rec.Warnings...)
	prov := rec.Provenance
	r.Provenance = &prov
	r.ThicknessCM = rec.Conversion.ThicknessCM
	if ix := rec.Provenance.Settings.Index; ix > 0 {
		r.Index = Num(ix)
	}
	return r
}

// Value returns the value of a scan-level quantity named as in the spec
// file and the JSON record (eg_ev, eg_err_ev, eg_expanded_ev, urbach_ev,
// urbach_err_ev, amplitude, amplitude_err, ep_ev, ep_err_ev, chi2_reduced,
// points_used) and whether the name is known. Unknown values are NaN; so
// are all values of a row that was not fitted.
func (r *Row) Value(q string) (float64, bool) {
	var v Num
	switch q {
	case "eg_ev":
		v = r.EgEV
	case "eg_err_ev":
		v = r.EgErrEV
	case "eg_expanded_ev":
		v = r.EgExpandedEV
	case "urbach_ev":
		v = r.UrbachEV
	case "urbach_err_ev":
		v = r.UrbachErrEV
	case "amplitude":
		v = r.Amplitude
	case "amplitude_err":
		v = r.AmplitudeErr
	case "ep_ev":
		v = r.EPEV
	case "ep_err_ev":
		v = r.EPErrEV
	case "chi2_reduced":
		v = r.Chi2Reduced
	case "points_used":
		v = Num(r.PointsUsed)
		if !Fitted(r.Status) {
			v = Num(math.NaN())
		}
	default:
		return math.NaN(), false
	}
	return float64(v), true
}

// Summary is the content of summary.json: the batch, its settings and
// decision rule, and one row per scan in input order.
type Summary struct {
	Schema    int    `json:"schema"`
	Tool      string `json:"tool"`
	Version   string `json:"version"`
	GoVersion string `json:"go_version"`
	Platform  string `json:"platform"`
	Time      string `json:"time"`
	// Settings are the command-line analysis settings (a sample sheet may
	// override thickness and index per scan; each row's provenance holds
	// the settings it was analysed with); SettingsSHA256 is their digest
	// (SettingsDigest), Model and Tail the model they name ("auto" for a
	// comparison, whose rows name the model each scan kept).
	Settings       scan.Settings `json:"settings"`
	SettingsSHA256 string        `json:"settings_sha256"`
	Model          string        `json:"model"`
	Tail           string        `json:"tail"`
	// Samples and SpecFile are the sample sheet and spec file ("" if none).
	Samples  string `json:"samples"`
	SpecFile string `json:"spec_file"`
	// SpecTitle is the spec's name statement; DecisionRule names the rule
	// applied to every verdict.
	SpecTitle    string       `json:"spec_title"`
	DecisionRule string       `json:"decision_rule"`
	Limits       []LimitBound `json:"limits"`
	Counts       Counts       `json:"counts"`
	// ExtraColumns are the pass-through sheet columns, in order.
	ExtraColumns []string `json:"extra_columns"`
	// Resume says what batch --resume reused and refitted (nil for a run
	// without --resume).
	Resume *Resume `json:"resume,omitempty"`
	Rows   []Row   `json:"scans"`
}

// Resume is what batch --resume did with the results of an earlier run.
type Resume struct {
	// Reused counts the scans taken from their earlier record (same input
	// SHA-256, same settings, same tool version and schema); New those
	// without an earlier record.
	Reused int `json:"reused"`
	New    int `json:"new"`
	// Refitted lists the scans that had an earlier record but were
	// analysed again, with the reason (the file or the settings changed).
	Refitted []Refit `json:"refitted"`
	// StaleRemoved counts the temporary files of interrupted writes that
	// were removed before the run.
	StaleRemoved int `json:"stale_temporary_files_removed"`
}

// Refit is a scan analysed again by --resume, and why.
type Refit struct {
	File   string `json:"file"`
	Reason string `json:"reason"`
}

// LimitBound is a limit as written in the spec (NaN: no bound; null in
// JSON).
type LimitBound struct {
	Quantity string `json:"quantity"`
	Lo       Num    `json:"lo"`
	Hi       Num    `json:"hi"`
}

// Counts are the totals of a batch.
type Counts struct {
	Scans         int `json:"scans"`
	OK            int `json:"ok"`
	NotConverged  int `json:"not_converged"`
	Singular      int `json:"singular_covariance"`
	AtBound       int `json:"at_bound"`
	Failed        int `json:"failed"`
	Cancelled     int `json:"cancelled"`
	Pass          int `json:"pass"`
	Fail          int `json:"fail"`
	Indeterminate int `json:"indeterminate"`
}

// WriteSummaryJSON writes s as indented JSON.
func WriteSummaryJSON(w io.Writer, s *Summary) error { return WriteJSON(w, s) }

// ReadSummaryJSON reads a summary.json written by WriteSummaryJSON.
func ReadSummaryJSON(r io.Reader, name string) (*Summary, error) {
	var s Summary
	dec := json.NewDecoder(io.LimitReader(r, 1<<30))
	if err := dec.Decode(&s); err != nil {
		return nil, fmt.Errorf("read %s: %w", name, err)
	}
	if s.Tool != "bandedge" || s.Schema != SummarySchema {
		return nil, fmt.Errorf("read %s: not a bandedge batch summary of schema %d (tool %q, schema %d)", name, SummarySchema, s.Tool, s.Schema)
	}
	return &s, nil
}

// summaryColumns are the fixed leading columns of summary.csv, each with
// the text of its cell.
var summaryColumns = []struct {
	name string
	cell func(r *Row) string
}{
	{"file", func(r *Row) string { return r.File }},
	{"sha256", func(r *Row) string { return r.SHA256 }},
	{"lot", func(r *Row) string { return r.Lot }},
	{"wafer", func(r *Row) string { return r.Wafer }},
	{"x_mm", func(r *Row) string { return cell(r.XMM) }},
	{"y_mm", func(r *Row) string { return cell(r.YMM) }},
	{"status", func(r *Row) string { return r.Status }},
	{"verdict", func(r *Row) string { return r.Verdict }},
	{"eg_ev", func(r *Row) string { return cell(r.EgEV) }},
	{"eg_err_ev", func(r *Row) string { return cell(r.EgErrEV) }},
	{"eg_expanded_ev", func(r *Row) string { return cell(r.EgExpandedEV) }},
	{"eg_stat_err_ev", func(r *Row) string { return cell(r.EgStatErrEV) }},
	{"eg_determined", func(r *Row) string { return boolCell(r, r.EgDetermined) }},
	{"eg_dominant", func(r *Row) string { return r.EgDominant }},
	{"eg_dominant_u_ev", func(r *Row) string { return cell(r.EgDominantU) }},
	{"urbach_ev", func(r *Row) string { return cell(r.UrbachEV) }},
	{"urbach_err_ev", func(r *Row) string { return cell(r.UrbachErrEV) }},
	{"urbach_expanded_ev", func(r *Row) string { return cell(r.UrbachExpandedEV) }},
	{"amplitude", func(r *Row) string { return cell(r.Amplitude) }},
	{"amplitude_err", func(r *Row) string { return cell(r.AmplitudeErr) }},
	{"amplitude_expanded", func(r *Row) string { return cell(r.AmplitudeExpanded) }},
	{"ep_ev", func(r *Row) string { return cell(r.EPEV) }},
	{"ep_err_ev", func(r *Row) string { return cell(r.EPErrEV) }},
	{"ep_expanded_ev", func(r *Row) string { return cell(r.EPExpandedEV) }},
	{"coverage_k", func(r *Row) string { return cell(r.CoverageK) }},
	{"chi2_reduced", func(r *Row) string { return cell(r.Chi2Reduced) }},
	{"points_used", func(r *Row) string {
		if !Fitted(r.Status) {
			return ""
		}
		return strconv.Itoa(r.PointsUsed)
	}},
	{"window_lo_ev", func(r *Row) string { return cell(r.WindowEV[0]) }},
	{"window_hi_ev", func(r *Row) string { return cell(r.WindowEV[1]) }},
	{"model", func(r *Row) string { return r.Model }},
	{"thickness_cm", func(r *Row) string { return cell(r.ThicknessCM) }},
	{"index", func(r *Row) string { return cell(r.Index) }},
	{"temperature_k", func(r *Row) string { return cell(r.TemperatureK) }},
	{"notes", func(r *Row) string { return r.Notes }},
}

func boolCell(r *Row, b bool) string {
	if !Fitted(r.Status) {
		return ""
	}
	return strconv.FormatBool(b)
}

// cell writes a number with every digit, "" for NaN or ±Inf.
func cell(n Num) string {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return ""
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// WriteSummaryCSV writes summary.csv: a header row, then one row per scan
// in the order of s.Rows. Columns: the fixed ones (file … notes, see the
// README), one "verdict:<quantity>" per scan-level limit, decision_rule,
// warnings (joined with " | "), error, result_file, report_file, then the
// sample sheet's pass-through columns (a name that clashes with one of
// ours gets the prefix "sheet:").
func WriteSummaryCSV(w io.Writer, s *Summary) error {
	cw := csv.NewWriter(w)
	header := make([]string, 0, len(summaryColumns)+16)
	taken := map[string]bool{}
	for _, c := range summaryColumns {
		header = append(header, c.name)
	}
	var limits []string
	for _, l := range s.Limits {
		if !strings.HasPrefix(l.Quantity, "wafer.") {
			limits = append(limits, l.Quantity)
			header = append(header, "verdict:"+l.Quantity)
		}
	}
	header = append(header, "decision_rule", "warnings", "error", "result_file", "report_file")
	header = append(header, provenanceColumns...)
	for _, h := range header {
		taken[h] = true
	}
	for _, x := range s.ExtraColumns {
		if taken[x] {
			x = "sheet:" + x
		}
		header = append(header, x)
	}
	if err := cw.Write(header); err != nil {
		return err
	}
	for i := range s.Rows {
		r := &s.Rows[i]
		rec := make([]string, 0, len(header))
		for _, c := range summaryColumns {
			rec = append(rec, c.cell(r))
		}
		for _, q := range limits {
			v := ""
			for _, lv := range r.Verdicts {
				if lv.Quantity == q {
					v = lv.Verdict
				}
			}
			rec = append(rec, v)
		}
		rule := s.DecisionRule
		if r.Verdict == "" {
			rule = ""
		}
		rec = append(rec, rule, strings.Join(r.Warnings, " | "), r.Error, r.ResultFile, r.ReportFile)
		rec = append(rec, provenanceCells(r.Provenance)...)
		for _, x := range s.ExtraColumns {
			v := ""
			for _, c := range r.Extra {
				if c.Name == x {
					v = c.Value
					break
				}
			}
			rec = append(rec, v)
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// provenanceColumns are the provenance columns of summary.csv, after
// report_file: the tool version, the time of the analysis, the fitted
// model's tail, the settings' digest and the settings as compact JSON
// (empty for a scan that was not fitted).
var provenanceColumns = []string{"tool_version", "analysed_at", "tail", "settings_sha256", "settings"}

func provenanceCells(p *Provenance) []string {
	if p == nil {
		return make([]string, len(provenanceColumns))
	}
	b, err := json.Marshal(p.Settings)
	if err != nil {
		b = nil
	}
	return []string{p.Tool + " " + p.Version, p.Time, p.Tail, p.SettingsSHA256, string(b)}
}

// WriteFailures writes failures.txt: one line per scan that could not be
// fitted or whose fit has an issue (failed, not converged, singular
// covariance, on a bound, or cancelled), the one-line reason naming
// the file (and the line, for a parse error), in input order. With no
// failure the file is empty.
func WriteFailures(w io.Writer, rows []Row) error {
	for i := range rows {
		r := &rows[i]
		if r.Status == StatusOK {
			continue
		}
		msg := r.Error
		if msg == "" {
			msg = r.File + ": " + r.Status
		}
		if _, err := fmt.Fprintln(w, oneLine(msg)); err != nil {
			return err
		}
	}
	return nil
}

func oneLine(s string) string {
	return strings.Join(strings.Fields(s), " ")
}

// Rollup is the content of rollup.json: per-wafer and per-lot statistics
// and verdicts.
type Rollup struct {
	Schema   int    `json:"schema"`
	Tool     string `json:"tool"`
	Version  string `json:"version"`
	Platform string `json:"platform"`
	Time     string `json:"time"`
	// SettingsSHA256 is the digest of the command-line analysis settings
	// (the summary holds them).
	SettingsSHA256 string     `json:"settings_sha256"`
	DecisionRule   string     `json:"decision_rule"`
	Groups         []GroupRow `json:"groups"`
}

// GroupRow is one wafer or one lot.
type GroupRow struct {
	// Level is "wafer" or "lot".
	Level string `json:"level"`
	Lot   string `json:"lot"`
	Wafer string `json:"wafer"`
	// Scans is the number of scans; Fitted those with a converged fit;
	// Failed the others.
	Scans  int `json:"scans"`
	Fitted int `json:"fitted"`
	Failed int `json:"failed"`
	// Stats are the statistics of each quantity over the fitted scans
	// (values that are not available are left out and counted in Skipped).
	Stats []QuantityStats `json:"stats"`
	// Pass, Fail and Indeterminate count the scans' overall verdicts.
	Pass          int `json:"pass"`
	Fail          int `json:"fail"`
	Indeterminate int `json:"indeterminate"`
	// Limits are the wafer-level limits applied to this group.
	Limits []GroupLimit `json:"limits"`
	// Verdict is the group's verdict ("" without a spec); Reasons say why
	// it is not "pass".
	Verdict string   `json:"verdict"`
	Reasons []string `json:"reasons"`
}

// QuantityStats are the statistics of one quantity over a group.
type QuantityStats struct {
	Quantity      string `json:"quantity"`
	Count         int    `json:"count"`
	Skipped       int    `json:"skipped"`
	Mean          Num    `json:"mean"`
	StdDev        Num    `json:"stdev"`
	Min           Num    `json:"min"`
	Max           Num    `json:"max"`
	Range         Num    `json:"range"`
	Nonuniformity Num    `json:"nonuniformity"`
}

// GroupLimit is a wafer-level limit applied to a group's statistic.
type GroupLimit struct {
	Limit   string `json:"limit"`
	Value   Num    `json:"value"`
	Verdict string `json:"verdict"`
}

// Stat returns the statistics of quantity q.
func (g *GroupRow) Stat(q string) (QuantityStats, bool) {
	for _, s := range g.Stats {
		if s.Quantity == q {
			return s, true
		}
	}
	n := Num(math.NaN())
	return QuantityStats{Quantity: q, Mean: n, StdDev: n, Min: n, Max: n, Range: n, Nonuniformity: n}, false
}

// rollupQuantities are the quantities with columns in rollup.csv.
var rollupQuantities = []string{"eg_ev", "urbach_ev"}

// WriteRollupJSON writes r as indented JSON.
func WriteRollupJSON(w io.Writer, r *Rollup) error { return WriteJSON(w, r) }

// WriteRollupCSV writes rollup.csv: one row per wafer, then one per lot.
// Columns: level, lot, wafer, scans, fitted, failed; for eg_ev and urbach_ev
// the count, mean, stdev (sample, n − 1), min, max, range and
// nonuniformity (max − min)/(2·mean); the verdict counts; the verdict, its
// reasons (joined with " | ") and the decision rule.
func WriteRollupCSV(w io.Writer, r *Rollup) error {
	cw := csv.NewWriter(w)
	header := []string{"level", "lot", "wafer", "scans", "fitted", "failed"}
	for _, q := range rollupQuantities {
		for _, s := range []string{"count", "mean", "stdev", "min", "max", "range", "nonuniformity"} {
			header = append(header, q+"."+s)
		}
	}
	header = append(header, "pass", "fail", "indeterminate", "verdict", "reasons", "decision_rule")
	if err := cw.Write(header); err != nil {
		return err
	}
	for i := range r.Groups {
		g := &r.Groups[i]
		rec := []string{g.Level, g.Lot, g.Wafer, strconv.Itoa(g.Scans), strconv.Itoa(g.Fitted), strconv.Itoa(g.Failed)}
		for _, q := range rollupQuantities {
			st, _ := g.Stat(q)
			rec = append(rec, strconv.Itoa(st.Count), cell(st.Mean), cell(st.StdDev), cell(st.Min), cell(st.Max),
				cell(st.Range), cell(st.Nonuniformity))
		}
		rule := r.DecisionRule
		if g.Verdict == "" {
			rule = ""
		}
		rec = append(rec, strconv.Itoa(g.Pass), strconv.Itoa(g.Fail), strconv.Itoa(g.Indeterminate), g.Verdict,
			strings.Join(g.Reasons, " | "), rule)
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
