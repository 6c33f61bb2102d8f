// Package reports draws the PNG reports of bandedge with gonum/plot.
//
// Building and writing are separate, as in gonum/plot: a builder such as
// EdgeFigure turns results into a Figure value, and WritePNG renders any
// Figure into a file atomically (temporary file in the target folder, then
// a rename). Reports are drawn to be read in black and white: data kinds
// differ by marker shape and fill, lines by dash pattern, never by colour
// alone.
package reports

import (
	"errors"
	"fmt"
	"image/color"
	"io"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"bandedge/io/atomicfile"
)

// Page geometry, in one place.
const (
	PageWidth  = 11 * vg.Inch
	PageHeight = 8.5 * vg.Inch
	DPI        = 144
	margin     = 0.35 * vg.Inch
)

// Grey levels used by every report (black-and-white safe).
var (
	ink      = color.Gray{Y: 0}
	darkGrey = color.Gray{Y: 70}
	midGrey  = color.Gray{Y: 140}
	lightBox = color.Gray{Y: 235}
)

// ErrNothingToDraw is returned when a figure has no finite data.
var ErrNothingToDraw = errors.New("reports: nothing to draw")

// Figure is a drawable page.
type Figure interface {
	// Draw renders the figure onto c.
	Draw(c draw.Canvas)
}

// WritePNG renders f at the page size and DPI above and writes it to path
// atomically.
func WritePNG(path string, f Figure) error {
	img := vgimg.NewWith(vgimg.UseWH(PageWidth, PageHeight), vgimg.UseDPI(DPI))
	dc := draw.New(img)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	f.Draw(dc)
	return atomicfile.Write(path, func(w io.Writer) error {
		_, err := vgimg.PngCanvas{Canvas: img}.WriteTo(w)
		if err != nil {
			return fmt.Errorf("render png: %w", err)
		}
		return nil
	})
}

// textStyle returns a text style of the given size (points).
func textStyle(size vg.Length, bold bool) draw.TextStyle {
	_, h := fonts()
	return draw.TextStyle{
		Color:   ink,
		Font:    face(size, bold),
		Handler: h,
		XAlign:  draw.XLeft,
		YAlign:  draw.YTop,
	}
}

// textBlock draws lines top-down from pt and returns the y below the last.
func textBlock(c draw.Canvas, pt vg.Point, lines []styledLine) vg.Length {
	y := pt.Y
	for _, l := range lines {
		st := l.style
		c.FillText(st, vg.Point{X: pt.X + l.indent, Y: y}, l.text)
		y -= st.Font.Size * 1.35
	}
	return y
}

type styledLine struct {
	text   string
	style  draw.TextStyle
	indent vg.Length
}
