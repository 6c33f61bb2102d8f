package jcampdx

import (
	"errors"
	"strings"
	"testing"

	"bandedge/io/specio"
)

// TestReadImplausible: as in io/specio, values that contradict their
// units stop the reader with a positioned error: an ##XUNITS= that puts a
// photon energy outside 0.005–25 eV (µm values labelled nanometres), and
// absorbance negative at every point or with a median above 10 (%T
// labelled absorbance). The line is that of the offending point.
func TestReadImplausible(t *testing.T) {
	for _, tc := range []struct {
		name, xunits, yunits, table string
		err                         error
		line                        int
	}{
		{name: "um as nm", xunits: "NANOMETERS", yunits: "ABSORBANCE", table: "0.85, 0.5; 0.90, 0.4\n0.95 0.3\n", err: specio.ErrUnit, line: 7},
		{name: "negative absorbance", xunits: "NANOMETERS", yunits: "ABSORBANCE", table: "850, -0.5; 900, -0.4\n950 -0.3\n", err: specio.ErrRange, line: 8},
		{name: "percent T as absorbance", xunits: "NANOMETERS", yunits: "ABSORBANCE", table: "850, 20; 900, 40\n950 60\n", err: specio.ErrRange, line: 8},
		{name: "plausible", xunits: "NANOMETERS", yunits: "ABSORBANCE", table: "850, 2.5; 900, 0.4\n950 -0.01\n"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			in := header(tc.xunits, tc.yunits) + "##XYPOINTS=(XY..XY)\n" + tc.table + "##END=\n"
			s, err := NewReader(strings.NewReader(in), "p.jdx").Read()
			if tc.err == nil {
				if err != nil || s.Len() != 3 {
					t.Fatalf("%v", err)
				}
				return
			}
			var pe *specio.ParseError
			if !errors.Is(err, tc.err) || !errors.As(err, &pe) || pe.Line != tc.line || !strings.HasPrefix(err.Error(), "p.jdx:") {
				t.Fatalf("error %v, want %v at line %d", err, tc.err, tc.line)
			}
		})
	}
}
