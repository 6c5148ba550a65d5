package mesh

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func TestWriteFileFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "a.txt")
	if err := WriteFile(path, func(w io.Writer) error { _, err := io.WriteString(w, "good"); return err }); err != nil {
		t.Fatal(err)
	}
	// A writer that fails midway leaves the good file as it was and no
	// temporary file behind.
	boom := errors.New("disk on fire")
	err := WriteFile(path, func(w io.Writer) error {
		io.WriteString(w, "half of a new")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error %v, want the writer's", err)
	}
	b, _ := os.ReadFile(path)
	if string(b) != "good" {
		t.Fatalf("file holds %q after a failed write", b)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Fatalf("%d entries in the folder, want 1", len(entries))
	}
	if err := WriteFile(filepath.Join(dir, "missing", "b.txt"), func(w io.Writer) error { return nil }); err == nil {
		t.Fatal("writing into a missing folder succeeded")
	}
}
