package strd

import (
	"context"
	"errors"
	"math"

	"gonum.org/v1/gonum/optimize"

	"bandedge/fit"
)

// Pass thresholds of Outcome.Pass.
const (
	// MinParamLRE is the bar for the parameters: LRE ≥ 6 on every certified
	// parameter (PHYSICS.md section 4; McCullough 1999 counts LRE ≥ 4 as a
	// solution, we ask for 6).
	MinParamLRE = 6
	// MinSDLRE is the bar for the standard deviations and the residual
	// standard deviation.
	MinSDLRE = 4
	// MaxLRE caps the LRE: the certified values have 11 significant digits
	// (McCullough 1999).
	MaxLRE = 11
)

// LRE returns the log relative error of x against the certified value c,
//
//	LRE = −log₁₀(|x − c| / |c|),
//
// roughly the number of correct significant digits (McCullough, The
// American Statistician 53, 149, 1999), capped at MaxLRE and floored at 0.
// A NaN or infinite x scores 0.
func LRE(x, c float64) float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0
	}
	if x == c {
		return MaxLRE
	}
	var l float64
	if c == 0 {
		l = -math.Log10(math.Abs(x))
	} else {
		l = -math.Log10(math.Abs(x-c) / math.Abs(c))
	}
	return math.Max(0, math.Min(MaxLRE, l))
}

// Outcome is the score of one fit of one problem from one start.
type Outcome struct {
	// Name and Difficulty identify the problem; Start is 1 or 2.
	Name, Difficulty string
	Start            int
	// ParamLRE is the minimum LRE over the parameters, StdDevLRE the
	// minimum over their standard deviations.
	ParamLRE, StdDevLRE float64
	// ResidualSDLRE is the LRE of √(SSR/(n−k)), RSSLRE that of SSR. For
	// Lanczos1 the certified RSS (1.4·10⁻²⁵) is at the rounding level of the
	// printed data, so RSSLRE measures float64 rounding, not the solver
	// (testdata/nist-strd/SOURCE.md); compare the parameters.
	ResidualSDLRE, RSSLRE float64
	// Iterations counts the major iterations (fit.Result.Stats).
	Iterations int
	// Fallback and Strategy are copied from fit.Result.
	Fallback bool
	Strategy string
	// Status is how the fit ended.
	Status optimize.Status
	// Pass: ParamLRE ≥ MinParamLRE, StdDevLRE and ResidualSDLRE ≥ MinSDLRE,
	// no error and a converged Status.
	Pass bool
	// Err is the error of fit.LeastSquares, if any.
	Err error
	// Result is the fit (nil if it could not start).
	Result *fit.Result
}

// Run fits every problem from Start1 and from Start2 with fit.LeastSquares
// and settings s (nil for defaults) and returns the outcomes in order:
// problems[0] start 1, problems[0] start 2, problems[1] start 1, ...
// It stops early, with fewer outcomes, once ctx is done.
func Run(ctx context.Context, problems []Problem, s *fit.Settings) []Outcome {
	out := make([]Outcome, 0, 2*len(problems))
	for _, p := range problems {
		for start := 1; start <= 2; start++ {
			if ctx.Err() != nil {
				return out
			}
			out = append(out, Score(ctx, p, start, s))
		}
	}
	return out
}

// Score fits p from start (1 or 2) and scores the result.
func Score(ctx context.Context, p Problem, start int, s *fit.Settings) Outcome {
	o := Outcome{Name: p.Name, Difficulty: p.Difficulty, Start: start}
	init := p.Start(start)
	if init == nil {
		o.Err = errors.New("strd: start must be 1 or 2")
		return o
	}
	res, err := fit.LeastSquares(ctx, p.Func(), init, s)
	o.Err = err
	o.Result = res
	if res == nil {
		return o
	}
	o.Status = res.Status
	o.Iterations = res.Stats.MajorIterations
	o.Fallback = res.Fallback
	o.Strategy = res.Strategy
	o.ParamLRE, o.StdDevLRE = MaxLRE, MaxLRE
	for j, c := range p.Certified {
		o.ParamLRE = math.Min(o.ParamLRE, LRE(res.Params[j], c))
		o.StdDevLRE = math.Min(o.StdDevLRE, LRE(res.StdErr[j], p.CertifiedStdDev[j]))
	}
	o.RSSLRE = LRE(res.SSR, p.CertifiedRSS)
	o.ResidualSDLRE = LRE(math.Sqrt(res.SSR/float64(p.DoF())), p.CertifiedResidualSD)
	o.Pass = err == nil && !res.Status.Early() &&
		o.ParamLRE >= MinParamLRE && o.StdDevLRE >= MinSDLRE && o.ResidualSDLRE >= MinSDLRE
	return o
}
