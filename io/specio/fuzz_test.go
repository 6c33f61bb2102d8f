package specio

import (
	"bandedge/io/fuzzguard"
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// FuzzRead asserts the reader's contract on any input: Read returns a
// *ParseError, or a spectrum with at least one point, every value finite,
// E strictly ascending and E, Y, Lines (and R) of one length. Never a
// panic. cfg selects one of several valid option sets, so that the paths
// behind the options are fuzzed too.
// Every read returns within fzDeadline and allocates at most
// fzMaxAlloc(len(data)) bytes.
func FuzzRead(f *testing.F) {
	files, err := filepath.Glob(filepath.Join(sampleDir, "*"))
	if err != nil || len(files) == 0 {
		f.Fatalf("no seed files in %s: %v", sampleDir, err)
	}
	// The corrupted-file corpus (testdata/README.md, section corrupt).
	corrupt, err := filepath.Glob(filepath.Join(sampleDir, "..", "corrupt", "*.[ct][sx][vt]"))
	if err != nil || len(corrupt) < 20 {
		f.Fatalf("corrupt corpus: %d files, %v", len(corrupt), err)
	}
	files = append(files, corrupt...)
	for _, name := range files {
		b, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b, uint8(0))
	}
	for i, tc := range readTests {
		if tc.NotParse {
			continue
		}
		in := []byte(tc.Input)
		if tc.Raw != nil {
			in = tc.Raw
		}
		f.Add(in, uint8(i))
	}
	f.Fuzz(func(t *testing.T, data []byte, cfg uint8) {
		r := NewReader(bytes.NewReader(data), "fuzz.csv")
		if cfg&1 != 0 {
			r.XUnit = Nanometre
		}
		if cfg&2 != 0 {
			r.YKind = TransmittancePercent
		}
		switch cfg >> 2 & 3 {
		case 1:
			r.XColumn, r.YColumn = "1", "2"
		case 2:
			r.YKind = Absorbance
			r.Comment = ';'
		case 3:
			r.MaxLines, r.MaxPoints = 50, 20
		}
		var s *Spectrum
		var err error
		fuzzguard.Bound(t, fzDeadline, fzMaxAlloc(len(data)), "Read", func() { s, err = r.Read() })
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error is not a *ParseError: %v", err)
			}
			if s != nil {
				t.Fatalf("spectrum and error together: %v", err)
			}
			if pe.Err == nil || pe.Line < 0 || pe.Column < 0 {
				t.Fatalf("bad ParseError %#v", pe)
			}
			return
		}
		checkProperties(t, s)
	})
}

// Bounds of one reader fuzz input: a read is linear in the input (a few
// milliseconds for the largest the fuzzer makes), so a second means a loop
// that does not end; the allocation limit is generous against the input's
// size (the text, its lines and cells, the points).
const fzDeadline = 10 * time.Second

func fzMaxAlloc(n int) uint64 { return 64<<20 + 512*uint64(n) }
