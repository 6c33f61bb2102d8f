package quantity

import (
	"errors"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestParseLength(t *testing.T) {
	tests := []struct {
		in      string
		want    float64 // cm; exact SI prefixes (BIPM SI Brochure, 9th ed., 2019)
		wantErr bool
	}{
		{in: "1.2um", want: 1.2e-4},
		{in: "350 µm", want: 350e-4},
		{in: "350μm", want: 350e-4},
		{in: "500nm", want: 500e-7},
		{in: "0.5mm", want: 0.05},
		{in: "0.035cm", want: 0.035},
		{in: "1.2", wantErr: true},
		{in: "0um", wantErr: true},
		{in: "-1um", wantErr: true},
		{in: "NaNum", wantErr: true},
		{in: "Infum", wantErr: true},
		{in: "um", wantErr: true},
		{in: "", wantErr: true},
		{in: "1.2 furlong", wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.in, func(t *testing.T) {
			got, err := ParseLength(tc.in)
			if tc.wantErr {
				if !errors.Is(err, ErrValue) {
					t.Fatalf("ParseLength(%q) err = %v, want ErrValue", tc.in, err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if !scalar.EqualWithinAbsOrRel(got, tc.want, 0, 1e-15) {
				t.Errorf("ParseLength(%q) = %g cm, want %g", tc.in, got, tc.want)
			}
		})
	}
}

func TestParseLengthErr(t *testing.T) {
	if got, err := ParseLengthErr("2%", 1e-4); err != nil || !scalar.EqualWithinAbsOrRel(got, 0.02, 0, 1e-15) {
		t.Errorf("2%% -> %g, %v; want 0.02", got, err)
	}
	if got, err := ParseLengthErr("0.05um", 1e-4); err != nil || !scalar.EqualWithinAbsOrRel(got, 0.05, 0, 1e-12) {
		t.Errorf("0.05um of 1um -> %g, %v; want 0.05", got, err)
	}
	for _, bad := range []string{"-2%", "x%", "0.05", "0.05um"} {
		nominal := 1e-4
		if bad == "0.05um" {
			nominal = 0
		}
		if _, err := ParseLengthErr(bad, nominal); !errors.Is(err, ErrValue) {
			t.Errorf("ParseLengthErr(%q) err = %v, want ErrValue", bad, err)
		}
	}
}

func TestParseWindow(t *testing.T) {
	w, err := ParseWindow("1.35:1.65")
	if err != nil || w != [2]float64{1.35, 1.65} {
		t.Errorf("got %v, %v", w, err)
	}
	for _, bad := range []string{"1.65:1.35", "1.35", ":", "a:b", "0:1", "1:Inf", "-1:1"} {
		if _, err := ParseWindow(bad); !errors.Is(err, ErrValue) {
			t.Errorf("ParseWindow(%q) err = %v, want ErrValue", bad, err)
		}
	}
}

func TestParseNoise(t *testing.T) {
	for in, want := range map[string]float64{"0.002": 0.002, "0.2%": 0.002, " 1 % ": 0.01} {
		got, err := ParseNoise(in)
		if err != nil || !scalar.EqualWithinAbsOrRel(got, want, 0, 1e-15) {
			t.Errorf("ParseNoise(%q) = %g, %v; want %g", in, got, err, want)
		}
	}
	for _, bad := range []string{"0", "-0.1", "1", "150%", "x", ""} {
		if _, err := ParseNoise(bad); !errors.Is(err, ErrValue) {
			t.Errorf("ParseNoise(%q) err = %v, want ErrValue", bad, err)
		}
	}
}

// FuzzParseLength: never a panic; a value is either an error wrapping
// ErrValue or a positive finite length.
func FuzzParseLength(f *testing.F) {
	for _, s := range []string{"1.2um", "350 µm", "1e400nm", "0x1p3mm", "-0cm", "%"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := ParseLength(s)
		if err != nil {
			if !errors.Is(err, ErrValue) {
				t.Fatalf("error %v does not wrap ErrValue", err)
			}
			return
		}
		if !(v > 0) || v > 1e308 {
			t.Fatalf("ParseLength(%q) = %g", s, v)
		}
		if _, err := ParseLengthErr(s, v); err != nil && !errors.Is(err, ErrValue) {
			t.Fatal(err)
		}
		_, _ = ParseWindow(s)
		_, _ = ParseNoise(s)
	})
}

func TestTemperatureFromName(t *testing.T) {
	tests := []struct {
		name string
		want float64
		ok   bool
	}{
		{"GaAs_300K.csv", 300, true},
		{"dir/77K/W07-T295.5K.txt", 295.5, true},
		{"scan 10 K.csv", 10, true},
		{"run_4,2K.csv", 4.2, true},
		{"KM2611-W03-centre.csv", 0, false},
		{"W12Kelvin.csv", 0, false},
		{"x_0K.csv", 0, false},
	}
	for _, tc := range tests {
		got, ok := TemperatureFromName(tc.name)
		if ok != tc.ok || got != tc.want {
			t.Errorf("TemperatureFromName(%q) = %v, %v; want %v, %v", tc.name, got, ok, tc.want, tc.ok)
		}
	}
}
