package specio

import (
	"strings"
	"testing"
)

// TestTrailerNotFor: the DOS end-of-file mark, rows of empty cells and
// comment lines after the data are not a trailing block (no note, no
// metadata), as the data reader skips them too.
func TestTrailerNotFor(t *testing.T) {
	for _, in := range []string{
		"Wavelength (nm),%T\r\n500,50\r\n600,60\r\n\x1a",
		"Wavelength (nm),%T\n500,50\n600,60\n,,\n",
		"Wavelength (nm),%T\n500,50\n600,60\n# end: 10:42\n",
	} {
		s, err := NewReader(strings.NewReader(in), "t.csv").Read()
		if err != nil {
			t.Fatalf("%q: %v", in, err)
		}
		if s.Len() != 2 {
			t.Errorf("%q: %d points", in, s.Len())
		}
		for _, n := range s.Notes {
			if strings.Contains(n, "trailing") {
				t.Errorf("%q: note %q", in, n)
			}
		}
	}
}
