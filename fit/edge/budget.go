package edge

import (
	"math"
	"sort"
)

// Evaluation types of the Guide to the Expression of Uncertainty in
// Measurement (JCGM 100:2008, §2.3.2–2.3.3): Type A by statistical analysis
// of the observations, Type B by other means.
const (
	TypeA = "A"
	TypeB = "B"
)

// DefaultCoverage is the coverage factor k used for the expanded
// uncertainty U = k·u_c when none is given: k = 2, which for a normal
// distribution gives a coverage probability of about 95 % (JCGM 100:2008,
// §6.3.3).
const DefaultCoverage = 2

// Term is one line of an uncertainty budget.
type Term struct {
	// Source names the input, e.g. "statistical", "fit window".
	Source string `json:"source"`
	// Type is the GUM evaluation type, TypeA or TypeB.
	Type string `json:"type"`
	// Input is the standard uncertainty of the input quantity in
	// InputUnit (for the statistical and spread terms it equals U).
	Input     float64 `json:"input_u"`
	InputUnit string  `json:"input_unit"`
	// Sensitivity is the sensitivity coefficient c = ∂y/∂x, so that
	// U = |c|·Input, in result unit per input unit.
	Sensitivity float64 `json:"sensitivity"`
	// U is the standard uncertainty contributed to the result, in the
	// result's unit.
	U float64 `json:"u"`
	// Note says in plain words how the term was evaluated.
	Note string `json:"note,omitempty"`
}

// Budget is an uncertainty budget for one result quantity.
type Budget struct {
	// Quantity is the result's name, e.g. "E_g".
	Quantity string `json:"quantity"`
	// Unit is the result's unit, e.g. "eV".
	Unit string `json:"unit"`
	// Terms are the contributions.
	Terms []Term `json:"terms"`
	// Combined is the combined standard uncertainty u_c.
	Combined float64 `json:"combined_u"`
	// K is the coverage factor and Expanded = K·Combined.
	K        float64 `json:"k"`
	Expanded float64 `json:"expanded_u"`
	// Rule states the combination rule.
	Rule string `json:"rule"`
}

// combineRule is printed with every budget.
const combineRule = "u_c = root-sum-square of the terms, assuming independent inputs (JCGM 100:2008, eq. 10); U = k·u_c"

// NewBudget combines terms into a budget with coverage factor k (k ≤ 0
// means DefaultCoverage). Terms with a NaN U are kept in the list but make
// Combined NaN: an unknown contribution is never silently dropped.
//
//	u_c = √(Σ_i (c_i·u(x_i))²),  U = k·u_c
func NewBudget(quantity, unit string, k float64, terms ...Term) Budget {
	if !(k > 0) {
		k = DefaultCoverage
	}
	var ss float64
	for i := range terms {
		t := &terms[i]
		if t.Sensitivity == 0 && t.Input == 0 {
			t.Sensitivity, t.Input = 1, t.U
		}
		ss += t.U * t.U
	}
	uc := math.Sqrt(ss)
	return Budget{Quantity: quantity, Unit: unit, Terms: terms, Combined: uc, K: k, Expanded: k * uc, Rule: combineRule}
}

// Dominant returns the terms in decreasing order of U (the budget itself is
// left in its order).
func (b Budget) Dominant() []Term {
	t := append([]Term(nil), b.Terms...)
	sort.SliceStable(t, func(i, j int) bool { return t[i].U > t[j].U })
	return t
}

// Term returns the term named source and whether it exists.
func (b Budget) Term(source string) (Term, bool) {
	for _, t := range b.Terms {
		if t.Source == source {
			return t, true
		}
	}
	return Term{}, false
}
