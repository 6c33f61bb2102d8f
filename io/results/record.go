package results

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"runtime"
	"strings"
	"time"

	"bandedge/fit/edge"
	"bandedge/fit/scan"
	"bandedge/io/specio"
	"bandedge/model"
	"bandedge/model/optics"
)

// SchemaVersion identifies the record layout; it changes when a field
// changes meaning or a field a reader relies on is added. Schema 2 added
// issues, tail_only, the budgets' name and dominant term, and the
// provenance's model, tail and settings digest: --resume reuses only
// records of this schema.
const SchemaVersion = 2

// Issues of a fit: the conditions under which its numbers are not
// estimates with a meaningful uncertainty, in order of severity. Each also
// has a warning in words; a record lists them in Record.Issues, a summary
// row's status is the first (StatusOK when there is none).
const (
	// IssueNotConverged: the solver stopped early; the numbers are the
	// last iterate, not an estimate.
	IssueNotConverged = "not_converged"
	// IssueSingular: the covariance could not be computed; no parameter
	// has a statistical uncertainty.
	IssueSingular = "singular_covariance"
	// IssueAtBound: a parameter ended on its bound; the optimum may lie
	// outside the model's range and the interval is not meaningful.
	IssueAtBound = "at_bound"
)

// Issues returns the issues of an analysis result, in the order of
// severity (empty when the fit can be trusted as far as its budget says).
func Issues(res *edge.Result) []string {
	out := []string{}
	if !res.Converged {
		out = append(out, IssueNotConverged)
	}
	if res.Fit != nil && res.Fit.Cov == nil {
		out = append(out, IssueSingular)
	}
	for _, p := range res.Params {
		if p.AtBound {
			out = append(out, IssueAtBound)
			break
		}
	}
	return out
}

// Record is the result of one scan. The first fields are the stable
// command-line contract (eg_ev … warnings); the rest add detail.
type Record struct {
	File   string `json:"file"`
	SHA256 string `json:"sha256"`
	Model  string `json:"model"`

	// EgEV is the fitted gap; EgErrEV its combined standard uncertainty
	// u_c from the budget (not only the statistical error, which is
	// EgStatErrEV); EgExpandedEV = k·u_c.
	EgEV         Num `json:"eg_ev"`
	EgErrEV      Num `json:"eg_err_ev"`
	EgStatErrEV  Num `json:"eg_stat_err_ev"`
	EgExpandedEV Num `json:"eg_expanded_ev"`
	CoverageK    Num `json:"coverage_k"`
	// UrbachEV and UrbachErrEV are null for models without a tail.
	UrbachEV    *Num `json:"urbach_ev"`
	UrbachErrEV *Num `json:"urbach_err_ev"`
	// Amplitude is C in cm⁻¹·eV^½ with its combined standard uncertainty.
	Amplitude    Num `json:"amplitude"`
	AmplitudeErr Num `json:"amplitude_err"`
	// EPEV and EPErrEV are null unless effective masses were given.
	EPEV        *Num     `json:"ep_ev"`
	EPErrEV     *Num     `json:"ep_err_ev"`
	Chi2Reduced Num      `json:"chi2_reduced"`
	PointsUsed  int      `json:"points_used"`
	WindowEV    [2]Num   `json:"window_ev"`
	Warnings    []string `json:"warnings"`
	// Issues are the machine-readable trust issues (IssueNotConverged,
	// IssueSingular, IssueAtBound); empty when there is none.
	Issues     []string `json:"issues"`
	WindowRule string   `json:"window_rule"`
	Converged  bool     `json:"converged"`
	Status     string   `json:"status"`
	// TailOnly is true when E_g is not determined (the data show only the
	// tail): EgEV, Amplitude and EPEV are then extrapolations.
	TailOnly      bool        `json:"tail_only"`
	Params        []Param     `json:"params"`
	Correlation   [][]Num     `json:"correlation"`
	Budgets       []Budget    `json:"budgets"`
	Conversion    Conversion  `json:"conversion"`
	Comparison    *Comparison `json:"comparison,omitempty"`
	Constructions []Linear    `json:"constructions"`
	Tauc          *Linear     `json:"tauc,omitempty"`
	Urbach        *Linear     `json:"urbach_plot,omitempty"`
	Provenance    Provenance  `json:"provenance"`
}

