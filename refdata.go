// Package bandedge is the root of the bandedge module. It holds only the
// reference data that packages embed into the binary; the program lives in
// cmd/bandedge and the library in model, fit and io.
package bandedge

import "embed"

// NISTStRD holds the 27 nonlinear regression datasets of the NIST
// Statistical Reference Datasets (StRD) as JSON, at
// testdata/nist-strd/<Name>.json (the schema is in
// testdata/nist-strd/SOURCE.md).
//
// Source: NIST Information Technology Laboratory, Statistical Engineering
// Division, StRD nonlinear regression,
// https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml; U.S. Government
// work, public domain. Package fit/strd parses them.
//
//go:embed testdata/nist-strd/*.json
var NISTStRD embed.FS
