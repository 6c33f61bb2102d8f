package demo

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"

	"bandedge/io/atomicfile"
	"bandedge/io/export"
	"bandedge/model"
	"bandedge/model/optics"
	"bandedge/model/synth"
)

// The lot-qualification scenario: five invented 100 mm wafers of lot
// KM-2611, each mapped at a number of sites, with a radial non-uniformity
// of E_g and E_U (both rise towards the edge, as they would with a radial
// composition or strain gradient), a radial thickness profile recorded in
// the sample sheet, and one wafer (W04) grown about 9 meV high so that its
// edge sites leave the spec. Three files are deliberately bad. All of it is
// fictional.
const (
	// DefaultLotSites is the number of lot scans of "bandedge demo".
	DefaultLotSites = 65
	// WaferDiameter is the demo wafers' diameter in mm.
	WaferDiameter = 100
	// siteRadius is the largest site radius in mm (5 mm edge exclusion).
	siteRadius = 45
	// lotName is the demo lot.
	lotName = "KM-2611"
)

// waferTruth is how one demo wafer was made: E_g and E_U at the centre
// and their rise at the edge of the site pattern (eV), the centre
// thickness (µm).
type waferTruth struct {
	id          string
	eg0, egRise float64
	eu0, euRise float64
	thicknessUM float64
	description string
}

// LotSpec is the lot's spec file (bench/scangen writes it too).
const LotSpec = lotSpec

// LotWafer is how one wafer of the lot was made, for other writers of
// synthetic lots (bench/scangen): E_g and E_U at the centre and their
// rise to the edge of the site pattern (eV), and the centre thickness (µm).
type LotWafer struct {
	ID                                  string
	Eg0, EgRise, Eu0, EuRise, Thickness float64
}

// LotWafers returns the five wafers of the lot.
func LotWafers() []LotWafer {
	out := make([]LotWafer, len(lotWafers))
	for i, w := range lotWafers {
		out[i] = LotWafer{w.id, w.eg0, w.egRise, w.eu0, w.euRise, w.thicknessUM}
	}
	return out
}

// SiteRadius is the largest site radius of the lot's wafers in mm (5 mm
// edge exclusion).
const SiteRadius = siteRadius

var lotWafers = []waferTruth{
	{"W01", 1.4236, 0.0020, 0.0076, 0.0010, 2.00, "in spec"},
	{"W02", 1.4242, 0.0024, 0.0079, 0.0012, 1.95, "in spec"},
	{"W03", 1.4229, 0.0030, 0.0081, 0.0011, 2.05, "in spec, the largest radial rise of the good wafers"},
	{"W04", 1.4331, 0.0050, 0.0090, 0.0020, 2.00, "grown high: edge sites above the 1.435 eV limit, mid-radius sites straddle it"},
	{"W05", 1.4238, 0.0018, 0.0077, 0.0009, 1.98, "in spec"},
}

// Lot is the written lot scenario.
type Lot struct {
	// Dir holds the scans; Sheet and Spec are the sample sheet and spec
	// file.
	Dir, Sheet, Spec string
	// Scans counts the scan files written (good and bad); Bad names the
	// deliberately bad ones with what is wrong.
	Scans int
	Bad   map[string]string
	// Wafers describes each wafer in a line.
	Wafers []string
	// Flags are the command-line analysis flags of the batch.
	Flags string
}

// LotFlags are the analysis flags the demo batch uses: the index and the
// instrument's wavelength uncertainty; thickness comes from the sheet.
const LotFlags = "--index 3.6 --index-err 0.05 --wavelength-err 0.2"

// lotSpec is the demo spec file.
const lotSpec = `bandedge-spec 1
name "KM-2611 GaAs epi, release (fictional demo spec)"
guard expanded                        # guard band w = U, the expanded uncertainty (k = 2)

limit eg_ev            1.415 .. 1.435 # band-gap window, eV
limit urbach_ev              .. 0.012 # tail width, eV
limit chi2_reduced           .. 3
limit wafer.eg_ev.nonuniformity .. 0.0015  # (max - min)/(2 mean) over the wafer
limit wafer.eg_ev.count    5 ..       # at least five fitted sites per wafer
`

// SitePattern returns n site positions (mm) on a wafer whose sites lie
// within radius rmax: for up to 13 sites the common 13-point pattern
// (centre; four at half radius on the axes; eight on the outer ring at 45°
// steps), taken in that order; for more, a Vogel (sunflower) spiral, which
// covers the disc evenly for any n (Vogel, Math. Biosci. 44, 179, 1979).
func SitePattern(n int, rmax float64) [][2]float64 {
	var p [][2]float64
	if n <= 13 {
		p = append(p, [2]float64{0, 0})
		for k := 0; k < 4; k++ {
			a := float64(k) * math.Pi / 2
			p = append(p, [2]float64{round1(rmax / 2 * math.Cos(a)), round1(rmax / 2 * math.Sin(a))})
		}
		for k := 0; k < 8; k++ {
			a := float64(k) * math.Pi / 4
			p = append(p, [2]float64{round1(rmax * math.Cos(a)), round1(rmax * math.Sin(a))})
		}
		return p[:n]
	}
	golden := math.Pi * (3 - math.Sqrt(5))
	for i := 0; i < n; i++ {
		r := rmax * math.Sqrt((float64(i)+0.5)/float64(n))
		a := float64(i) * golden
		p = append(p, [2]float64{round1(r * math.Cos(a)), round1(r * math.Sin(a))})
	}
	return p
}

func round1(x float64) float64 {
	v := math.Round(10*x) / 10
	if v == 0 {
		return 0 // no "-0" in the sheet
	}
	return v
}

