// Package scan analyses one spectrophotometer scan end to end: it reads the
// export (io/specio for delimited text, io/jcampdx for JCAMP-DX, chosen by
// content), converts it to α(E) with its noise and mask
// (model/optics) and fits the edge (fit/edge). Batch work, the fit command
// and the claim check all go through Analyze, so every path computes the
// same numbers from the same settings.
package scan

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"bandedge/fit/edge"
	"bandedge/io/jcampdx"
	"bandedge/io/specio"
	"bandedge/model"
	"bandedge/model/material"
	"bandedge/model/optics"
)

// Stage says which step of the analysis failed.
type Stage string

// The stages of Analyze.
const (
	StageRead    Stage = "read"
	StageConvert Stage = "convert"
	StageFit     Stage = "fit"
)

// Error is a failure of one scan, with the stage where it happened.
type Error struct {
	File  string
	Stage Stage
	Err   error
}

func (e *Error) Error() string {
	var pe *specio.ParseError
	if errors.As(e.Err, &pe) {
		// A parse error already names the file and line.
		return e.Err.Error()
	}
	return fmt.Sprintf("%s: %s: %v", e.File, e.Stage, e.Err)
}

func (e *Error) Unwrap() error { return e.Err }

// MaxFileBytes bounds the size of a scan file (64 MiB).
const MaxFileBytes = specio.DefaultMaxBytes

// Settings are all the inputs that affect the numbers. The zero value is
// not usable: Thickness is required for transmittance and absorbance
// input.
type Settings struct {
	// Reading: overrides of the detection (zero values detect).
	XUnit                     specio.XUnit `json:"x_unit,omitempty"`
	YKind                     specio.YKind `json:"y_kind,omitempty"`
	XColumn, YColumn, RColumn string       `json:"-"`
	Columns                   string       `json:"columns,omitempty"`

	// Thickness is the sample thickness in cm; ThicknessRelErr its
	// relative standard uncertainty.
	Thickness       float64 `json:"thickness_cm"`
	ThicknessRelErr float64 `json:"thickness_rel_err,omitempty"`
	// Index is the refractive index near the edge (0: none given) and
	// IndexErr its standard uncertainty. When no reflectance is given
	// otherwise, the slab inversion uses the Fresnel reflectance of Index.
	Index    float64 `json:"index,omitempty"`
	IndexErr float64 `json:"index_err,omitempty"`
	// Reflectance is a constant single-face reflectance (0: none). It
	// takes precedence over a measured R column and over Index.
	Reflectance float64 `json:"reflectance,omitempty"`
	// TNoise is the transmittance noise σ_T as a fraction; 0 estimates it
	// from the data.
	TNoise float64 `json:"t_noise,omitempty"`
	// MaxAbsorbance is the instrument floor; 0 means
	// optics.DefaultMaxAbsorbance.
	MaxAbsorbance float64 `json:"max_absorbance,omitempty"`

	// Model is the edge model name (model.LookupConfig, e.g.
	// "direct+urbach", "indirect+gauss+const"); "" means "direct+urbach";
	// Auto compares Candidates (or AutoCandidates) and keeps the best.
	Model string `json:"model"`
	// Candidates are the models compared when Model is Auto.
	Candidates []string `json:"candidates,omitempty"`
	// Window forces the fit window (eV); zero selects the automatic rule.
	Window [2]float64 `json:"window_ev,omitempty"`
	// ElectronMass and HoleMass (m₀) ask for the Kane energy; MassRelErr
	// is the relative standard uncertainty of the reduced mass.
	ElectronMass float64 `json:"electron_mass,omitempty"`
	HoleMass     float64 `json:"hole_mass,omitempty"`
	MassRelErr   float64 `json:"mass_rel_err,omitempty"`
	// Temperature is the sample temperature in K (0: not given). The
	// indirect model needs it for its phonon occupation.
	Temperature float64 `json:"temperature_k,omitempty"`
	// TemperatureErr is the standard uncertainty of the sample temperature
	// in K (0: no term in the budget).
	TemperatureErr float64 `json:"temperature_err_k,omitempty"`
	// Material names a preset (model/material) whose Varshni parameters
	// give dE_g/dT for the temperature term; "" uses the typical value.
	Material string `json:"material,omitempty"`
	// WavelengthErr is the wavelength-scale standard uncertainty in nm.
	WavelengthErr float64 `json:"wavelength_err_nm,omitempty"`
	// Coverage is the coverage factor k (0: edge.DefaultCoverage).
	Coverage float64 `json:"coverage_factor,omitempty"`
}

// Outcome is everything known about one analysed scan.
type Outcome struct {
	// Path is the file as given; SHA256 the hex digest of its bytes.
	Path   string
	SHA256 string
	// Spectrum is the export as read.
	Spectrum *specio.Spectrum
	// Conversion is the α conversion with its mask and noise.
	Conversion *optics.Result
	// Reflectance says where the reflectance correction came from.
	Reflectance string
	// Data is what the fit saw.
	Data edge.Data
	// Model is the fitted model and Result the analysis (for Model "auto",
	// the recommended candidate's).
	Model  model.Model
	Result *edge.Result
	// Comparison holds every candidate when Model is "auto", else nil.
	Comparison *edge.Comparison
	// Settings are the settings the scan was analysed with.
	Settings Settings
}

