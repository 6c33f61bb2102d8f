package reports

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// BenchmarkEdgePNG times one edge report (the figure of edgeReport, the
// golden's content) end to end: building the figure, drawing it at the page
// size and DPI, and encoding and writing the PNG atomically (WritePNG).
func BenchmarkEdgePNG(b *testing.B) {
	rep := edgeReport(b, 2e-4)
	path := filepath.Join(b.TempDir(), "edge.png")
	b.ReportAllocs()
	for b.Loop() {
		pg, err := EdgeFigure(rep)
		if err != nil {
			b.Fatal(err)
		}
		if err := WritePNG(path, pg); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkEdgePNGStages splits BenchmarkEdgePNG into building the figure,
// drawing it into the image, and encoding the image as PNG (encodePNG, and
// for comparison vgimg.PngCanvas, which WritePNG used before).
func BenchmarkEdgePNGStages(b *testing.B) {
	rep := edgeReport(b, 2e-4)
	b.Run("build", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := EdgeFigure(rep); err != nil {
				b.Fatal(err)
			}
		}
	})
	pg, err := EdgeFigure(rep)
	if err != nil {
		b.Fatal(err)
	}
	b.Run("draw", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			img := vgimg.NewWith(vgimg.UseWH(PageWidth, PageHeight), vgimg.UseDPI(DPI))
			pg.Draw(draw.New(img))
		}
	})
	img := vgimg.NewWith(vgimg.UseWH(PageWidth, PageHeight), vgimg.UseDPI(DPI))
	pg.Draw(draw.New(img))
	b.Run("encode", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if err := encodePNG(io.Discard, img.Image()); err != nil {
				b.Fatal(err)
			}
		}
	})
	// What encoding cost before encodePNG: vgimg's writer, RGBA at zlib's
	// default level.
	b.Run("encode-vgimg-default", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := (vgimg.PngCanvas{Canvas: img}).WriteTo(io.Discard); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// TestWritePNGLossless checks that WritePNG's encoding (greyscale when
// every pixel is grey, fast zlib level) keeps every pixel: the decoded
// file equals the drawn canvas exactly (delta 0, not the golden tests'
// anti-aliasing tolerance), for the grey edge report and for the colour
// wafer map, and that only the former is stored as greyscale.
func TestWritePNGLossless(t *testing.T) {
	edgeFig, err := EdgeFigure(edgeReport(t, 2e-4))
	if err != nil {
		t.Fatal(err)
	}
	waferFig, err := WaferFigure(testWaferMap())
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name     string
		fig      Figure
		wantGray bool
	}{
		{"edge report", edgeFig, true},
		{"wafer map", waferFig, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "x.png")
			if err := WritePNG(path, tc.fig); err != nil {
				t.Fatal(err)
			}
			raw, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			got, err := png.Decode(bytes.NewReader(raw))
			if err != nil {
				t.Fatal(err)
			}
			if _, isGray := got.(*image.Gray); isGray != tc.wantGray {
				t.Errorf("decoded as %T, want greyscale %v", got, tc.wantGray)
			}
			c := vgimg.NewWith(vgimg.UseWH(PageWidth, PageHeight), vgimg.UseDPI(DPI))
			dc := draw.New(c)
			dc.SetColor(color.White)
			dc.Fill(dc.Rectangle.Path())
			tc.fig.Draw(dc)
			want := c.Image()
			if got.Bounds() != want.Bounds() {
				t.Fatalf("bounds %v, want %v", got.Bounds(), want.Bounds())
			}
			b := want.Bounds()
			for y := b.Min.Y; y < b.Max.Y; y++ {
				for x := b.Min.X; x < b.Max.X; x++ {
					r1, g1, b1, a1 := got.At(x, y).RGBA()
					r2, g2, b2, a2 := want.At(x, y).RGBA()
					if r1 != r2 || g1 != g2 || b1 != b2 || a1 != a2 {
						t.Fatalf("pixel (%d, %d) = %v, drawn %v", x, y, got.At(x, y), want.At(x, y))
					}
				}
			}
		})
	}
}
