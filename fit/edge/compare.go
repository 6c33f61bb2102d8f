package edge

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"

	"bandedge/model"
)

// Candidate is one model of a comparison, fitted over the common window.
type Candidate struct {
	// Model is the candidate's name and Result its analysis (nil when it
	// could not be fitted; Err says why).
	Model  string  `json:"model"`
	Result *Result `json:"-"`
	Err    string  `json:"error,omitempty"`
	// K is the number of fitted parameters and N the number of points.
	K int `json:"k"`
	N int `json:"n"`
	// AIC and BIC are the information criteria (see Compare); DeltaAIC
	// and DeltaBIC their differences to the smallest; QAIC the
	// overdispersion-corrected AIC; Weight the Akaike weight.
	AIC      float64 `json:"aic"`
	BIC      float64 `json:"bic"`
	QAIC     float64 `json:"qaic"`
	DeltaAIC float64 `json:"delta_aic"`
	DeltaBIC float64 `json:"delta_bic"`
	Weight   float64 `json:"akaike_weight"`
}

// Comparison is the outcome of fitting several models to one spectrum.
type Comparison struct {
	// Candidates in the order given.
	Candidates []Candidate
	// Ranked holds the indices of the fitted candidates, by QAIC (AIC
	// when ĉ = 1).
	Ranked []int
	// Recommended is the index of the candidate with the smallest QAIC.
	Recommended int
	// Window is the common window (eV), chosen by the automatic rule for
	// the first candidate.
	Window [2]float64
	// Criterion explains the comparison in one line.
	Criterion string
	// CHat is the overdispersion factor ĉ (1 when none).
	CHat float64
}

// ErrNoCandidate is returned when no candidate could be fitted.
var ErrNoCandidate = errors.New("edge: no candidate model could be fitted")

// Compare fits every candidate model to d over one common set of points
// and ranks them by the Akaike information criterion. The points are those
// the first candidate's analysis used (its window, automatic or o.Window,
// and in transmittance space its model-predicted floor), and every
// candidate is fitted in the same space (d.Space()), so that all χ² are
// likelihoods of the same data: information criteria compare models on the
// same data only. With absolute or estimated noise (the weights are 1/σ²;
// in transmittance space χ² = Σ((T_i − T_model,i)/σ_T)²),
//
//	AIC = χ² + 2k,   BIC = χ² + k·ln n
//
// (the Gaussian log-likelihood up to a constant common to all
// candidates); with relative weights only (α input),
//
//	AIC = n·ln(χ²/n) + 2k,   BIC = n·ln(χ²/n) + k·ln n.
//
// When even the most general candidate (the one with most parameters)
// leaves residuals larger than the noise, ĉ = its χ²_red > 1, the
// comparison uses the quasi-likelihood form for overdispersed data,
// QAIC = χ²/ĉ + 2k (Burnham & Anderson, Model Selection and Multimodel
// Inference, 2nd ed., 2002, §6.2; from memory), so that systematic misfit
// common to all candidates does not masquerade as decisive evidence; AIC
// and BIC are reported as they are. Akaike weights
// w_i = exp(−Δ_i/2)/Σ_j exp(−Δ_j/2) (ibid., §2.9) come from QAIC when
// ĉ > 1, else from AIC. The recommended candidate's E_g budget gains a "model choice"
// term: the spread of the candidates' gaps about the recommended one,
// weighted by their Akaike weights,
//
//	u_model² = Σ_i w_i·(E_g,i − E_g,rec)²
//
// (candidates whose E_g is not determined are left out of the spread and
// named in a warning). The candidates' own results are otherwise those of
// Analyze over the common window.
func Compare(ctx context.Context, d Data, cands []model.Model, o Options) (*Comparison, error) {
	if len(cands) == 0 {
		return nil, fmt.Errorf("%w: no candidates", ErrNoCandidate)
	}
	first := o
	first.Model = cands[0]
	ref, err := Analyze(ctx, d, first)
	if err != nil {
		return nil, fmt.Errorf("reference model %s: %w", cands[0].Name(), err)
	}
	c := &Comparison{Window: ref.Window}
	common := o
	common.Window = ref.Window
	common.points = ref.InWindow
	common.constructions = ref.Constructions
	for i, m := range cands {
		cand := Candidate{Model: m.Name(), K: len(m.Params())}
		var res *Result
		if i == 0 {
			res = ref
		} else {
			common.Model = m
			res, err = Analyze(ctx, d, common)
			if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
				return nil, err
			}
		}
		if err == nil && i > 0 {
			res.WindowRule = fmt.Sprintf("common window of the comparison (the automatic rule for %s)", cands[0].Name())
		}
		if err != nil {
			cand.Err = err.Error()
			cand.AIC, cand.BIC = math.NaN(), math.NaN()
		} else {
			cand.Result = res
			cand.N = res.Points
			chi2 := res.Fit.SSR
			n := float64(cand.N)
			like := chi2
			if d.RelativeSigma {
				like = n * math.Log(chi2/n)
			}
			cand.AIC = like + 2*float64(cand.K)
			cand.BIC = like + float64(cand.K)*math.Log(n)
		}
		c.Candidates = append(c.Candidates, cand)
	}
	// Overdispersion: ĉ from the candidate with the most parameters (the
	// lowest χ² among equals).
	g := -1
	for i, cd := range c.Candidates {
		if cd.Result == nil {
			continue
		}
		c.Ranked = append(c.Ranked, i)
		if g < 0 || cd.K > c.Candidates[g].K || (cd.K == c.Candidates[g].K && cd.Result.Fit.SSR < c.Candidates[g].Result.Fit.SSR) {
			g = i
		}
	}
	if len(c.Ranked) == 0 {
		return nil, ErrNoCandidate
	}
	c.CHat = 1
	if gr := c.Candidates[g].Result; !d.RelativeSigma && gr.DoF > 0 {
		c.CHat = math.Max(1, gr.Fit.SSR/float64(gr.DoF))
	} else if d.RelativeSigma && gr.DoF > 0 {
		// Relative weights: the likelihood above already estimates the
		// scale; ĉ stays 1.
		c.CHat = 1
	}
	minA, minB, minQ := math.Inf(1), math.Inf(1), math.Inf(1)
	for _, i := range c.Ranked {
		cd := &c.Candidates[i]
		cd.QAIC = cd.AIC
		if c.CHat > 1 {
			cd.QAIC = cd.Result.Fit.SSR/c.CHat + 2*float64(cd.K)
		}
		minA = math.Min(minA, cd.AIC)
		minB = math.Min(minB, cd.BIC)
		minQ = math.Min(minQ, cd.QAIC)
	}
	var sum float64
	for _, i := range c.Ranked {
		cd := &c.Candidates[i]
		cd.DeltaAIC = cd.AIC - minA
		cd.DeltaBIC = cd.BIC - minB
		cd.Weight = math.Exp(-(cd.QAIC - minQ) / 2)
		sum += cd.Weight
	}
	for _, i := range c.Ranked {
		c.Candidates[i].Weight /= sum
	}
	sort.SliceStable(c.Ranked, func(a, b int) bool {
		return c.Candidates[c.Ranked[a]].QAIC < c.Candidates[c.Ranked[b]].QAIC
	})
	c.Recommended = c.Ranked[0]
	crit := "AIC"
	if c.CHat > 1 {
		crit = fmt.Sprintf("QAIC (overdispersion ĉ = %.3g)", c.CHat)
	}
	c.Criterion = fmt.Sprintf("lowest %s over %d candidates on the common window %.4f–%.4f eV; Akaike weights after Burnham & Anderson (2002)",
		crit, len(c.Ranked), c.Window[0], c.Window[1])
	c.addModelTerm(o)
	return c, nil
}

