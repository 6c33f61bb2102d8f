package fit_test

import (
	"bandedge/io/fuzzguard"
	"context"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"bandedge/fit"
	"bandedge/model"
)

// fuzzDeadline bounds one input of the fit fuzzers: a fit of at most
// fuzzMaxPoints points with a registry model takes milliseconds, so a
// minute means a loop that does not end.
const (
	fuzzDeadline  = time.Minute
	fuzzMaxPoints = 256
	// fuzzMaxAlloc bounds the bytes allocated by one input (runtime
	// TotalAlloc): a fit of 256 points allocates a few MiB.
	fuzzMaxAlloc = 512 << 20
)

// fuzzModels are the registry's models the fuzzer picks from: every
// band+tail of model.Names (the indirect band at 300 K), and two with a
// sub-gap baseline.
func fuzzModels(tb testing.TB) []model.Model {
	var ms []model.Model
	for _, n := range append(model.Names(), "direct+urbach+const", "exciton+gauss+linear") {
		m, err := model.LookupConfig(n, model.Config{Temperature: 300})
		if err != nil {
			tb.Fatalf("%s: %v", n, err)
		}
		ms = append(ms, m)
	}
	return ms
}

// encodeFloats is the fuzz input layout of FuzzFitModel: little-endian
// float64 values.
func encodeFloats(v ...float64) []byte {
	b := make([]byte, 8*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return b
}

// FuzzFitModel fits a model of the registry (picked by sel) to arbitrary
// data: the input bytes are float64 triples (E, α, weight) after one start
// value per parameter (clamped into the bounds when the high bit of sel is
// set, so that the solver itself is fuzzed and not only the bounds
// check). The contract of Fit:
//
//   - never a panic, and a return within fuzzDeadline and fuzzMaxAlloc;
//   - either a nil Result with an error wrapping one of the start
//     sentinels, or a Result whose parameters are finite and within the
//     model's bounds, with one StdErr per parameter, NaN exactly when Cov
//     is nil, and an error that is nil or wraps ErrSingular or ErrZeroDoF;
//   - a Cov that is present has a non-negative finite diagonal.
//
// Seeds: the GaAs α table of testdata/optical (Papatryfonos et al. 2021,
// see testdata/README.md) with each model's midpoint start, and
// degenerate inputs.
func FuzzFitModel(f *testing.F) {
	ms := fuzzModels(f)
	e, a := loadOptical(f, "GaAs_Papatryfonos2021.csv", 1.3, 1.6)
	for i, m := range ms {
		var v []float64
		for _, q := range m.Params() {
			v = append(v, mid(q))
		}
		for j := range e {
			v = append(v, e[j], a[j], 1/(0.01*a[j]+1)/(0.01*a[j]+1))
		}
		f.Add(encodeFloats(v...), uint8(i)|0x80)
	}
	f.Add(encodeFloats(1.4, 1e4, 0.01, 1, 1, 1, 1.1, 1, 1, 1.2, 1, 1), uint8(0x81))
	f.Add(encodeFloats(math.NaN(), math.Inf(1), -1, 0, 0, 0), uint8(3))
	f.Add([]byte{1, 2, 3}, uint8(0))
	sentinels := []error{fit.ErrNoData, fit.ErrTooFewPoints, fit.ErrLength, fit.ErrNonFinite,
		fit.ErrBounds, fit.ErrNoParams, fit.ErrNoModel, fit.ErrNegativeWeight}
	f.Fuzz(func(t *testing.T, data []byte, sel uint8) {
		m := ms[int(sel&0x7f)%len(ms)]
		ps := m.Params()
		var v []float64
		for len(data) >= 8 && len(v) < len(ps)+3*fuzzMaxPoints {
			v = append(v, math.Float64frombits(binary.LittleEndian.Uint64(data)))
			data = data[8:]
		}
		if len(v) < len(ps) {
			return
		}
		init := v[:len(ps)]
		if sel&0x80 != 0 {
			for j, q := range ps {
				if !math.IsNaN(init[j]) {
					init[j] = math.Min(math.Max(init[j], q.Min), q.Max)
				}
			}
		}
		var e, a, w []float64
		for r := v[len(ps):]; len(r) >= 3; r = r[3:] {
			e, a, w = append(e, r[0]), append(a, r[1]), append(w, r[2])
		}
		var res *fit.Result
		var err error
		fuzzguard.Bound(t, fuzzDeadline, fuzzMaxAlloc, "Fit("+m.Name()+")", func() {
			res, err = fit.Fit(context.Background(), fit.Problem{E: e, Alpha: a, Weights: w, Model: m, Init: init}, nil)
		})
		if res == nil {
			for _, s := range sentinels {
				if errors.Is(err, s) {
					return
				}
			}
			t.Fatalf("%s: nil Result with error %v", m.Name(), err)
		}
		if err != nil && !errors.Is(err, fit.ErrSingular) && !errors.Is(err, fit.ErrZeroDoF) {
			t.Fatalf("%s: Result with error %v", m.Name(), err)
		}
		if len(res.Params) != len(ps) || len(res.StdErr) != len(ps) {
			t.Fatalf("%s: %d params, %d std errors", m.Name(), len(res.Params), len(res.StdErr))
		}
		for j, p := range res.Params {
			if math.IsNaN(p) || math.IsInf(p, 0) || p < ps[j].Min || p > ps[j].Max {
				t.Fatalf("%s: %s = %v outside [%v, %v]", m.Name(), ps[j].Name, p, ps[j].Min, ps[j].Max)
			}
			if se := res.StdErr[j]; math.IsNaN(se) != (res.Cov == nil) {
				t.Fatalf("%s: StdErr[%d] = %v with Cov nil = %v", m.Name(), j, se, res.Cov == nil)
			}
			if res.Cov != nil {
				if d := res.Cov.At(j, j); !(d >= 0) || math.IsInf(d, 0) {
					t.Fatalf("%s: Cov[%d][%d] = %v", m.Name(), j, j, d)
				}
			}
		}
	})
}

func mid(q model.Param) float64 {
	switch {
	case !math.IsInf(q.Min, 0) && !math.IsInf(q.Max, 0):
		return 0.5 * (q.Min + q.Max)
	case !math.IsInf(q.Min, 0):
		return q.Min + 1
	case !math.IsInf(q.Max, 0):
		return q.Max - 1
	}
	return 0
}

// loadOptical reads the energy_eV (second) and alpha_cm-1 (last) columns
// of a testdata/optical table (comment lines start with '#'; the first
// other line is the header) between lo and hi eV, in ascending energy.
func loadOptical(tb testing.TB, name string, lo, hi float64) (e, a []float64) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "optical", name))
	if err != nil {
		tb.Fatal(err)
	}
	header := true
	for _, line := range strings.Split(string(b), "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		if header {
			header = false
			continue
		}
		c := strings.Split(line, ",")
		if len(c) < 2 {
			continue
		}
		x, err1 := strconv.ParseFloat(c[1], 64)
		y, err2 := strconv.ParseFloat(c[len(c)-1], 64)
		if err1 != nil || err2 != nil || x < lo || x > hi {
			continue
		}
		e, a = append(e, x), append(a, y)
	}
	if len(e) > 1 && e[0] > e[len(e)-1] {
		slices.Reverse(e)
		slices.Reverse(a)
	}
	if len(e) < 5 {
		tb.Fatalf("%s: %d points in %g–%g eV", name, len(e), lo, hi)
	}
	return e, a
}
