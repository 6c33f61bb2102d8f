package model

import (
	"errors"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// TestNew checks the constructor's names, the combinations it refuses and
// the parameter-naming convention the analysis code relies on ("eg" and
// "amp" everywhere; "eu", "gw", "theta", "eph", "rx").
func TestNew(t *testing.T) {
	cfg := Config{Temperature: 295}
	tests := []struct {
		band, tail string
		cfg        Config
		wantName   string
		wantParams []string
		wantErr    error
	}{
		{"direct", "none", cfg, "direct", []string{"eg", "amp"}, nil},
		{"direct", "urbach", cfg, "direct+urbach", []string{"eg", "amp", "eu"}, nil},
		{"Direct ", "URBACH", cfg, "direct+urbach", []string{"eg", "amp", "eu"}, nil},
		{"direct", "gauss", cfg, "direct+gauss", []string{"eg", "amp", "gw"}, nil},
		{"direct", "theta", cfg, "direct+theta", []string{"eg", "amp", "gw", "theta"}, nil},
		{"direct", "joined", cfg, "direct+joined", []string{"eg", "amp", "eu"}, nil},
		{"direct-forbidden", "none", cfg, "direct-forbidden", []string{"eg", "amp"}, nil},
		{"indirect", "none", cfg, "indirect", []string{"eg", "amp", "eph"}, nil},
		{"indirect", "gauss", cfg, "indirect+gauss", []string{"eg", "amp", "gw", "eph"}, nil},
		{"indirect", "theta", cfg, "indirect+theta", []string{"eg", "amp", "gw", "theta", "eph"}, nil},
		{"exciton", "urbach", cfg, "exciton+urbach", []string{"eg", "amp", "eu", "rx"}, nil},
		{"exciton", "gauss", Config{}, "exciton+gauss", []string{"eg", "amp", "gw", "rx"}, nil},
		{"exciton", "none", cfg, "", nil, ErrCombination},
		{"exciton", "joined", cfg, "", nil, ErrCombination},
		{"exciton", "theta", cfg, "", nil, ErrCombination},
		{"indirect", "urbach", Config{}, "", nil, ErrTemperature},
		{"indirect", "urbach", Config{Temperature: -3}, "", nil, ErrTemperature},
		{"indirect", "urbach", Config{Temperature: math.Inf(1)}, "", nil, ErrTemperature},
		{"indirect", "urbach", Config{Temperature: math.NaN()}, "", nil, ErrTemperature},
		{"forbidden", "none", cfg, "", nil, ErrUnknownModel},
		{"direct", "lorentz", cfg, "", nil, ErrUnknownModel},
	}
	for _, tc := range tests {
		t.Run(tc.band+"+"+tc.tail, func(t *testing.T) {
			m, err := New(tc.band, tc.tail, tc.cfg)
			if !errors.Is(err, tc.wantErr) {
				t.Fatalf("error %v, want %v", err, tc.wantErr)
			}
			if err != nil {
				return
			}
			if m.Name() != tc.wantName {
				t.Errorf("Name = %q, want %q", m.Name(), tc.wantName)
			}
			var names []string
			for _, p := range m.Params() {
				names = append(names, p.Name)
				if !(p.Min < p.Max) {
					t.Errorf("param %s: bounds [%v, %v]", p.Name, p.Min, p.Max)
				}
			}
			if !slices.Equal(names, tc.wantParams) {
				t.Errorf("params %v, want %v", names, tc.wantParams)
			}
			if _, ok := m.(Jacobianer); !ok {
				t.Error("no Jacobian")
			}
			if _, ok := m.(Tauc); !ok {
				t.Error("no Tauc exponent")
			}
			_, tailed := m.(Tailed)
			if want := tc.tail != "none"; tailed != want {
				t.Errorf("Tailed = %v, want %v", tailed, want)
			}
			// Lookup of the name gives the same model (indirect needs a
			// temperature: LookupConfig)
			l, err := LookupConfig(tc.wantName, tc.cfg)
			if err != nil || l.Name() != m.Name() || l != m {
				t.Errorf("LookupConfig(%q) = %v, %v; want %v", tc.wantName, l, err, m)
			}
		})
	}
	// the existing names keep their types
	if m, _ := Lookup("direct"); m != (Direct{}) {
		t.Errorf("Lookup(direct) = %#v", m)
	}
	if m, _ := Lookup("direct+urbach"); m != (DirectUrbach{}) {
		t.Errorf("Lookup(direct+urbach) = %#v", m)
	}
	if _, err := Lookup("indirect+urbach"); !errors.Is(err, ErrTemperature) {
		t.Errorf("Lookup(indirect+urbach) error %v, want ErrTemperature", err)
	}
}

// TestNames checks the help lists: every name in Names looks up (with a
// temperature), and the lists hold the documented entries.
func TestNames(t *testing.T) {
	if got, want := Bands(), []string{"direct", "direct-forbidden", "indirect", "exciton"}; !slices.Equal(got, want) {
		t.Errorf("Bands = %v, want %v", got, want)
	}
	if got, want := Tails(), []string{"none", "urbach", "gauss", "theta", "joined"}; !slices.Equal(got, want) {
		t.Errorf("Tails = %v, want %v", got, want)
	}
	names := Names()
	if len(names) != 17 || !slices.IsSorted(names) { // 4×5 − 3 exciton combinations
		t.Errorf("Names = %v (%d), want 17 sorted", names, len(names))
	}
	for _, n := range names {
		if _, err := LookupConfig(n, Config{Temperature: 300}); err != nil {
			t.Errorf("LookupConfig(%q): %v", n, err)
		}
	}
}

func TestParseName(t *testing.T) {
	tests := []struct {
		name                 string
		band, tail, baseline string
		wantErr              error
	}{
		{"direct", "direct", "none", "", nil},
		{"direct+urbach", "direct", "urbach", "", nil},
		{"direct-forbidden+gauss+linear", "direct-forbidden", "gauss", "linear", nil},
		{"indirect+const", "indirect", "none", "const", nil},
		{" Exciton+Gauss ", "exciton", "gauss", "", nil},
		{"direct+const+urbach", "", "", "", ErrUnknownModel},
		{"direct+urbach+gauss", "", "", "", ErrUnknownModel},
		{"direct+urbach+linear+const", "", "", "", ErrUnknownModel},
		{"", "", "", "", ErrUnknownModel},
		{"kane", "", "", "", ErrUnknownModel},
	}
	for _, tc := range tests {
		b, tl, bl, err := ParseName(tc.name)
		if !errors.Is(err, tc.wantErr) || b != tc.band || tl != tc.tail || bl != tc.baseline {
			t.Errorf("ParseName(%q) = %q, %q, %q, %v; want %q, %q, %q, %v", tc.name, b, tl, bl, err, tc.band, tc.tail, tc.baseline, tc.wantErr)
		}
	}
}

// TestBaseline checks WithBaseline: names, parameters, values (α_m + b₀ +
// b₁(E − E_g), Makuła, Pacia & Macyk 2018) and the Jacobian against
// fd.Central, for tailed and untailed models.
func TestBaseline(t *testing.T) {
	for _, tc := range []struct {
		name string
		p    []float64
	}{
		{"direct+const", []float64{1.5, 2e4, 150}},
		{"direct+urbach+linear", []float64{1.5, 2e4, 0.02, 150, -300}},
		{"indirect+gauss+linear", []float64{1.1, 1e3, 0.01, 0.03, 80, 40}},
		{"exciton+gauss+const", []float64{1.5, 2e4, 0.03, 0.005, -20}},
	} {
		m, err := LookupConfig(tc.name, Config{Temperature: 300})
		if err != nil {
			t.Fatal(err)
		}
		if m.Name() != tc.name {
			t.Errorf("Name = %q, want %q", m.Name(), tc.name)
		}
		_, _, kind, _ := ParseName(tc.name)
		nb := 1
		if kind == "linear" {
			nb = 2
		}
		ps := m.Params()
		n := len(ps) - nb
		if ps[n].Name != "b0" || (nb == 2 && ps[n+1].Name != "b1") {
			t.Errorf("%s: params %v", tc.name, ps)
		}
		inner, _ := LookupConfig(tc.name[:len(tc.name)-len(kind)-1], Config{Temperature: 300})
		e := []float64{0.9, 1.2, 1.5, 2.0}
		a, b := make([]float64, len(e)), make([]float64, len(e))
		m.Eval(a, e, tc.p)
		inner.Eval(b, e, tc.p[:n])
		for i := range e {
			want := b[i] + tc.p[n]
			if nb == 2 {
				want += tc.p[n+1] * (e[i] - tc.p[0])
			}
			if !scalar.EqualWithinAbsOrRel(a[i], want, 1e-12, 1e-14) {
				t.Errorf("%s: α(%v) = %.15g, want %.15g", tc.name, e[i], a[i], want)
			}
		}
		// (≥ 10 meV from the gap: the bare direct edge has a √ kink there,
		// see TestDirectJacobian)
		var grid []float64
		for x := 0.9; x < 2.2; x += 0.0131 {
			if math.Abs(x-tc.p[0]) > 0.01 {
				grid = append(grid, x)
			}
		}
		checkJacobian(t, jacobianCase{name: tc.name, m: m.(interface {
			Model
			Jacobianer
		}), p: tc.p, e: grid})
		// Start zeroes the baseline and keeps eg, amp
		q := append([]float64(nil), tc.p...)
		m.(Starter).Start(q)
		if q[0] != tc.p[0] || q[1] != tc.p[1] || q[n] != 0 || (nb == 2 && q[n+1] != 0) {
			t.Errorf("%s: Start gave %v", tc.name, q)
		}
		if _, ok := m.(Tailed); ok != (tc.name != "direct+const") {
			t.Errorf("%s: Tailed = %v", tc.name, ok)
		}
	}
	if _, err := WithBaseline(Direct{}, "quadratic"); !errors.Is(err, ErrBaseline) {
		t.Errorf("unknown kind: error %v", err)
	}
	m, _ := WithBaseline(Direct{}, "const")
	if _, err := WithBaseline(m, "const"); !errors.Is(err, ErrBaseline) {
		t.Errorf("double baseline: error %v", err)
	}
	if _, err := WithBaseline(foreignModel{}, "const"); !errors.Is(err, ErrBaseline) {
		t.Errorf("foreign model: error %v", err)
	}
}

// foreignModel is a Model from outside the family (no Jacobian).
type foreignModel struct{}

func (foreignModel) Name() string             { return "other" }
func (foreignModel) Params() []Param          { return []Param{egParam()} }
func (foreignModel) Eval(dst, e, p []float64) {}

// TestOptionalInterfaces checks Tailed, Starter and Tauc on the family.
func TestOptionalInterfaces(t *testing.T) {
	cfg := Config{Temperature: 300}
	for _, tc := range []struct {
		name      string
		p         []float64
		wantWidth float64 // NaN: not Tailed
		wantTauc  float64
		wantStart map[string]float64
	}{
		{"direct", []float64{1.5, 1}, math.NaN(), 0.5, nil},
		{"direct+urbach", []float64{1.5, 1, 0.02}, 0.02, 0.5, nil},
		{"direct+gauss", []float64{1.5, 1, 0.02}, 0.01, 0.5, map[string]float64{"gw": 0.02}},
		{"direct+theta", []float64{1.5, 1, 0.03, 1.5}, 0.02, 0.5, map[string]float64{"gw": 0.02, "theta": 1.5}},
		{"direct+joined", []float64{1.5, 1, 0.02}, 0.02, 0.5, nil},
		{"direct-forbidden", []float64{1.5, 1}, math.NaN(), 1.5, nil},
		{"indirect+urbach", []float64{1.1, 1, 0.01, 0.03}, 0.01, 2, map[string]float64{"eph": 0.03}},
		{"exciton+gauss", []float64{1.5, 1, 0.01, 0.005}, 0.005, 0.5, map[string]float64{"gw": 0.02, "rx": 0.005}},
	} {
		m, err := LookupConfig(tc.name, cfg)
		if err != nil {
			t.Fatal(err)
		}
		if tw, ok := m.(Tailed); ok != !math.IsNaN(tc.wantWidth) || (ok && tw.TailWidth(tc.p) != tc.wantWidth) {
			t.Errorf("%s: Tailed %v, want width %v", tc.name, ok, tc.wantWidth)
		}
		if r := m.(Tauc).TaucExponent(); r != tc.wantTauc {
			t.Errorf("%s: Tauc exponent %v, want %v", tc.name, r, tc.wantTauc)
		}
		// every model but Direct and DirectUrbach is a Starter; one without
		// extra parameters leaves p unchanged
		s, ok := m.(Starter)
		if ok != (tc.name != "direct" && tc.name != "direct+urbach") {
			t.Errorf("%s: Starter %v", tc.name, ok)
		}
		if ok {
			q := make([]float64, len(tc.p))
			for i := range q {
				q[i] = -1
			}
			s.Start(q)
			for i, p := range m.Params() {
				want, set := tc.wantStart[p.Name]
				if !set {
					want = -1
				}
				if q[i] != want {
					t.Errorf("%s: Start set %s = %v, want %v", tc.name, p.Name, q[i], want)
				}
			}
		}
	}
}

// TestFamilyPanics checks the documented programmer-error panics.
func TestFamilyPanics(t *testing.T) {
	m := mustNew(t, "indirect", "gauss", Config{Temperature: 300})
	b, _ := WithBaseline(m, "linear")
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"Eval p length", func() { m.Eval(make([]float64, 2), make([]float64, 2), []float64{1, 1, 1}) }},
		{"Eval dst length", func() { m.Eval(make([]float64, 1), make([]float64, 2), []float64{1, 1, 0.01, 0.03}) }},
		{"Jacobian dims", func() {
			m.(Jacobianer).Jacobian(mat.NewDense(2, 3, nil), make([]float64, 2), []float64{1, 1, 0.01, 0.03})
		}},
		{"Start length", func() { m.(Starter).Start(make([]float64, 3)) }},
		{"TailWidth length", func() { m.(Tailed).TailWidth(make([]float64, 3)) }},
		{"baseline Eval", func() { b.Eval(make([]float64, 2), make([]float64, 2), []float64{1, 1, 0.01, 0.03}) }},
		{"baseline Start", func() { b.(Starter).Start(make([]float64, 4)) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				r := recover()
				s, ok := r.(string)
				if !ok || len(s) < 6 || s[:6] != "model:" {
					t.Errorf("recovered %v, want a panic prefixed \"model:\"", r)
				}
			}()
			tc.f()
		})
	}
}

