package lot

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"bandedge/fit/edge"
	"bandedge/fit/scan"
	"bandedge/io/results"
	"bandedge/io/sheet"
	"bandedge/io/specio"
	"bandedge/model/optics"
)

// batchDir is the batch test data (invented scans of the fictional demo
// lot, see testdata/README.md).
var batchDir = filepath.Join("..", "..", "testdata", "batch")

func readSpec(t *testing.T, text string) *sheet.Spec {
	t.Helper()
	sp, err := sheet.ReadSpec(strings.NewReader(text), "spec.txt")
	if err != nil {
		t.Fatal(err)
	}
	return sp
}

// fakeOutcome is an analysed scan with the given E_g, its budget (u_c,
// k = 2) and E_U, for verdict tests that need no spectrum.
func fakeOutcome(eg, ucEg, eu, ucEu float64, tailOnly bool) *scan.Outcome {
	statEg := edge.Term{Source: "statistical", Type: edge.TypeA, U: ucEg / 2}
	winEg := edge.Term{Source: "fit window", Type: edge.TypeB, U: ucEg * math.Sqrt(3) / 2}
	res := &edge.Result{
		Model:     "direct+urbach",
		Params:    []edge.ParamValue{{Name: "eg", Value: eg}, {Name: "amp", Value: 3e4}, {Name: "eu", Value: eu}},
		Converged: true, Status: "FunctionConvergence", Chi2Red: 1.1, Points: 100, TailOnly: tailOnly,
		Budgets: map[string]edge.Budget{
			"eg":  edge.NewBudget("E_g", "eV", 2, statEg, winEg),
			"eu":  edge.NewBudget("E_U", "eV", 2, edge.Term{Source: "statistical", Type: edge.TypeA, U: ucEu}),
			"amp": edge.NewBudget("C", "cm⁻¹·eV^½", 2, edge.Term{Source: "statistical", Type: edge.TypeA, U: 300}),
		},
		EP: math.NaN(),
	}
	return &scan.Outcome{Path: "x.csv", Result: res, Spectrum: &specio.Spectrum{}, Conversion: &optics.Result{}}
}

// rowFor builds the summary row as FromOutcome and RowFromOutcome would,
// without a conversion.
func rowFor(o *scan.Outcome) results.Row {
	r := results.NewRow(o.Path)
	res := o.Result
	r.Status = results.StatusOK
	r.EgEV = results.Num(res.Params[0].Value)
	if res.TailOnly {
		r.EgEV = results.Num(math.NaN())
	}
	r.EgErrEV = results.Num(res.Budgets["eg"].Combined)
	r.EgExpandedEV = results.Num(res.Budgets["eg"].Expanded)
	r.UrbachEV = results.Num(res.Params[2].Value)
	r.UrbachErrEV = results.Num(res.Budgets["eu"].Combined)
	r.Chi2Reduced = results.Num(res.Chi2Red)
	r.PointsUsed = res.Points
	return r
}

