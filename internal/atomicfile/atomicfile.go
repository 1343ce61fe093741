// Package atomicfile writes output files so that a reader never sees a
// half-written file: the data go to a temporary file in the target's
// directory, which is synced, closed and renamed over the target only when
// everything succeeded. On any error the temporary file is removed and the
// target is left as it was.
package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"huesolve/internal/pkgerr"
)

// Write creates or replaces path with what fill writes. fill receives a
// writer for the temporary file; if it returns an error, nothing is renamed
// and the error is returned wrapped with the target path. Errors name the
// target, never the temporary file: "atomicfile: cannot write out/refs.json:
// the folder out does not exist".
func Write(path string, fill func(w io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return folderError(path, dir, err)
	}
	name := tmp.Name()
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(name)
		}
	}()
	if err = fill(tmp); err != nil {
		return pkgerr.Errorf("atomicfile", "%s not written: %w", path, hideTemp(err, name))
	}
	if err = tmp.Sync(); err != nil {
		return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, name))
	}
	if err = tmp.Close(); err != nil {
		return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, name))
	}
	if err = os.Chmod(name, 0o644); err != nil {
		return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, name))
	}
	if err = os.Rename(name, path); err != nil {
		return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, name))
	}
	return nil
}

// folderError says why no file could be created in dir, the folder of
// path.
func folderError(path, dir string, err error) error {
	fi, serr := os.Stat(dir)
	switch {
	case errors.Is(serr, fs.ErrNotExist):
		return pkgerr.Errorf("atomicfile", "%w", &plainError{fmt.Sprintf("cannot write %s: the folder %s does not exist", path, dir), err})
	case serr == nil && !fi.IsDir():
		return pkgerr.Errorf("atomicfile", "%w", &plainError{fmt.Sprintf("cannot write %s: %s is a file, not a folder", path, dir), err})
	case errors.Is(err, fs.ErrPermission):
		return pkgerr.Errorf("atomicfile", "%w", &plainError{fmt.Sprintf("cannot write %s: no permission to create files in the folder %s", path, dir), err})
	}
	return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, ""))
}

// hideTemp returns err with the operating system's mention of the
// temporary file name (an *fs.PathError or *os.LinkError about it) cut
// down to its cause, "no space left on device" rather than "write
// out/.refs.json.tmp-123: no space left on device"; errors.Is and
// errors.As still see the original. name "" matches any path error.
func hideTemp(err error, name string) error {
	var pe *fs.PathError
	if errors.As(err, &pe) && (name == "" || pe.Path == name) {
		return &plainError{strings.Replace(err.Error(), pe.Error(), pe.Err.Error(), 1), err}
	}
	var le *os.LinkError
	if errors.As(err, &le) && (name == "" || le.Old == name) {
		return &plainError{strings.Replace(err.Error(), le.Error(), le.Err.Error(), 1), err}
	}
	return err
}

// plainError is an error with its own message that unwraps to the error
// it stands for.
type plainError struct {
	msg string
	err error
}

func (e *plainError) Error() string { return e.msg }
func (e *plainError) Unwrap() error { return e.err }

// WriteBytes is Write for a byte slice already in memory.
func WriteBytes(path string, data []byte) error {
	return Write(path, func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}