// Best returns the recommended candidate's result.
func (c *Comparison) Best() *Result { return c.Candidates[c.Recommended].Result }

// addModelTerm adds the model-choice term to the recommended result.
func (c *Comparison) addModelTerm(o Options) {
	best := c.Best()
	egBest, _ := best.Param("eg")
	var ss, wsum float64
	var undetermined []string
	for _, i := range c.Ranked {
		cd := c.Candidates[i]
		if cd.Result.TailOnly {
			undetermined = append(undetermined, cd.Model)
			continue
		}
		eg, _ := cd.Result.Param("eg")
		ss += cd.Weight * (eg.Value - egBest.Value) * (eg.Value - egBest.Value)
		wsum += cd.Weight
	}
	u := math.Sqrt(ss)
	if wsum > 0 {
		u = math.Sqrt(ss / wsum)
	}
	b := best.Budgets["eg"]
	terms := append(append([]Term(nil), b.Terms...), Term{Source: "model choice", Type: TypeB, InputUnit: "eV", U: u,
		Note: fmt.Sprintf("Akaike-weighted spread of E_g over %d candidate models about the recommended %s", len(c.Ranked)-len(undetermined), best.Model)})
	best.Budgets["eg"] = NewBudget(b.Quantity, b.Unit, b.K, terms...)
	if len(undetermined) > 0 {
		best.Warnings = append(best.Warnings, fmt.Sprintf("E_g is not determined by %d candidate models (%v); they are left out of the model-choice term", len(undetermined), undetermined))
	}
	if rec := c.Candidates[c.Recommended]; rec.Weight < 0.9 {
		best.Warnings = append(best.Warnings, fmt.Sprintf("the data do not single out one model: the recommended %s has an Akaike weight of %.2f", rec.Model, rec.Weight))
	}
}
