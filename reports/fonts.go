package reports

import (
	"sync"

	"codeberg.org/go-fonts/dejavu/dejavusans"
	"codeberg.org/go-fonts/dejavu/dejavusansbold"
	xfont "golang.org/x/image/font"
	"golang.org/x/image/font/opentype"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
)

// The reports use DejaVu Sans: unlike the Liberation faces bundled with
// gonum/plot it has the superscript minus and the other signs the trade
// writes in units (cm⁻¹, eV^½, χ², √).
const typeface = "DejaVu"

var (
	fontsOnce sync.Once
	fontCache *font.Cache
	handler   text.Handler
)

// fonts returns the report font cache and the text handler drawing with
// it. The embedded TTF data are part of the binary, so parsing cannot fail
// short of a corrupted build; a failure there is a programmer error.
func fonts() (*font.Cache, text.Handler) {
	fontsOnce.Do(func() {
		var coll font.Collection
		for _, f := range []struct {
			w   xfont.Weight
			ttf []byte
		}{{xfont.WeightNormal, dejavusans.TTF}, {xfont.WeightBold, dejavusansbold.TTF}} {
			face, err := opentype.Parse(f.ttf)
			if err != nil {
				panic("reports: embedded DejaVu font does not parse: " + err.Error())
			}
			coll = append(coll, font.Face{Font: font.Font{Typeface: typeface, Weight: f.w}, Face: face})
		}
		fontCache = font.NewCache(coll)
		handler = &text.Plain{Fonts: fontCache}
	})
	return fontCache, handler
}

// face returns the report font at size points.
func face(size vg.Length, bold bool) font.Font {
	f := font.Font{Typeface: typeface, Size: size}
	if bold {
		f.Weight = xfont.WeightBold
	}
	return f
}

// newPlot returns a plot whose every text uses the report font.
func newPlot() *plot.Plot {
	_, h := fonts()
	p := plot.New()
	set := func(st *text.Style, size vg.Length, bold bool) {
		st.Font = face(size, bold)
		st.Handler = h
	}
	set(&p.Title.TextStyle, 11, true)
	set(&p.X.Label.TextStyle, 10, false)
	set(&p.Y.Label.TextStyle, 10, false)
	set(&p.X.Tick.Label, 8.5, false)
	set(&p.Y.Tick.Label, 8.5, false)
	set(&p.Legend.TextStyle, 8, false)
	return p
}
