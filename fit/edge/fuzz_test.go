package edge_test

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
	"bandedge/fit/edge"
	"bandedge/model"
)

// Bounds of one FuzzAnalyze input: at most fzMaxPoints points (an
// analysis is about twenty fits of them, well under a second), a deadline
// that only a loop that does not end can reach, and an allocation limit
// far above the few tens of MiB such an analysis takes.
const (
	fzMaxPoints = 300
	fzDeadline  = 2 * time.Minute
	fzMaxAlloc  = 1 << 30
)

// fzModels are the models FuzzAnalyze picks from (the indirect band at
// 300 K).
var fzModels = []string{"direct+urbach", "direct", "direct+gauss", "direct+theta", "direct-forbidden+urbach",
	"exciton+urbach", "indirect+urbach", "direct+urbach+const", "direct+joined"}

// fzOptical reads E (eV, column 2) and α (cm⁻¹, last column) of a
// testdata/optical table between lo and hi eV, ascending.
func fzOptical(tb testing.TB, name string, lo, hi float64) (e, a []float64) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "optical", name))
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
		if len(c) < 3 {
			continue
		}
		x, err1 := strconv.ParseFloat(c[1], 64)
		y, err2 := strconv.ParseFloat(c[len(c)-1], 64)
		if err1 == nil && err2 == nil && x >= lo && x <= hi {
			e, a = append(e, x), append(a, y)
		}
	}
	if len(e) > 1 && e[0] > e[len(e)-1] {
		slices.Reverse(e)
		slices.Reverse(a)
	}
	return e, a
}

