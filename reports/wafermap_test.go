package reports

import (
	"bytes"
	"errors"
	"image/color"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"gonum.org/v1/plot/cmpimg"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// testWaferMap is an invented 13-site wafer (fictional demo lot): E_g
// rising towards the edge, the edge sites failing an upper limit of
// 1.435 eV, two sites straddling it, one site not fitted and one whose
// E_g is not determined.
func testWaferMap() WaferMap {
	type s struct {
		x, y, eg, eu float64
		v            string
	}
	sites := []s{
		{0, 0, 1.4330, 0.0090, SitePass},
		{22.5, 0, 1.4343, 0.0095, SiteIndeterminate}, {0, 22.5, 1.4343, 0.0094, SiteIndeterminate},
		{-22.5, 0, 1.4341, 0.0094, SitePass}, {0, -22.5, math.NaN(), 0.0093, SiteIndeterminate},
		{45, 0, 1.4381, 0.0110, SiteFail}, {31.8, 31.8, 1.4380, 0.0109, SiteFail}, {0, 45, 1.4381, 0.0111, SiteFail},
		{-31.8, 31.8, 1.4379, 0.0108, SiteFail}, {-45, 0, 1.4382, 0.0110, SiteFail}, {-31.8, -31.8, math.NaN(), math.NaN(), SiteNotFitted},
		{0, -45, 1.4380, 0.0111, SiteFail}, {31.8, -31.8, 1.4381, 0.0110, SiteFail},
	}
	m := WaferMap{Wafer: "W04", Lot: "KM-2611", Verdict: "fail", Rule: "guarded acceptance and rejection, w = U (k = 2)",
		Diameter: 100, Flat: 32.5, Footer: "bandedge test · fixed footer",
		Notes: []string{"scans 13: fitted 12, not fitted 1; scan verdicts: pass 2 · fail 7 · indeterminate 3"},
		Panels: []MapPanel{
			{Symbol: "E_g", Unit: "eV", Scale: 1, Digits: 4, Range: [2]float64{1.4220, 1.4385}, Lo: 1.415, Hi: 1.435, Markers: "verdict on eg_ev",
				Stats: MapStats{Count: 11, Skipped: 1, Mean: 1.43693, StdDev: 0.0020, Min: 1.4330, Max: 1.4382, Range: 0.0052, Nonuniformity: 0.0018, LotMean: 1.4276}},
			{Symbol: "E_U", Unit: "meV", Scale: 1e3, Digits: 2, Lo: math.NaN(), Hi: 12, Markers: "overall verdict of the scan",
				Stats: MapStats{Count: 12, Mean: 0.0102, StdDev: 0.0009, Min: 0.0090, Max: 0.0111, Range: 0.0021, Nonuniformity: 0.10, LotMean: math.NaN()}},
		},
	}
	for _, st := range sites {
		m.Sites = append(m.Sites, WaferSite{X: st.x, Y: st.y, Values: []float64{st.eg, st.eu}, Verdicts: []string{st.v, st.v}})
	}
	return m
}

// luminance is the relative luminance of an sRGB colour: the sRGB
// transfer function inverted (IEC 61966-2-1:1999) and weighted by the
// ITU-R BT.709 coefficients 0.2126, 0.7152, 0.0722.
func luminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 {
		x := float64(v) / 0xffff
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}

// TestSequentialColors: the palette's luminance rises strictly with the
// value (so that it prints as a grey ramp), and both ends stay clear of
// black and white.
func TestSequentialColors(t *testing.T) {
	cm := SequentialColors(1.42, 1.44)
	prev := -1.0
	for i := 0; i <= 100; i++ {
		v := 1.42 + 0.02*float64(i)/100
		c, err := cm.At(math.Min(v, 1.44))
		if err != nil {
			t.Fatalf("At(%g): %v", v, err)
		}
		y := luminance(c)
		if y <= prev {
			t.Fatalf("luminance not increasing at %g: %g after %g", v, y, prev)
		}
		prev = y
	}
	lo, _ := cm.At(1.42)
	hi, _ := cm.At(1.44)
	// Ends: viridis' darkest anchor dropped (it is near black); the light
	// end below white. Bounds from the anchors' sRGB values.
	if y := luminance(lo); y < 0.03 || y > 0.1 {
		t.Errorf("dark end luminance %g, want 0.03–0.1", y)
	}
	if y := luminance(hi); y < 0.6 || y > 0.9 {
		t.Errorf("light end luminance %g, want 0.6–0.9", y)
	}
}

// TestWaferFigure checks what the map shows, not only its pixels.
func TestWaferFigure(t *testing.T) {
	pg, err := WaferFigure(testWaferMap())
	if err != nil {
		t.Fatal(err)
	}
	if len(pg.Bars) != 2 {
		t.Fatalf("%d colour bars, want 2", len(pg.Bars))
	}
	// E_g: the given (lot-wide) range; E_U: the sites' range in meV.
	if pg.Ranges[0] != [2]float64{1.4220, 1.4385} || pg.Bars[0].Y.Min != 1.4220 || pg.Bars[0].Y.Max != 1.4385 {
		t.Errorf("E_g scale %v, bar %g..%g", pg.Ranges[0], pg.Bars[0].Y.Min, pg.Bars[0].Y.Max)
	}
	if r := pg.Ranges[1]; math.Abs(r[0]-9.0) > 1e-9 || math.Abs(r[1]-11.1) > 1e-9 {
		t.Errorf("E_U scale %v, want 9.0..11.1 meV (the sites' range)", r)
	}
	if pg.Bars[0].Y.Label.Text != "E_g (eV)" || pg.Bars[1].Y.Label.Text != "E_U (meV)" {
		t.Errorf("bar labels %q, %q", pg.Bars[0].Y.Label.Text, pg.Bars[1].Y.Label.Text)
	}
	want := []string{"pass", "fail", "indeterminate", "not fitted"}
	if !reflect.DeepEqual(pg.Legend, want) {
		t.Errorf("legend %v, want %v", pg.Legend, want)
	}
	// The colour-bar ticks carry enough decimals to tell 1.425 from 1.43.
	seen := map[string]bool{}
	for _, tk := range (fineTicks{}).Ticks(1.4220, 1.4385) {
		if tk.Label != "" {
			if seen[tk.Label] {
				t.Errorf("tick label %q repeated", tk.Label)
			}
			seen[tk.Label] = true
		}
	}
	if len(seen) < 2 {
		t.Errorf("%d labelled ticks", len(seen))
	}
	if !reflect.DeepEqual(pg.Beyond, []int{0, 0}) {
		t.Errorf("beyond the scale %v, want none", pg.Beyond)
	}
	// A lot-wide scale narrower than this wafer: the sites above 1.43805 eV
	// are counted (1.4381 three times and 1.4382; not 1.4380 or 1.4379).
	m := testWaferMap()
	m.Panels[0].Range = [2]float64{1.4200, 1.43805}
	if pg2, err := WaferFigure(m); err != nil || pg2.Beyond[0] != 4 {
		t.Errorf("beyond %v, %v; want 4 E_g sites", pg2.Beyond, err)
	}
	// Drawing must not panic.
	pg.Draw(draw.New(vgimg.New(PageWidth, PageHeight)))
}

func TestWaferFigureErrors(t *testing.T) {
	m := testWaferMap()
	m.Sites = nil
	if _, err := WaferFigure(m); !errors.Is(err, ErrNothingToDraw) {
		t.Errorf("no sites: %v", err)
	}
	m = testWaferMap()
	m.Panels = append(m.Panels, m.Panels[0])
	if _, err := WaferFigure(m); err == nil {
		t.Error("three panels accepted")
	}
	m = testWaferMap()
	m.Sites[0].Values = m.Sites[0].Values[:1]
	if _, err := WaferFigure(m); err == nil {
		t.Error("site with a missing value accepted")
	}
	m = testWaferMap()
	m.Sites[1].X = math.NaN()
	if _, err := WaferFigure(m); err == nil {
		t.Error("site without a position accepted")
	}
	// One site, one value: the scale is widened, not degenerate (a
	// colour bar with max = min panics in gonum/plot).
	m = testWaferMap()
	m.Sites = m.Sites[:1]
	m.Panels[0].Range = [2]float64{}
	pg, err := WaferFigure(m)
	if err != nil {
		t.Fatal(err)
	}
	if !(pg.Ranges[0][1] > pg.Ranges[0][0]) {
		t.Errorf("degenerate scale %v", pg.Ranges[0])
	}
	pg.Draw(draw.New(vgimg.New(PageWidth, PageHeight)))
}

func TestWaferFigureGolden(t *testing.T) {
	pg, err := WaferFigure(testWaferMap())
	if err != nil {
		t.Fatal(err)
	}
	got := filepath.Join(t.TempDir(), "wafermap.png")
	if err := WritePNG(got, pg); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(got)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(raw))
	if err != nil {
		t.Fatalf("not a PNG: %v", err)
	}
	if b := img.Bounds(); b.Dx() != int(float64(PageWidth/vg.Inch)*DPI) {
		t.Errorf("image %v", b)
	}
	golden := filepath.Join("..", "testdata", "reports", "wafermap_golden.png")
	if *cmpimg.GenerateTestData {
		if err := os.WriteFile(golden, raw, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("no golden (run go test ./reports -regen): %v", err)
	}
	// delta 0.02 in YIQ space, as for the edge report: anti-aliasing
	// differences between CPUs pass, a moved marker or label does not.
	ok, err := cmpimg.EqualApprox("png", raw, want, 0.02)
	if err != nil {
		t.Fatal(err)
	}
	if !ok {
		os.WriteFile(filepath.Join(os.TempDir(), "wafermap_failed.png"), raw, 0o644)
		t.Errorf("wafer map differs from %s (written to %s/wafermap_failed.png; run -regen if the change is intended)", golden, os.TempDir())
	}
}
