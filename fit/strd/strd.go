// Package strd is the NIST StRD nonlinear regression suite for package fit.
//
// The Statistical Reference Datasets of the U.S. National Institute of
// Standards and Technology (Information Technology Laboratory, Statistical
// Engineering Division; https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml,
// public domain) are 27 nonlinear least-squares problems with two starting
// vectors each and certified values (11 significant digits, computed by
// NIST in 128-bit precision) for the parameters, their standard deviations,
// the residual sum of squares and the residual standard deviation. They are
// the standard test of the numerical accuracy of nonlinear least-squares
// software (McCullough, The American Statistician 53, 149, 1999).
//
// The datasets are embedded in the binary (bandedge.NISTStRD); Load parses
// them, Problem.Func turns one into a fit.Func with an exact Jacobian
// (forward-mode automatic differentiation of the model formula, see Expr),
// and Run fits every problem from both starts and scores the result by the
// log relative error (LRE).
//
// Problem.Func evaluates the residuals in double-double arithmetic from the
// decimal data and rounds them once to float64; the solver itself works in
// float64. Without that, Lanczos1 (residuals ≈ 8·10⁻¹⁴ on data of order 1)
// cannot reach its certified residual SD and standard deviations to more
// than about 3 digits in any float64 solver, because the data and the model
// are only representable to ≈ 2·10⁻¹⁶. Problem.FuncFloat64 is the plain
// float64 variant. The Jacobian is float64 in both.
package strd

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"path"

	"gonum.org/v1/gonum/mat"

	"bandedge"
	"bandedge/fit"
)

// ErrFormat classifies a dataset file that does not follow the schema.
var ErrFormat = errors.New("strd: malformed dataset")

// Problem is one NIST StRD nonlinear regression dataset.
type Problem struct {
	// Name is the dataset name as NIST spells it, e.g. "Misra1a".
	Name string
	// Difficulty is NIST's level: "lower", "average" or "higher".
	Difficulty string
	// Model is the model as NIST prints it, e.g.
	// "y = b1*(1-exp[-b2*x])  +  e".
	Model string
	// Params are the parameter names b1..bk.
	Params []string
	// Start1 and Start2 are NIST's starting vectors; Start1 is further from
	// the solution.
	Start1, Start2 []float64
	// Certified are the certified parameter estimates, CertifiedStdDev
	// their certified standard deviations.
	Certified, CertifiedStdDev []float64
	// CertifiedRSS is the certified residual sum of squares and
	// CertifiedResidualSD the certified residual standard deviation
	// √(RSS/(n−k)).
	CertifiedRSS, CertifiedResidualSD float64
	// PrintedDoF is the degrees of freedom as NIST prints them. For Rat43
	// NIST prints 9 where n − k = 11; use DoF.
	PrintedDoF int
	// Predictors are the predictor names: ["x"], or ["x1", "x2"] (Nelson).
	Predictors []string
	// X[i] holds the predictor values of observation i.
	X [][]float64
	// Y are the responses as printed by NIST.
	Y []float64
	// LHS is the left-hand side of the model, "y" or "log(y)" (Nelson).
	LHS string
	// Expr is the parsed right-hand side f(x; b).
	Expr *Expr
	// DataKind is "observed" or "generated".
	DataKind string
	// Notes are the quirks of the dataset recorded with the data.
	Notes []string

	lhs *Expr  // LHS as an expression of the single variable y
	xdd [][]dd // X from the decimal text, in double-double
	ydd []dd   // Y from the decimal text, in double-double
}

// N returns the number of observations.
func (p Problem) N() int { return len(p.Y) }

// K returns the number of parameters.
func (p Problem) K() int { return len(p.Params) }

// DoF returns the degrees of freedom n − k (see PrintedDoF).
func (p Problem) DoF() int { return p.N() - p.K() }

// Start returns a copy of starting vector i (1 or 2), or nil for any other i.
func (p Problem) Start(i int) []float64 {
	switch i {
	case 1:
		return append([]float64(nil), p.Start1...)
	case 2:
		return append([]float64(nil), p.Start2...)
	}
	return nil
}

