package sheet

import (
	"errors"
	"fmt"
	"os"

	"huesolve/spectrum"
)

// errFolder: the path given as a sheet is a folder.
var errFolder = errors.New("a folder")

// Open reads the sheet file path, the one way every sheet file is opened:
// a folder is refused, and so are a named pipe, socket or device
// (spectrum.OpenInput: the error is spectrum.ErrNotRegular); a file
// larger than opt.MaxBytes is refused by its size before anything is
// read, and one that grows while it is read fails when it passes the cap. It returns
// the parsed sheet and the file's information (for the caller's checks
// that another file it is given is not the sheet itself, os.SameFile).
//
// A file that cannot be opened gives the operating system's error
// prefixed by opt.What ("sample sheet: open x.csv: ..."); every other
// error is a *spectrum.ParseError naming the file. The folder and size
// errors wrap errFolder and errTooLarge, and opt.Wrap when set.
func Open(path string, opt Options) (*Sheet, os.FileInfo, error) {
	f, st, err := spectrum.OpenInput(path)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", opt.what(), err)
	}
	defer f.Close()
	switch {
	case st.IsDir():
		return nil, nil, opt.fileErr(path, &folder{what: opt.what()})
	case st.Mode().IsRegular() && st.Size() > opt.maxBytes():
		return nil, nil, opt.fileErr(path, &tooLarge{limit: opt.maxBytes(), size: st.Size(), what: opt.what()})
	}
	sh, err := Read(f, path, opt)
	if err != nil {
		return nil, nil, err
	}
	return sh, st, nil
}

// fileErr is err about the sheet file as a whole, wrapping o.Wrap.
func (o *Options) fileErr(file string, err error) error {
	if o.Wrap != nil {
		err = fmt.Errorf("%w: %w", o.Wrap, err)
	}
	return &spectrum.ParseError{File: file, Err: err}
}

// folder is the error for a sheet path that names a folder; it is
// errFolder.
type folder struct{ what string }

func (e *folder) Error() string {
	return fmt.Sprintf("the %s is a folder; give the sheet file", e.what)
}

func (e *folder) Is(target error) bool { return target == errFolder }