// Param is one fitted parameter with its statistical standard error and
// 95 % interval (Student's t).
type Param struct {
	Name    string `json:"name"`
	Symbol  string `json:"symbol"`
	Unit    string `json:"unit"`
	Value   Num    `json:"value"`
	StdErr  Num    `json:"stderr"`
	CI95    [2]Num `json:"ci95"`
	AtBound bool   `json:"at_bound,omitempty"`
}

// Budget is an uncertainty budget (see edge.Budget).
type Budget struct {
	// Name is the parameter's name ("eg", "amp", "eu", …) or "ep".
	Name     string `json:"name"`
	Quantity string `json:"quantity"`
	Unit     string `json:"unit"`
	Terms    []Term `json:"terms"`
	Combined Num    `json:"combined_u"`
	K        Num    `json:"k"`
	Expanded Num    `json:"expanded_u"`
	Rule     string `json:"rule"`
	// Dominant is the source of the largest term and DominantU its
	// standard uncertainty ("" and null without terms).
	Dominant  string `json:"dominant"`
	DominantU Num    `json:"dominant_u"`
}

// Term is one budget line.
type Term struct {
	Source      string `json:"source"`
	Type        string `json:"type"`
	Input       Num    `json:"input_u"`
	InputUnit   string `json:"input_unit"`
	Sensitivity Num    `json:"sensitivity"`
	U           Num    `json:"u"`
	Note        string `json:"note,omitempty"`
}

// Comparison lists every candidate of --model auto, ranked by AIC.
type Comparison struct {
	Criterion   string      `json:"criterion"`
	Recommended string      `json:"recommended"`
	WindowEV    [2]Num      `json:"window_ev"`
	Candidates  []Candidate `json:"candidates"`
}

// Candidate is one model of a comparison.
type Candidate struct {
	Model    string   `json:"model"`
	Rank     int      `json:"rank"`
	K        int      `json:"k"`
	N        int      `json:"n"`
	AIC      Num      `json:"aic"`
	BIC      Num      `json:"bic"`
	DeltaAIC Num      `json:"delta_aic"`
	DeltaBIC Num      `json:"delta_bic"`
	Weight   Num      `json:"akaike_weight"`
	EgEV     Num      `json:"eg_ev"`
	EgErrEV  Num      `json:"eg_err_ev"`
	Chi2Red  Num      `json:"chi2_reduced"`
	TailOnly bool     `json:"tail_only,omitempty"`
	Warnings []string `json:"warnings,omitempty"`
	Error    string   `json:"error,omitempty"`
}

// Linear is a linearised construction (Tauc or Urbach plot).
type Linear struct {
	Name    string `json:"name"`
	Failed  string `json:"failed,omitempty"`
	Value   Num    `json:"value_ev"`
	Err     Num    `json:"err_ev"`
	Range   [2]Num `json:"range_ev"`
	Points  int    `json:"points"`
	Chi2Red Num    `json:"chi2_reduced"`
}

// Conversion describes how the export became α(E).
type Conversion struct {
	Input           string         `json:"input"`
	SourceKind      string         `json:"source_kind"`
	XUnit           string         `json:"x_unit"`
	Points          int            `json:"points"`
	Masked          map[string]int `json:"masked"`
	SigmaT          Num            `json:"sigma_t"`
	SigmaTEstimated bool           `json:"sigma_t_estimated"`
	RelativeWeights bool           `json:"relative_weights"`
	Reflectance     string         `json:"reflectance"`
	MaxAbsorbance   Num            `json:"max_absorbance"`
	ThicknessCM     Num            `json:"thickness_cm"`
	Notes           []string       `json:"notes"`
}

