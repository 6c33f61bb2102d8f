// Package demo holds the invented scenario of "bandedge demo": scans of
// epitaxial lift-off GaAs films from lot KM-2611 of the Kestrel Moor
// compound fab. The fab, its lot, wafers, instruments and every number are
// fictional; the spectra are made from the direct+urbach model with known
// parameters and Gaussian transmittance noise, so a new user can see the
// fitted values land within their uncertainty of the truth.
package demo

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"

	"bandedge/fit/scan"
	"bandedge/io/atomicfile"
	"bandedge/io/export"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// Seed is the seed of every random draw in the demo.
const Seed = 2611

// Material inputs of the demo films: GaAs-like values from memory
// (Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815, 2001: E_P =
// 28.8 eV, m_e = 0.067 m₀; heavy hole 0.51 m₀; n ≈ 3.6 near the edge).
const (
	Index        = 3.6
	ElectronMass = 0.067
	HoleMass     = 0.51
	KaneEnergy   = 28.8
)

// Scan is one demo scan: how it is written and what it was made from.
type Scan struct {
	// File is the file name; Style says in words how it is laid out.
	File, Style string
	// Truth are the parameters the spectrum was made from: [E_g, C, E_U].
	Truth []float64
	// Settings are the analysis settings a user would give.
	Settings scan.Settings
	// Flags is the same as a command line.
	Flags string
	// Note says what the scan shows.
	Note  string
	write func(w io.Writer, rng *rand.Rand) error
}

// amplitude is C for the demo material (model.AmplitudeFromKane).
func amplitude() float64 {
	return model.AmplitudeFromKane(KaneEnergy, Index, model.ReducedMass(ElectronMass, HoleMass))
}

func preamble(sep, sample string, thicknessUM float64) []string {
	return []string{
		"Kestrel Moor Compound Fab" + sep + "optical metrology (fictional demo data)",
		"Instrument" + sep + "KM-DB2 double-beam UV-VIS-NIR",
		"Sample" + sep + sample,
		"Lot" + sep + "KM-2611",
		fmt.Sprintf("Thickness (um)%s%.2f", sep, thicknessUM),
		"Slit (nm)" + sep + "2",
	}
}

