package results

import (
	"encoding/json"
	"io"
	"math"
	"runtime"
	"time"

	"bandedge/fit/edge"
	"bandedge/fit/scan"
	"bandedge/model/optics"
)

// SchemaVersion identifies the record layout; it changes when a field
// changes meaning.
const SchemaVersion = 1

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
	EPEV          *Num        `json:"ep_ev"`
	EPErrEV       *Num        `json:"ep_err_ev"`
	Chi2Reduced   Num         `json:"chi2_reduced"`
	PointsUsed    int         `json:"points_used"`
	WindowEV      [2]Num      `json:"window_ev"`
	Warnings      []string    `json:"warnings"`
	WindowRule    string      `json:"window_rule"`
	Converged     bool        `json:"converged"`
	Status        string      `json:"status"`
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
	Quantity string `json:"quantity"`
	Unit     string `json:"unit"`
	Terms    []Term `json:"terms"`
	Combined Num    `json:"combined_u"`
	K        Num    `json:"k"`
	Expanded Num    `json:"expanded_u"`
	Rule     string `json:"rule"`
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

// Provenance records what produced a record, so it can be reproduced.
type Provenance struct {
	Schema    int           `json:"schema"`
	Tool      string        `json:"tool"`
	Version   string        `json:"version"`
	GoVersion string        `json:"go_version"`
	Platform  string        `json:"platform"`
	Time      string        `json:"time"`
	Settings  scan.Settings `json:"settings"`
}

// NewProvenance returns the provenance for settings s at time t.
func NewProvenance(version string, s scan.Settings, t time.Time) Provenance {
	return Provenance{Schema: SchemaVersion, Tool: "bandedge", Version: version, GoVersion: runtime.Version(),
		Platform: runtime.GOOS + "/" + runtime.GOARCH, Time: t.UTC().Format(time.RFC3339), Settings: s}
}

// FromOutcome builds the record of an analysed scan.
func FromOutcome(o *scan.Outcome, prov Provenance) *Record {
	res := o.Result
	r := &Record{
		File: o.Path, SHA256: o.SHA256, Model: res.Model,
		Chi2Reduced: Num(res.Chi2Red), PointsUsed: res.Points,
		WindowEV:   [2]Num{Num(res.Window[0]), Num(res.Window[1])},
		Warnings:   append([]string{}, res.Warnings...),
		WindowRule: res.WindowRule, Converged: res.Converged, Status: res.Status,
		Provenance: prov,
	}
	for _, p := range res.Params {
		r.Params = append(r.Params, Param{Name: p.Name, Symbol: p.Symbol, Unit: p.Unit, Value: Num(p.Value),
			StdErr: Num(p.StdErr), CI95: [2]Num{Num(p.CI95[0]), Num(p.CI95[1])}, AtBound: p.AtBound})
	}
	for _, row := range res.Correlation {
		r.Correlation = append(r.Correlation, nums(row))
	}
	for _, key := range res.BudgetKeys() {
		r.Budgets = append(r.Budgets, budget(res.Budgets[key]))
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

func budget(b edge.Budget) Budget {
	out := Budget{Quantity: b.Quantity, Unit: b.Unit, Combined: Num(b.Combined), K: Num(b.K), Expanded: Num(b.Expanded), Rule: b.Rule}
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

// WriteJSON writes v as indented JSON followed by a newline.
func WriteJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}
