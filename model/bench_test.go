package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// benchParams returns typical parameters of a family model: E_g = 1.5 eV,
// width 20 meV (z from −15 to 25 over benchEnergies), θ = 1.5,
// E_ph = 30 meV, R_x = 10 meV (ρ = 0.5).
func benchParams(m Model) []float64 {
	ps := m.Params()
	p := make([]float64, len(ps))
	for i, q := range ps {
		switch q.Name {
		case "eg":
			p[i] = 1.5
		case "amp":
			p[i] = 2e4
		case "eu", "gw":
			p[i] = 0.02
		case "theta":
			p[i] = 1.5
		case "eph":
			p[i] = 0.03
		case "rx":
			p[i] = 0.01
		case "b0":
			p[i] = 10
		case "b1":
			p[i] = 5
		}
	}
	return p
}

func benchModels(b *testing.B) []Model {
	var ms []Model
	for _, n := range append(Names(), "direct+urbach+linear", "exciton+gauss+const") {
		m, err := LookupConfig(n, Config{Temperature: 300})
		if err != nil {
			b.Fatal(err)
		}
		ms = append(ms, m)
	}
	return ms
}

// BenchmarkFamilyEval times Eval at 1000 energies for every model (tables
// built before timing).
func BenchmarkFamilyEval(b *testing.B) {
	e := benchEnergies()
	dst := make([]float64, len(e))
	for _, m := range benchModels(b) {
		p := benchParams(m)
		m.Eval(dst, e, p) // build tables
		b.Run(m.Name(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				m.Eval(dst, e, p)
			}
		})
	}
}

// BenchmarkFamilyJacobian times Jacobian at 1000 energies for every model.
func BenchmarkFamilyJacobian(b *testing.B) {
	e := benchEnergies()
	for _, m := range benchModels(b) {
		p := benchParams(m)
		dst := mat.NewDense(len(e), len(p), nil)
		j := m.(Jacobianer)
		j.Jacobian(dst, e, p)
		b.Run(m.Name(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				j.Jacobian(dst, e, p)
			}
		})
	}
}

// BenchmarkDirectUrbachFitCost is the model's share of a typical fit of
// 1000 points: 20 Eval and 20 Jacobian calls.
func BenchmarkDirectUrbachFitCost(b *testing.B) {
	e := benchEnergies()
	dst := make([]float64, len(e))
	jac := mat.NewDense(len(e), 3, nil)
	p := []float64{1.5, 2e4, 0.02}
	m := DirectUrbach{}
	b.ReportAllocs()
	for b.Loop() {
		for k := 0; k < 20; k++ {
			m.Eval(dst, e, p)
			m.Jacobian(jac, e, p)
		}
	}
}

// BenchmarkUrbachEdgeClosedForm evaluates F and F' of DirectUrbach from
// the closed form (Dawson's integral and erfcx, package specfun) at the
// 1000 points of BenchmarkDirectUrbachEval: the cost before the table.
func BenchmarkUrbachEdgeClosedForm(b *testing.B) {
	e := benchEnergies()
	var s float64
	b.ReportAllocs()
	for b.Loop() {
		for _, ei := range e {
			z := (ei - 1.5) / 0.02
			if z <= 0 {
				f, _, _ := urbachEdge(z)
				s += f
				continue
			}
			f, df := directF(sqrtz(z))
			s += f + df
		}
	}
	_ = s
}

func sqrtz(z float64) float64 {
	if z < 0 {
		return 0
	}
	return mathSqrt(z)
}

// BenchmarkTableBuild times the construction of each table (what the first
// call of a model costs): run with -benchtime=1x for one build each.
func BenchmarkTableBuild(b *testing.B) {
	for _, tc := range []struct {
		name  string
		build func()
	}{
		{"lap (θ=1, direct and forbidden)", func() { buildLapTab() }},
		{"gauss a=1/2", func() { newPowPair(powHalf, 2) }},
		{"gauss a=3/2", func() { newPowPair(powThreeHalf, 2) }},
		{"gauss a=2", func() { newPowPair(powTwo, 2) }},
		{"theta a=1/2", func() { newPowPair(powHalf, 0) }},
		{"theta a=3/2", func() { newPowPair(powThreeHalf, 0) }},
		{"theta a=2", func() { newPowPair(powTwo, 0) }},
		{"exciton urbach", func() { newExcTab(1) }},
		{"exciton gauss", func() { newExcTab(2) }},
	} {
		b.Run(tc.name, func(b *testing.B) {
			for b.Loop() {
				tc.build()
			}
		})
	}
}

var mathSqrt = math.Sqrt
