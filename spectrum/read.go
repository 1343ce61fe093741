package spectrum

import (
	"errors"
	"fmt"
	"io"
)

// ParseError is a problem at a place in a file. Line and Column are
// 1-based; 0 means unknown.
type ParseError struct {
	File   string
	Line   int
	Column int
	Err    error
}

func (e *ParseError) Error() string {
	f := e.File
	if f == "" {
		f = "<input>"
	}
	switch {
	case e.Line > 0 && e.Column > 0:
		return fmt.Sprintf("%s:%d:%d: %v", f, e.Line, e.Column, e.Err)
	case e.Line > 0:
		return fmt.Sprintf("%s:%d: %v", f, e.Line, e.Err)
	}
	return fmt.Sprintf("%s: %v", f, e.Err)
}

func (e *ParseError) Unwrap() error { return e.Err }

// ReadOptions control the readers.
type ReadOptions struct {
	// Quantity overrides what the file says the values are. Unstated
	// means: take it from the header, else read absorbance and warn.
	Quantity Quantity
	// Warn receives warnings (already prefixed with the file name). Nil
	// discards them.
	Warn func(msg string)
}

var errTODO = errors.New("reader not yet written")

// ReadFile reads all spectra of a file, choosing the format from its
// content (JCAMP-DX when the first non-blank line starts with "##",
// delimited text otherwise). Values are left in the quantity the file
// holds; call ToAbsorbance to convert.
func ReadFile(path string, opt ReadOptions) ([]*Spectrum, error) {
	return nil, &ParseError{File: path, Err: errTODO}
}

// ReadDelimited reads a two-column scan or a wide table from r; file is
// used in messages and provenance.
func ReadDelimited(r io.Reader, file string, opt ReadOptions) ([]*Spectrum, error) {
	return nil, &ParseError{File: file, Err: errTODO}
}

// ReadJCAMP reads one UV-Vis spectrum from a JCAMP-DX file.
func ReadJCAMP(r io.Reader, file string, opt ReadOptions) ([]*Spectrum, error) {
	return nil, &ParseError{File: file, Err: errTODO}
}
