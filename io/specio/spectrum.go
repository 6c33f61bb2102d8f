package specio

// Spectrum is one spectrum read from an export, with x converted to photon
// energy and y to one of three kinds.
//
// E, Y, Lines (and R when present) are parallel slices sorted by ascending
// energy, whatever the order in the file.
type Spectrum struct {
	// Name is the name given to NewReader.
	Name string

	// E is the photon energy in eV, strictly ascending.
	E []float64

	// Y is, according to Kind, the transmittance as a fraction
	// (Transmittance; percent in the file is divided by 100), the decadic
	// absorbance (Absorbance) or the absorption coefficient in cm⁻¹ (Alpha).
	// Slightly negative transmittance and values a little above 1 are
	// instrument noise and are kept as read.
	Y []float64

	// R is the reflectance as a fraction, nil if the export has no
	// reflectance column.
	R []float64

	// Kind is Transmittance, Absorbance or Alpha.
	Kind YKind

	// SourceXUnit is the unit x had in the file (or was given by the
	// XUnit option).
	SourceXUnit XUnit

	// SourceYKind is the kind y had in the file, e.g. TransmittancePercent.
	SourceYKind YKind

	// Lines holds the 1-based source line of each point, in the order of E.
	Lines []int

	// XHeader, YHeader and RHeader are the header texts of the columns used
	// ("" when the file has no header, or no R column).
	XHeader, YHeader, RHeader string

	// Meta holds the key/value pairs found in the preamble and in comment
	// lines ("Instrument: ...", "Sample,W07", "Date;2026-03-01"). A key
	// that occurs twice has its values joined with "; ". Never nil.
	Meta map[string]string

	// Notes says in plain words what detection decided, e.g.
	// `x column 1 "Wavelength (nm)": wavelength in nm`.
	Notes []string
}

// Len returns the number of points.
func (s *Spectrum) Len() int { return len(s.E) }
