package reports

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// TestTextBlockFits: a block far longer and wider than its canvas stays
// inside it. Every line is broken to the canvas width as measured in its
// font, and what does not fit above the bottom is replaced by one line
// saying how many lines were cut, so a report never writes over its
// footer. A block that fits is drawn whole.
func TestTextBlockFits(t *testing.T) {
	img := vgimg.New(4*vg.Inch, 2*vg.Inch)
	c := draw.New(img)
	st := textStyle(8, false)
	long := strings.Repeat("a warning that goes on and on ", 12)
	var lines []styledLine
	for range 20 {
		lines = append(lines, styledLine{text: long, style: st, indent: 6})
	}
	for _, l := range lines {
		for _, p := range fitWidth(l.style, l.text, c.Max.X-c.Min.X-l.indent, 8) {
			if w := l.style.Width(p); w > c.Max.X-c.Min.X && strings.Contains(p, " ") {
				t.Fatalf("line %q is %v wide, canvas %v", p, w, c.Max.X-c.Min.X)
			}
		}
	}
	step := st.Font.Size * 1.35
	y := textBlock(c, vg.Point{X: c.Min.X, Y: c.Max.Y}, lines)
	if y < c.Min.Y-step {
		t.Errorf("block ends at %v, below the canvas bottom %v", y, c.Min.Y)
	}
	short := lines[:1]
	y = textBlock(c, vg.Point{X: c.Min.X, Y: c.Max.Y}, short)
	n := len(fitWidth(st, long, c.Max.X-c.Min.X-6, 8))
	// 1e-9 pt: the same sum of line heights in another order.
	if want := c.Max.Y - vg.Length(n)*step; math.Abs(float64(y-want)) > 1e-9 {
		t.Errorf("a block that fits: ends at %v, want %v (%d lines)", y, want, n)
	}
}