// TestJudgeLimits: verdicts at, inside, straddling and outside limits
// under the guarded rule w = U (ILAC-G8:09/2019 guarded acceptance and
// rejection), through io/sheet's Spec.Judge. u_c = 0.5 meV, so U = 1 meV
// (k = 2, JCGM 100:2008 §6.3.3).
func TestJudgeLimits(t *testing.T) {
	spec := readSpec(t, "bandedge-spec 1\nguard expanded\nlimit eg_ev 1.415 .. 1.435\nlimit urbach_ev .. 0.012\n")
	tests := []struct {
		name     string
		eg       float64
		tailOnly bool
		want     sheet.Verdict
	}{
		{name: "inside", eg: 1.425, want: sheet.Pass},
		{name: "interval touches the upper limit from inside", eg: 1.434, want: sheet.Pass}, // 1.434 + 0.001 = 1.435: closed limit
		{name: "straddles the upper limit", eg: 1.4345, want: sheet.Indeterminate},
		{name: "value on the limit", eg: 1.435, want: sheet.Indeterminate},
		{name: "wholly above", eg: 1.4365, want: sheet.Fail},
		{name: "straddles the lower limit", eg: 1.4155, want: sheet.Indeterminate},
		{name: "wholly below", eg: 1.4135, want: sheet.Fail},
		{name: "not determined (tail only)", eg: 1.425, tailOnly: true, want: sheet.Indeterminate},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			o := fakeOutcome(tc.eg, 0.0005, 0.008, 0.0001, tc.tailOnly)
			sc := Scan{Row: rowFor(o)}
			sc.Record = results.FromOutcome(o, results.Provenance{})
			judge(&sc, spec)
			if len(sc.Judgements) != 2 {
				t.Fatalf("%d judgements, want 2", len(sc.Judgements))
			}
			if got := sc.Judgements[0].Verdict; got != tc.want {
				t.Errorf("eg_ev verdict %v, want %v", got, tc.want)
			}
			if got := sc.Judgements[1].Verdict; got != sheet.Pass {
				t.Errorf("urbach_ev verdict %v, want pass (8 ± 0.2 meV ≤ 12 meV)", got)
			}
			if sc.Verdict != sheet.Worst(tc.want, sheet.Pass) {
				t.Errorf("overall %v", sc.Verdict)
			}
			if sc.Row.Verdict != sc.Verdict.String() || sc.Row.Verdicts[0].Verdict != tc.want.String() {
				t.Errorf("row verdicts %q %v", sc.Row.Verdict, sc.Row.Verdicts)
			}
		})
	}
}

// TestJudgeRules: the same value under the three rules of the spec
// format; a tail-only E_g is never a pass, even under simple acceptance.
func TestJudgeRules(t *testing.T) {
	tests := []struct {
		guard    string
		eg       float64
		tailOnly bool
		want     sheet.Verdict
	}{
		// u_c = 0.5 meV, of which the statistical term is 0.25 meV: k·u_stat = 0.5 meV.
		{guard: "expanded", eg: 1.4343, want: sheet.Indeterminate}, // 1.4343 + 0.001 > 1.435
		{guard: "stat", eg: 1.4343, want: sheet.Pass},              // 1.4343 + 0.0005 ≤ 1.435
		{guard: "none", eg: 1.4349, want: sheet.Pass},
		{guard: "none", eg: 1.4351, want: sheet.Fail},
		{guard: "none", eg: 1.425, tailOnly: true, want: sheet.Indeterminate},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("%s/%g/%v", tc.guard, tc.eg, tc.tailOnly), func(t *testing.T) {
			spec := readSpec(t, "bandedge-spec 1\nguard "+tc.guard+"\nlimit eg_ev 1.415 .. 1.435\n")
			o := fakeOutcome(tc.eg, 0.0005, 0.008, 0.0001, tc.tailOnly)
			sc := Scan{Row: rowFor(o)}
			sc.Record = results.FromOutcome(o, results.Provenance{})
			judge(&sc, spec)
			if sc.Verdict != tc.want {
				t.Errorf("verdict %v, want %v", sc.Verdict, tc.want)
			}
		})
	}
}

