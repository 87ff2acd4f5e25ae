package grid

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// TestWriteAtomic: the one whole-file writer keeps what was there (no replace, also for
// a file that appears while writing), replaces when asked, and leaves no temporary file
// behind on success or failure.
func TestWriteAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "f.bin")
	if err := WriteFileAtomic(p, []byte("one"), false); err != nil {
		t.Fatal(err)
	}
	if err := WriteFileAtomic(p, []byte("two"), false); !errors.Is(err, ErrExists) {
		t.Fatalf("no-replace over an existing file: %v, want ErrExists", err)
	}
	q := filepath.Join(dir, "g.bin")
	err := WriteAtomic(q, false, func(tmp string) error {
		if err := os.WriteFile(q, []byte("someone else's"), 0o644); err != nil { // appears meanwhile
			return err
		}
		return os.WriteFile(tmp, []byte("mine"), 0o644)
	})
	if !errors.Is(err, ErrExists) {
		t.Fatalf("a file that appeared while writing: %v, want ErrExists", err)
	}
	if b, _ := os.ReadFile(q); string(b) != "someone else's" {
		t.Fatalf("the file that appeared was changed to %q", b)
	}
	if err := WriteAtomic(p, true, func(string) error { return errors.New("boom") }); err == nil || err.Error() != "boom" {
		t.Fatalf("a failed write: %v", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "one" {
		t.Fatalf("a failed write changed the file to %q", b)
	}
	if err := WriteFileAtomic(p, []byte("three"), true); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "three" {
		t.Fatalf("replace: %q", b)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 2 {
		var names []string
		for _, e := range ents {
			names = append(names, e.Name())
		}
		t.Fatalf("files left: %v, want f.bin and g.bin only", names)
	}
}