// Scans returns the demo scans in a fixed order.
func Scans() []Scan {
	c := amplitude()
	base := scan.Settings{Index: Index, IndexErr: 0.05, ElectronMass: ElectronMass, HoleMass: HoleMass,
		MassRelErr: 0.05, WavelengthErr: 0.2, Model: "direct+urbach"}
	with := func(d, derr float64) scan.Settings {
		s := base
		s.Thickness, s.ThicknessRelErr = d*1e-4, derr/d
		return s
	}
	common := "--index 3.6 --index-err 0.05 --electron-mass 0.067 --hole-mass 0.51 --mass-err 0.05 --wavelength-err 0.2"
	return []Scan{
		{
			File: "KM2611-W03-centre.csv", Style: "comma-separated, preamble, wavelength (nm) descending, %T",
			Truth: []float64{1.4240, c, 0.0078}, Settings: with(2.0, 0.04),
			Flags: "--thickness 2.0um --thickness-err 0.04um " + common,
			Note:  "a clean film: the wavelength scale and the refractive index dominate the budget, the statistics are a fraction of them",
			write: func(w io.Writer, rng *rand.Rand) error {
				e, t := transmission(1.4240, c, 0.0078, 2.0e-4, nil, 700, 1000, 1, rng)
				nm, pt := descendingNM(e, t, 100)
				return export.Write(w, export.Style{Preamble: preamble(",", "W03 centre", 2.0),
					Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{1, 3}}, nm, pt)
			},
		},
		{
			File: "KM2611-W04-edge.txt", Style: "semicolon-separated, decimal comma, wavelength (nm) ascending, %T",
			Truth: []float64{1.4268, c, 0.0091}, Settings: with(1.8, 0.04),
			Flags: "--thickness 1.8um --thickness-err 0.04um " + common,
			Note:  "an edge site with a weak sub-gap defect background (60 cm⁻¹) the model lacks: the χ² test flags the misfit and suggests a baseline",
			write: func(w io.Writer, rng *rand.Rand) error {
				e, t := transmission(1.4268, c, 0.0091, 1.8e-4, func(float64) float64 { return 60 }, 700, 1000, 1, rng)
				nm, pt := descendingNM(e, t, 100)
				reverse(nm)
				reverse(pt)
				return export.Write(w, export.Style{Comma: ';', DecimalComma: true, Preamble: preamble(";", "W04 edge", 1.8),
					Header: []string{"Wavelength [nm]", "T [%]"}, Digits: []int{1, 3}, CRLF: true}, nm, pt)
			},
		},
		{
			File: "KM2611-W05-centre.tsv", Style: "tab-separated, wavelength (nm), decadic absorbance",
			Truth: []float64{1.4215, c, 0.0083}, Settings: with(2.2, 0.05),
			Flags: "--thickness 2.2um --thickness-err 0.05um " + common,
			Note:  "absorbance export from the same instrument",
			write: func(w io.Writer, rng *rand.Rand) error {
				e, t := transmission(1.4215, c, 0.0083, 2.2e-4, nil, 700, 1000, 0.5, rng)
				nm, a := descendingNM(e, t, 1)
				for i := range a {
					a[i] = absorbance(a[i])
				}
				return export.Write(w, export.Style{Comma: '\t', Preamble: preamble("\t", "W05 centre", 2.2),
					Header: []string{"nm", "Abs"}, Digits: []int{1, 4}}, nm, a)
			},
		},
		{
			File: "KM2611-SUB-07.csv", Style: "comma-separated, wavelength (nm), %T, a 350 µm substrate",
			Truth: []float64{1.4240, c, 0.0070}, Settings: with(350, 5),
			Flags: "--thickness 350um --thickness-err 5um " + common,
			Note:  "a thick substrate shows only the tail: E_g is an extrapolation and the tool says so",
			write: func(w io.Writer, rng *rand.Rand) error {
				e, t := transmission(1.4240, c, 0.0070, 350e-4, nil, 800, 1000, 0.5, rng)
				nm, pt := descendingNM(e, t, 100)
				return export.Write(w, export.Style{Preamble: preamble(",", "SUB-07 substrate", 350),
					Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{1, 3}}, nm, pt)
			},
		},
	}
}

// sigmaT is the demo instruments' transmittance noise (0.2 %T).
const sigmaT = 0.002

// transmission makes a noisy slab transmittance on a wavelength grid.
func transmission(eg, c, eu, d float64, baseline func(float64) float64, lo, hi, step float64, rng *rand.Rand) (e, t []float64) {
	e = synth.WavelengthGrid(lo, hi, step)
	sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: []float64{eg, c, eu}, Baseline: baseline,
		E: e, Thickness: d, R: optics.FresnelR(Index, 0), SigmaT: sigmaT}, rng)
	return sc.E, sc.T
}

// descendingNM returns the wavelengths in nm of the ascending energies e,
// hence in descending order (instruments scan from long to short
// wavelengths), rounded to 0.1 nm, and y scaled by k.
func descendingNM(e, y []float64, k float64) (nm, out []float64) {
	n := len(e)
	nm = make([]float64, n)
	out = make([]float64, n)
	for i := range e {
		nm[i] = math.Round(10*model.HCeVnm/e[i]) / 10
		out[i] = k * y[i]
	}
	return nm, out
}

func reverse(v []float64) {
	for i, j := 0, len(v)-1; i < j; i, j = i+1, j-1 {
		v[i], v[j] = v[j], v[i]
	}
}

// absorbance converts a noisy T to decadic absorbance the way instrument
// software does, writing 6 (its overflow value) where T ≤ 0.
func absorbance(t float64) float64 {
	if t <= 1e-6 {
		return 6
	}
	return -math.Log10(t)
}

// Write writes every demo scan into dir (created if needed), each
// atomically, and returns the scans with their paths.
func Write(dir string) ([]Scan, []string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, nil, err
	}
	rng := rand.New(rand.NewPCG(Seed, Seed))
	scans := Scans()
	paths := make([]string, len(scans))
	for i, s := range scans {
		paths[i] = filepath.Join(dir, s.File)
		err := atomicfile.Write(paths[i], func(w io.Writer) error { return s.write(w, rng) })
		if err != nil {
			return nil, nil, err
		}
	}
	return scans, paths, nil
}