// AnalyzeFile reads the file at path and analyses it.
func AnalyzeFile(ctx context.Context, path string, s Settings) (*Outcome, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &Error{File: path, Stage: StageRead, Err: err}
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, MaxFileBytes+1))
	if err != nil {
		return nil, &Error{File: path, Stage: StageRead, Err: err}
	}
	return Analyze(ctx, path, b, s)
}

// Analyze analyses the export content b; name is used in messages.
func Analyze(ctx context.Context, name string, b []byte, s Settings) (*Outcome, error) {
	sum := sha256.Sum256(b)
	o := &Outcome{Path: name, SHA256: hex.EncodeToString(sum[:]), Settings: s}
	cands, err := Models(s)
	if err != nil {
		return nil, &Error{File: name, Stage: StageFit, Err: err}
	}
	o.Model = cands[0]

	sp, err := read(b, filepath.Base(name), s)
	if err != nil {
		return nil, &Error{File: name, Stage: StageRead, Err: err}
	}
	o.Spectrum = sp

	data, conv, how, err := Convert(sp, s, s.Index)
	if err != nil {
		return nil, &Error{File: name, Stage: StageConvert, Err: err}
	}
	o.Data, o.Conversion, o.Reflectance = data, conv, how

	opts := edge.Options{
		Model:           cands[0],
		Window:          s.Window,
		Coverage:        s.Coverage,
		WavelengthErr:   s.WavelengthErr,
		ThicknessRelErr: s.ThicknessRelErr,
	}
	if s.TemperatureErr > 0 {
		opts.TemperatureErr = s.TemperatureErr
		opts.DGapDT, opts.DGapDTSource = gapSlope(s)
	}
	if s.ElectronMass > 0 && s.HoleMass > 0 && s.Index > 0 {
		opts.Kane = &edge.KaneInputs{Index: s.Index, ElectronMass: s.ElectronMass, HoleMass: s.HoleMass, MassRelErr: s.MassRelErr}
	}
	if s.Index > 0 && s.IndexErr > 0 {
		ix := &edge.IndexInput{Value: s.Index, Err: s.IndexErr}
		if how == reflFromIndex {
			ix.Reconvert = func(n float64) (edge.Data, error) {
				d, _, _, err := Convert(sp, s, n)
				return d, err
			}
		}
		opts.Index = ix
	}
	if s.Model == Auto {
		cmp, err := edge.Compare(ctx, data, cands, opts)
		if err != nil {
			return nil, &Error{File: name, Stage: StageFit, Err: err}
		}
		o.Comparison = cmp
		o.Model = cands[cmp.Recommended]
		o.Result = cmp.Best()
		return o, nil
	}
	res, err := edge.Analyze(ctx, data, opts)
	if err != nil {
		return nil, &Error{File: name, Stage: StageFit, Err: err}
	}
	o.Result = res
	return o, nil
}

// gapSlope returns dE_g/dT for the temperature term and where it came
// from: the Varshni parameters of s.Material at s.Temperature (300 K when
// not given), else material.TypicalDGapDT.
func gapSlope(s Settings) (float64, string) {
	t := s.Temperature
	at := fmt.Sprintf("at %g K", t)
	if !(t > 0) {
		t, at = 300, "at 300 K (no --temperature given)"
	}
	if m, err := material.Lookup(s.Material); err == nil && s.Material != "" {
		return m.DGapDT(t), fmt.Sprintf("= %.3g meV/K from the Varshni parameters of %s %s (%s)", 1e3*m.DGapDT(t), m.Name, at, m.Source)
	}
	return material.TypicalDGapDT, fmt.Sprintf("= %.3g meV/K, a typical value for III–V semiconductors near room temperature (common practice; give --material for a material's own)", 1e3*material.TypicalDGapDT)
}

// Auto is the model name that asks for a comparison of candidate models.
const Auto = "auto"

// AutoCandidates are the models compared by Model "auto" when
// Settings.Candidates is empty, the first being the reference that sets
// the common window: the direct edge with the exponential (Urbach),
// Gaussian and free-θ tails and with a constant sub-gap baseline, the
// direct forbidden edge, the excitonic edge, and, when the sample
// temperature is known, the indirect edge.
var AutoCandidates = []string{
	"direct+urbach", "direct+gauss", "direct+theta", "direct+urbach+const",
	"direct-forbidden+urbach", "exciton+urbach", "indirect+urbach",
}

