package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func TestWrite(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.json")
	if err := WriteBytes(path, []byte("first")); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("boom")
	err := Write(path, func(w io.Writer) error {
		io.WriteString(w, "partial")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("err = %v, want wrapping boom", err)
	}
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if string(got) != "first" {
		t.Errorf("after a failed write the file holds %q, want the old content", got)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("folder holds %d entries, want 1 (no temporary left behind)", len(ents))
	}
	if err := WriteBytes(path, []byte("second")); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(path); string(got) != "second" {
		t.Errorf("file holds %q, want %q", got, "second")
	}
	if err := WriteBytes(filepath.Join(dir, "no", "such", "dir", "x"), nil); err == nil {
		t.Error("write into a missing folder succeeded")
	}
}

// TestDeferred: files written through a Deferred are complete and in
// place before Sync (the rename is not deferred, only the flush), no
// temporary file is left, Sync flushes them without error and forgets
// them, and a failed write leaves neither the file nor a temporary.
func TestDeferred(t *testing.T) {
	dir := t.TempDir()
	var d Deferred
	for i := range 40 {
		p := filepath.Join(dir, fmt.Sprintf("r%02d.json", i))
		if err := d.Write(p, func(w io.Writer) error { _, err := fmt.Fprintf(w, "{\"i\": %d}\n", i); return err }); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(p)
		if err != nil || string(b) != fmt.Sprintf("{\"i\": %d}\n", i) {
			t.Fatalf("%s before Sync: %q, %v", p, b, err)
		}
	}
	bad := filepath.Join(dir, "bad.json")
	if err := d.Write(bad, func(w io.Writer) error { return errors.New("no") }); err == nil {
		t.Fatal("a failed write reported no error")
	}
	if err := d.Sync(); err != nil {
		t.Fatal(err)
	}
	if len(d.paths) != 0 {
		t.Errorf("Sync kept %d paths", len(d.paths))
	}
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(ents) != 40 {
		t.Errorf("%d entries in the folder, want the 40 files (no temporary, no bad.json)", len(ents))
	}
	for _, e := range ents {
		if IsTemp(e.Name()) || e.Name() == "bad.json" {
			t.Errorf("left behind: %s", e.Name())
		}
	}
}
