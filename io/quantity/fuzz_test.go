package quantity

import (
	"encoding/csv"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzQuantity fuzzes every unit-bearing value of the command line and the
// sample sheet, each with its property:
//
//   - ParseLength: an error wrapping ErrValue, or a finite length > 0 cm;
//   - ParseLengthErr (against a nominal of 1 cm and of the parsed length):
//     an error wrapping ErrValue, or a finite relative uncertainty ≥ 0;
//   - ParseWindow: an error wrapping ErrValue, or finite 0 < LO < HI;
//   - ParseNoise: an error wrapping ErrValue, or a fraction in (0, 1);
//   - TemperatureFromName: no temperature, or one in (0, 5000] K.
//
// Never a panic. Seeds: the flag values of the README's examples and every
// cell of the sample sheets in testdata/sheet and testdata/batch.
func FuzzQuantity(f *testing.F) {
	for _, s := range []string{"1.2um", "350 µm", "0.05um", "2%", "1.35:1.65", "0.2%", "0.002", "100mm", "150mm",
		"GaAs_300K.csv", "scan 295.5 K.txt", "run_4,2K.csv", "1e400nm", "-0cm", ":", "%", " 1 % "} {
		f.Add(s)
	}
	for _, p := range []string{filepath.Join("sheet", "*.csv"), filepath.Join("batch", "*.csv")} {
		files, err := filepath.Glob(filepath.Join("..", "..", "testdata", p))
		if err != nil || len(files) == 0 {
			f.Fatalf("no sheets %s: %v", p, err)
		}
		for _, name := range files {
			b, err := os.ReadFile(name)
			if err != nil {
				f.Fatal(err)
			}
			r := csv.NewReader(strings.NewReader(string(b)))
			r.Comment, r.FieldsPerRecord, r.LazyQuotes = '#', -1, true
			if strings.Contains(string(b), ";") {
				r.Comma = ';'
			}
			recs, _ := r.ReadAll()
			for _, rec := range recs {
				for _, c := range rec {
					f.Add(c)
				}
			}
		}
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	value := func(t *testing.T, what, s string, err error) bool {
		t.Helper()
		if err != nil && !errors.Is(err, ErrValue) {
			t.Fatalf("%s(%q): error %v does not wrap ErrValue", what, s, err)
		}
		return err == nil
	}
	f.Fuzz(func(t *testing.T, s string) {
		d, err := ParseLength(s)
		if value(t, "ParseLength", s, err) && (!finite(d) || !(d > 0)) {
			t.Fatalf("ParseLength(%q) = %v", s, d)
		}
		nominals := []float64{1}
		if err == nil {
			nominals = append(nominals, d)
		}
		for _, n := range nominals {
			u, err := ParseLengthErr(s, n)
			if value(t, "ParseLengthErr", s, err) && (!finite(u) || u < 0) {
				t.Fatalf("ParseLengthErr(%q, %v) = %v", s, n, u)
			}
		}
		w, err := ParseWindow(s)
		if value(t, "ParseWindow", s, err) && (!finite(w[0]) || !finite(w[1]) || !(w[0] > 0 && w[1] > w[0])) {
			t.Fatalf("ParseWindow(%q) = %v", s, w)
		}
		nz, err := ParseNoise(s)
		if value(t, "ParseNoise", s, err) && !(nz > 0 && nz < 1) {
			t.Fatalf("ParseNoise(%q) = %v", s, nz)
		}
		if k, ok := TemperatureFromName(s); ok && !(k > 0 && k <= 5000) {
			t.Fatalf("TemperatureFromName(%q) = %v", s, k)
		}
	})
}