// Response returns the transformed responses LHS(y_i), i.e. y_i, or
// log(y_i) for Nelson.
func (p Problem) Response() []float64 {
	out := make([]float64, len(p.Y))
	ev := p.lhs.NewEvaluator()
	var y [1]float64
	for i, v := range p.Y {
		y[0] = v
		out[i] = ev.Eval(y[:], nil, nil)
	}
	return out
}

// Func returns the least-squares problem in residual form,
//
//	r_i(b) = LHS(y_i) − f(x_i; b),   ∂r_i/∂b_j = −∂f(x_i; b)/∂b_j.
//
// The residuals are evaluated in double-double arithmetic from the exact
// decimal data and rounded once to float64 (see dd for why: Lanczos1); the
// Jacobian comes from forward-mode automatic differentiation in float64.
// Each call returns a Func with its own buffers; one Func must not be used
// by two goroutines at once.
func (p Problem) Func() fit.Func {
	f := p.FuncFloat64()
	xs := p.xdd
	lhs := make([]dd, len(p.ydd))
	lev := p.lhs.NewEvaluator()
	for i, y := range p.ydd {
		lhs[i] = lev.evalDD([]dd{y}, nil)
	}
	ev := p.Expr.NewEvaluator()
	f.Residuals = func(dst, b []float64) {
		for i, x := range xs {
			dst[i] = lhs[i].sub(ev.evalDD(x, b)).float()
		}
	}
	return f
}

// FuncFloat64 is Func with the residuals evaluated in plain float64 from
// the float64-rounded data X and Y; it is as exact as Func except for
// Lanczos1-like problems whose residuals approach the rounding of the data.
func (p Problem) FuncFloat64() fit.Func {
	lhs := p.Response()
	xs := p.X
	k := p.K()
	ev := p.Expr.NewEvaluator()
	grad := make([]float64, k)
	return fit.Func{
		M: len(lhs),
		Residuals: func(dst, b []float64) {
			for i, x := range xs {
				dst[i] = lhs[i] - ev.Eval(x, b, nil)
			}
		},
		Jacobian: func(dst *mat.Dense, b []float64) {
			raw := dst.RawMatrix()
			for i, x := range xs {
				ev.Eval(x, b, grad)
				row := raw.Data[i*raw.Stride : i*raw.Stride+k]
				for j, g := range grad {
					row[j] = -g
				}
			}
		},
	}
}

// fileSchema is the JSON layout of one dataset (testdata/nist-strd/SOURCE.md).
type fileSchema struct {
	Name                string             `json:"name"`
	Difficulty          string             `json:"difficulty"`
	Model               string             `json:"model"`
	Parameters          []string           `json:"parameters"`
	Start1              []float64          `json:"start1"`
	Start2              []float64          `json:"start2"`
	Certified           []float64          `json:"certified"`
	CertifiedStdDev     []float64          `json:"certified_std_dev"`
	CertifiedRSS        float64            `json:"certified_rss"`
	CertifiedResidualSD float64            `json:"certified_residual_sd"`
	DegreesOfFreedom    int                `json:"degrees_of_freedom"`
	NObservations       int                `json:"n_observations"`
	X                   []json.RawMessage  `json:"x"`
	Y                   []json.Number      `json:"y"`
	ModelLHS            string             `json:"model_lhs"`
	ModelExpr           string             `json:"model_expr"`
	Predictors          []string           `json:"predictors"`
	Constants           map[string]float64 `json:"constants"`
	DataKind            string             `json:"data_kind"`
	Notes               []string           `json:"notes"`
}

// Decode parses one dataset in the JSON schema of
// testdata/nist-strd/SOURCE.md. Errors wrap ErrFormat, or ErrSyntax for a
// model expression that does not parse.
func Decode(data []byte) (Problem, error) {
	p, err := decode(data)
	if err != nil {
		return Problem{}, err
	}
	return *p, nil
}