// Provenance records what produced a record, so it can be reproduced:
// the tool, its version and build (Go version, platform), the time, the
// model and tail that were fitted, and every setting that affects the
// numbers (the command line's analysis flags with the sample sheet's
// overrides) with their SHA-256 digest.
type Provenance struct {
	Schema    int    `json:"schema"`
	Tool      string `json:"tool"`
	Version   string `json:"version"`
	GoVersion string `json:"go_version"`
	Platform  string `json:"platform"`
	Time      string `json:"time"`
	// Model is the fitted model ("direct+urbach"; for --model auto the
	// recommended candidate) and Tail its tail ("urbach", "none", …).
	Model string `json:"model"`
	Tail  string `json:"tail"`
	// Settings are the analysis settings; SettingsSHA256 is the hex
	// SHA-256 of their JSON encoding (SettingsDigest).
	Settings       scan.Settings `json:"settings"`
	SettingsSHA256 string        `json:"settings_sha256"`
}

// NewProvenance returns the provenance for settings s at time t. The
// model and tail are filled in by FromOutcome.
func NewProvenance(version string, s scan.Settings, t time.Time) Provenance {
	return Provenance{Schema: SchemaVersion, Tool: "bandedge", Version: version, GoVersion: runtime.Version(),
		Platform: runtime.GOOS + "/" + runtime.GOARCH, Time: t.UTC().Format(time.RFC3339), Settings: s,
		SettingsSHA256: SettingsDigest(s)}
}

