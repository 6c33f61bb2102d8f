// Package results writes what bandedge found: one JSON record per scan
// (the fit command's --json output and the batch summary rows), in a
// schema that keeps every number's uncertainty and provenance beside it.
// All files are written atomically (io/atomicfile).
package results

import (
	"bytes"
	"math"
	"strconv"
)

// Num is a float64 that encodes NaN and ±Inf as JSON null (encoding/json
// refuses them) and decodes null as NaN. Finite values keep every digit
// (strconv 'g', -1), so a record read back is bit-for-bit the same.
type Num float64

// MarshalJSON implements json.Marshaler.
func (n Num) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// UnmarshalJSON implements json.Unmarshaler.
func (n *Num) UnmarshalJSON(b []byte) error {
	if bytes.Equal(bytes.TrimSpace(b), []byte("null")) {
		*n = Num(math.NaN())
		return nil
	}
	f, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return err
	}
	*n = Num(f)
	return nil
}

// Float returns n as a float64.
func (n Num) Float() float64 { return float64(n) }

func nums(v []float64) []Num {
	if v == nil {
		return nil
	}
	out := make([]Num, len(v))
	for i, x := range v {
		out[i] = Num(x)
	}
	return out
}
