package jcampdx

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

// FuzzRead asserts the reader's contract on any input: Read returns a
// *specio.ParseError (found with errors.As, wrapping a sentinel, with
// non-negative position), or a spectrum with at least one point, every E and
// Y finite, E strictly ascending, E, Y and Lines of one length and every
// line inside the input. Never a panic, never a hang: loops are bounded by
// the input and by NPOINTS ≤ MaxPoints. cfg picks one of several valid
// option sets. Seeds: the example files, the TestRead inputs and the corpus
// in testdata/fuzz/FuzzRead.
// Every read returns within fzDeadline and allocates at most
// fzMaxAlloc(len(data)) bytes.
func FuzzRead(f *testing.F) {
	files, err := filepath.Glob(filepath.Join(sampleDir, "*.jdx"))
	if err != nil || len(files) == 0 {
		f.Fatalf("no seed files in %s: %v", sampleDir, err)
	}
	// The corrupted-file corpus (testdata/README.md, section corrupt).
	corrupt, _ := filepath.Glob(filepath.Join(sampleDir, "..", "corrupt", "*.jdx"))
	files = append(files, corrupt...)
	for _, name := range files {
		b, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b, uint8(0))
	}
	for i, tc := range readTests {
		f.Add([]byte(tc.Input), uint8(i))
	}
	f.Fuzz(func(t *testing.T, data []byte, cfg uint8) {
		r := NewReader(bytes.NewReader(data), "fuzz.jdx")
		switch cfg % 4 {
		case 1:
			r.YKind = specio.Absorbance
		case 2:
			r.XUnit, r.YKind = specio.Nanometre, specio.TransmittancePercent
		case 3:
			r.MaxPoints, r.MaxBytes = 64, 4096
		}
		var s *specio.Spectrum
		var err error
		fuzzguard.Bound(t, fzDeadline, fzMaxAlloc(len(data)), "Read", func() { s, err = r.Read() })
		if err != nil {
			var pe *specio.ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error is not a *specio.ParseError: %v", err)
			}
			if s != nil || pe.Err == nil || pe.Line < 0 || pe.Column < 0 || pe.File != "fuzz.jdx" {
				t.Fatalf("bad error %#v (spectrum %v)", pe, s != nil)
			}
			return
		}
		lines := bytes.Count(data, []byte("\n")) + 1
		if n := bytes.Count(data, []byte("\r")) + 1; n > lines {
			lines = n // bare CR line endings
		}
		if s.Len() < 1 || len(s.Y) != s.Len() || len(s.Lines) != s.Len() || s.R != nil {
			t.Fatalf("lengths E %d, Y %d, Lines %d", len(s.E), len(s.Y), len(s.Lines))
		}
		for i := range s.E {
			if math.IsNaN(s.E[i]) || math.IsInf(s.E[i], 0) || math.IsNaN(s.Y[i]) || math.IsInf(s.Y[i], 0) || !(s.E[i] > 0) {
				t.Fatalf("point %d: E %g, Y %g", i, s.E[i], s.Y[i])
			}
			if i > 0 && !(s.E[i] > s.E[i-1]) {
				t.Fatalf("E not strictly ascending at %d: %g, %g", i, s.E[i-1], s.E[i])
			}
			if s.Lines[i] < 1 || s.Lines[i] > lines {
				t.Fatalf("point %d at line %d of %d", i, s.Lines[i], lines)
			}
		}
		switch s.Kind {
		case specio.Transmittance, specio.Absorbance, specio.Alpha:
		default:
			t.Fatalf("Kind %v", s.Kind)
		}
	})
}

// Bounds of one reader fuzz input: a read is linear in the input (a few
// milliseconds for the largest the fuzzer makes), so a second means a loop
// that does not end; the allocation limit is generous against the input's
// size (the text, its lines and cells, the points).
const fzDeadline = 10 * time.Second

func fzMaxAlloc(n int) uint64 { return 64<<20 + 512*uint64(n) }