// WriteLot writes the lot scenario into dir: dir/scans/ with the scan
// files (sites in total, spread over five wafers), dir/samples.csv and
// dir/spec.txt. The draws are seeded with Seed.
func WriteLot(dir string, sites int) (*Lot, error) {
	if sites < len(lotWafers) {
		return nil, fmt.Errorf("demo lot: want at least %d sites, one per wafer", len(lotWafers))
	}
	scans := filepath.Join(dir, "scans")
	if err := os.MkdirAll(scans, 0o755); err != nil {
		return nil, err
	}
	lot := &Lot{Dir: scans, Sheet: filepath.Join(dir, "samples.csv"), Spec: filepath.Join(dir, "spec.txt"),
		Bad: map[string]string{}, Flags: LotFlags}
	rng := rand.New(rand.NewPCG(Seed, Seed+1))
	c := amplitude()
	r := optics.FresnelR(Index, 0)
	grid := synth.WavelengthGrid(700, 1000, 1)
	var sheet strings.Builder
	sheet.WriteString("# Sample sheet of the demo lot KM-2611 (fictional Kestrel Moor compound fab; invented data)\n")
	sheet.WriteString("file,wafer,lot,x_mm,y_mm,thickness_um,thickness_err,temperature_k,operator,notes\n")
	// Which sites get the bad files: a mid-radius site of W02, an edge
	// site of W03, the last site of W05.
	bad := map[[2]int]string{}
	per := sites / len(lotWafers)
	extra := sites % len(lotWafers)
	counts := make([]int, len(lotWafers))
	for w := range lotWafers {
		counts[w] = per
		if w < extra {
			counts[w]++
		}
	}
	if counts[1] > 3 {
		bad[[2]int{1, 3}] = "truncated"
	}
	if counts[2] > 7 {
		bad[[2]int{2, 7}] = "columns"
	}
	if counts[4] > 1 {
		bad[[2]int{4, counts[4] - 1}] = "binary"
	}
	for w, wt := range lotWafers {
		lot.Wafers = append(lot.Wafers, fmt.Sprintf("%s: E_g %.4f eV at the centre rising %.1f meV to the edge sites, E_U %.1f → %.1f meV; %s",
			wt.id, wt.eg0, 1e3*wt.egRise, 1e3*wt.eu0, 1e3*(wt.eu0+wt.euRise), wt.description))
		pos := SitePattern(counts[w], siteRadius)
		for i, p := range pos {
			rr := math.Hypot(p[0], p[1]) / siteRadius
			eg := wt.eg0 + wt.egRise*rr*rr
			eu := wt.eu0 + wt.euRise*rr*rr
			d := wt.thicknessUM * (1 - 0.05*rr*rr)
			// The thickness in the sheet is the value measured by another
			// tool: the truth with its own 1 % scatter, stated as 2 %.
			dSheet := d * (1 + 0.01*rng.NormFloat64())
			name := fmt.Sprintf("KM2611-%s-s%02d.csv", wt.id, i+1)
			path := filepath.Join(scans, name)
			kind, isBad := bad[[2]int{w, i}]
			note := "centre"
			if rr > 0.7 {
				note = "edge"
			} else if rr > 0.2 {
				note = "mid-radius"
			}
			var err error
			switch {
			case !isBad:
				sc := synth.Transmittance(synth.Spec{Model: model.DirectUrbach{}, Params: []float64{eg, c, eu},
					E: grid, Thickness: d * 1e-4, R: r, SigmaT: sigmaT}, rng)
				nm, pt := descendingNM(sc.E, sc.T, 100)
				err = atomicfile.Write(path, func(wr io.Writer) error {
					return export.Write(wr, export.Style{Preamble: preamble(",", wt.id+" site "+fmt.Sprint(i+1), dSheet),
						Header: []string{"Wavelength (nm)", "%T"}, Digits: []int{1, 3}}, nm, pt)
				})
			case kind == "truncated":
				// The export stopped after a few rows, in the middle of a line.
				lot.Bad[name] = "truncated: the export stopped after five rows, in the middle of the sixth"
				err = atomicfile.WriteBytes(path, []byte(strings.Join(preamble(",", wt.id, dSheet), "\n")+
					"\nWavelength (nm),%T\n1000.0,48.112\n999.0,48.090\n998.0,48.101\n997.0,48.075\n996.0,48.083\n99"))
				note += "; export interrupted"
			case kind == "columns":
				lot.Bad[name] = "wrong columns: a detector log (time, counts) saved under a scan name"
				err = atomicfile.WriteBytes(path, []byte("Time (s),Counts\n0,1021\n1,1019\n2,1024\n3,1018\n4,1022\n"))
				note += "; wrong file saved"
			default:
				lot.Bad[name] = "binary garbage: not a text export"
				b := make([]byte, 2048)
				for k := range b {
					b[k] = byte(rng.IntN(256))
				}
				b[10] = 0
				err = atomicfile.WriteBytes(path, b)
				note += "; file damaged in transfer"
			}
			if err != nil {
				return nil, err
			}
			lot.Scans++
			fmt.Fprintf(&sheet, "%s,%s,%s,%g,%g,%.3f,2%%,296,%s,%s\n", name, wt.id, lotName, p[0], p[1], dSheet,
				[]string{"ak", "jm", "rt"}[w%3], note)
		}
	}
	if err := atomicfile.WriteBytes(lot.Sheet, []byte(sheet.String())); err != nil {
		return nil, err
	}
	if err := atomicfile.WriteBytes(lot.Spec, []byte(lotSpec)); err != nil {
		return nil, err
	}
	return lot, nil
}
