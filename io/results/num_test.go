package results

import (
	"encoding/json"
	"math"
	"testing"
)

func TestNumJSON(t *testing.T) {
	in := struct {
		A, B, C, D Num
	}{Num(1.4241234567890122), Num(math.NaN()), Num(math.Inf(1)), Num(-2.5e-300)}
	b, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := string(b), `{"A":1.4241234567890122,"B":null,"C":null,"D":-2.5e-300}`; got != want {
		t.Errorf("marshal = %s, want %s", got, want)
	}
	var out struct{ A, B, C, D Num }
	if err := json.Unmarshal(b, &out); err != nil {
		t.Fatal(err)
	}
	// Round trip is bit-for-bit for finite values; null reads as NaN.
	if out.A != in.A || out.D != in.D || !math.IsNaN(float64(out.B)) || !math.IsNaN(float64(out.C)) {
		t.Errorf("round trip %+v", out)
	}
	if err := json.Unmarshal([]byte(`{"A":"x"}`), &out); err == nil {
		t.Error("a string decoded as a number")
	}
}
