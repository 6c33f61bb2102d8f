package jcampdx

import (
	"fmt"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"bandedge/io/specio"
)

// The encoder below is written from the compression rules of McDonald &
// Wilks (1988) as restated in the package documentation, independently of
// the decoder (it shares no code with it). TestEncodeWorked checks it
// against the hand-encoded worked example; TestRoundTrip then uses it to
// check the decoder on many random sequences.

// pseudo writes v with its first digit replaced by the character for that
// digit and sign from pos (for +0…+9) or neg (for −1…−9).
func pseudo(v int, pos, neg string) string {
	s := strconv.Itoa(v)
	if v < 0 {
		return string(neg[s[1]-'1']) + s[2:]
	}
	return string(pos[s[0]-'0']) + s[1:]
}

func sqzOf(v int) string { return pseudo(v, "@ABCDEFGHI", "abcdefghi") }
func difOf(v int) string { return pseudo(v, "%JKLMNOPQR", "jklmnopqr") }
func dupOf(n int) string { s := strconv.Itoa(n); return string("STUVWXYZs"[s[0]-'1']) + s[1:] }

// dupRuns replaces each run of n ≥ 2 equal tokens by the token and DUP n.
func dupRuns(toks []string) []string {
	var out []string
	for i := 0; i < len(toks); {
		j := i
		for j < len(toks) && toks[j] == toks[i] {
			j++
		}
		out = append(out, toks[i])
		if j-i > 1 {
			out = append(out, dupOf(j-i))
		}
		i = j
	}
	return out
}

// encodeForm writes the ordinates y (integers) at x(i) as (X++(Y..Y)) lines
// of at most perLine ordinates in one of the forms "AFFN", "PAC", "SQZ" or
// "DIFDUP" (SQZ and DIFDUP with DUP runs). In DIFDUP a line that holds a
// difference is followed by a line that starts with the Y check value, and
// that line's abscissa is the check point's; if the last line holds a
// difference, a line with only the abscissa and the check value ends the
// table. sep goes between the abscissa and the first ordinate of
// compressed lines.
func encodeForm(form string, x func(int) float64, y []int, perLine int, sep string) string {
	var b strings.Builder
	xs := func(i int) string { return strconv.FormatFloat(x(i), 'f', -1, 64) }
	endedDIF := false
	for s := 0; s < len(y); s += perLine {
		e := min(s+perLine, len(y))
		var toks []string
		switch form {
		case "AFFN", "PAC":
			for i := s; i < e; i++ {
				toks = append(toks, strconv.Itoa(y[i]))
			}
			if form == "AFFN" {
				fmt.Fprintf(&b, "%s %s\n", xs(s), strings.Join(toks, " "))
			} else {
				b.WriteString(xs(s))
				for _, t := range toks {
					if t[0] != '-' {
						t = "+" + t
					}
					b.WriteString(t)
				}
				b.WriteByte('\n')
			}
			continue
		case "SQZ":
			for i := s; i < e; i++ {
				toks = append(toks, sqzOf(y[i]))
			}
			fmt.Fprintf(&b, "%s%s%s\n", xs(s), sep, strings.Join(dupRuns(toks), ""))
			continue
		}
		first := s // the point whose abscissa starts the line
		if endedDIF {
			first = s - 1
			toks = append(toks, sqzOf(y[s-1]))
		} else {
			toks = append(toks, sqzOf(y[s]))
		}
		difs := 0
		for i := first + 1; i < e; i++ {
			toks = append(toks, difOf(y[i]-y[i-1]))
			difs++
		}
		endedDIF = difs > 0
		fmt.Fprintf(&b, "%s%s%s\n", xs(first), sep, strings.Join(dupRuns(toks), ""))
	}
	if endedDIF {
		fmt.Fprintf(&b, "%s%s%s\n", xs(len(y)-1), sep, sqzOf(y[len(y)-1]))
	}
	return b.String()
}

// TestEncodeWorked: the test encoder reproduces the hand encoding of the
// worked example in reader_test.go, character for character.
func TestEncodeWorked(t *testing.T) {
	y := []int{120, 125, 125, 125, 131, 250, 420, 600, 600, 598, -3}
	x := func(i int) float64 { return 800 + 10*float64(i) }
	if got := encodeForm("DIFDUP", x, y, 5, ""); got != workedDIF {
		t.Errorf("DIFDUP:\n%s\nwant\n%s", got, workedDIF)
	}
	if got := encodeForm("SQZ", x, y, 5, ""); got != workedSQZ {
		t.Errorf("SQZ:\n%s\nwant\n%s", got, workedSQZ)
	}
	if got := encodeForm("PAC", x, y, 5, ""); got != workedPAC {
		t.Errorf("PAC:\n%s\nwant\n%s", got, workedPAC)
	}
}