// SettingsDigest returns the hex SHA-256 of the JSON encoding of s: two
// settings with the same digest give the same numbers on the same build.
// (The column choices enter through Settings.Columns, the text they are
// parsed from.)
func SettingsDigest(s scan.Settings) string {
	b, err := json.Marshal(s)
	if err != nil {
		// Settings hold finite numbers and strings only (the flags
		// reject the rest); a NaN would make it fail.
		return ""
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

// AnalysisSettings returns the settings recorded in p as Analyze takes
// them: the column choices, which JSON keeps only as the --columns text,
// are parsed back from it.
func (p Provenance) AnalysisSettings() (scan.Settings, error) {
	s := p.Settings
	if s.Columns != "" {
		var err error
		if s.XColumn, s.YColumn, s.RColumn, err = specio.ParseColumns(s.Columns); err != nil {
			return s, fmt.Errorf("recorded columns %q: %w", s.Columns, err)
		}
	}
	return s, nil
}

// Short is the short form of the provenance for a report's footer: tool
// and version, platform, model, the first 12 hex digits of the settings
// digest and of the input's SHA-256 (when given), and the time.
func (p Provenance) Short(inputSHA256 string) string {
	parts := []string{p.Tool + " " + p.Version, p.Platform}
	if p.Model != "" {
		parts = append(parts, "model "+p.Model)
	}
	if len(p.SettingsSHA256) >= 12 {
		parts = append(parts, "settings "+p.SettingsSHA256[:12])
	}
	if len(inputSHA256) >= 12 {
		parts = append(parts, "input sha256 "+inputSHA256[:12]+"…")
	}
	parts = append(parts, p.Time)
	return strings.Join(parts, " · ")
}

// ReadRecord reads a result record written by WriteJSON (at most 64 MiB).
func ReadRecord(r io.Reader, name string) (*Record, error) {
	var rec Record
	dec := json.NewDecoder(io.LimitReader(r, 64<<20))
	if err := dec.Decode(&rec); err != nil {
		return nil, fmt.Errorf("read %s: %w", name, err)
	}
	if rec.Provenance.Tool != "bandedge" {
		return nil, fmt.Errorf("read %s: not a bandedge result record", name)
	}
	return &rec, nil
}

// FromOutcome builds the record of an analysed scan.
func FromOutcome(o *scan.Outcome, prov Provenance) *Record {
	res := o.Result
	r := &Record{
		File: o.Path, SHA256: o.SHA256, Model: res.Model,
		Chi2Reduced: Num(res.Chi2Red), PointsUsed: res.Points,
		WindowEV:   [2]Num{Num(res.Window[0]), Num(res.Window[1])},
		Warnings:   append([]string{}, res.Warnings...),
		Issues:     Issues(res),
		WindowRule: res.WindowRule, Converged: res.Converged, Status: res.Status, TailOnly: res.TailOnly,
		Provenance: prov,
	}
	r.Provenance.Model = res.Model
	if _, tail, _, err := model.ParseName(res.Model); err == nil {
		r.Provenance.Tail = tail
	}
	for _, p := range res.Params {
		r.Params = append(r.Params, Param{Name: p.Name, Symbol: p.Symbol, Unit: p.Unit, Value: Num(p.Value),
			StdErr: Num(p.StdErr), CI95: [2]Num{Num(p.CI95[0]), Num(p.CI95[1])}, AtBound: p.AtBound})
	}
	for _, row := range res.Correlation {
		r.Correlation = append(r.Correlation, nums(row))
	}
	for _, key := range res.BudgetKeys() {
		r.Budgets = append(r.Budgets, budget(key, res.Budgets[key]))
	}
	if p, ok := res.Param("eg"); ok {
		b := res.Budgets["eg"]
		r.EgEV, r.EgStatErrEV = Num(p.Value), Num(p.StdErr)
		r.EgErrEV, r.EgExpandedEV, r.CoverageK = Num(b.Combined), Num(b.Expanded), Num(b.K)
	}
	if p, ok := res.Param("eu"); ok {
		v, u := Num(p.Value), Num(res.Budgets["eu"].Combined)
		r.UrbachEV, r.UrbachErrEV = &v, &u
	}
	if p, ok := res.Param("amp"); ok {
		r.Amplitude, r.AmplitudeErr = Num(p.Value), Num(res.Budgets["amp"].Combined)
	}
	if b, ok := res.Budgets["ep"]; ok {
		v, u := Num(res.EP), Num(b.Combined)
		r.EPEV, r.EPErrEV = &v, &u
	}
	if c := o.Comparison; c != nil {
		r.Comparison = comparison(c)
	}
	for i := range res.Constructions {
		r.Constructions = append(r.Constructions, *linear(&res.Constructions[i]))
	}
	r.Tauc = linear(res.Tauc)
	r.Urbach = linear(res.Urbach)
	r.Conversion = conversion(o)
	return r
}

func comparison(c *edge.Comparison) *Comparison {
	out := &Comparison{Criterion: c.Criterion, Recommended: c.Candidates[c.Recommended].Model,
		WindowEV: [2]Num{Num(c.Window[0]), Num(c.Window[1])}}
	rank := map[int]int{}
	for r, i := range c.Ranked {
		rank[i] = r + 1
	}
	nan := Num(math.NaN())
	for _, r := range c.Ranked {
		cd := c.Candidates[r]
		eg, _ := cd.Result.Param("eg")
		out.Candidates = append(out.Candidates, Candidate{Model: cd.Model, Rank: rank[r], K: cd.K, N: cd.N,
			AIC: Num(cd.AIC), BIC: Num(cd.BIC), DeltaAIC: Num(cd.DeltaAIC), DeltaBIC: Num(cd.DeltaBIC), Weight: Num(cd.Weight),
			EgEV: Num(eg.Value), EgErrEV: Num(cd.Result.Budgets["eg"].Combined), Chi2Red: Num(cd.Result.Chi2Red),
			TailOnly: cd.Result.TailOnly, Warnings: cd.Result.Warnings})
	}
	for _, cd := range c.Candidates {
		if cd.Result == nil {
			out.Candidates = append(out.Candidates, Candidate{Model: cd.Model, K: cd.K, AIC: nan, BIC: nan, DeltaAIC: nan,
				DeltaBIC: nan, Weight: nan, EgEV: nan, EgErrEV: nan, Chi2Red: nan, Error: cd.Err})
		}
	}
	return out
}

func budget(name string, b edge.Budget) Budget {
	out := Budget{Name: name, Quantity: b.Quantity, Unit: b.Unit, Combined: Num(b.Combined), K: Num(b.K), Expanded: Num(b.Expanded),
		Rule: b.Rule, DominantU: Num(math.NaN())}
	if d := b.Dominant(); len(d) > 0 {
		out.Dominant, out.DominantU = d[0].Source, Num(d[0].U)
	}
	for _, t := range b.Terms {
		out.Terms = append(out.Terms, Term{Source: t.Source, Type: t.Type, Input: Num(t.Input), InputUnit: t.InputUnit,
			Sensitivity: Num(t.Sensitivity), U: Num(t.U), Note: t.Note})
	}
	return out
}

func linear(c *edge.Construction) *Linear {
	if c == nil {
		return nil
	}
	if c.Failed != "" {
		nan := Num(math.NaN())
		return &Linear{Name: c.Name, Failed: c.Failed, Value: nan, Err: nan, Range: [2]Num{nan, nan}, Chi2Red: nan}
	}
	return &Linear{Name: c.Name, Value: Num(c.Value), Err: Num(c.Err), Range: [2]Num{Num(c.Range[0]), Num(c.Range[1])},
		Points: c.Points, Chi2Red: Num(c.Chi2Red)}
}

func conversion(o *scan.Outcome) Conversion {
	c := o.Conversion
	sp := o.Spectrum
	cv := Conversion{
		Input: sp.Kind.String(), SourceKind: sp.SourceYKind.String(), XUnit: sp.SourceXUnit.String(),
		Points: len(sp.E), Masked: map[string]int{}, SigmaT: Num(c.SigmaT), SigmaTEstimated: c.SigmaTEstimated,
		RelativeWeights: c.RelativeWeights, Reflectance: o.Reflectance, MaxAbsorbance: Num(c.MaxAbsorbance),
		ThicknessCM: Num(math.NaN()), Notes: append([]string{}, sp.Notes...),
	}
	if !c.RelativeWeights {
		cv.ThicknessCM = Num(o.Settings.Thickness)
	}
	for _, reason := range optics.Reasons() {
		if reason == optics.Usable {
			continue
		}
		if n := c.Counts[reason]; n > 0 {
			cv.Masked[reason.String()] = n
		}
	}
	return cv
}

// IssueText says in words what the record's issues mean for its numbers
// ("" without issues), e.g. "the fit did not converge (IterationLimit):
// its numbers are the last iterate, not an estimate".
func (r *Record) IssueText() string {
	var parts []string
	for _, is := range r.Issues {
		switch is {
		case IssueNotConverged:
			parts = append(parts, fmt.Sprintf("the fit did not converge (%s): its numbers are the last iterate, not an estimate", r.Status))
		case IssueSingular:
			parts = append(parts, "the covariance could not be computed: the numbers have no statistical uncertainty")
		case IssueAtBound:
			var names []string
			for _, p := range r.Params {
				if p.AtBound {
					names = append(names, p.Symbol)
				}
			}
			parts = append(parts, fmt.Sprintf("%s ended on its bound: the optimum may lie outside the model's range and the interval is not meaningful", strings.Join(names, ", ")))
		default:
			parts = append(parts, is)
		}
	}
	return strings.Join(parts, "; ")
}

// Budget returns the budget of the parameter (or "ep") called name.
func (r *Record) Budget(name string) (Budget, bool) {
	for _, b := range r.Budgets {
		if b.Name == name {
			return b, true
		}
	}
	return Budget{}, false
}

// Term returns the term of b from source and whether it exists.
func (b Budget) Term(source string) (Term, bool) {
	for _, t := range b.Terms {
		if t.Source == source {
			return t, true
		}
	}
	return Term{}, false
}

// WriteJSON writes v as indented JSON followed by a newline.
func WriteJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}
