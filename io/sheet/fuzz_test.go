package sheet

import (
	"bandedge/io/fuzzguard"
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"bandedge/io/specio"
)

func addFiles(f *testing.F, pattern string) {
	files, err := filepath.Glob(filepath.Join(sampleDir, pattern))
	if err != nil || len(files) == 0 {
		f.Fatalf("no seed files %s in %s: %v", pattern, sampleDir, err)
	}
	for _, name := range files {
		b, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
}

// checkErr asserts the error half of the contract: a *specio.ParseError
// with a sentinel, the file name and non-negative position.
func checkErr(t *testing.T, err error, file string) {
	t.Helper()
	var pe *specio.ParseError
	if !errors.As(err, &pe) {
		t.Fatalf("error is not a *specio.ParseError: %v", err)
	}
	if pe.Err == nil || pe.File != file || pe.Line < 0 || pe.Column < 0 || pe.Detail == "" {
		t.Fatalf("bad error %#v", pe)
	}
}

// FuzzReadSamples: ReadSamples returns a positioned error, or a sheet with
// at least one row, every row with a file name, a line inside the input,
// distinct base names that Lookup finds again, positive finite thickness
// and index, non-negative finite uncertainties, temperatures above 0 K,
// finite positions, and one Extra cell per extra column. Never a panic;
// a return within fzDeadline and fzMaxAlloc(len(data)).
func FuzzReadSamples(f *testing.F) {
	addFiles(f, "*.csv")
	f.Fuzz(func(t *testing.T, data []byte) {
		var s *Samples
		var err error
		fuzzguard.Bound(t, fzDeadline, fzMaxAlloc(len(data)), "ReadSamples", func() { s, err = ReadSamples(bytes.NewReader(data), "fuzz.csv") })
		if err != nil {
			if s != nil {
				t.Fatal("sheet and error together")
			}
			checkErr(t, err, "fuzz.csv")
			return
		}
		if len(s.Rows) == 0 {
			t.Fatal("no rows and no error")
		}
		lines := bytes.Count(data, []byte("\n")) + 1
		fin := func(p *float64, positive bool) bool {
			return p == nil || !math.IsNaN(*p) && !math.IsInf(*p, 0) && (!positive || *p > 0)
		}
		finU := func(u *Uncertainty) bool {
			return u == nil || !math.IsNaN(u.Value) && !math.IsInf(u.Value, 0) && u.Value >= 0
		}
		for i, r := range s.Rows {
			if r.File == "" || r.Line < 1 || r.Line > lines || len(r.Extra) != len(s.ExtraColumns) {
				t.Fatalf("row %d: %+v", i, r)
			}
			if !fin(r.ThicknessCM, true) || !fin(r.Index, true) || !fin(r.TemperatureK, true) || !fin(r.XMM, false) ||
				!fin(r.YMM, false) || !finU(r.ThicknessErr) || !finU(r.IndexErr) {
				t.Fatalf("row %d: bad value %+v", i, r)
			}
			got, ok := s.Lookup(r.File)
			if !ok || got.Line != r.Line {
				t.Fatalf("row %d (%q) not found again by Lookup", i, r.File)
			}
		}
	})
}

// FuzzReadSpec: ReadSpec returns a positioned error, or a spec with a
// known guard, at least one limit, every limit on a known quantity, once,
// with Lo ≤ Hi, no NaN bound, at least one finite bound, and a line inside
// the input; Judge passes each finite bound with U = 0 (closed limits) and
// gives a verdict for any value. Never a panic; a return within
// fzDeadline and fzMaxAlloc(len(data)).
func FuzzReadSpec(f *testing.F) {
	addFiles(f, "*.spec")
	f.Add([]byte(fullSpec))
	f.Fuzz(func(t *testing.T, data []byte) {
		var sp *Spec
		var err error
		fuzzguard.Bound(t, fzDeadline, fzMaxAlloc(len(data)), "ReadSpec", func() { sp, err = ReadSpec(bytes.NewReader(data), "fuzz.spec") })
		if err != nil {
			if sp != nil {
				t.Fatal("spec and error together")
			}
			checkErr(t, err, "fuzz.spec")
			return
		}
		if sp.Guard < GuardExpanded || sp.Guard > GuardNone || len(sp.Limits) == 0 {
			t.Fatalf("guard %v, %d limits", sp.Guard, len(sp.Limits))
		}
		lines := bytes.Count(data, []byte("\n")) + 1
		seen := map[string]bool{}
		for _, l := range sp.Limits {
			if !KnownQuantity(l.Quantity) || seen[l.Quantity] || !(l.Lo <= l.Hi) || l.Line < 1 || l.Line > lines ||
				(math.IsInf(l.Lo, 0) && math.IsInf(l.Hi, 0)) {
				t.Fatalf("bad limit %+v", l)
			}
			seen[l.Quantity] = true
			// Closed limits: a bound itself conforms, with U = 0.
			for _, v := range []float64{l.Lo, l.Hi} {
				if !math.IsInf(v, 0) && sp.Judge(l.Quantity, v, 0) != Pass {
					t.Fatalf("Judge(%s, %g, 0) = %v on a closed limit %v", l.Quantity, v, sp.Judge(l.Quantity, v, 0), l)
				}
			}
			switch sp.Judge(l.Quantity, 0, 1) {
			case Pass, Fail, Indeterminate:
			default:
				t.Fatalf("Judge(%s, 0, 1) gave no verdict", l.Quantity)
			}
		}
	})
}

// Bounds of one reader fuzz input: a read is linear in the input (a few
// milliseconds for the largest the fuzzer makes), so a second means a loop
// that does not end; the allocation limit is generous against the input's
// size (the text, its lines and cells, the points).
const fzDeadline = 10 * time.Second

func fzMaxAlloc(n int) uint64 { return 64<<20 + 512*uint64(n) }
