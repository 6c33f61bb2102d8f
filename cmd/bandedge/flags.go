package main

import (
	"errors"
	"fmt"
	"strings"

	"github.com/spf13/pflag"

	"bandedge/fit/scan"
	"bandedge/io/quantity"
	"bandedge/io/specio"
	"bandedge/model"
	"bandedge/model/material"
)

// analysisFlags are the flags that affect the numbers, shared by every
// command that fits scans. Unit-bearing values are kept as text until
// settings() parses them.
type analysisFlags struct {
	Thickness     string
	ThicknessErr  string
	Index         float64
	IndexErr      float64
	Reflectance   float64
	XUnit         string
	YKind         string
	Columns       string
	TNoise        string
	MaxAbsorbance float64
	Model         string
	Tail          string
	Baseline      string
	Candidates    string
	Temperature   float64
	TempErr       float64
	Material      string
	Window        string
	ElectronMass  float64
	HoleMass      float64
	MassErr       float64
	WavelengthErr float64
	Coverage      float64
}

func (f *analysisFlags) register(fs *pflag.FlagSet) {
	fs.StringVar(&f.Thickness, "thickness", "", "sample thickness with a unit: nm, um (µm), mm or cm, e.g. 1.2um (required for T and A input)")
	fs.StringVar(&f.ThicknessErr, "thickness-err", "", "standard uncertainty of the thickness, as a length (0.05um) or a percentage (2%)")
	fs.Float64Var(&f.Index, "index", 0, "refractive index near the edge; gives the Fresnel reflectance and enters E_P")
	fs.Float64Var(&f.IndexErr, "index-err", 0, "standard uncertainty of the refractive index")
	fs.Float64Var(&f.Reflectance, "reflectance", 0, "constant single-face reflectance R (fraction), instead of one from --index or a measured R column")
	fs.StringVar(&f.XUnit, "x-unit", "", "unit of the x column when detection fails: nm, um, ev, cm-1")
	fs.StringVar(&f.YKind, "y-kind", "", "kind of the y column when detection fails: T, T%, A, alpha")
	fs.StringVar(&f.Columns, "columns", "", "x and y columns (and optionally R) by header name or 1-based index, e.g. 1,3 or \"Wavelength,%T\"")
	fs.StringVar(&f.TNoise, "t-noise", "", "transmittance noise σ_T as a fraction (0.002) or in %T (0.2%); default: estimated from the data")
	fs.Float64Var(&f.MaxAbsorbance, "max-absorbance", 0, "instrument floor: mask points with absorbance above this (default 3.5)")
	fs.StringVar(&f.Model, "model", "direct+urbach", "edge model: a band ("+strings.Join(model.Bands(), ", ")+
		") with an optional +tail and +baseline, e.g. indirect+gauss+const; or auto to fit the candidates and rank them by AIC")
	fs.StringVar(&f.Tail, "tail", "", "tail (broadening) of the model: "+strings.Join(model.Tails(), ", ")+"; replaces the tail named in --model")
	fs.StringVar(&f.Baseline, "baseline", "", "sub-gap baseline fitted with the edge: "+strings.Join(model.Baselines(), " or "))
	fs.StringVar(&f.Candidates, "candidates", "", "comma-separated models compared by --model auto (default: "+strings.Join(scan.AutoCandidates, ", ")+")")
	fs.Float64Var(&f.Temperature, "temperature", 0, "sample temperature in K (the indirect model needs it)")
	fs.Float64Var(&f.TempErr, "temperature-err", 0, "standard uncertainty of the sample temperature in K (adds dE_g/dT·u(T) to the budget)")
	fs.StringVar(&f.Material, "material", "", "material preset ("+strings.Join(material.Names(), ", ")+"): default index and masses, and dE_g/dT for --temperature-err (values from memory of the handbooks named in the README)")
	fs.StringVar(&f.Window, "window", "", "force the fit window LO:HI in eV, e.g. 1.35:1.65 (default: automatic, see README)")
	fs.Float64Var(&f.ElectronMass, "electron-mass", 0, "electron effective mass in m₀, for E_P")
	fs.Float64Var(&f.HoleMass, "hole-mass", 0, "hole effective mass in m₀, for E_P")
	fs.Float64Var(&f.MassErr, "mass-err", 0, "relative standard uncertainty of the reduced mass, e.g. 0.05")
	fs.Float64Var(&f.WavelengthErr, "wavelength-err", 0, "standard uncertainty of the instrument's wavelength scale in nm")
	fs.Float64Var(&f.Coverage, "coverage-factor", 2, "coverage factor k of the expanded uncertainty U = k·u_c")
}

