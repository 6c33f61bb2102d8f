package fit

import (
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"bandedge/model"
)

// Evaluator evaluates a model at fixed energies for a least-squares
// problem. When the model gives α and its Jacobian in one pass
// (model.ValueJacobianer), every evaluation takes that pass and keeps J:
// the solver asks for J exactly at the parameters whose residuals it has
// just accepted, so that most Jacobian calls become a copy (about a third
// of a 1000-point fit's time; BenchmarkFitDirectUrbach1000). An Evaluator
// keeps its buffers across Reset, so a recycled one does not allocate
// them again; it is not safe for concurrent use.
type Evaluator struct {
	m    model.Model
	e    []float64
	jm   model.Jacobianer      // nil: no analytic Jacobian
	vj   model.ValueJacobianer // nil unless jm is set too
	jc   *mat.Dense            // the kept J (len(e) × k), over jbuf
	jbuf []float64
	jcP  []float64 // the parameters jc was evaluated at
	ok   bool      // jc holds J(jcP)
}

// Reset prepares v for m at the energies e (which must not change while v
// is used); Reset(nil, nil) lets go of them, keeping the buffers.
func (v *Evaluator) Reset(m model.Model, e []float64) {
	v.m, v.e, v.ok = m, e, false
	v.jm, v.vj, v.jc = nil, nil, nil
	if m == nil {
		return
	}
	v.jm, _ = m.(model.Jacobianer)
	if vj, one := m.(model.ValueJacobianer); one && v.jm != nil {
		k := len(m.Params())
		v.vj = vj
		v.jbuf = grow(v.jbuf, len(e)*k)
		v.jcP = grow(v.jcP, k)
		v.jc = mat.NewDense(len(e), k, v.jbuf)
	}
}

// HasJacobian reports whether the model has an analytic Jacobian.
func (v *Evaluator) HasJacobian() bool { return v.jm != nil }

// Eval fills dst (length len(e)) with α(e; p).
func (v *Evaluator) Eval(dst, p []float64) {
	if v.vj == nil {
		v.m.Eval(dst, v.e, p)
		return
	}
	v.vj.EvalJacobian(dst, v.jc, v.e, p)
	copy(v.jcP, p)
	v.ok = true
}

// Jacobian fills dst (len(e) × k) with ∂α/∂p at p: a copy of the kept J
// when the last Eval was at p, else the model's Jacobian. It must only be
// called when HasJacobian.
func (v *Evaluator) Jacobian(dst *mat.Dense, p []float64) {
	if v.ok && floats.Equal(p, v.jcP) {
		if raw := dst.RawMatrix(); raw.Stride == len(v.jcP) {
			copy(raw.Data, v.jbuf) // both contiguous len(e) × k
		} else {
			dst.Copy(v.jc)
		}
		return
	}
	v.jm.Jacobian(dst, v.e, p)
}
