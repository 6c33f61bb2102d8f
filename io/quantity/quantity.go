// Package quantity parses the unit-bearing values given on the command
// line: lengths such as "1.2um", energy windows such as "1.35:1.65" and
// noise levels such as "0.2%", and temperatures written in file names. Every error names the value and says what
// was expected; nothing here panics on any input.
package quantity

import (
	"errors"
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
)

// ErrValue is wrapped by every parse error.
var ErrValue = errors.New("bad value")

// maxLen bounds the text of one value, so absurd input fails fast.
const maxLen = 64

// lengthUnits maps a unit suffix to centimetres.
var lengthUnits = []struct {
	suffix string
	cm     float64
}{
	{"nm", 1e-7},
	{"um", 1e-4},
	{"µm", 1e-4},
	{"μm", 1e-4}, // Greek mu, as some keyboards type it
	{"mm", 1e-1},
	{"cm", 1},
}

// ParseLength parses a positive length with a unit suffix nm, um (µm), mm
// or cm, e.g. "1.2um" or "350 µm", and returns it in centimetres.
func ParseLength(s string) (float64, error) {
	v, err := parseLength(s)
	if err != nil {
		return 0, err
	}
	if !(v > 0) {
		return 0, fmt.Errorf("%w: length %q must be positive", ErrValue, s)
	}
	return v, nil
}

func parseLength(s string) (float64, error) {
	t := strings.TrimSpace(s)
	if len(t) > maxLen {
		return 0, fmt.Errorf("%w: length is %d characters long", ErrValue, len(t))
	}
	for _, u := range lengthUnits {
		if strings.HasSuffix(t, u.suffix) {
			num := strings.TrimSpace(strings.TrimSuffix(t, u.suffix))
			v, err := number(num)
			if err != nil {
				return 0, fmt.Errorf("%w: length %q: %q is not a number", ErrValue, s, num)
			}
			return v * u.cm, nil
		}
	}
	return 0, fmt.Errorf("%w: length %q needs a unit: nm, um (µm), mm or cm, e.g. 1.2um", ErrValue, s)
}

// ParseLengthErr parses the uncertainty of a length: either a length with a
// unit ("0.05um") or a percentage of nominal ("2%"). It returns the
// relative standard uncertainty u(d)/d; nominal is in centimetres.
func ParseLengthErr(s string, nominal float64) (float64, error) {
	t := strings.TrimSpace(s)
	if strings.HasSuffix(t, "%") {
		v, err := number(strings.TrimSpace(strings.TrimSuffix(t, "%")))
		if err != nil || v < 0 {
			return 0, fmt.Errorf("%w: thickness uncertainty %q: want a non-negative percentage such as 2%%", ErrValue, s)
		}
		return v / 100, nil
	}
	v, err := parseLength(t)
	if err != nil {
		return 0, err
	}
	if v < 0 {
		return 0, fmt.Errorf("%w: thickness uncertainty %q is negative", ErrValue, s)
	}
	if !(nominal > 0) {
		return 0, fmt.Errorf("%w: thickness uncertainty %q given without a thickness", ErrValue, s)
	}
	return v / nominal, nil
}

// ParseWindow parses an energy window "LO:HI" in eV with 0 < LO < HI.
func ParseWindow(s string) ([2]float64, error) {
	lo, hi, ok := strings.Cut(strings.TrimSpace(s), ":")
	if !ok || len(s) > maxLen {
		return [2]float64{}, fmt.Errorf("%w: window %q: want LO:HI in eV, e.g. 1.35:1.65", ErrValue, s)
	}
	a, err1 := number(strings.TrimSpace(lo))
	b, err2 := number(strings.TrimSpace(hi))
	if err1 != nil || err2 != nil {
		return [2]float64{}, fmt.Errorf("%w: window %q: want LO:HI in eV, e.g. 1.35:1.65", ErrValue, s)
	}
	if !(a > 0 && b > a) {
		return [2]float64{}, fmt.Errorf("%w: window %q: need 0 < LO < HI", ErrValue, s)
	}
	return [2]float64{a, b}, nil
}

// ParseNoise parses a transmittance noise level as a fraction ("0.002")
// or in percent transmittance ("0.2%"), returning the fraction.
func ParseNoise(s string) (float64, error) {
	t := strings.TrimSpace(s)
	scale := 1.0
	if strings.HasSuffix(t, "%") {
		t, scale = strings.TrimSpace(strings.TrimSuffix(t, "%")), 0.01
	}
	v, err := number(t)
	if err != nil || !(v > 0) || v*scale >= 1 {
		return 0, fmt.Errorf("%w: noise %q: want a positive fraction such as 0.002 or a percentage such as 0.2%%", ErrValue, s)
	}
	return v * scale, nil
}

// number parses a finite float.
func number(s string) (float64, error) {
	if s == "" || len(s) > maxLen {
		return 0, ErrValue
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, ErrValue
	}
	return v, nil
}

// temperatureInName matches a temperature in kelvin written in a file
// name: digits (optionally with a decimal part) directly followed by K or
// " K", not followed by another letter, e.g. "GaAs_300K.csv", "T77K",
// "scan 295.5 K.txt".
var temperatureInName = regexp.MustCompile(`(\d+(?:[.,]\d+)?) ?K(?:[^A-Za-z]|$)`)

// TemperatureFromName returns the temperature in K written in a file name
// (the last match of the pattern above) and whether there was one.
func TemperatureFromName(name string) (float64, bool) {
	base := name
	if i := strings.LastIndexAny(base, `/\`); i >= 0 {
		base = base[i+1:]
	}
	m := temperatureInName.FindAllStringSubmatch(base, -1)
	if m == nil {
		return 0, false
	}
	v, err := number(strings.Replace(m[len(m)-1][1], ",", ".", 1))
	if err != nil || !(v > 0) || v > 5000 {
		return 0, false
	}
	return v, true
}