// TestRoundTrip encodes random integer sequences (random walks with runs of
// repeats and jumps, so that every pseudo-digit and DUP counts above 9
// occur) in every form and line length, and checks that Read gives back
// every ordinate exactly (YFACTOR 1: integers are exact in float64) with the
// line each came from. The seed is in the subtest name.
func TestRoundTrip(t *testing.T) {
	forms := []string{"AFFN", "PAC", "SQZ", "DIFDUP"}
	seeds := 200
	if testing.Short() {
		seeds = 20
	}
	for seed := range uint64(seeds) {
		rng := rand.New(rand.NewPCG(seed, seed))
		n := 1 + rng.IntN(300)
		y := make([]int, n)
		v := rng.IntN(2001) - 1000
		run := 0 // points left in a long run of one value (DUP counts > 9)
		for i := range y {
			switch r := rng.IntN(20); {
			case run > 0:
				run--
			case r == 0:
				run = 10 + rng.IntN(30)
			case r < 8: // repeat: short DUP runs
			case r < 16:
				v += rng.IntN(21) - 10
			default:
				v += rng.IntN(200001) - 100000
			}
			y[i] = v
		}
		form := forms[seed%4]
		perLine := 1 + rng.IntN(15)
		// A blank after the abscissa, or none; with none, an SQZ line whose
		// only pseudo-digits are E/e right after the abscissa is read as
		// AFFN with an exponent (a documented limitation), so use a blank
		// when the first ordinate would start with E or e.
		sep := [2]string{"", " "}[rng.IntN(2)]
		first, step := 9000.0, -2.0 // 1/CM, descending as infrared files are
		x := func(i int) float64 { return first + step*float64(i) }
		table := encodeForm(form, x, y, perLine, sep)
		if sep == "" && (form == "SQZ" || form == "DIFDUP") {
			var lines []string
			for _, l := range strings.Split(strings.TrimSuffix(table, "\n"), "\n") {
				if i := strings.IndexFunc(l, func(r rune) bool { return r < '0' || r > '9' }); i > 0 && !hasPseudo(l) && (l[i] == 'E' || l[i] == 'e') {
					l = l[:i] + " " + l[i:]
				}
				lines = append(lines, l)
			}
			table = strings.Join(lines, "\n") + "\n"
		}
		// The ordinates are arbitrary integers, so YUNITS is α (1/CM),
		// which the reader does not judge for plausibility (absorbance
		// negative everywhere or with a median above 10 is rejected).
		in := header("1/CM", "1/CM", fmt.Sprintf("##FIRSTX= %g", first), fmt.Sprintf("##LASTX= %g", x(n-1)),
			fmt.Sprintf("##NPOINTS= %d", n)) + "##XYDATA=(X++(Y..Y))\n" + table + "##END=\n"
		t.Run(fmt.Sprintf("seed%d/%s/n%d/per%d", seed, form, n, perLine), func(t *testing.T) {
			s, err := NewReader(strings.NewReader(in), "rt.jdx").Read()
			if err != nil {
				t.Fatalf("%v\n%s", err, in)
			}
			if s.Len() != n || s.SourceXUnit != specio.Wavenumber {
				t.Fatalf("%d points, unit %v; want %d, cm-1", s.Len(), s.SourceXUnit, n)
			}
			// Energy ascends with wavenumber, so the result is reversed.
			for i := range y {
				j := n - 1 - i
				if s.Y[j] != float64(y[i]) {
					t.Fatalf("point %d: y = %g, want %d\n%s", i, s.Y[j], y[i], in)
				}
				// Header lines 1–8, ##XYDATA= at 9, then perLine new
				// ordinates per line (a Y check adds none).
				if want := 10 + i/perLine; s.Lines[j] != want {
					t.Fatalf("point %d at line %d, want %d", i, s.Lines[j], want)
				}
			}
		})
	}
}

// BenchmarkReadDIFDUP reads a 100 000-point DIFDUP table (about 0.7 MB).
func BenchmarkReadDIFDUP(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	n := 100_000
	y := make([]int, n)
	v := 5000
	for i := range y {
		v += rng.IntN(41) - 20
		y[i] = v
	}
	x := func(i int) float64 { return 4000 + 0.5*float64(i) }
	in := []byte(header("1/CM", "ABSORBANCE", "##FIRSTX= 4000", fmt.Sprintf("##LASTX= %g", x(n-1)),
		fmt.Sprintf("##NPOINTS= %d", n), "##YFACTOR= 0.0001") + "##XYDATA=(X++(Y..Y))\n" +
		encodeForm("DIFDUP", x, y, 10, "") + "##END=\n")
	b.SetBytes(int64(len(in)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := NewReader(strings.NewReader(string(in)), "bench.jdx").Read(); err != nil {
			b.Fatal(err)
		}
	}
}
