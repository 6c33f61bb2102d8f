package fit_test

import (
	"bandedge/io/fuzzguard"

	"context"
	"encoding/binary"
	"errors"
	"math"
	"testing"

	"bandedge/fit"
	"bandedge/model"
)

// FuzzFit feeds arbitrary data, weights and starts to Fit (through a
// bounded model with an analytic Jacobian and the same model without one)
// and states the contract of the package: never a panic; either a start
// error, with a nil Result, that wraps one of the sentinels, or a Result
// whose parameters are finite and within the bounds, with no error or one
// that wraps ErrSingular or ErrZeroDoF; a return within fuzzDeadline and
// fuzzMaxAlloc.
func FuzzFit(f *testing.F) {
	enc := func(vals ...float64) []byte {
		b := make([]byte, 8*len(vals))
		for i, v := range vals {
			binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
		}
		return b
	}
	s := loadNIST(f, "Misra1a")
	var seed []float64
	seed = append(seed, s.Start1...)
	for i := range s.X {
		seed = append(seed, s.X[i], s.Y[i], 1)
	}
	f.Add(enc(seed...))
	f.Add(enc(1, 1, 0, 0, 1, 1, 0, 1))
	f.Add(enc(250, 5e-4, 1, math.NaN(), 1, 2, 3, -1))
	f.Add(enc(1e300, 1e-300, 1e308, 1e308, 1e308, -1e308, 1, 0))
	f.Add([]byte{1, 2, 3})
	sentinels := []error{fit.ErrNoData, fit.ErrTooFewPoints, fit.ErrLength, fit.ErrNonFinite,
		fit.ErrBounds, fit.ErrNoParams, fit.ErrNoModel, fit.ErrNegativeWeight}
	bounded := misra1a{lo: [2]float64{0, 0}, hi: [2]float64{1e4, 1}}
	f.Fuzz(func(t *testing.T, data []byte) {
		var v []float64
		for len(data) >= 8 && len(v) < 2+3*64 {
			v = append(v, math.Float64frombits(binary.LittleEndian.Uint64(data)))
			data = data[8:]
		}
		var init []float64
		if len(v) >= 2 {
			init, v = v[:2], v[2:]
		}
		var e, a, w []float64
		for len(v) >= 3 {
			e, a, w = append(e, v[0]), append(a, v[1]), append(w, v[2])
			v = v[3:]
		}
		for _, m := range []model.Model{bounded, misra1aFD{bounded}} {
			var res *fit.Result
			var err error
			fuzzguard.Bound(t, fuzzDeadline, fuzzMaxAlloc, "Fit", func() {
				res, err = fit.Fit(context.Background(), fit.Problem{E: e, Alpha: a, Weights: w, Model: m, Init: init},
					&fit.Settings{MaxIterations: 50})
			})
			if res == nil {
				ok := false
				for _, s := range sentinels {
					ok = ok || errors.Is(err, s)
				}
				if !ok {
					t.Fatalf("%T: nil Result with error %v", m, err)
				}
				continue
			}
			if err != nil && !errors.Is(err, fit.ErrSingular) && !errors.Is(err, fit.ErrZeroDoF) {
				t.Fatalf("%T: Result with error %v", m, err)
			}
			for j, p := range res.Params {
				if math.IsNaN(p) || p < bounded.lo[j] || p > bounded.hi[j] {
					t.Fatalf("%T: p[%d] = %v outside [%v, %v]", m, j, p, bounded.lo[j], bounded.hi[j])
				}
			}
		}
	})
}