// TestRollStats checks the roll-up statistics against gonum/stat on the
// same numbers, and the verdict roll-up rules.
func TestRollStats(t *testing.T) {
	spec := readSpec(t, "bandedge-spec 1\nguard expanded\nlimit eg_ev 1.415 .. 1.435\nlimit wafer.eg_ev.nonuniformity .. 0.001\n")
	egs := map[string][]float64{"W01": {1.4240, 1.4251, 1.4262, 1.4233}, "W02": {1.4301, 1.4345, 1.4398}}
	var scans []Scan
	for _, w := range []string{"W01", "W02"} {
		for _, eg := range egs[w] {
			o := fakeOutcome(eg, 0.0005, 0.008, 0.0001, false)
			sc := Scan{Row: rowFor(o)}
			sc.Row.Wafer, sc.Row.Lot = w, "L1"
			sc.Record = results.FromOutcome(o, results.Provenance{})
			judge(&sc, spec)
			scans = append(scans, sc)
		}
	}
	failed := Scan{Row: results.NewRow("bad.csv")}
	failed.Row.Status, failed.Row.Wafer, failed.Row.Lot = results.StatusFailed, "W01", "L1"
	scans = append(scans, failed)

	ru := Roll(scans, spec)
	if len(ru.Wafers) != 2 || len(ru.Lots) != 1 {
		t.Fatalf("%d wafers, %d lots", len(ru.Wafers), len(ru.Lots))
	}
	all := append(append([]float64{}, egs["W01"]...), egs["W02"]...)
	for _, tc := range []struct {
		g    Group
		vals []float64
	}{{ru.Wafers[0], egs["W01"]}, {ru.Wafers[1], egs["W02"]}, {ru.Lots[0], all}} {
		st := tc.g.Stats["eg_ev"]
		// Expected values: gonum's stat.Mean and stat.StdDev (sample,
		// n − 1) on the same numbers; min/max/range by inspection.
		mean, sd := stat.Mean(tc.vals, nil), stat.StdDev(tc.vals, nil)
		lo, hi := tc.vals[0], tc.vals[0]
		for _, v := range tc.vals {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		if st.Count != len(tc.vals) {
			t.Errorf("%s %s: count %d, want %d", tc.g.Level, tc.g.Wafer, st.Count, len(tc.vals))
		}
		// 1e-15 relative: the same float64 operations, rounding only.
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"mean", st.Mean, mean}, {"stdev", st.StdDev, sd}, {"min", st.Min, lo}, {"max", st.Max, hi},
			{"range", st.Range, hi - lo}, {"nonuniformity", st.Nonuniformity, (hi - lo) / (2 * mean)}} {
			if !scalar.EqualWithinAbsOrRel(c.got, c.want, 0, 1e-14) {
				t.Errorf("%s %s %s = %.17g, want %.17g", tc.g.Level, tc.g.Wafer, c.name, c.got, c.want)
			}
		}
	}
	w1, w2 := ru.Wafers[0], ru.Wafers[1]
	// W01: every scan passes, range 2.9 meV / (2·1.4247) = 0.10 % ≤ 0.1 %? 0.001018: fails the wafer limit.
	if w1.Failed != 1 || w1.Fitted != 4 || w1.Pass != 4 {
		t.Errorf("W01 counts %+v", w1)
	}
	if w1.Verdict != sheet.Fail {
		t.Errorf("W01 verdict %v, want fail (non-uniformity %.5f > 0.001)", w1.Verdict, w1.Stats["eg_ev"].Nonuniformity)
	}
	if w2.Fail != 1 || w2.Indeterminate != 1 || w2.Pass != 1 || w2.Verdict != sheet.Fail {
		t.Errorf("W02 %+v", w2)
	}
	if ru.Lots[0].Verdict != sheet.Fail || ru.Lots[0].Scans != 8 || ru.Lots[0].Failed != 1 {
		t.Errorf("lot %+v", ru.Lots[0])
	}

	// A wafer whose scans all pass but one is not fitted is
	// indeterminate, not pass.
	spec2 := readSpec(t, "bandedge-spec 1\nguard expanded\nlimit eg_ev 1.415 .. 1.435\n")
	var s2 []Scan
	for _, sc := range scans {
		if sc.Row.Wafer == "W01" {
			if sc.Fitted() {
				sc.Judgements, sc.Verdict = nil, sheet.NoLimit
				o := fakeOutcome(sc.Row.EgEV.Float(), 0.0005, 0.008, 0.0001, false)
				sc.Record = results.FromOutcome(o, results.Provenance{})
				judge(&sc, spec2)
			}
			s2 = append(s2, sc)
		}
	}
	if v := Roll(s2, spec2).Wafers[0].Verdict; v != sheet.Indeterminate {
		t.Errorf("wafer with a missing site: %v, want indeterminate", v)
	}
	rows := ru.Rows(spec)
	if len(rows) != 3 || rows[2].Level != "lot" || rows[0].Wafer != "W01" || rows[0].Verdict != "fail" {
		t.Errorf("rows %+v", rows)
	}
}

