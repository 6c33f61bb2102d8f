package atomicfile

import (
	"io"
	"os"
	"path/filepath"
	"sort"
	"testing"
)

// TestRemoveStale: a temporary file left by a write that never finished
// (simulated by creating one the way Write names it) is found by IsTemp
// and removed by RemoveStale; finished files and look-alikes stay.
func TestRemoveStale(t *testing.T) {
	dir := t.TempDir()
	sub := filepath.Join(dir, "results")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	// A write killed before its rename: what CreateTemp made is left.
	f, err := os.CreateTemp(sub, ".a.json"+tempInfix+"*")
	if err != nil {
		t.Fatal(err)
	}
	f.Close()
	if !IsTemp(f.Name()) {
		t.Fatalf("IsTemp(%q) = false", f.Name())
	}
	if err := Write(filepath.Join(sub, "b.json"), func(w io.Writer) error { _, err := io.WriteString(w, "{}"); return err }); err != nil {
		t.Fatal(err)
	}
	for _, keep := range []string{"summary.json", ".hidden", "x.tmp-1", ".tmp-1", ".x.tmp-"} {
		if IsTemp(keep) {
			t.Errorf("IsTemp(%q) = true", keep)
		}
		os.WriteFile(filepath.Join(dir, keep), nil, 0o644)
	}
	n, err := RemoveStale(dir, sub, filepath.Join(dir, "missing"))
	if err != nil || n != 1 {
		t.Fatalf("RemoveStale = %d, %v; want 1, nil", n, err)
	}
	var left []string
	for _, d := range []string{dir, sub} {
		ents, _ := os.ReadDir(d)
		for _, e := range ents {
			if !e.IsDir() {
				left = append(left, e.Name())
			}
		}
	}
	sort.Strings(left)
	want := []string{".hidden", ".tmp-1", ".x.tmp-", "b.json", "summary.json", "x.tmp-1"}
	if len(left) != len(want) {
		t.Fatalf("left %v, want %v", left, want)
	}
	for i := range want {
		if left[i] != want[i] {
			t.Fatalf("left %v, want %v", left, want)
		}
	}
}
