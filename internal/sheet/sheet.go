// Package sheet reads the delimited-text sheets a chemist keeps in a
// spreadsheet (the standards sheet of package calibration, the sample sheet
// of package unmix): one dialect for all of them.
//
// The dialect:
//   - UTF-8 with or without a byte order mark; text that is not UTF-8 is
//     read as Latin-1 with a warning naming the line.
//   - Lines end in LF, CRLF or CR.
//   - Blank lines and lines whose first non-blank character is # are
//     skipped; so is a row whose fields are all empty.
//   - The separator is taken from the header (the first line kept): tab if
//     it has one, else semicolon, else comma.
//   - Fields may be quoted with double quotes ("" inside quotes is one
//     quote; a quoted field may span lines); a quote inside a field that
//     is not quoted is an error. Blanks around a field are dropped (tabs
//     too, unless tab separates fields), inside quotes as well.
//   - Every row has as many fields as the header: more or fewer is an
//     error naming file:line.
//   - Numbers have the syntax of the spectrum readers (spectrum.ParseNumber):
//     no hexadecimal, digit separators, NaN or Inf; a decimal comma is read
//     when the separator is not a comma, and one sheet may not mix decimal
//     points and decimal commas.
//   - A sheet holds at most Options.MaxBytes bytes and lines of at most
//     Options.MaxLine bytes.
//
// A sheet file is read with Open (a folder refused, the size cap checked
// before reading); Read and parse take a reader or bytes.
//
// Column names are matched with case and surrounding blanks ignored.
// Errors about the text are *spectrum.ParseError values naming file, line
// and column (the field's number, as a spreadsheet counts them).
package sheet

import (
	"bytes"
	"errors"
	"fmt"
	"io"

	"huesolve/internal/bytesize"
	"huesolve/spectrum"
)

// Options control Read and parse.
type Options struct {
	// What names the kind of sheet in messages ("sample sheet").
	What string
	// MaxBytes bounds the size of the sheet; zero means 64 MiB.
	MaxBytes int64
	// MaxLine bounds the length of one line; zero means 64 KiB.
	MaxLine int
	// Warn receives warnings, already prefixed with file:line; nil
	// discards them.
	Warn func(msg string)
	// Wrap, if not nil, is wrapped by the errors about the sheet as a
	// whole: a folder given as the sheet (Open), a sheet above MaxBytes.
	Wrap error
}

// Default limits.
const (
	// defaultMaxBytes is 64 MiB: hundreds of thousands of rows.
	defaultMaxBytes = 64 << 20
	// defaultMaxLine is 64 KiB: thousands of columns.
	defaultMaxLine = 64 << 10
)

// Sentinel causes, tested with errors.Is.
var (
	// errTooLarge: the sheet holds more than Options.MaxBytes.
	errTooLarge = errors.New("too large")
	// ErrNotNumber: a field is not a number in the sheets' syntax.
	ErrNotNumber = errors.New("not a number")
)

// Row is one row of a sheet.
type Row struct {
	Line   int      // line where the row starts
	Fields []string // fields, unquoted and trimmed; as many as the header's
}

// Sheet is a parsed sheet: its header and rows.
type Sheet struct {
	File   string
	Delim  byte // ',', ';' or '\t'
	Header Row
	Rows   []Row

	mark     byte // decimal mark of the numbers read so far (0: none yet)
	markLine int  // line where mark was first seen
}

// Read reads a sheet from r, at most opt.MaxBytes of it; file names it
// in messages.
func Read(r io.Reader, file string, opt Options) (*Sheet, error) {
	limit := opt.maxBytes()
	data, err := io.ReadAll(io.LimitReader(r, limit+1))
	if err != nil {
		return nil, &spectrum.ParseError{File: file, Err: err}
	}
	if int64(len(data)) > limit {
		return nil, opt.fileErr(file, &tooLarge{limit: limit, what: opt.what()})
	}
	return parse(data, file, opt)
}

