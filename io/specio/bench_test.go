package specio

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

// export2000 is an invented comma-separated export: a preamble, a header
// and 2000 data lines of %T against wavelength.
func export2000() []byte {
	var b bytes.Buffer
	b.WriteString("Instrument: DEMO-SPEC 1 (invented)\nSample,W07\nDate,2026-03-01\n\nWavelength (nm),%T\n")
	for i := range 2000 {
		nm := 700 + 0.15*float64(i)
		fmt.Fprintf(&b, "%.2f,%.3f\n", nm, 55/(1+math.Exp((870-nm)/3)))
	}
	return b.Bytes()
}

func BenchmarkRead2000Lines(b *testing.B) {
	data := export2000()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		s, err := NewReader(bytes.NewReader(data), "bench.csv").Read()
		if err != nil || s.Len() != 2000 {
			b.Fatalf("%v, %d points", err, s.Len())
		}
	}
}

func BenchmarkRead2000LinesTabDecimalComma(b *testing.B) {
	data := bytes.ReplaceAll(bytes.ReplaceAll(export2000(), []byte(","), []byte("\t")), []byte("."), []byte(","))
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		s, err := NewReader(bytes.NewReader(data), "bench.txt").Read()
		if err != nil || s.Len() != 2000 {
			b.Fatalf("%v", err)
		}
	}
}

// adversarial are large inputs built to find super-linear paths: each must
// be rejected (or read) in time proportional to its size.
var adversarial = []struct {
	name string
	in   func() string
	err  error // nil: must read
}{
	{"OneColumn1e6Lines", func() string { return strings.Repeat("1\n", 999_000) }, ErrNoData},
	{"Words1e6Lines", func() string { return strings.Repeat("a,b\n", 999_000) }, ErrNoData},
	{"Comments1e6Lines", func() string {
		return strings.Repeat("# a: b\n", 999_000) + "Wavelength (nm),%T\n500,50\n"
	}, nil},
	{"Commas20MB", func() string { return strings.Repeat(",", 20_000_000) }, ErrNoData},
	{"Quotes20MB", func() string { return strings.Repeat(`"`, 20_000_000) }, ErrNoData},
	{"WideHeader", func() string {
		return "Wavelength (nm) %T " + strings.Repeat("a ", 5_000_000) + "\n500 50\n600 60\n"
	}, ErrAmbiguous},
	{"WideDataRow", func() string {
		return "Wavelength (nm),%T\n500,50\n600,60" + strings.Repeat(",1", 5_000_000) + "\n"
	}, ErrTooLarge},
}

func TestReadAdversarial(t *testing.T) {
	if testing.Short() {
		t.Skip("large inputs")
	}
	for _, tc := range adversarial {
		t.Run(tc.name, func(t *testing.T) {
			// Long lines are allowed here, so that the paths behind the
			// line limit are exercised too.
			r := NewReader(strings.NewReader(tc.in()), "big.csv")
			r.MaxLineBytes = DefaultMaxBytes
			s, err := r.Read()
			if tc.err == nil {
				if err != nil {
					t.Fatal(err)
				}
				checkProperties(t, s)
				return
			}
			var pe *ParseError
			if !errors.Is(err, tc.err) || !errors.As(err, &pe) {
				t.Errorf("error %v, want %v", err, tc.err)
			}
		})
	}
}

func BenchmarkReadAdversarial(b *testing.B) {
	for _, tc := range adversarial {
		b.Run(tc.name, func(b *testing.B) {
			in := tc.in()
			b.SetBytes(int64(len(in)))
			b.ReportAllocs()
			for b.Loop() {
				r := NewReader(strings.NewReader(in), "big.csv")
				r.MaxLineBytes = DefaultMaxBytes
				r.Read()
			}
		})
	}
}
