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
	"bufio"
	"errors"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"strings"
	"sync"

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
// atomically (see encodePNG for the encoding).
func WritePNG(path string, f Figure) error {
	img := vgimg.NewWith(vgimg.UseWH(PageWidth, PageHeight), vgimg.UseDPI(DPI))
	dc := draw.New(img)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	f.Draw(dc)
	return atomicfile.Write(path, func(w io.Writer) error {
		if err := encodePNG(w, img.Image()); err != nil {
			return fmt.Errorf("render png: %w", err)
		}
		return nil
	})
}

// pngEncoder favours speed: a report page is 1584×1224 pixels, and with
// the default zlib level encoding took about two thirds of the time of a
// report (BenchmarkEdgePNGStages). png.BestSpeed makes the files a few
// per cent larger; PNG is lossless at every level, so the pixels are the
// same. The buffer pool reuses the encoder's zlib state between reports.
var pngEncoder = png.Encoder{CompressionLevel: png.BestSpeed, BufferPool: new(pngBuffers)}

// pngBuffers is a png.EncoderBufferPool over a sync.Pool (safe for the
// concurrent reports of a batch).
type pngBuffers struct{ p sync.Pool }

func (b *pngBuffers) Get() *png.EncoderBuffer {
	e, _ := b.p.Get().(*png.EncoderBuffer)
	return e
}

func (b *pngBuffers) Put(e *png.EncoderBuffer) { b.p.Put(e) }

// encodePNG writes img as PNG. An opaque image whose every pixel is grey
// (R = G = B, as on the edge reports, which are drawn for black-and-white
// print) is written as 8-bit greyscale, which decodes to exactly the same
// colours from a quarter of the data, so that it is compressed about
// twice as fast and the file is about half the size; any other image
// (the colour wafer maps) is written as it is.
func encodePNG(w io.Writer, img image.Image) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	if g, ok := asGray(img); ok {
		img = g
	}
	if err := pngEncoder.Encode(bw, img); err != nil {
		return err
	}
	return bw.Flush()
}

// asGray returns img as an *image.Gray with the same pixels when img is an
// opaque *image.RGBA with R = G = B everywhere.
func asGray(img image.Image) (*image.Gray, bool) {
	rgba, ok := img.(*image.RGBA)
	if !ok {
		return nil, false
	}
	b := rgba.Bounds()
	g := image.NewGray(b)
	for y := b.Min.Y; y < b.Max.Y; y++ {
		src := rgba.Pix[rgba.PixOffset(b.Min.X, y):][:4*b.Dx()]
		dst := g.Pix[g.PixOffset(b.Min.X, y):][:b.Dx()]
		for x := range dst {
			p := src[4*x : 4*x+4 : 4*x+4]
			if p[0] != p[1] || p[1] != p[2] || p[3] != 0xff {
				return nil, false
			}
			dst[x] = p[0]
		}
	}
	return g, true
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
//
// A line wider than the room left of c.Max.X is broken at spaces, as
// measured in its own font, and continued 8 points further in, so that no
// text runs off the page whatever the length of a file name, a window rule
// or a warning.
func textBlock(c draw.Canvas, pt vg.Point, lines []styledLine) vg.Length {
	type part struct {
		text   string
		style  draw.TextStyle
		indent vg.Length
	}
	var parts []part
	for _, l := range lines {
		for i, t := range fitWidth(l.style, l.text, c.Max.X-pt.X-l.indent, 8) {
			ind := l.indent
			if i > 0 {
				ind += 8
			}
			parts = append(parts, part{t, l.style, ind})
		}
	}
	step := func(p part) vg.Length { return p.style.Font.Size * 1.35 }
	// What does not fit above c.Min.Y is cut, and a last line says so
	// (the text and JSON outputs have it all): a report never writes over
	// its footer.
	y := pt.Y
	for i, p := range parts {
		if i < len(parts)-1 && y-step(p)-step(parts[i+1]) < c.Min.Y {
			more := part{fmt.Sprintf("… %d more lines: see the text or JSON output", len(parts)-i), p.style, 0}
			more.style.Font.Size = parts[len(parts)-1].style.Font.Size
			c.FillText(more.style, vg.Point{X: pt.X, Y: y}, more.text)
			return y - step(more)
		}
		c.FillText(p.style, vg.Point{X: pt.X + p.indent, Y: y}, p.text)
		y -= step(p)
	}
	return y
}

// fitWidth breaks s at spaces into lines no wider than width in style st,
// the lines after the first being extra narrower; a single word wider than
// the room stays whole on its line.
func fitWidth(st draw.TextStyle, s string, width, extra vg.Length) []string {
	if width <= 0 || st.Width(s) <= width {
		return []string{s}
	}
	var out []string
	cur := ""
	room := width
	for _, w := range strings.Fields(s) {
		try := w
		if cur != "" {
			try = cur + " " + w
		}
		if cur != "" && st.Width(try) > room {
			out = append(out, cur)
			cur, room = w, width-extra
			continue
		}
		cur = try
	}
	if cur != "" {
		out = append(out, cur)
	}
	return out
}

type styledLine struct {
	text   string
	style  draw.TextStyle
	indent vg.Length
}
