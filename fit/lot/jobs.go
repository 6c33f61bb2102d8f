package lot

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"bandedge/fit/scan"
	"bandedge/io/sheet"
)

// ScanExtensions are the file extensions taken from a folder (compared in
// lower case): delimited text and JCAMP-DX. The reader is still chosen by
// content (fit/scan).
var ScanExtensions = []string{".csv", ".txt", ".tsv", ".dat", ".jdx", ".dx", ".jcamp"}

// ErrNoScans is returned by List when the arguments name no scan file.
var ErrNoScans = errors.New("lot: no scan files")

// List expands the arguments into scan files: a folder gives its regular
// files with a ScanExtensions extension, sorted by name (not recursive); a
// pattern with glob characters (filepath.Match syntax) gives its matches,
// sorted, folders among them expanded as above; any other argument is a
// file, taken as it is whatever its extension. Files are listed in the
// order of the arguments and each only once (the first time; paths are
// compared after filepath.Abs). Paths in skip (the sample sheet, the spec)
// are left out.
func List(args []string, skip ...string) ([]string, error) {
	seen := map[string]bool{}
	for _, s := range skip {
		if s != "" {
			seen[absPath(s)] = true
		}
	}
	var out []string
	add := func(p string) {
		a := absPath(p)
		if !seen[a] {
			seen[a] = true
			out = append(out, p)
		}
	}
	var dir func(d string) error
	dir = func(d string) error {
		ents, err := os.ReadDir(d) // sorted by file name
		if err != nil {
			return fmt.Errorf("list %s: %w", d, err)
		}
		for _, e := range ents {
			if !e.Type().IsRegular() && e.Type()&os.ModeSymlink == 0 {
				continue
			}
			p := filepath.Join(d, e.Name())
			if st, err := os.Stat(p); err != nil || !st.Mode().IsRegular() {
				continue
			}
			if hasScanExt(e.Name()) && !strings.HasPrefix(e.Name(), ".") {
				add(p)
			}
		}
		return nil
	}
	for _, a := range args {
		if strings.ContainsAny(a, "*?[") {
			m, err := filepath.Glob(a)
			if err != nil {
				return nil, fmt.Errorf("pattern %q: %w", a, err)
			}
			if len(m) == 0 {
				return nil, fmt.Errorf("pattern %q matches no file: %w", a, ErrNoScans)
			}
			sort.Strings(m)
			for _, p := range m {
				st, err := os.Stat(p)
				switch {
				case err != nil:
					continue
				case st.IsDir():
					if err := dir(p); err != nil {
						return nil, err
					}
				case st.Mode().IsRegular():
					add(p)
				}
			}
			continue
		}
		st, err := os.Stat(a)
		if err != nil {
			return nil, fmt.Errorf("list %s: %w", a, err)
		}
		if st.IsDir() {
			if err := dir(a); err != nil {
				return nil, err
			}
			continue
		}
		add(a)
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: %w (looked for %s)", strings.Join(args, " "), ErrNoScans, strings.Join(ScanExtensions, " "))
	}
	return out, nil
}

func hasScanExt(name string) bool {
	ext := strings.ToLower(filepath.Ext(name))
	for _, e := range ScanExtensions {
		if ext == e {
			return true
		}
	}
	return false
}

func absPath(p string) string {
	a, err := filepath.Abs(p)
	if err != nil {
		return filepath.Clean(p)
	}
	return a
}

// Names returns a unique output stem per file, in order: the base name
// without its extension; where two files share it, the later ones keep
// their extension ("x.csv" → "x.csv"), and where that is taken too they get
// "-2", "-3", ... (first come first named, so the names depend only on the
// list).
func Names(files []string) []string {
	used := map[string]bool{}
	out := make([]string, len(files))
	for i, f := range files {
		base := filepath.Base(f)
		stem := strings.TrimSuffix(base, filepath.Ext(base))
		if stem == "" {
			stem = base
		}
		name := stem
		if used[name] {
			name = base
		}
		for k := 2; used[name]; k++ {
			name = fmt.Sprintf("%s-%d", stem, k)
		}
		used[name] = true
		out[i] = name
	}
	return out
}

// Defaults are the command-line settings a sample sheet falls back to.
type Defaults struct {
	// Settings are the command line's.
	Settings scan.Settings
	// ThicknessErrAbsolute is true when the command line gave the
	// thickness uncertainty as a length (0.05um) rather than a percentage:
	// a sheet thickness then keeps that absolute u(d), not the relative one.
	ThicknessErrAbsolute bool
}

// ApplySample returns the settings of one scan: the defaults, overridden
// by the sheet row's thickness, thickness uncertainty, index and index
// uncertainty where the row gives them. A row's relative uncertainty
// (2 %) applies to the row's (or the command line's) value; an absolute one
// is kept absolute. The temperature is recorded, not used by the fit (the
// analysis has no temperature input yet). The error says which sheet line
// gives an unusable combination.
func ApplySample(d Defaults, smp *sheet.Sample, sheetName string) (scan.Settings, error) {
	s := d.Settings
	if smp == nil {
		return s, nil
	}
	at := func(format string, a ...any) error {
		return fmt.Errorf("%s:%d: %s", sheetName, smp.Line, fmt.Sprintf(format, a...))
	}
	if smp.ThicknessCM != nil {
		old := s.Thickness
		s.Thickness = *smp.ThicknessCM
		if smp.ThicknessErr == nil && d.ThicknessErrAbsolute && old > 0 {
			s.ThicknessRelErr = s.ThicknessRelErr * old / s.Thickness
		}
	}
	if smp.ThicknessErr != nil {
		if !(s.Thickness > 0) {
			return s, at("thickness_err without a thickness (give one in the sheet or with --thickness)")
		}
		rel, ok := smp.ThicknessErr.Rel(s.Thickness)
		if !ok || rel >= 1 {
			return s, at("thickness uncertainty is not below the thickness")
		}
		s.ThicknessRelErr = rel
	}
	if smp.Index != nil {
		n := *smp.Index
		if n < 1 || n > 10 {
			return s, at("refractive index %g: want a value between 1 and 10", n)
		}
		s.Index = n
	}
	if smp.IndexErr != nil {
		if !(s.Index > 0) {
			return s, at("index_err without an index (give one in the sheet or with --index)")
		}
		s.IndexErr = smp.IndexErr.Abs(s.Index)
	}
	if smp.TemperatureK != nil {
		t := *smp.TemperatureK
		if !(t > 0) || t > 5000 {
			return s, at("temperature %g K: want a value in (0, 5000]", t)
		}
		s.Temperature = t
	}
	return s, nil
}
