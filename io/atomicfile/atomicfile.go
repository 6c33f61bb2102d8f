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
	"sync"
)

// tempInfix marks Write's temporary files: "." + base + tempInfix + random.
const tempInfix = ".tmp-"

// Write creates or replaces the file at path with what write produces.
// The file gets mode 0o644. Any error from write, from flushing or from
// the rename is returned, and the temporary file is removed.
func Write(path string, write func(w io.Writer) error) error {
	return write1(path, write, true)
}

// write1 is Write, with the flush to disk (fsync) before the rename when
// sync is true.
func write1(path string, write func(w io.Writer) error, sync bool) (err error) {
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
	if sync {
		if err = f.Sync(); err != nil {
			return fmt.Errorf("write %s: %w", path, err)
		}
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

// Deferred writes many files as Write does (a temporary file renamed
// into place, so that no reader and no later run ever sees a partial
// file) but leaves their flush to disk to one Sync at the end. One fsync
// per file, in turn, was a fifth of the wall time of a 10,000-scan batch
// on an ext4 disk (bench/throughput); Sync flushes them concurrently,
// which lets the file system commit them together, then flushes their
// folders. Until Sync returns, a power failure (not a crash of the
// process) may leave some of the files empty; a reader that validates
// what it reads (batch --resume does) then redoes them. The zero value is
// ready to use and safe for concurrent use.
type Deferred struct {
	mu    sync.Mutex
	paths []string
}

// Write creates or replaces the file at path with what write produces,
// atomically, and remembers it for Sync.
func (d *Deferred) Write(path string, write func(w io.Writer) error) error {
	if err := write1(path, write, false); err != nil {
		return err
	}
	d.mu.Lock()
	d.paths = append(d.paths, path)
	d.mu.Unlock()
	return nil
}

// syncWorkers is how many files Sync flushes at once.
const syncWorkers = 16

// Sync flushes every file written through d since the last Sync, and then
// their folders, to disk, and returns the errors it met (naming the file).
func (d *Deferred) Sync() error {
	d.mu.Lock()
	paths := d.paths
	d.paths = nil
	d.mu.Unlock()
	var (
		wg   sync.WaitGroup
		mu   sync.Mutex
		errs []error
	)
	next := make(chan string)
	fail := func(err error) {
		mu.Lock()
		errs = append(errs, err)
		mu.Unlock()
	}
	for range min(syncWorkers, len(paths)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for p := range next {
				if err := syncPath(p); err != nil {
					fail(err)
				}
			}
		}()
	}
	dirs := map[string]bool{}
	for _, p := range paths {
		next <- p
		dirs[filepath.Dir(p)] = true
	}
	close(next)
	wg.Wait()
	for dir := range dirs {
		if err := syncPath(dir); err != nil {
			fail(err)
		}
	}
	return errors.Join(errs...)
}

// syncPath opens path (a file or a folder) and flushes it to disk.
func syncPath(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("sync %s: %w", path, err)
	}
	defer f.Close()
	if err := f.Sync(); err != nil && !errors.Is(err, os.ErrInvalid) {
		return fmt.Errorf("sync %s: %w", path, err)
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