// fzEncode is the layout of a FuzzAnalyze input: per point the float64
// values E (or, in ascending mode, the step from the previous E), α and
// σ, little-endian.
func fzEncode(e, a, s []float64, ascending bool) []byte {
	var b []byte
	prev := 0.0
	for i := range e {
		x := e[i]
		if ascending {
			x, prev = e[i]-prev, e[i]
		}
		for _, v := range []float64{x, a[i], s[i]} {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
	}
	return b
}

// FuzzAnalyze feeds arbitrary edge.Data to edge.Analyze. The input is a
// list of (E, α, σ) float64 triples; flags picks the model, whether E is
// given as steps (so that the energies ascend and the analysis runs
// deep), which points are masked, the weight semantics (SigmaKnown,
// RelativeSigma), a forced window and the window budget. The contract:
//
//   - never a panic; a return within fzDeadline and fzMaxAlloc;
//   - an error means no Result and wraps edge.ErrData, edge.ErrTooFewPoints
//     or one of fit's start sentinels (it concerns the data, not a bug);
//   - a Result has every parameter finite and within the model's bounds,
//     a window of finite ends with lo ≤ hi and at least
//     edge.MinWindowPoints points, a budget per parameter whose combined
//     uncertainty is NaN or finite and ≥ 0, and says in its Warnings when
//     the fit did not converge, ended on a bound or has no covariance,
//     and when a budget is incomplete (unless E_g is not determined,
//     which has its own warning).
//
// Seeds: GaAs (Papatryfonos et al. 2021), Si (Green 2008) and CdTe
// (Treharne et al. 2011) absorption tables of testdata/optical, with 2 %
// relative σ.
func FuzzAnalyze(f *testing.F) {
	for i, s := range []struct {
		file   string
		lo, hi float64
	}{
		{"GaAs_Papatryfonos2021.csv", 1.2, 1.8},
		{"Si_Green2008.csv", 1.0, 1.4},
		{"CdTe_Treharne2011.csv", 1.3, 1.8},
	} {
		e, a := fzOptical(f, s.file, s.lo, s.hi)
		sg := make([]float64, len(a))
		for j := range a {
			sg[j] = 0.02*a[j] + 1
		}
		f.Add(fzEncode(e, a, sg, true), uint16(1<<4|i))
		f.Add(fzEncode(e, a, sg, false), uint16(i+3))
	}
	f.Add([]byte{}, uint16(0))
	f.Add(fzEncode([]float64{1, 1, 1}, []float64{math.NaN(), 0, -1}, []float64{0, math.Inf(1), 1}, false), uint16(0xffff))
	sentinels := []error{edge.ErrData, edge.ErrTooFewPoints, fit.ErrNoData, fit.ErrTooFewPoints, fit.ErrNonFinite, fit.ErrBounds}
	f.Fuzz(func(t *testing.T, data []byte, flags uint16) {
		m, err := model.LookupConfig(fzModels[int(flags&0xf)%len(fzModels)], model.Config{Temperature: 300})
		if err != nil {
			t.Fatal(err)
		}
		var d edge.Data
		ascending := flags&(1<<4) != 0
		prev := 0.0
		for len(data) >= 24 && len(d.E) < fzMaxPoints {
			x := math.Float64frombits(binary.LittleEndian.Uint64(data))
			if ascending {
				x = prev + math.Abs(x)
				prev = x
			}
			d.E = append(d.E, x)
			d.Alpha = append(d.Alpha, math.Float64frombits(binary.LittleEndian.Uint64(data[8:])))
			d.Sigma = append(d.Sigma, math.Float64frombits(binary.LittleEndian.Uint64(data[16:])))
			data = data[24:]
		}
		if flags&(1<<5) != 0 {
			d.Mask = make([]bool, len(d.E))
			for i := range d.Mask {
				d.Mask[i] = i%3 != 0
			}
		}
		d.SigmaKnown = flags&(1<<6) != 0
		d.RelativeSigma = flags&(1<<7) != 0
		o := edge.Options{Model: m, NoWindowBudget: flags&(1<<8) != 0}
		if flags&(1<<9) != 0 && len(d.E) > 0 {
			o.Window = [2]float64{d.E[0], d.E[len(d.E)-1]}
		}
		var res *edge.Result
		fuzzguard.Bound(t, fzDeadline, fzMaxAlloc, "Analyze("+m.Name()+")", func() {
			res, err = edge.Analyze(context.Background(), d, o)
		})
		if err != nil {
			if res != nil {
				t.Fatalf("Result and error %v together", err)
			}
			for _, s := range sentinels {
				if errors.Is(err, s) {
					return
				}
			}
			t.Fatalf("error %v wraps no data sentinel", err)
		}
		checkResult(t, m, res)
	})
}

// checkResult asserts the Result half of the FuzzAnalyze contract.
func checkResult(t *testing.T, m model.Model, res *edge.Result) {
	t.Helper()
	ps := m.Params()
	if len(res.Params) != len(ps) {
		t.Fatalf("%d params for %s", len(res.Params), m.Name())
	}
	warned := func(s string) bool {
		for _, w := range res.Warnings {
			if strings.Contains(w, s) {
				return true
			}
		}
		return false
	}
	for j, p := range res.Params {
		if math.IsNaN(p.Value) || math.IsInf(p.Value, 0) || p.Value < ps[j].Min || p.Value > ps[j].Max {
			t.Fatalf("%s = %v outside [%v, %v]", p.Name, p.Value, ps[j].Min, ps[j].Max)
		}
		if p.AtBound && !warned("bound") {
			t.Fatalf("%s ended on its bound without a warning: %q", p.Name, res.Warnings)
		}
		b, ok := res.Budgets[p.Name]
		if !ok {
			t.Fatalf("no budget for %s", p.Name)
		}
		if u := b.Combined; !math.IsNaN(u) && (math.IsInf(u, 0) || u < 0) {
			t.Fatalf("budget of %s: combined %v; terms %+v", p.Name, u, b.Terms)
		}
		// An incomplete budget is said either as such or, for a
		// statistical term withheld on a near-degenerate fit, by the
		// warning that withholds it (found by this fuzzer: input
		// c02fa0862daab190).
		if math.IsNaN(b.Combined) && !res.TailOnly && !warned("incomplete") && !(p.StatWithheld && warned("withheld")) {
			t.Fatalf("budget of %s incomplete without a warning: %q", p.Name, res.Warnings)
		}
	}
	w := res.Window
	if math.IsNaN(w[0]) || math.IsNaN(w[1]) || math.IsInf(w[0], 0) || math.IsInf(w[1], 0) || w[0] > w[1] {
		t.Fatalf("window %v", w)
	}
	if res.Points < edge.MinWindowPoints {
		t.Fatalf("%d points in the window", res.Points)
	}
	if !res.Converged && !warned("did not converge") {
		t.Fatalf("not converged without a warning: %q", res.Warnings)
	}
	if res.Fit != nil && res.Fit.Cov == nil && !warned("covariance") {
		t.Fatalf("no covariance without a warning: %q", res.Warnings)
	}
	if res.TailOnly && !warned("not determined") {
		t.Fatalf("tail only without a warning: %q", res.Warnings)
	}
}
