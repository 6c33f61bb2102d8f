// Package atomicfile writes files so that a reader never sees a partial
// one: the content goes to a temporary file in the target's folder, is
// flushed and closed, and only then renamed over the target. A failed or
// interrupted write leaves the old file (or none) and no temporary behind.
package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// tempInfix marks Write's temporary files: "." + base + tempInfix + random.
const tempInfix = ".tmp-"

// Write creates or replaces the file at path with what write produces.
// The file gets mode 0o644. Any error from write, from flushing or from
// the rename is returned, and the temporary file is removed.
func Write(path string, write func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+tempInfix+"*")
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	if err = write(f); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = f.Chmod(0o644); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = os.Rename(tmp, path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// WriteBytes is Write for content already in memory.
func WriteBytes(path string, b []byte) error {
	return Write(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// IsTemp reports whether a file name is that of a temporary file of Write
// (".summary.json.tmp-123456"): one that a process killed in the middle
// of a write can leave behind.
func IsTemp(name string) bool {
	name = filepath.Base(name)
	i := strings.LastIndex(name, tempInfix)
	return strings.HasPrefix(name, ".") && i > 1 && i+len(tempInfix) < len(name)
}

// RemoveStale removes the temporary files of Write left in the folders
// dirs (not recursively) by a process that was killed while writing, and
// returns how many it removed. A folder that does not exist is skipped.
// It must not run while another process writes into those folders.
func RemoveStale(dirs ...string) (int, error) {
	n := 0
	var errs []error
	for _, d := range dirs {
		ents, err := os.ReadDir(d)
		if errors.Is(err, os.ErrNotExist) {
			continue
		}
		if err != nil {
			errs = append(errs, err)
			continue
		}
		for _, e := range ents {
			if !e.Type().IsRegular() || !IsTemp(e.Name()) {
				continue
			}
			if err := os.Remove(filepath.Join(d, e.Name())); err != nil {
				errs = append(errs, err)
				continue
			}
			n++
		}
	}
	return n, errors.Join(errs...)
}