// TestConcurrentEval evaluates every model from several goroutines at once
// (the tables are shared, read-only after their sync.Once build; all
// per-call state lives on each caller's stack) and checks that each gets
// the same values as a sequential evaluation. Meaningful under -race.
func TestConcurrentEval(t *testing.T) {
	names := Names()
	if testing.Short() {
		names = []string{"direct+urbach", "direct+gauss", "indirect+urbach", "exciton+urbach"}
	}
	e := benchEnergies()
	want := map[string][]float64{}
	for _, n := range names {
		m, _ := LookupConfig(n, Config{Temperature: 300})
		a := make([]float64, len(e))
		m.Eval(a, e, benchParams(m))
		want[n] = a
	}
	done := make(chan error)
	for w := 0; w < 4; w++ {
		go func() {
			var err error
			for _, n := range names {
				m, _ := LookupConfig(n, Config{Temperature: 300})
				p := benchParams(m)
				a := make([]float64, len(e))
				m.Eval(a, e, p)
				jac := mat.NewDense(len(e), len(p), nil)
				m.(Jacobianer).Jacobian(jac, e, p)
				if !slices.Equal(a, want[n]) && err == nil {
					err = errors.New(n + ": concurrent Eval differs")
				}
			}
			done <- err
		}()
	}
	for w := 0; w < 4; w++ {
		if err := <-done; err != nil {
			t.Error(err)
		}
	}
}
