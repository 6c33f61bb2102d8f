package scan_test

import (
	"bandedge/io/fuzzguard"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"bandedge/fit"
	"bandedge/fit/edge"
	"bandedge/fit/scan"
	"bandedge/io/jcampdx"
	"bandedge/io/specio"
	"bandedge/model/optics"
)

// Bounds of one FuzzAnalyze input: the seeds take well under a second
// (seven candidate models included), so the deadline catches only a loop
// that does not end; the allocation limit is far above what they take.
const (
	fzDeadline = 3 * time.Minute
	fzMaxAlloc = 4 << 30
)

// fzSettings are the settings FuzzAnalyze picks from: the batch test
// lot's (2 µm, n = 3.6 with its uncertainty), a given noise, α input
// without a thickness, forced units and window, the model comparison, a
// measured-R file's, and a sheet-style thin film with every budget input.
var fzSettings = []scan.Settings{
	{Thickness: 2e-4, Index: 3.6, IndexErr: 0.05, WavelengthErr: 0.2, Coverage: 2},
	{Thickness: 2e-4, TNoise: 0.002, Model: "direct", Coverage: 2},
	{Model: "direct+urbach", Coverage: 2},
	{Thickness: 1e-4, XUnit: specio.Nanometre, YKind: specio.TransmittancePercent, Window: [2]float64{1.35, 1.65}, Coverage: 2},
	{Thickness: 2e-4, Index: 3.6, Model: scan.Auto, Temperature: 296, Coverage: 2},
	{Thickness: 5e-5, Reflectance: 0.3, MaxAbsorbance: 2, Model: "direct+gauss+const", Coverage: 3},
	{Thickness: 2e-4, ThicknessRelErr: 0.02, Index: 3.6, IndexErr: 0.05, ElectronMass: 0.067, HoleMass: 0.51, MassRelErr: 0.05,
		Temperature: 296, TemperatureErr: 2, Material: "GaAs", Coverage: 2},
	{Thickness: 2e-4, XColumn: "1", YColumn: "2", Columns: "1,2", Coverage: 2},
}

// fzSeedDirs are the example files used as seeds: delimited text,
// JCAMP-DX, the batch test lot and the corrupted-file corpus.
var fzSeedDirs = []string{"specio", "jcampdx", filepath.Join("batch", "scans"), "corrupt"}

// FuzzAnalyze feeds arbitrary bytes to scan.Analyze under one of
// fzSettings. The contract:
//
//   - never a panic; a return within fzDeadline and fzMaxAlloc;
//   - an error is a *scan.Error naming the file and its stage; a read
//     error is a *specio.ParseError naming the file (base name) with a
//     non-negative position (or the "--columns applies to delimited text"
//     error for a JCAMP-DX file when columns are given); a convert error
//     wraps one of model/optics' sentinels; a fit error wraps a data
//     sentinel of fit/edge or fit;
//   - an Outcome has the SHA-256 of the bytes, a spectrum, a result with
//     finite parameters, and a warning whenever the fit did not converge
//     or a parameter ended on its bound.
func FuzzAnalyze(f *testing.F) {
	n := 0
	for _, d := range fzSeedDirs {
		files, err := filepath.Glob(filepath.Join("..", "..", "testdata", d, "*"))
		if err != nil {
			f.Fatal(err)
		}
		for _, p := range files {
			if strings.HasSuffix(p, ".py") || strings.HasSuffix(p, ".md") {
				continue
			}
			b, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(b, uint8(n))
			n++
		}
	}
	if n < 30 {
		f.Fatalf("only %d seed files", n)
	}
	optErrs := []error{optics.ErrNoData, optics.ErrLength, optics.ErrEnergy, optics.ErrThickness, optics.ErrKind,
		optics.ErrReflectance, optics.ErrSettings, optics.ErrNoise}
	fitErrs := []error{edge.ErrData, edge.ErrTooFewPoints, fit.ErrNoData, fit.ErrTooFewPoints, fit.ErrNonFinite, fit.ErrBounds}
	f.Fuzz(func(t *testing.T, data []byte, sel uint8) {
		s := fzSettings[int(sel)%len(fzSettings)]
		var o *scan.Outcome
		var err error
		fuzzguard.Bound(t, fzDeadline, fzMaxAlloc, "Analyze", func() {
			o, err = scan.Analyze(context.Background(), "dir/fuzz.csv", data, s)
		})
		if err != nil {
			var se *scan.Error
			if o != nil || !errors.As(err, &se) || se.File != "dir/fuzz.csv" {
				t.Fatalf("error %v (%T), outcome %v", err, err, o != nil)
			}
			switch se.Stage {
			case scan.StageRead:
				var pe *specio.ParseError
				if errors.As(err, &pe) {
					if pe.File != "fuzz.csv" || pe.Line < 0 || pe.Column < 0 || pe.Err == nil {
						t.Fatalf("bad parse error %#v", pe)
					}
					return
				}
				if s.XColumn != "" && jcampdx.Sniff(data) {
					return
				}
				t.Fatalf("read error without a position: %v", err)
			case scan.StageConvert:
				if isOne(err, optErrs) || strings.Contains(err.Error(), "cannot be converted to α") {
					return
				}
			case scan.StageFit:
				if isOne(err, fitErrs) {
					return
				}
			}
			t.Fatalf("unclassified %s error: %v", se.Stage, err)
		}
		sum := sha256.Sum256(data)
		if o.SHA256 != hex.EncodeToString(sum[:]) || o.Spectrum == nil || o.Result == nil || o.Model == nil {
			t.Fatalf("incomplete outcome %+v", o)
		}
		res := o.Result
		for _, p := range res.Params {
			if math.IsNaN(p.Value) || math.IsInf(p.Value, 0) {
				t.Fatalf("%s = %v", p.Name, p.Value)
			}
			if p.AtBound && !hasWarning(res, "bound") {
				t.Fatalf("%s on its bound without a warning", p.Name)
			}
		}
		if !res.Converged && !hasWarning(res, "did not converge") {
			t.Fatalf("not converged without a warning: %q", res.Warnings)
		}
	})
}

func isOne(err error, sentinels []error) bool {
	for _, s := range sentinels {
		if errors.Is(err, s) {
			return true
		}
	}
	return false
}

func hasWarning(res *edge.Result, s string) bool {
	for _, w := range res.Warnings {
		if strings.Contains(w, s) {
			return true
		}
	}
	return false
}