// settings validates the flags and converts them to scan settings. Every
// error is a flagError.
func (f *analysisFlags) settings() (scan.Settings, error) {
	var s scan.Settings
	var err error
	if f.Material != "" {
		m, err := material.Lookup(f.Material)
		if err != nil {
			return s, flagErrorf("--material: %v", err)
		}
		s.Material = m.Name
		// The preset fills what the command line leaves out.
		if f.Index == 0 {
			f.Index = m.Index
		}
		if f.ElectronMass == 0 && f.HoleMass == 0 && m.ElectronMass > 0 {
			f.ElectronMass, f.HoleMass = m.ElectronMass, m.HoleMass
		}
	}
	if f.Thickness != "" {
		if s.Thickness, err = quantity.ParseLength(f.Thickness); err != nil {
			return s, flagErrorf("--thickness: %v", err)
		}
	}
	if f.ThicknessErr != "" {
		if s.ThicknessRelErr, err = quantity.ParseLengthErr(f.ThicknessErr, s.Thickness); err != nil {
			return s, flagErrorf("--thickness-err: %v", err)
		}
	}
	if f.Index < 0 || (f.Index > 0 && f.Index < 1) || f.Index > 10 {
		return s, flagErrorf("--index %g: want a refractive index between 1 and 10", f.Index)
	}
	s.Index = f.Index
	if f.IndexErr < 0 || (f.IndexErr > 0 && f.Index == 0) {
		return s, flagErrorf("--index-err needs --index and must not be negative")
	}
	s.IndexErr = f.IndexErr
	if f.Reflectance < 0 || f.Reflectance >= 1 {
		return s, flagErrorf("--reflectance %g: want a fraction in [0, 1)", f.Reflectance)
	}
	s.Reflectance = f.Reflectance
	if f.XUnit != "" {
		if s.XUnit, err = specio.ParseXUnit(f.XUnit); err != nil {
			return s, flagErrorf("--x-unit: %v", err)
		}
	}
	if f.YKind != "" {
		if s.YKind, err = specio.ParseYKind(f.YKind); err != nil {
			return s, flagErrorf("--y-kind: %v", err)
		}
	}
	if f.Columns != "" {
		if s.XColumn, s.YColumn, s.RColumn, err = specio.ParseColumns(f.Columns); err != nil {
			return s, flagErrorf("%v", err)
		}
		s.Columns = f.Columns
	}
	if f.TNoise != "" {
		if s.TNoise, err = quantity.ParseNoise(f.TNoise); err != nil {
			return s, flagErrorf("--t-noise: %v", err)
		}
	}
	if f.MaxAbsorbance < 0 || (f.MaxAbsorbance > 0 && f.MaxAbsorbance < 0.5) {
		return s, flagErrorf("--max-absorbance %g: want a value of at least 0.5", f.MaxAbsorbance)
	}
	s.MaxAbsorbance = f.MaxAbsorbance
	if f.TempErr < 0 || f.TempErr > 500 {
		return s, flagErrorf("--temperature-err %g K: want a value in [0, 500]", f.TempErr)
	}
	s.TemperatureErr = f.TempErr
	if f.Temperature < 0 || f.Temperature > 5000 {
		return s, flagErrorf("--temperature %g K: want a temperature in kelvin between 0 and 5000", f.Temperature)
	}
	s.Temperature = f.Temperature
	if s.Model, err = f.modelName(); err != nil {
		return s, err
	}
	if f.Candidates != "" {
		if s.Model != scan.Auto {
			return s, flagErrorf("--candidates goes with --model auto")
		}
		for _, c := range strings.Split(f.Candidates, ",") {
			s.Candidates = append(s.Candidates, strings.TrimSpace(c))
		}
	}
	if _, err := scan.Models(s); err != nil {
		if errors.Is(err, model.ErrTemperature) {
			return s, flagErrorf("the indirect model needs the sample temperature: give --temperature in kelvin")
		}
		return s, flagErrorf("--model: %v", err)
	}
	if f.Window != "" {
		if s.Window, err = quantity.ParseWindow(f.Window); err != nil {
			return s, flagErrorf("--window: %v", err)
		}
	}
	if (f.ElectronMass > 0) != (f.HoleMass > 0) || f.ElectronMass < 0 || f.HoleMass < 0 {
		return s, flagErrorf("--electron-mass and --hole-mass go together and must be positive")
	}
	if f.ElectronMass > 0 && f.Index == 0 {
		return s, flagErrorf("E_P needs the refractive index: give --index with the masses")
	}
	s.ElectronMass, s.HoleMass = f.ElectronMass, f.HoleMass
	if f.MassErr < 0 || f.MassErr >= 1 {
		return s, flagErrorf("--mass-err %g: want a relative uncertainty in [0, 1)", f.MassErr)
	}
	s.MassRelErr = f.MassErr
	if f.WavelengthErr < 0 || f.WavelengthErr > 50 {
		return s, flagErrorf("--wavelength-err %g nm: want a value in [0, 50]", f.WavelengthErr)
	}
	s.WavelengthErr = f.WavelengthErr
	if !(f.Coverage > 0) || f.Coverage > 10 {
		return s, flagErrorf("--coverage-factor %g: want a value in (0, 10]", f.Coverage)
	}
	s.Coverage = f.Coverage
	return s, nil
}

