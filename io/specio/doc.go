// Package specio reads delimited-text spectrophotometer exports: one
// spectrum per file, x as wavelength, photon energy or wavenumber, y as
// transmittance, absorbance or absorption coefficient, optionally a
// reflectance column. It is shaped like encoding/csv: options are exported
// fields of a Reader, set before Read.
//
//	f, err := os.Open("wafer07.csv")
//	if err != nil {
//		return err
//	}
//	defer f.Close()
//	r := specio.NewReader(f, "wafer07.csv") // the name is used only in errors
//	r.YKind = specio.TransmittancePercent   // optional: as --y-kind T%
//	s, err := r.Read()
//	if err != nil {
//		return err // e.g. wafer07.csv:17:9: "0,93" is not a number (is the decimal separator a comma?)
//	}
//	// s.E is in eV, ascending; s.Y is T as a fraction (s.Kind == specio.Transmittance).
//
// Units are converted once, here: x to photon energy in eV
// (E = 1239.841984/λ[nm], E = 1.239841984e-4·ν̃[cm⁻¹]; see HC), percent to
// a fraction. Absorbance and α are passed through.
//
// # Input
//
// Text in UTF-8 (with or without a byte-order mark) or UTF-16 LE/BE with a
// byte-order mark; input that is not UTF-8 but is plain Windows-1252
// (Latin-1) text, as older Windows instrument software writes it ("µm" as
// the byte 0xB5), is read as such and Notes says so; LF, CRLF or CR line
// endings. Cells are separated by
// commas, semicolons, tabs or runs of blanks; with semicolons, tabs or
// blanks the decimal separator may be a comma ("0,93"). Before the header
// may come any number of preamble lines; those that look like "key: value",
// "key=value" or "key<separator>value" go into Spectrum.Meta, as do
// "key: value" comment lines. Comment lines (Reader.Comment, '#' by default)
// and blank lines are skipped anywhere. After the data may come a trailing
// block (statistics, a "scan end" stamp): content lines after the last
// numeric row, none of which starts like a data row (a number, a sign or a
// decimal mark before a digit); they go into Meta and Notes says which lines
// they were. A damaged last row (a number and too few cells) is never taken
// for a trailer.
//
// # Detection
//
//   - Layout: a numeric row is one whose first cell and at least one more are
//     numbers. Each separator and decimal mark is scored on the 32 content
//     lines from the first line that any of them reads as a numeric row (a
//     numeric row scores 1, 2 if every cell is a number); the best wins, ties
//     going to tab, semicolon, comma, blanks, and to the decimal point. The
//     data start at its first numeric row that is followed by another (or
//     ends the file), and take in the lines just above that start with a
//     number, so that a bad first row is reported where it is.
//   - Header: the nearest non-comment line above the data, if it has no
//     numbers and either names a known quantity or has one cell per column; a
//     units line under a names line ("Wavelength;T" over "nm;%") is merged;
//     else a comment line that names known quantities. Otherwise the file has
//     no header and needs the XUnit and YKind options.
//   - Header cells are read case-insensitively, ignoring brackets, slashes
//     and underscores. x: "wavelength", "lambda", "λ" (unit nm or um);
//     "energy", "E", "hv" (eV); "wavenumber" (cm-1, also cm^-1, 1/cm, cm⁻¹);
//     a bare "nm", "um", "eV" is x too. y: "T", "transmittance",
//     "transmission" (percent with "%", "%T", "T%"); "A", "Abs",
//     "absorbance", "OD"; "alpha", "α", "absorption coefficient" (cm-1).
//     Reflectance: "R", "%R", "reflectance". A bare "cm-1" is x if no
//     other column is, else alpha.
//   - x without a unit: "wavelength" is nm for values in 100–5000 and um for
//     0.1–50, "energy" is eV for 0.02–20, "wavenumber" is cm-1; an unnamed x
//     column takes the one unit whose range fits its values, and more than one
//     fitting unit is an ErrAmbiguous.
//   - Transmittance without "%" or "fraction" is percent if its largest value
//     is above 1.5 (and at most 110), else a fraction; Notes says so. The same
//     rule decides reflectance.
//   - Several possible x, y or R columns, or a column the header says nothing
//     about, stop Read with ErrAmbiguous naming the option to use: XColumn and
//     YColumn (--columns X,Y), XUnit (--x-unit nm, um, ev, cm-1), YKind
//     (--y-kind T, T%, A, alpha). With several y columns, YKind picks the one
//     of that kind.
//
// # Checks
//
// Transmittance from −5 % to 110 % is kept as read (noise near 0 and 100 %);
// a fraction above 1.5 is an error that says it looks like percent, and a
// header saying percent over values all ≤ 1.5 is an error that says it looks
// like a fraction (with YKind set to TransmittancePercent it is read as
// percent and noted). Absorbance that is negative at every point (T > 1
// everywhere: swapped beams) or has a median above 10 (%T under an
// absorbance header) is an ErrRange. An x unit, from the header or the
// XUnit option, that puts a photon energy outside 0.005–25 eV (far infrared
// to vacuum ultraviolet) is an ErrUnit naming the units the values fit. A
// comma-separated file whose rows have exactly twice the cells its header
// names (a decimal comma in a comma-separated file) is an ErrSyntax. x must be positive and strictly ascending or
// descending; a repeated x names both lines. Every data error is a
// *ParseError with a 1-based line and column wrapping a sentinel error
// (ErrSyntax, ErrRange, ErrNotMonotonic, ErrNoData, ErrUnit, ErrAmbiguous,
// ErrTooLarge, ErrEncoding, ErrOption). MaxBytes, MaxLines, MaxPoints and
// MaxLineBytes bound the memory any input can take; a data line with more than 4096
// cells is an ErrTooLarge, and Meta keeps at most 1000 keys and 100 values
// per key.
package specio
