// Package jcampdx reads one UV–vis or infrared spectrum from a JCAMP-DX
// 4.24 file into a *specio.Spectrum, with the same units, kinds and error
// type as package specio. It is shaped like encoding/csv: options are
// exported fields of a Reader, set before Read.
//
//	r := jcampdx.NewReader(f, "film03.jdx") // the name is used only in errors
//	s, err := r.Read()
//	if err != nil {
//		return err // e.g. film03.jdx:14:1: Y check value 131 does not match ...
//	}
//	// s.E is in eV, ascending; s.Y is T as a fraction, absorbance or α (s.Kind).
//
// The format is the one of McDonald, R. S. & Wilks, P. A., "JCAMP-DX: A
// Standard Form for Exchange of Infrared Spectra in Computer Readable
// Form", Applied Spectroscopy 42(1), 151–162 (1988), version 4.24. The rules
// below are those of that paper as implemented here; where the paper leaves
// room, the choice made is stated.
//
// # Records
//
// A file is a sequence of labelled data records (LDRs), lines starting
// with "##LABEL=". Labels are compared in upper case with blanks, '-', '/'
// and '_' removed, so "##DATA TYPE=", "##datatype=" and "##Data_Type=" are
// the same record. "$$" starts a comment that runs to the end of the line.
// A line that does not start with "##" continues the value of the record
// above it (or, after a data-table record, is a line of the table). The
// first record must be ##TITLE= and the block must end with ##END=; a file
// without ##END= is reported as truncated.
//
// Read uses ##XUNITS=, ##YUNITS=, ##XFACTOR=, ##YFACTOR=, ##FIRSTX=,
// ##LASTX=, ##NPOINTS=, ##DELTAX= and ##FIRSTY=; every record except the
// data table goes into Spectrum.Meta under its label as written (upper
// case, e.g. "DATA TYPE"). ##JCAMP-DX= other than 4.24 is read with the
// same rules and noted. Each of the records Read uses may occur once.
//
// # Data tables
//
//   - ##XYDATA=(X++(Y..Y)): each line holds an abscissa and one or more
//     ordinates; the abscissa is that of the line's first ordinate, and the
//     ordinates are evenly spaced, x_i = FIRSTX + i·(LASTX − FIRSTX)/(NPOINTS − 1).
//     ##FIRSTX=, ##LASTX= and ##NPOINTS= are required; a missing ##XFACTOR=
//     or ##YFACTOR= is taken as 1 and noted. Values are stored divided by the
//     factors: x = XFACTOR·(written x), y = YFACTOR·(written y).
//   - ##XYPOINTS=(XY..XY): pairs "x, y" (AFFN), separated by blanks, commas
//     or semicolons, whole pairs on each line. ##NPOINTS=, ##FIRSTX= and
//     ##LASTX= are checked when present.
//   - ##PEAK TABLE=, ##PEAK ASSIGNMENTS=, ##NTUPLES= and linked multi-block
//     files (##BLOCKS=, or a second ##TITLE=) are out of scope: a file whose
//     only table is a peak table, and every multi-block or n-tuple file, is
//     rejected with ErrUnsupported. A peak table beside a spectrum is
//     skipped and noted.
//
// # Number forms
//
// Ordinates in XYDATA may be written in any mix of the forms of the paper:
//
//	AFFN  free-format numbers: 120, -3, 1.25, 1.5E+02, separated by blanks,
//	      commas or a sign ("1+2-3" is 1, 2, −3: PAC)
//	SQZ   the first digit and the sign in one character:
//	      @ A B C D E F G H I = +0 … +9,  a b c d e f g h i = −1 … −9
//	      (A20 = 120, c = −3)
//	DIF   a difference from the previous ordinate, first digit and sign in
//	      one character: % J K L M N O P Q R = +0 … +9, j k l m n o p q r = −1 … −9
//	      (J19 = +119, k = −2)
//	DUP   the previous value or difference occurs this many times in all:
//	      S T U V W X Y Z s = 1 … 9 (A25U = 125 125 125, %T = two zero steps)
//
// Digits, and one decimal point, may follow the pseudo-digit. A line that
// ends in DIF form is followed by a line that repeats the last ordinate, in
// absolute form (AFFN or SQZ), as a check: Read verifies every such Y check
// value and drops it (the line's abscissa is then that of the repeated
// point), and checks every line's abscissa against FIRSTX and the step.
// "E" and "e" are SQZ digits (+5, −5) except directly after the digits of
// an AFFN number when followed by a sign and a digit, or on a line with no
// other pseudo-digit when followed by a digit: then they start an exponent.
// A compressed line whose only pseudo-digits are such E/e (e.g. "100E2",
// abscissa 100 and one ordinate 52) is therefore read as AFFN; the abscissa
// check then reports it.
//
// # Checks
//
// Errors are *specio.ParseError values with a 1-based line and byte column,
// wrapping a specio sentinel, or ErrCheck or ErrUnsupported (which wrap
// specio.ErrSyntax, so classifying by specio's sentinels still works).
//
//   - Y check values must equal the last ordinate of the line before, to
//     1e-9 relative (they are the same written number).
//   - Each line's abscissa, times XFACTOR, must agree with FIRSTX + i·Δx to
//     within half a step or the rounding of the written abscissa, whichever
//     is larger: a missing, repeated or reordered line moves it by at least a
//     whole step. (When the abscissas are written more coarsely than a step
//     the check cannot see a one-point slip; Notes says so.)
//   - The number of ordinates must equal NPOINTS; decoding stops as soon as it
//     would exceed it, so no DUP count can make Read allocate more.
//   - ##DELTAX=, when given, must agree with (LASTX − FIRSTX)/(NPOINTS − 1)
//     to 1 % (it is often written with few digits); ##FIRSTY= must agree with
//     YFACTOR times the first ordinate to max(YFACTOR, 0.1 % of FIRSTY)
//     (common practice: both are rounded copies written for information).
//   - NUL bytes and invalid UTF-8 are ErrEncoding (the paper specifies
//     printable ASCII); MaxBytes, MaxLines and MaxPoints bound the memory any
//     input can take (ErrTooLarge).
//
// # Units
//
// ##XUNITS= (case-insensitive; blanks, '_' and '.' ignored):
//
//	NANOMETERS, NANOMETRES, NM                       wavelength in nm
//	MICROMETERS, MICROMETRES, MICRONS, UM, µM         wavelength in µm
//	1/CM, CM-1, CM^-1, CM**-1, WAVENUMBERS           wavenumber in cm⁻¹
//	EV, ELECTRONVOLTS, ELECTRON VOLTS                photon energy in eV
//
// ##YUNITS=:
//
//	TRANSMITTANCE, TRANSMISSION, T                   transmittance: a fraction,
//	                                                 or percent if the largest
//	                                                 value is above 1.5 (noted),
//	                                                 as specio decides
//	%T, T%, PERCENT TRANSMITTANCE, TRANSMITTANCE (%) transmittance in percent
//	ABSORBANCE, ABS, A, OPTICAL DENSITY, OD          decadic absorbance
//	1/CM, CM-1, ABSORPTION COEFFICIENT               absorption coefficient in cm⁻¹
//
// Any other unit (REFLECTANCE, KUBELKA-MUNK, ARBITRARY UNITS, HZ, ...) is
// an ErrUnit whose message names the options: Reader.YKind (--y-kind T, T%,
// A, alpha) and Reader.XUnit (--x-unit nm, um, ev, cm-1) override the file
// and are noted when they disagree with it. Transmittance is range-checked
// as in specio (−5 % to 110 %).
package jcampdx
