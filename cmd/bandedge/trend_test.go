package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bandedge/fit/trend"
	"bandedge/io/export"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

func TestNewTrendCmd(t *testing.T) {
	var got *trendOptions
	cmd := newTrendCmd(func(_ context.Context, o *trendOptions) error { got = o; return nil })
	cmd.SetArgs(strings.Fields("a_10K.csv b_300K.csv --thickness 2um --index 3.6 --json"))
	cmd.SetOut(&bytes.Buffer{})
	cmd.SetErr(&bytes.Buffer{})
	if err := cmd.Execute(); err != nil {
		t.Fatal(err)
	}
	if len(got.Files) != 2 || got.From != "name" || !got.JSON || got.Settings.Thickness != 2e-4 {
		t.Errorf("options %+v", got)
	}
	for _, bad := range []string{"--temperature-from sheet a.csv --thickness 1um", "--temperature-from column a.csv --thickness 1um",
		"--thickness 1um", "a.csv --thickness 1um --report x.svg"} {
		cmd := newTrendCmd(func(context.Context, *trendOptions) error { return nil })
		cmd.SetArgs(strings.Fields(bad))
		cmd.SetOut(&bytes.Buffer{})
		cmd.SetErr(&bytes.Buffer{})
		if err := cmd.Execute(); err == nil {
			t.Errorf("%q: no error", bad)
		}
	}
}

// TestRunTrend: scans of a synthetic GaAs-like film made at nine
// temperatures with gaps on the Varshni curve of Vurgaftman et al. (J.
// Appl. Phys. 89, 5815, 2001, parameters from memory: E_g(0) = 1.519 eV,
// a = 0.5405 meV/K, b = 204 K) give back E_g(300 K) = 1.4223 eV within the
// reported uncertainty.
func TestRunTrend(t *testing.T) {
	if testing.Short() {
		t.Skip("fits nine scans")
	}
	dir := t.TempDir()
	c := model.AmplitudeFromKane(28.8, 3.6, model.ReducedMass(0.067, 0.51))
	rng := rand.New(rand.NewPCG(77, 77))
	var files []string
	for _, temp := range []float64{20, 60, 100, 150, 200, 250, 300, 350, 400} {
		eg := trend.Varshni{}.Eval(temp, []float64{1.519, 0.5405e-3, 204}, nil)
		e := synth.WavelengthGrid(650, 1000, 1)
		sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: []float64{eg, c, 0.006 + 1e-5*temp}, E: e,
			Thickness: 2e-4, R: optics.FresnelR(3.6, 0), SigmaT: 0.002}, rng)
		nm := make([]float64, len(e))
		for i := range e {
			nm[i] = model.HCeVnm / e[i]
		}
		var buf bytes.Buffer
		if err := export.Write(&buf, export.Style{Header: []string{"Wavelength (nm)", "T"}, Digits: []int{2, 5}}, nm, sc.T); err != nil {
			t.Fatal(err)
		}
		f := filepath.Join(dir, fmt.Sprintf("film_%gK.csv", temp))
		if err := os.WriteFile(f, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		files = append(files, f)
	}
	// The same series with the temperatures from a sample sheet instead of
	// the file names.
	sheetPath := filepath.Join(dir, "sheet.csv")
	var sb strings.Builder
	sb.WriteString("file,temperature_k\n")
	for _, f := range files {
		temp, _ := strings.CutSuffix(strings.TrimPrefix(filepath.Base(f), "film_"), "K.csv")
		fmt.Fprintf(&sb, "%s,%s\n", filepath.Base(f), temp)
	}
	if err := os.WriteFile(sheetPath, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	var out2, errOut2 bytes.Buffer
	args2 := append([]string{"trend"}, files...)
	args2 = append(args2, "--thickness", "2um", "--index", "3.6", "--json", "--temperature-from", "column", "--samples", sheetPath)
	if code := run(context.Background(), args2, &out2, &errOut2); code != exitOK {
		t.Fatalf("column mode: exit %d: %s", code, errOut2.String())
	}
	report := filepath.Join(dir, "trend.png")
	var out, errOut bytes.Buffer
	args := append([]string{"trend"}, files...)
	args = append(args, "--thickness", "2um", "--index", "3.6", "--json", "--report", report)
	if code := run(context.Background(), args, &out, &errOut); code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut.String())
	}
	var rec trendRecord
	if err := json.Unmarshal(out.Bytes(), &rec); err != nil {
		t.Fatal(err)
	}
	if len(rec.Points) != 9 || len(rec.Fits) != 2 {
		t.Fatalf("%d points, %d fits", len(rec.Points), len(rec.Fits))
	}
	for _, f := range rec.Fits {
		eg, u := f.Eg300.Float(), f.Eg300Err.Float()
		if math.Abs(eg-1.4223) > 3*u+3e-4 {
			t.Errorf("%s: E_g(300 K) = %.5f ± %.2g, want 1.4223", f.Form, eg, u)
		}
	}
	if st, err := os.Stat(report); err != nil || st.Size() < 10000 {
		t.Errorf("report: %v", err)
	}
	var rec2 trendRecord
	if err := json.Unmarshal(out2.Bytes(), &rec2); err != nil {
		t.Fatal(err)
	}
	for i := range rec.Fits {
		if rec2.Fits[i].Eg300 != rec.Fits[i].Eg300 {
			t.Errorf("%s: E_g(300 K) %v from the sheet, %v from the names", rec.Fits[i].Form, rec2.Fits[i].Eg300, rec.Fits[i].Eg300)
		}
	}
}