func decode(data []byte) (*Problem, error) {
	var s fileSchema
	if err := json.Unmarshal(data, &s); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrFormat, err)
	}
	bad := func(format string, args ...any) error {
		return fmt.Errorf("dataset %q: %s: %w", s.Name, fmt.Sprintf(format, args...), ErrFormat)
	}
	k := len(s.Parameters)
	switch {
	case s.Name == "":
		return nil, bad("no name")
	case s.Difficulty != "lower" && s.Difficulty != "average" && s.Difficulty != "higher":
		return nil, bad("difficulty %q", s.Difficulty)
	case k == 0:
		return nil, bad("no parameters")
	case len(s.Start1) != k || len(s.Start2) != k || len(s.Certified) != k || len(s.CertifiedStdDev) != k:
		return nil, bad("starts or certified values do not have %d entries", k)
	case len(s.Predictors) == 0:
		return nil, bad("no predictors")
	case len(s.Y) != s.NObservations || len(s.X) != s.NObservations:
		return nil, bad("%d x and %d y values for n_observations = %d", len(s.X), len(s.Y), s.NObservations)
	case s.NObservations < k:
		return nil, bad("%d observations for %d parameters", s.NObservations, k)
	case s.ModelLHS != "y" && s.ModelLHS != "log(y)":
		return nil, bad("model_lhs %q", s.ModelLHS)
	}
	p := &Problem{
		Name:                s.Name,
		Difficulty:          s.Difficulty,
		Model:               s.Model,
		Params:              s.Parameters,
		Start1:              s.Start1,
		Start2:              s.Start2,
		Certified:           s.Certified,
		CertifiedStdDev:     s.CertifiedStdDev,
		CertifiedRSS:        s.CertifiedRSS,
		CertifiedResidualSD: s.CertifiedResidualSD,
		PrintedDoF:          s.DegreesOfFreedom,
		Predictors:          s.Predictors,
		Y:                   make([]float64, len(s.Y)),
		ydd:                 make([]dd, len(s.Y)),
		xdd:                 make([][]dd, len(s.X)),
		LHS:                 s.ModelLHS,
		DataKind:            s.DataKind,
		Notes:               s.Notes,
		X:                   make([][]float64, len(s.X)),
	}
	for i, num := range s.Y {
		v, err := num.Float64()
		if err != nil {
			return nil, bad("y[%d]: %v", i, err)
		}
		p.Y[i], p.ydd[i] = v, ddParse(num.String())
	}
	for i, raw := range s.X {
		var nums []json.Number
		if len(s.Predictors) == 1 {
			var v json.Number
			if err := json.Unmarshal(raw, &v); err != nil {
				return nil, bad("x[%d]: %v", i, err)
			}
			nums = []json.Number{v}
		} else if err := json.Unmarshal(raw, &nums); err != nil || len(nums) != len(s.Predictors) {
			return nil, bad("x[%d] is not a list of %d numbers", i, len(s.Predictors))
		}
		p.X[i] = make([]float64, len(nums))
		p.xdd[i] = make([]dd, len(nums))
		for j, num := range nums {
			v, err := num.Float64()
			if err != nil {
				return nil, bad("x[%d]: %v", i, err)
			}
			p.X[i][j], p.xdd[i][j] = v, ddParse(num.String())
		}
	}
	var err error
	if p.Expr, err = ParseExpr(s.ModelExpr, s.Parameters, s.Predictors, s.Constants); err != nil {
		return nil, fmt.Errorf("dataset %q: model_expr: %w", s.Name, err)
	}
	if p.lhs, err = ParseExpr(s.ModelLHS, nil, []string{"y"}, nil); err != nil {
		return nil, fmt.Errorf("dataset %q: model_lhs: %w", s.Name, err)
	}
	return p, nil
}

// dataDir is the folder of the datasets inside bandedge.NISTStRD.
const dataDir = "testdata/nist-strd"

// Load parses the 27 embedded datasets, in file-name order.
func Load() ([]Problem, error) {
	return LoadFS(bandedge.NISTStRD, dataDir)
}

// LoadFS parses every *.json file in dir of fsys, in file-name order.
func LoadFS(fsys fs.FS, dir string) ([]Problem, error) {
	names, err := fs.Glob(fsys, path.Join(dir, "*.json"))
	if err != nil {
		return nil, err
	}
	if len(names) == 0 {
		return nil, fmt.Errorf("no datasets in %s: %w", dir, ErrFormat)
	}
	out := make([]Problem, 0, len(names))
	for _, name := range names {
		data, err := fs.ReadFile(fsys, name)
		if err != nil {
			return nil, err
		}
		p, err := Decode(data)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		out = append(out, p)
	}
	return out, nil
}
