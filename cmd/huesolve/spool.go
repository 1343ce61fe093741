package main

import (
	"bufio"
	"bytes"
	"io"
	"os"
	"path/filepath"
)

// spool keeps what solve writes after the head of a CSV or JSON result
// file until the head can be written (report.Layout.HeadLater): in an
// unnamed temporary file beside the output (in the temporary folder for
// standard output), so that memory does not grow with the number of
// samples, or in memory when no temporary file can be made.
type spool struct {
	f   *os.File
	w   *bufio.Writer
	mem bytes.Buffer
	// name is the file's name when it could not be removed while open
	// (Windows): it is removed by close.
	name string
}

// newSpool makes the spool of the output file out ("" for standard
// output).
func newSpool(out string) *spool {
	dir := ""
	if out != "" {
		dir = filepath.Dir(out)
	}
	s := &spool{}
	f, err := os.CreateTemp(dir, ".huesolve-spool-*")
	if err != nil {
		return s
	}
	// Unlinked at once where the system allows it, so that nothing is
	// left behind by a run that is killed.
	if os.Remove(f.Name()) != nil {
		defer func() { s.name = f.Name() }()
	}
	s.f, s.w = f, bufio.NewWriterSize(f, 64<<10)
	return s
}

func (s *spool) Write(p []byte) (int, error) {
	if s.f == nil {
		return s.mem.Write(p)
	}
	return s.w.Write(p)
}

// copyTo writes what was spooled to w.
func (s *spool) copyTo(w io.Writer) error {
	if s.f == nil {
		_, err := s.mem.WriteTo(w)
		return err
	}
	if err := s.w.Flush(); err != nil {
		return err
	}
	if _, err := s.f.Seek(0, io.SeekStart); err != nil {
		return err
	}
	_, err := io.Copy(w, s.f)
	return err
}

// close releases the spool.
func (s *spool) close() {
	if s.f != nil {
		s.f.Close()
		if s.name != "" {
			os.Remove(s.name)
		}
	}
}
