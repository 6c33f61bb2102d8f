// Package sheet reads the two small files that drive a batch: the sample
// sheet (which scan is which sample, with its thickness, index and place on
// the wafer) and the spec-limits file (which results are acceptable, and
// under which decision rule). Errors are *specio.ParseError values, so
// every reader of the project reports positions the same way:
// "file:line:column: what is wrong and what to do", 1-based, wrapping a
// specio sentinel (ErrSyntax, ErrRange, ErrUnit, ErrEncoding, ErrNoData,
// ErrTooLarge) or one of this package's ErrDuplicate and
// ErrUnknownQuantity, which themselves wrap specio.ErrSyntax.
//
// # Sample sheet
//
// A CSV file in UTF-8 (a byte-order mark and CRLF line ends are fine),
// cells separated by ',' or ';' (';' when the first non-comment line has
// more semicolons than commas; then a ',' inside a number is a decimal
// comma, "1,2um"). Lines whose first character is '#' are comments; blank
// lines and rows of empty cells are skipped. The first row is the header;
// then one row per scan file.
//
//	# lot KM-2611 (fictional Kestrel Moor compound fab)
//	file,wafer,lot,thickness_um,thickness_err,index,x_mm,y_mm,temperature_k,operator,notes
//	W01_c.csv,W01,KM-2611,1.02,2%,3.6,0,0,295,ab,centre
//	scans/W01_e.csv,W01,KM-2611,0.98,0.03um,,45,0,295,ab,edge
//	W02_c.jdx,W02,KM-2611,,,,0,0,,cd,thickness from the command line
//
// Header names are compared in lower case with blanks and "-./()[]" read
// as '_' ("Thickness (µm)" is thickness_µm). Recognised columns:
//
//	column         synonyms                                 cell
//	file           filename, file_name, scan, scan_file,    scan file, base name or relative path
//	               path                                     (required; matched by base name)
//	thickness      d, film_thickness, layer_thickness       length with unit: 1.2um, 350 µm, 500nm,
//	                                                        0.5mm, 0.035cm; a plain number if the
//	                                                        header has a unit: thickness_um
//	thickness_err  thickness_unc, thickness_u,              standard uncertainty: a length (as
//	               thickness_uncertainty, u_thickness,      thickness; a plain number takes the
//	               d_err, u_d                               header's unit, else the thickness
//	                                                        column's) or a percentage: 2%
//	index          n, refractive_index                      refractive index, positive
//	index_err      index_unc, index_u, u_index, n_err,      standard uncertainty: a number or 1%
//	               u_n, refractive_index_err
//	wafer          wafer_id, wafer_no                       text
//	lot            lot_id, lot_no, batch                    text
//	x_mm, y_mm     x, y, x_pos, y_pos, pos_x, pos_y         position in mm (x_um etc. convert;
//	               (with a length unit suffix)              a cell may carry its own unit)
//	temperature_k  temperature_c, temp_k, temp_c,           temperature; 300K, 26.85C, 26.85 °C in
//	               temperature, temp, t_sample              a cell; a plain number takes the
//	                                                        header's unit (no unit: an error)
//	notes          note, comment, comments, remarks         text
//
// Lengths are stored in cm, temperatures in K (T/K = t/°C + 273.15),
// positions in mm. Any other column is kept, in order, in Sample.Extra
// (and its header in Samples.ExtraColumns), so that a batch can pass it
// through to its summary. An empty cell means "not given: fall back to the
// command line" (Sample's pointer fields stay nil). Errors: a row whose
// file's base name repeats an earlier row's (naming both lines), two
// columns for the same field, a cell under an empty header or beyond the
// last column, a row without a file, a thickness without a unit, a
// non-positive thickness or index, a negative uncertainty.
//
// # Spec-limits file
//
// A line-oriented text format of this project. '#' starts a comment that
// runs to the end of the line (outside a quoted string); blank lines are
// skipped; words are separated by blanks or tabs. Statements:
//
//	bandedge-spec 1                 first statement: the format and its version
//	name "TEXT"                     optional, once: what the spec is for
//	guard expanded|stat|none        required, once: the decision rule (see Spec.Judge)
//	limit QUANTITY LO .. HI         one per quantity; LO or HI may be left out
//
// A full example:
//
//	bandedge-spec 1
//	name "KM-2611 GaAs epi, release (fictional)"
//	guard expanded                          # w = U, the expanded uncertainty
//
//	limit eg_ev                1.415 .. 1.435   # band-gap window, eV
//	limit urbach_ev                  .. 0.012   # upper limit only, eV
//	limit chi2_reduced               .. 3
//	limit points_used             50 ..         # lower limit only
//	limit eg_err_ev                  .. 0.004   # the fit must be precise enough
//	limit wafer.eg_ev.nonuniformity  .. 0.004   # (max − min)/(2·mean) over the wafer
//	limit wafer.eg_ev.count        5 ..         # at least five scans per wafer
//
// Quantities are named as the fields of the result record (JSON): eg_ev,
// eg_err_ev, eg_expanded_ev, urbach_ev, urbach_err_ev, amplitude,
// amplitude_err, ep_ev, ep_err_ev, chi2_reduced, points_used; and wafer
// statistics of any of them, wafer.<quantity>.<stat> with stat count,
// mean, min, max, range, stdev or nonuniformity (see Rollup). Names and
// keywords are case-insensitive. Bounds are plain decimal numbers in the
// unit the name carries; a limit is the closed interval [LO, HI]. Errors:
// an unknown statement or quantity (the message lists the known ones), a
// bound that is not a number, LO > HI, no bound at all, a second limit on
// a quantity, a repeated statement, a missing guard statement.
//
// Judge applies the rule of the guard statement to one value; JudgeWafer
// applies the wafer-level limits to the statistics of one wafer; Worst
// rolls verdicts up.
package sheet