// modelName composes the model name from --model, --tail and --baseline.
func (f *analysisFlags) modelName() (string, error) {
	if strings.EqualFold(strings.TrimSpace(f.Model), scan.Auto) {
		if f.Tail != "" || f.Baseline != "" {
			return "", flagErrorf("--tail and --baseline do not go with --model auto; list the models with --candidates")
		}
		return scan.Auto, nil
	}
	band, tail, base, err := model.ParseName(f.Model)
	if err != nil {
		return "", flagErrorf("--model: %v", err)
	}
	if f.Tail != "" {
		tail = strings.ToLower(strings.TrimSpace(f.Tail))
	}
	if f.Baseline != "" {
		base = strings.ToLower(strings.TrimSpace(f.Baseline))
	}
	name := band
	if tail != "none" {
		name += "+" + tail
	}
	if base != "" {
		name += "+" + base
	}
	return name, nil
}

// describeInput returns the lines that describe a scan's input and
// conversion, for the text output and the report.
func describeInput(o *scan.Outcome) []string {
	c, sp, s := o.Conversion, o.Spectrum, o.Settings
	var lines []string
	lines = append(lines, fmt.Sprintf("input: %s (%s), %d points", sp.SourceYKind, sp.SourceXUnit, len(sp.E)))
	if !c.RelativeWeights {
		lines = append(lines, fmt.Sprintf("thickness %s; reflectance: %s", lengthText(s.Thickness), o.Reflectance))
		how := "estimated from the data"
		if !c.SigmaTEstimated {
			how = "given"
		}
		lines = append(lines, fmt.Sprintf("σ_T = %.2g (%s); floor A ≤ %g", c.SigmaT, how, c.MaxAbsorbance))
	} else {
		lines = append(lines, fmt.Sprintf("α given: relative weights, %.2g %% noise assumed", 100*c.RelNoise))
	}
	var masked []string
	for _, r := range maskReasons(o) {
		masked = append(masked, r)
	}
	if len(masked) > 0 {
		lines = append(lines, "masked: "+strings.Join(masked, "; "))
	}
	return lines
}