// parse reads a sheet from data; file names it in messages. A sheet with
// no header is an error wrapping spectrum.ErrEmpty.
func parse(data []byte, file string, opt Options) (*Sheet, error) {
	if int64(len(data)) > opt.maxBytes() {
		return nil, opt.fileErr(file, &tooLarge{limit: opt.maxBytes(), what: opt.what()})
	}
	text, bad := spectrum.DecodeText(data)
	if bad >= 0 {
		line := 1 + countLines(trimBOM(data)[:bad])
		opt.warn(fmt.Sprintf("%s:%d: the %s is not UTF-8 text; read it as Latin-1 (save it as UTF-8 to be sure of names and units)", file, line, opt.what()))
	}
	t := &tokenizer{data: text, file: file, maxLine: opt.maxLine(), what: opt.what(), line: 1}
	t.delim = sniff(text)
	sh := &Sheet{File: file, Delim: t.delim}
	header := true
	for {
		row, ok, err := t.record()
		if err != nil {
			return nil, err
		}
		if !ok {
			break
		}
		if header {
			sh.Header, header = row, false
			continue
		}
		if len(row.Fields) != len(sh.Header.Fields) {
			return nil, sh.errAt(row.Line, min(len(row.Fields), len(sh.Header.Fields))+1,
				fmt.Errorf("row has %d %s but the header names %d %s", len(row.Fields), plural(len(row.Fields), "field"),
					len(sh.Header.Fields), plural(len(sh.Header.Fields), "column")))
		}
		sh.Rows = append(sh.Rows, row)
	}
	if header {
		return nil, sh.errAt(0, 0, spectrum.ErrEmpty)
	}
	return sh, nil
}

// Number reads field col (0-based) of row r as a number in the sheets'
// syntax. The error wraps ErrNotNumber, or spectrum.ErrMixedMark for a
// decimal mark other than the sheet's earlier numbers used; it carries
// no position (the caller words it and places it).
func (sh *Sheet) Number(r Row, col int) (float64, error) {
	f := r.Fields[col]
	v, mark, err := spectrum.ParseNumber([]byte(f), sh.Delim != ',')
	if err != nil {
		return 0, fmt.Errorf("%w: %q", ErrNotNumber, f)
	}
	if mark != 0 && mark != sh.mark {
		if sh.mark != 0 {
			return 0, fmt.Errorf("%w (%q here, %q from line %d)", spectrum.ErrMixedMark, mark, sh.mark, sh.markLine)
		}
		sh.mark, sh.markLine = mark, r.Line
	}
	return v, nil
}

// Field returns field col of r, or "" when col is negative (a column the
// sheet does not have).
func Field(r Row, col int) string {
	if col < 0 {
		return ""
	}
	return r.Fields[col]
}

func (sh *Sheet) errAt(line, col int, err error) error {
	return &spectrum.ParseError{File: sh.File, Line: line, Column: col, Err: err}
}

// ErrAt is a *spectrum.ParseError naming the sheet, line and column.
func (sh *Sheet) ErrAt(line, col int, format string, a ...any) error {
	return sh.errAt(line, col, fmt.Errorf(format, a...))
}

// tooLarge is the error for a sheet above its size limit; it is
// errTooLarge. size is the file's size when it was known before
// reading, else 0.
type tooLarge struct {
	limit, size int64
	what        string
}

func (e *tooLarge) Error() string {
	if e.size > 0 {
		return fmt.Sprintf("the file is %s, more than the %s a %s may take (is it a sheet?)", bytesize.Text(e.size), bytesize.Text(e.limit), e.what)
	}
	return fmt.Sprintf("more than the %s a %s may take (is it a sheet?)", bytesize.Text(e.limit), e.what)
}

func (e *tooLarge) Is(target error) bool { return target == errTooLarge }

func (o *Options) maxBytes() int64 {
	if o.MaxBytes > 0 {
		return o.MaxBytes
	}
	return defaultMaxBytes
}

func (o *Options) maxLine() int {
	if o.MaxLine > 0 {
		return o.MaxLine
	}
	return defaultMaxLine
}

func (o *Options) what() string {
	if o.What != "" {
		return o.What
	}
	return "sheet"
}

func (o *Options) warn(msg string) {
	if o.Warn != nil {
		o.Warn(msg)
	}
}

func plural(n int, word string) string {
	if n == 1 {
		return word
	}
	return word + "s"
}

func trimBOM(b []byte) []byte { return bytes.TrimPrefix(b, []byte("\ufeff")) }
