package spectrum

import (
	"errors"
	"fmt"
	"os"
	"syscall"

	"huesolve/internal/filekind"
)

// ErrNotRegular marks an input path that names neither a regular file nor
// a folder: a named pipe (FIFO), a socket or a device. Such an input is
// refused, since reading it may block for ever (a FIFO with no writer) or
// never end (/dev/zero).
var ErrNotRegular = errors.New("not a regular file")

// notRegular is the error for an input of another kind than a regular
// file; it is ErrNotRegular.
type notRegular struct {
	path, kind string
}

func (e *notRegular) Error() string {
	return fmt.Sprintf("%s is %s, not a regular file: inputs are read from files only (save the data to a file first)", e.path, e.kind)
}

func (e *notRegular) Is(target error) bool { return target == ErrNotRegular }

// OpenInput opens path for reading, the one way every input file is
// opened (scans, sheets, reference sets). It opens without blocking
// (O_NONBLOCK), so that a FIFO with no writer cannot hang the open, and
// then looks at what it opened: a regular file or a folder is returned
// open with its information (what to do with a folder is the caller's
// rule), anything else is closed again and refused with an error naming
// the path and what it is (ErrNotRegular). The error of a failed open is
// the operating system's, as os.Open gives it.
func OpenInput(path string) (*os.File, os.FileInfo, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, nil, err
	}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, nil, err
	}
	if m := st.Mode(); !m.IsRegular() && !m.IsDir() {
		f.Close()
		return nil, nil, &notRegular{path: path, kind: filekind.Of(m)}
	}
	return f, st, nil
}
