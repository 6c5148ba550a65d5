package mesh

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFile writes the file at path with the content that fn writes to w,
// so that a reader never sees a partial file: the content goes to a
// temporary file in the target's folder, which is synced, closed and
// renamed over the target only when all of it was written. On any failure
// the temporary file is removed and the target, if it existed, is left as
// it was. The file gets mode 0644. SaveJSON, SaveVTU and SaveSVG write
// through it, and so may a caller's own outputs.
func WriteFile(path string, fn func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return fmt.Errorf("mesh: WriteFile: %w", err)
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	b := bufio.NewWriter(f)
	if err = fn(b); err != nil {
		return err
	}
	if err = b.Flush(); err != nil {
		return fmt.Errorf("mesh: WriteFile: %s: %w", path, err)
	}
	if err = f.Chmod(0o644); err != nil {
		return fmt.Errorf("mesh: WriteFile: %s: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("mesh: WriteFile: %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("mesh: WriteFile: %s: %w", path, err)
	}
	if err = os.Rename(tmp, path); err != nil {
		return fmt.Errorf("mesh: WriteFile: %w", err)
	}
	return nil
}
