// Package atomicfile writes output files so that a reader never sees a
// half-written file: the data go to a temporary file in the target's
// directory, which is synced, closed and renamed over the target only when
// everything succeeded. On any error the temporary file is removed and the
// target is left as it was.
package atomicfile

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// Write creates or replaces path with what fill writes. fill receives a
// writer for the temporary file; if it returns an error, nothing is renamed
// and the error is returned wrapped with the target path.
func Write(path string, fill func(w io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("atomicfile: create temporary file for %s: %w", path, err)
	}
	name := tmp.Name()
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(name)
		}
	}()
	if err = fill(tmp); err != nil {
		return fmt.Errorf("atomicfile: write %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("atomicfile: sync %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("atomicfile: close %s: %w", path, err)
	}
	if err = os.Chmod(name, 0o644); err != nil {
		return fmt.Errorf("atomicfile: chmod %s: %w", path, err)
	}
	if err = os.Rename(name, path); err != nil {
		return fmt.Errorf("atomicfile: rename into %s: %w", path, err)
	}
	return nil
}

// WriteBytes is Write for a byte slice already in memory.
func WriteBytes(path string, data []byte) error {
	return Write(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}