// TestJudgeClaim: z and p against a hand computation with the normal
// distribution (gonum distuv.Normal), and the verdict thresholds.
func TestJudgeClaim(t *testing.T) {
	tests := []struct {
		name         string
		gap, tol     float64
		measured, uc float64
		want         ClaimVerdict
	}{
		{name: "consistent", gap: 1.42, tol: 0.01, measured: 1.4240, uc: 0.0005, want: Consistent},
		{name: "inconsistent", gap: 1.42, tol: 0, measured: 1.4240, uc: 0.0005, want: Inconsistent},    // z = 8
		{name: "between 2 and 3", gap: 1.42, tol: 0, measured: 1.4212, uc: 0.0005, want: CannotTell},   // z = 2.4
		{name: "z just below 2", gap: 1.42, tol: 0, measured: 1.42099, uc: 0.0005, want: Consistent},   // z = 1.98
		{name: "u_c too large", gap: 1.42, tol: 0, measured: 1.43, uc: 0.02, want: CannotTell},         // z = 0.5 but u_c > 1 %
		{name: "large u_c, far off", gap: 1.42, tol: 0, measured: 1.52, uc: 0.02, want: Inconsistent},  // z = 5
		{name: "u_c unknown", gap: 1.42, tol: 0.01, measured: 1.424, uc: math.NaN(), want: CannotTell}, // tail-only budget
		{name: "not determined", gap: 1.42, tol: 0.01, measured: math.NaN(), uc: 0.001, want: CannotTell},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := Claim{Gap: tc.gap, Tol: tc.tol}
			r := JudgeClaim(c, tc.measured, tc.uc, "refractive index", 0.0003)
			if r.Verdict != tc.want {
				t.Errorf("verdict %v, want %v (z = %g): %s", r.Verdict, tc.want, r.Z, r.Reason)
			}
			if math.IsNaN(tc.measured) || math.IsNaN(tc.uc) {
				if !math.IsNaN(r.Z) {
					t.Errorf("z = %g, want NaN", r.Z)
				}
				return
			}
			// By hand: u_claim = tol/√3 (rectangular, JCGM 100:2008 §4.3.7),
			// z = Δ/√(u_c² + u_claim²), p = 2·P(Z > |z|) for a standard normal.
			uClaim := tc.tol / math.Sqrt(3)
			z := (tc.measured - tc.gap) / math.Sqrt(tc.uc*tc.uc+uClaim*uClaim)
			n := distuv.Normal{Mu: 0, Sigma: 1}
			p := 2 * (1 - n.CDF(math.Abs(z)))
			// z: 1e-12 relative (hypot vs sqrt of squares); p: 1e-9
			// absolute (1 − CDF loses digits for large |z|).
			if !scalar.EqualWithinAbsOrRel(r.Z, z, 0, 1e-12) {
				t.Errorf("z = %.15g, want %.15g", r.Z, z)
			}
			if !scalar.EqualWithinAbsOrRel(r.P, p, 1e-9, 1e-9) {
				t.Errorf("p = %.15g, want %.15g", r.P, p)
			}
			if r.Verdict != CannotTell || !math.IsNaN(tc.uc) {
				if !strings.Contains(r.Reason, "refractive index") && r.Verdict != CannotTell {
					t.Errorf("reason does not name the dominant term: %s", r.Reason)
				}
			}
		})
	}
	// Worked case, values by hand: Δ = 4 meV, u_c = 0.5 meV, tol 10 meV:
	// u_claim = 5.7735 meV, u = 5.7951 meV, z = 0.69024, p = 0.49003
	// (standard normal table, from memory: Φ(0.69) = 0.7549).
	r := JudgeClaim(Claim{Gap: 1.420, Tol: 0.010}, 1.424, 0.0005, "", math.NaN())
	if !scalar.EqualWithinAbsOrRel(r.Z, 0.69024, 0, 1e-4) || !scalar.EqualWithinAbsOrRel(r.P, 0.49003, 0, 1e-3) {
		t.Errorf("worked case z = %.5f p = %.5f, want 0.69024 and 0.49003", r.Z, r.P)
	}
}

