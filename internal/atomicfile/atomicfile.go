// Package atomicfile writes output files so that a reader never sees a
// half-written file: the data go to a temporary file in the target's
// directory, which is synced, closed and renamed over the target only when
// everything succeeded. On any error the temporary file is removed and the
// target is left as it was.
//
// What may be replaced (Check, applied by Write before anything is
// written): a regular file, or nothing (a new file is made). A folder, a
// device node, a named pipe (FIFO) or a socket is refused, naming the path
// and what it is, so that an output never takes the place of /dev/null or
// a pipe another program reads. A symbolic link is written through: when
// it leads (through any number of links) to a regular file, that file is
// replaced and the link kept; a link to anything else, or to nothing (a
// dangling link), is refused. The replaced file keeps its permission
// bits (a 0600 file stays 0600); a new file gets 0644 less the umask.
//
// Missing folders on the way to the file are created (0755 less the
// umask), as `mkdir -p` would; when the write then fails, the folders it
// created are removed again, so a failed write leaves nothing behind.
package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"syscall"

	"huesolve/internal/filekind"
	"huesolve/internal/pkgerr"
)

// Write creates or replaces path with what fill writes. fill receives a
// writer for the temporary file; if it returns an error, nothing is renamed
// and the error is returned wrapped with the target path. Errors name the
// target, never the temporary file: "atomicfile: cannot write
// out/refs.json: out is a file, not a folder". path must pass Check; a
// symbolic link is written through to its target (see the package
// comment). Missing folders are created, and removed again on failure.
func Write(path string, fill func(w io.Writer) error) (err error) {
	target, mode, err := resolve(path)
	if err != nil {
		return err
	}
	dir := filepath.Dir(target)
	made, err := makeFolders(dir)
	if err != nil {
		return folderError(path, dir, err)
	}
	tmp, err := createTemp(dir, filepath.Base(target))
	if err != nil {
		removeFolders(made)
		return folderError(path, dir, err)
	}
	name := tmp.Name()
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(name)
			removeFolders(made)
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
	if mode != 0 {
		if err = os.Chmod(name, mode); err != nil {
			return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, name))
		}
	}
	if err = os.Rename(name, target); err != nil {
		return pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, hideTemp(err, name))
	}
	return nil
}

// newFileMode is the permission asked for a new output file; the umask
// takes its share when the temporary file is created.
const newFileMode = 0o644

// maxTempTries bounds the attempts at a free temporary file name (as
// os.CreateTemp does).
const maxTempTries = 10000

// createTemp creates a new file ".BASE.tmp-NNN" in dir with newFileMode
// (less the umask), which os.CreateTemp cannot do: it asks for 0600.
func createTemp(dir, base string) (*os.File, error) {
	for range maxTempTries {
		name := filepath.Join(dir, "."+base+".tmp-"+strconv.FormatUint(uint64(rand.Uint32()), 10))
		f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, newFileMode)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		return f, err
	}
	return nil, &fs.PathError{Op: "createtemp", Path: filepath.Join(dir, "."+base+".tmp-*"), Err: fs.ErrExist}
}

// Check says whether path may be written by Write: nil when it is absent,
// a regular file, or a symbolic link leading to a regular file; else an
// error naming path and what it is. Commands call it before their work
// so that a bad output is refused before, not after, a long run.
func Check(path string) error {
	_, _, err := resolve(path)
	return err
}

// resolve returns the file Write replaces for path (path itself, or the
// regular file a symbolic link leads to) and the permission bits to give
// the new file (0 for a new file: newFileMode less the umask), or the
// error that refuses path.
func resolve(path string) (target string, mode fs.FileMode, err error) {
	fi, err := os.Lstat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist) || errors.Is(err, syscall.ENOTDIR):
		return path, 0, nil // folderError says what is wrong with the folder
	case err != nil:
		return "", 0, pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, err)
	case fi.Mode().IsRegular():
		return path, fi.Mode().Perm(), nil
	case fi.Mode()&fs.ModeSymlink == 0:
		return "", 0, refuse(path, "", fi.Mode())
	}
	// A symbolic link: written through when it leads to a regular file.
	ti, err := os.Stat(path)
	if err != nil {
		link, _ := os.Readlink(path)
		return "", 0, pkgerr.Errorf("atomicfile", "%w", &plainError{fmt.Sprintf("cannot write %s: it is a symbolic link to %s, which does not exist or cannot be reached; give the file itself", path, link), err})
	}
	if !ti.Mode().IsRegular() {
		return "", 0, refuse(path, "a symbolic link to ", ti.Mode())
	}
	target, err = filepath.EvalSymlinks(path)
	if err != nil {
		return "", 0, pkgerr.Errorf("atomicfile", "cannot write %s: %w", path, err)
	}
	return target, ti.Mode().Perm(), nil
}

// refuse is the error for an output path that is not a regular file:
// what it is (after via, e.g. "a symbolic link to "), in words.
func refuse(path, via string, m fs.FileMode) error {
	return pkgerr.Errorf("atomicfile", "cannot write %s: it is %s%s, not a regular file", path, via, filekind.Of(m))
}

// makeFolders creates dir and any missing folders above it, returning
// those it created, outermost first. A file in the way is reported by
// folderError.
func makeFolders(dir string) ([]string, error) {
	var missing []string
	for d := dir; ; d = filepath.Dir(d) {
		fi, err := os.Lstat(d)
		if err == nil && !fi.IsDir() && fi.Mode()&fs.ModeSymlink == 0 {
			return nil, &fileInWayError{d}
		}
		if err == nil || !(errors.Is(err, fs.ErrNotExist) || errors.Is(err, syscall.ENOTDIR)) || filepath.Dir(d) == d {
			break // exists (a folder, or a link followed below), or cannot be told
		}
		if !errors.Is(err, syscall.ENOTDIR) {
			missing = append(missing, d)
		}
	}
	slices.Reverse(missing)
	for i, d := range missing {
		if err := os.Mkdir(d, 0o755); err != nil && !errors.Is(err, fs.ErrExist) {
			removeFolders(missing[:i])
			return nil, err
		}
	}
	return missing, nil
}

// removeFolders removes the folders makeFolders made (outermost first),
// innermost first; a folder that is no longer empty stays.
func removeFolders(made []string) {
	for i := len(made) - 1; i >= 0; i-- {
		os.Remove(made[i])
	}
}

// fileInWayError is a file where a folder of the output's path should
// be.
type fileInWayError struct{ file string }

func (e *fileInWayError) Error() string { return e.file + " is a file, not a folder" }

// folderError says why no file could be created in dir, the folder of
// path.
func folderError(path, dir string, err error) error {
	var inWay *fileInWayError
	if errors.As(err, &inWay) {
		return pkgerr.Errorf("atomicfile", "%w", &plainError{fmt.Sprintf("cannot write %s: %s", path, inWay.Error()), err})
	}
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