// Models returns the model of s, or for Model "auto" the candidates
// (Settings.Candidates, else AutoCandidates without the indirect edge when
// no temperature is given).
func Models(s Settings) ([]model.Model, error) {
	cfg := model.Config{Temperature: s.Temperature}
	if s.Model != Auto {
		m, err := model.LookupConfig(modelName(s.Model), cfg)
		if err != nil {
			return nil, err
		}
		return []model.Model{m}, nil
	}
	names := s.Candidates
	if len(names) == 0 {
		for _, n := range AutoCandidates {
			if band, _, _, _ := model.ParseName(n); band == "indirect" && !(s.Temperature > 0) {
				continue
			}
			names = append(names, n)
		}
	}
	var ms []model.Model
	for _, n := range names {
		m, err := model.LookupConfig(n, cfg)
		if err != nil {
			return nil, fmt.Errorf("candidate %s: %w", n, err)
		}
		ms = append(ms, m)
	}
	if len(ms) == 0 {
		return nil, fmt.Errorf("%w: no candidate models", model.ErrUnknownModel)
	}
	return ms, nil
}

// read chooses the reader by content, not by the file extension: a file
// whose first record is ##TITLE= is JCAMP-DX (jcampdx.Sniff), anything else
// delimited text (io/specio). Column choices (--columns) apply only to
// delimited text; a JCAMP-DX file has one abscissa and one ordinate.
func read(b []byte, name string, s Settings) (*specio.Spectrum, error) {
	if jcampdx.Sniff(b) {
		if s.XColumn != "" || s.YColumn != "" || s.RColumn != "" {
			return nil, fmt.Errorf("%s is a JCAMP-DX file: --columns applies to delimited text only", name)
		}
		r := jcampdx.NewReader(bytes.NewReader(b), name)
		r.XUnit, r.YKind = s.XUnit, s.YKind
		return r.Read()
	}
	r := specio.NewReader(bytes.NewReader(b), name)
	r.XUnit, r.YKind = s.XUnit, s.YKind
	r.XColumn, r.YColumn, r.RColumn = s.XColumn, s.YColumn, s.RColumn
	return r.Read()
}

func modelName(n string) string {
	if n == "" {
		return model.DirectUrbach{}.Name()
	}
	return n
}

// Where the reflectance correction came from.
const (
	reflNone      = "none (α = −ln T / d)"
	reflConstant  = "constant R"
	reflMeasured  = "measured R column"
	reflFromIndex = "Fresnel R from the refractive index"
)

// Convert turns a spectrum into fit data with the reflectance chosen by
// the precedence of Settings.Reflectance (constant R, then a measured R
// column, then the Fresnel R of index n, else none). It also returns the
// conversion and a description of the reflectance used. For transmittance
// and absorbance input the data carry the transmission view
// (edge.Data.Transmission: T, R per point, σ_T, thickness, floor), so that
// the edge is fitted in transmittance space; α input is fitted in α with
// relative weights.
func Convert(sp *specio.Spectrum, s Settings, n float64) (edge.Data, *optics.Result, string, error) {
	kind, err := opticsKind(sp.Kind)
	if err != nil {
		return edge.Data{}, nil, "", err
	}
	cs := &optics.Settings{SigmaT: s.TNoise, MaxAbsorbance: s.MaxAbsorbance}
	how := reflNone
	switch {
	case kind == optics.AlphaInput:
		how = "not applicable (α given)"
	case s.Reflectance > 0:
		cs.RConst, how = s.Reflectance, reflConstant
	case sp.R != nil:
		cs.R, how = sp.R, reflMeasured
	case n > 0:
		cs.Index, how = optics.ConstIndex(n), reflFromIndex
	}
	d := s.Thickness
	if kind == optics.AlphaInput && !(d > 0) {
		d = 1 // α input needs no thickness; ToAlpha ignores it
	}
	conv, err := optics.ToAlpha(sp.E, sp.Y, kind, d, cs)
	if err != nil {
		if errors.Is(err, optics.ErrThickness) {
			err = fmt.Errorf("%w (give --thickness with a unit, e.g. 1.2um)", err)
		}
		return edge.Data{}, nil, "", err
	}
	data := edge.Data{E: sp.E, Alpha: conv.Alpha, Sigma: conv.Sigma, Mask: conv.Mask,
		SigmaKnown: s.TNoise > 0 && kind != optics.AlphaInput, RelativeSigma: conv.RelativeWeights}
	if kind != optics.AlphaInput {
		// The fit itself runs in transmittance space, where the
		// photometric noise is Gaussian with a constant σ_T (see
		// edge.Transmission); α, σ_α and the mask above serve the start
		// values, the constructions and the report.
		data.Transmission = &edge.Transmission{T: conv.T, R: conv.R, SigmaT: conv.SigmaT, Thickness: d, MaxAbsorbance: conv.MaxAbsorbance}
	}
	return data, conv, how, nil
}

func opticsKind(k specio.YKind) (optics.Kind, error) {
	switch k {
	case specio.Transmittance:
		return optics.Transmittance, nil
	case specio.Absorbance:
		return optics.Absorbance, nil
	case specio.Alpha:
		return optics.AlphaInput, nil
	}
	return 0, fmt.Errorf("ordinate kind %v cannot be converted to α", k)
}