// TestMeanGap: the lot mean and its standard error against gonum/stat.
func TestMeanGap(t *testing.T) {
	eg := []float64{1.4240, 1.4251, math.NaN(), 1.4262, 1.4233}
	uc := []float64{0.0005, 0.0006, 0.0005, math.NaN(), 0.0004}
	m := MeanGap(eg, uc)
	xs, us := []float64{1.4240, 1.4251, 1.4233}, []float64{0.0005, 0.0006, 0.0004}
	sd := stat.StdDev(xs, nil)
	se := sd / math.Sqrt(3)
	if m.N != 3 || !scalar.EqualWithinAbsOrRel(m.Mean, stat.Mean(xs, nil), 0, 1e-15) ||
		!scalar.EqualWithinAbsOrRel(m.SE, se, 0, 1e-14) ||
		!scalar.EqualWithinAbsOrRel(m.U, math.Sqrt(se*se+math.Pow(stat.Mean(us, nil), 2)), 0, 1e-14) {
		t.Errorf("MeanGap %+v", m)
	}
	if m := MeanGap([]float64{1.42}, []float64{0.001}); m.U != 0.001 || !math.IsNaN(m.SE) {
		t.Errorf("one scan: %+v", m)
	}
	if m := MeanGap(nil, nil); !math.IsNaN(m.Mean) || m.N != 0 {
		t.Errorf("empty: %+v", m)
	}
}

// TestRunOrder: results come back in input order whatever the
// scheduling, a failure stays with its file, and every job is analysed
// exactly once.
func TestRunOrder(t *testing.T) {
	files, err := List([]string{filepath.Join(batchDir, "scans")})
	if err != nil {
		t.Fatal(err)
	}
	var calls atomic.Int64
	analyze := func(ctx context.Context, name string, b []byte, s scan.Settings) (*scan.Outcome, error) {
		calls.Add(1)
		if strings.Contains(name, "bad_") {
			return nil, &scan.Error{File: name, Stage: scan.StageRead, Err: errors.New("bad on purpose")}
		}
		return fakeOutcome(1.42+float64(len(b)%97)*1e-5, 0.0005, 0.008, 0.0001, false), nil
	}
	jobs := make([]Job, len(files))
	for i, f := range files {
		jobs[i] = Job{Path: f, Name: filepath.Base(f)}
	}
	var prev []Scan
	for _, workers := range []int{1, 4, 3} {
		calls.Store(0)
		var progress []int
		sc, err := Run(context.Background(), jobs, &Settings{Workers: workers, Analyze: analyze,
			Progress: func(done, total, failed int) { progress = append(progress, done) }})
		if err != nil {
			t.Fatal(err)
		}
		if int(calls.Load()) != len(jobs) || len(progress) != len(jobs) || progress[len(progress)-1] != len(jobs) {
			t.Errorf("workers %d: %d analyses, progress %v", workers, calls.Load(), progress)
		}
		for i := range sc {
			if sc[i].Job.Path != files[i] {
				t.Errorf("workers %d: scan %d is %s, want %s", workers, i, sc[i].Job.Path, files[i])
			}
			bad := strings.Contains(files[i], "bad_")
			if bad != (sc[i].Row.Status == results.StatusFailed) || bad != (sc[i].Err != nil) {
				t.Errorf("workers %d: %s status %s err %v", workers, files[i], sc[i].Row.Status, sc[i].Err)
			}
			if sc[i].Row.SHA256 == "" {
				t.Errorf("%s: no sha256", files[i])
			}
		}
		if prev != nil {
			for i := range sc {
				// Compared as JSON: NaN fields make reflect.DeepEqual false.
				a, _ := json.Marshal(sc[i].Row)
				b, _ := json.Marshal(prev[i].Row)
				if !bytes.Equal(a, b) {
					t.Errorf("workers %d: row %d differs from the previous run", workers, i)
				}
			}
		}
		prev = sc
	}
}

