package reports

import (
	"bytes"
	"context"
	"image/png"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/plot/cmpimg"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"bandedge/fit/edge"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// edgeReport builds the report of a synthetic GaAs-like film (invented
// test data; seed 5).
func edgeReport(t testing.TB, thickness float64) EdgeReport {
	t.Helper()
	c := model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51))
	e := synth.WavelengthGrid(700, 1000, 1)
	r := optics.FresnelR(3.6, 0)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: []float64{1.424, c, 0.008}, E: e,
		Thickness: thickness, R: r, SigmaT: 0.002}, rand.New(rand.NewPCG(5, 5)))
	conv, err := optics.ToAlpha(sc.E, sc.T, optics.Transmittance, thickness, &optics.Settings{RConst: r, SigmaT: 0.002})
	if err != nil {
		t.Fatal(err)
	}
	d := edge.Data{E: sc.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask, SigmaKnown: true}
	res, err := edge.Analyze(context.Background(), d, edge.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return EdgeReport{Title: "synthetic film (test data)", Data: d, Result: res, Model: model.DirectUrbach{},
		InputLines: []string{"input: synthetic %T, 301 points"}, Footer: "bandedge test · fixed footer"}
}

// TestEdgeFigure checks what the figure shows, not only its pixels.
func TestEdgeFigure(t *testing.T) {
	pg, err := EdgeFigure(edgeReport(t, 2e-4))
	if err != nil {
		t.Fatal(err)
	}
	if pg.Alpha.Y.Min <= 0 || pg.Alpha.Y.Max <= pg.Alpha.Y.Min {
		t.Errorf("α axis %g..%g is not a valid log range", pg.Alpha.Y.Min, pg.Alpha.Y.Max)
	}
	if pg.Alpha.X.Min != pg.Resid.X.Min || pg.Alpha.X.Max != pg.Resid.X.Max {
		t.Errorf("α and residual panels do not share the energy axis")
	}
	if pg.Alpha.Y.Label.Text != "α (cm⁻¹)" || pg.Alpha.X.Label.Text != "E (eV)" {
		t.Errorf("axis labels %q, %q", pg.Alpha.Y.Label.Text, pg.Alpha.X.Label.Text)
	}
	// Render once so the plotters report their legend entries and ranges.
	c := vgimg.New(PageWidth, PageHeight)
	pg.Draw(draw.New(c))
	var text []string
	for _, l := range pg.right {
		text = append(text, l.text)
	}
	if len(text) == 0 || !bytes.HasPrefix([]byte(text[0]), []byte("E_g = 1.42")) {
		t.Errorf("first result line %q, want the gap", text)
	}
}

func TestEdgeFigureGolden(t *testing.T) {
	pg, err := EdgeFigure(edgeReport(t, 2e-4))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	got := filepath.Join(dir, "edge.png")
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
	if b := img.Bounds(); b.Dx() != int(float64(PageWidth/vg.Inch)*DPI) || b.Dy() != int(float64(PageHeight/vg.Inch)*DPI) {
		t.Errorf("image %v, want %g×%g in at %d DPI", b, float64(PageWidth/vg.Inch), float64(PageHeight/vg.Inch), DPI)
	}
	golden := filepath.Join("..", "testdata", "reports", "edge_golden.png")
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
	// delta 0.02 in YIQ space tolerates anti-aliasing differences between
	// CPUs, not a moved line or a changed label.
	ok, err := cmpimg.EqualApprox("png", raw, want, 0.02)
	if err != nil {
		t.Fatal(err)
	}
	if !ok {
		os.WriteFile(filepath.Join(os.TempDir(), "edge_failed.png"), raw, 0o644)
		t.Errorf("report differs from %s (written to %s/edge_failed.png; run -regen if the change is intended)", golden, os.TempDir())
	}
}

func TestWritePNGAtomic(t *testing.T) {
	pg, err := EdgeFigure(edgeReport(t, 2e-4))
	if err != nil {
		t.Fatal(err)
	}
	if err := WritePNG(filepath.Join(t.TempDir(), "missing", "x.png"), pg); err == nil {
		t.Error("writing into a missing folder succeeded")
	}
	if _, err := EdgeFigure(EdgeReport{}); err == nil {
		t.Error("empty report built without error")
	}
}
