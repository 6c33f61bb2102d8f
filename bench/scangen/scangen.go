// Package scangen writes a lot of synthetic spectrophotometer scans for the
// batch-throughput measurements (bench/throughput and the batch benchmarks
// of cmd/bandedge): the demo's fictional lot KM-2611 of the "Kestrel Moor"
// compound fab (cmd/bandedge/demo), at any number of sites and with 1000
// points per scan instead of the demo's 301. All of it is invented data.
//
// Each scan is a 2 µm GaAs-like slab (E_g about 1.424 eV with a radial rise,
// E_U about 8 meV, C from E_P = 28.8 eV, n = 3.6, m_e = 0.067, m_h = 0.51;
// material values from memory, Vurgaftman, Meyer & Ram-Mohan, J. Appl.
// Phys. 89, 5815, 2001), the thick-slab transmittance with Gaussian noise
// σ_T = 0.002, written as the demo's comma-separated export (preamble,
// wavelength in nm descending in 0.3 nm steps from 1000 to 700.3 nm, %T to
// three decimals). A sample sheet gives wafer, position and thickness of
// every scan; the spec file is the demo's.
package scangen

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"

	"bandedge/cmd/bandedge/demo"
	"bandedge/io/atomicfile"
	"bandedge/io/export"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// Flags are the analysis flags of the batch run, as in the demo's lot
// stage (demo.LotFlags); the thickness comes from the sample sheet.
const Flags = demo.LotFlags

// Points is the number of points per scan.
const Points = 1000

// Lot is a written lot.
type Lot struct {
	// Dir holds the scans; Sheet and Spec are the sample sheet and the
	// spec file.
	Dir, Sheet, Spec string
	// Files are the scan files in name order.
	Files []string
}

// Write writes n scans (spread over five wafers) into dir/scans, with
// dir/samples.csv and dir/spec.txt, from the given seed.
func Write(dir string, n int, seed uint64) (*Lot, error) {
	if n < 1 {
		return nil, fmt.Errorf("scangen: %d scans", n)
	}
	lot := &Lot{Dir: filepath.Join(dir, "scans"), Sheet: filepath.Join(dir, "samples.csv"), Spec: filepath.Join(dir, "spec.txt")}
	if err := os.MkdirAll(lot.Dir, 0o755); err != nil {
		return nil, err
	}
	rng := rand.New(rand.NewPCG(seed, seed+1))
	c := model.AmplitudeFromKane(demo.KaneEnergy, demo.Index, model.ReducedMass(demo.ElectronMass, demo.HoleMass))
	r := optics.FresnelR(demo.Index, 0)
	grid := synth.WavelengthGrid(700.3, 1000, 0.3)
	if len(grid) != Points {
		return nil, fmt.Errorf("scangen: grid of %d points, want %d", len(grid), Points)
	}
	var sheet strings.Builder
	sheet.WriteString("# Sample sheet of the synthetic lot KM-2611 (fictional Kestrel Moor compound fab; invented data)\n")
	sheet.WriteString("file,wafer,lot,x_mm,y_mm,thickness_um,thickness_err,temperature_k\n")
	wafers := demo.LotWafers()
	per := (n + len(wafers) - 1) / len(wafers)
	nm := make([]float64, Points)
	pt := make([]float64, Points)
	written := 0
	for _, wt := range wafers {
		k := min(per, n-written)
		pos := demo.SitePattern(max(k, 14), demo.SiteRadius) // the spiral, also for few sites
		for i := range k {
			p := pos[i]
			rr := math.Hypot(p[0], p[1]) / demo.SiteRadius
			eg := wt.Eg0 + wt.EgRise*rr*rr
			eu := wt.Eu0 + wt.EuRise*rr*rr
			d := wt.Thickness * (1 - 0.05*rr*rr)
			dSheet := d * (1 + 0.01*rng.NormFloat64())
			sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: []float64{eg, c, eu},
				E: grid, Thickness: d * 1e-4, R: r, SigmaT: 0.002}, rng)
			for j := range sc.E {
				nm[j] = math.Round(10*model.HCeVnm/sc.E[j]) / 10
				pt[j] = 100 * sc.T[j]
			}
			name := fmt.Sprintf("KM2611-%s-s%05d.csv", wt.ID, i+1)
			path := filepath.Join(lot.Dir, name)
			pre := []string{
				"Kestrel Moor Compound Fab,optical metrology (fictional synthetic data)",
				"Instrument,KM-DB2 double-beam UV-VIS-NIR",
				fmt.Sprintf("Sample,%s site %d", wt.ID, i+1),
				"Lot,KM-2611",
				fmt.Sprintf("Thickness (um),%.2f", dSheet),
			}
			err := atomicfile.Write(path, func(w io.Writer) error {
				return export.Write(w, export.Style{Preamble: pre, Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{1, 3}}, nm, pt)
			})
			if err != nil {
				return nil, err
			}
			lot.Files = append(lot.Files, path)
			fmt.Fprintf(&sheet, "%s,%s,KM-2611,%g,%g,%.3f,2%%,296\n", name, wt.ID, p[0], p[1], dSheet)
			written++
		}
	}
	if err := atomicfile.WriteBytes(lot.Sheet, []byte(sheet.String())); err != nil {
		return nil, err
	}
	if err := atomicfile.WriteBytes(lot.Spec, []byte(demo.LotSpec)); err != nil {
		return nil, err
	}
	return lot, nil
}