// TestRunCancel: a cancel mid-batch returns the finished scans as they
// were, the rest marked cancelled, and ctx's error.
func TestRunCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	jobs := make([]Job, 20)
	dir := t.TempDir()
	for i := range jobs {
		p := filepath.Join(dir, fmt.Sprintf("s%02d.csv", i))
		os.WriteFile(p, []byte("x"), 0o644)
		jobs[i] = Job{Path: p}
	}
	var doneCalls atomic.Int64
	analyze := func(ctx context.Context, name string, b []byte, s scan.Settings) (*scan.Outcome, error) {
		if err := ctx.Err(); err != nil {
			return nil, &scan.Error{File: name, Stage: scan.StageFit, Err: err}
		}
		return fakeOutcome(1.424, 0.0005, 0.008, 0.0001, false), nil
	}
	sc, err := Run(ctx, jobs, &Settings{Workers: 2, Analyze: analyze,
		Done: func(context.Context, *Scan, *scan.Outcome) error { doneCalls.Add(1); return nil },
		Progress: func(done, total, failed int) {
			if done == 5 {
				cancel()
			}
		}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
	ok, cancelled := 0, 0
	for _, s := range sc {
		switch s.Row.Status {
		case results.StatusOK:
			ok++
		case results.StatusCancelled:
			cancelled++
			if !errors.Is(s.Err, context.Canceled) {
				t.Errorf("cancelled scan with error %v", s.Err)
			}
		default:
			t.Errorf("status %s", s.Row.Status)
		}
	}
	if ok < 5 || ok+cancelled != len(jobs) || cancelled == 0 {
		t.Errorf("ok %d, cancelled %d of %d", ok, cancelled, len(jobs))
	}
	if int(doneCalls.Load()) < ok {
		t.Errorf("Done called %d times for %d finished scans", doneCalls.Load(), ok)
	}
}

func TestList(t *testing.T) {
	scans := filepath.Join(batchDir, "scans")
	all, err := List([]string{scans})
	if err != nil {
		t.Fatal(err)
	}
	if len(all) != 10 {
		t.Errorf("%d files from the folder, want 10: %v", len(all), all)
	}
	for i := 1; i < len(all); i++ {
		if all[i-1] >= all[i] {
			t.Errorf("not sorted: %s before %s", all[i-1], all[i])
		}
	}
	// A glob and a file that repeat the folder's files add nothing; the
	// glob's matches come first, in order.
	got, err := List([]string{filepath.Join(scans, "KM2611-W04-*.csv"), scans, filepath.Join(scans, "KM2611-W01-s01.csv")})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 10 || filepath.Base(got[0]) != "KM2611-W04-s01.csv" || filepath.Base(got[3]) != "KM2611-W01-s01.csv" {
		t.Errorf("glob then folder: %v", got)
	}
	// Skipped paths (the sheet) are left out.
	dir := t.TempDir()
	for _, n := range []string{"a.csv", "b.txt", "sheet.csv", "notes.md", ".hidden.csv"} {
		os.WriteFile(filepath.Join(dir, n), []byte("x"), 0o644)
	}
	got, err = List([]string{dir}, filepath.Join(dir, "sheet.csv"))
	if err != nil || len(got) != 2 {
		t.Errorf("with skip: %v %v", got, err)
	}
	if _, err := List([]string{filepath.Join(dir, "*.jdx")}); !errors.Is(err, ErrNoScans) {
		t.Errorf("empty glob: %v", err)
	}
	if _, err := List([]string{filepath.Join(dir, "missing")}); err == nil {
		t.Error("missing path accepted")
	}
}

func TestNames(t *testing.T) {
	got := Names([]string{"a/x.csv", "b/x.csv", "c/x.txt", "d/x.csv", "y.jdx"})
	want := []string{"x", "x.csv", "x.txt", "x-2", "y"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Names = %v, want %v", got, want)
	}
}

func TestApplySample(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	base := scan.Settings{Thickness: 2e-4, ThicknessRelErr: 0.025, Index: 3.6, IndexErr: 0.05}
	tests := []struct {
		name    string
		abs     bool
		smp     sheet.Sample
		want    scan.Settings
		wantErr bool
	}{
		{name: "no overrides", smp: sheet.Sample{}, want: base},
		{name: "thickness, relative error kept", smp: sheet.Sample{ThicknessCM: f(1e-4)},
			want: scan.Settings{Thickness: 1e-4, ThicknessRelErr: 0.025, Index: 3.6, IndexErr: 0.05}},
		// --thickness-err 0.05um with --thickness 2um: u(d) = 0.05 µm stays absolute, 5 % of 1 µm.
		{name: "thickness, absolute error kept", abs: true, smp: sheet.Sample{ThicknessCM: f(1e-4)},
			want: scan.Settings{Thickness: 1e-4, ThicknessRelErr: 0.05, Index: 3.6, IndexErr: 0.05}},
		{name: "sheet error in percent", smp: sheet.Sample{ThicknessErr: &sheet.Uncertainty{Value: 0.02, Relative: true}},
			want: scan.Settings{Thickness: 2e-4, ThicknessRelErr: 0.02, Index: 3.6, IndexErr: 0.05}},
		{name: "index and relative index error", smp: sheet.Sample{Index: f(3.5), IndexErr: &sheet.Uncertainty{Value: 0.01, Relative: true}},
			want: scan.Settings{Thickness: 2e-4, ThicknessRelErr: 0.025, Index: 3.5, IndexErr: 0.035}},
		{name: "temperature", smp: sheet.Sample{TemperatureK: f(77)},
			want: scan.Settings{Thickness: 2e-4, ThicknessRelErr: 0.025, Index: 3.6, IndexErr: 0.05, Temperature: 77}},
		{name: "negative temperature", smp: sheet.Sample{TemperatureK: f(-3)}, wantErr: true},
		{name: "index out of range", smp: sheet.Sample{Index: f(0.5)}, wantErr: true},
		{name: "error as large as the thickness", smp: sheet.Sample{ThicknessErr: &sheet.Uncertainty{Value: 2e-4}}, wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := ApplySample(Defaults{Settings: base, ThicknessErrAbsolute: tc.abs}, &tc.smp, "s.csv")
			if tc.wantErr {
				if err == nil {
					t.Fatal("no error")
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			// 1e-12 relative: unit conversions only.
			if !scalar.EqualWithinAbsOrRel(got.Thickness, tc.want.Thickness, 0, 1e-12) ||
				!scalar.EqualWithinAbsOrRel(got.ThicknessRelErr, tc.want.ThicknessRelErr, 0, 1e-12) ||
				got.Index != tc.want.Index || !scalar.EqualWithinAbsOrRel(got.IndexErr, tc.want.IndexErr, 0, 1e-12) ||
				got.Temperature != tc.want.Temperature {
				t.Errorf("got %+v, want %+v", got, tc.want)
			}
		})
	}
	noIndex := scan.Settings{Thickness: 2e-4}
	if _, err := ApplySample(Defaults{Settings: noIndex}, &sheet.Sample{IndexErr: &sheet.Uncertainty{Value: 0.05}}, "s.csv"); err == nil {
		t.Error("index_err without an index accepted")
	}
}

func TestNaturalLess(t *testing.T) {
	in := []string{"W10", "W2", "W01", "A", "W1b"}
	want := []string{"A", "W01", "W1b", "W2", "W10"}
	got := append([]string{}, in...)
	for i := range got {
		for j := i + 1; j < len(got); j++ {
			if NaturalLess(got[j], got[i]) {
				got[i], got[j] = got[j], got[i]
			}
		}
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got %v, want %v", got, want)
	}
}
