package spectrum

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"hash"
	"io"
	"os"

	"huesolve/internal/bytesize"
	"huesolve/internal/pkgerr"
)

// ParseError is a problem at a place in a file. Line and Column are
// 1-based; 0 means unknown. In delimited text Column counts table columns
// (fields), as a spreadsheet shows them; in JCAMP-DX it counts characters
// (bytes) of the line.
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
	// Quantity says what the values are in files that do not say (no
	// quantity word in the header, no JCAMP-DX YUNITS). A file that
	// states its quantity keeps it; when that contradicts Quantity, a
	// warning names the file. Unstated means: take it from the file,
	// else read absorbance and warn.
	Quantity Quantity
	// Warn receives warnings (already prefixed with the file name). Nil
	// discards them.
	Warn func(msg string)
	// MaxLineBytes bounds the length of one line; a longer line is an
	// error. Zero means 64 MiB.
	MaxLineBytes int
	// MaxColumns bounds the number of columns of a delimited table; a
	// wider table is an error. Zero means 1,048,576 (2^20).
	MaxColumns int
	// MaxFileBytes bounds the size of a file ReadFile reads; a larger
	// file is refused before it is read (a file that grows while it is
	// read fails when it passes the bound). Zero means 1 GiB.
	MaxFileBytes int64
	// Context, if not nil, stops ReadFile when it is done: each read
	// from the file checks it, and the error wraps its Err (so a large
	// file stops at the first Ctrl-C, not at its end).
	Context context.Context
	// Digest, if not nil, is filled by ReadFile with the SHA-256 of the
	// file's bytes as it reads them for parsing (see Digest).
	Digest *Digest

	// sizeHint is the input size in bytes when known (ReadFile sets it);
	// it only sizes buffers and chooses parallel reading.
	sizeHint int64
	// workers is how many goroutines parse a delimited table's rows: 0
	// chooses (all cores for a large file), 1 is the serial code alone.
	// Tests set it and blockRows to compare parallel and serial reading.
	workers int
	// blockRows, when positive, is the rows per block (tablefill.go).
	blockRows int
	// scratch, if not nil, holds the buffers a narrow table is parsed
	// into (scratch.go); readWhole sets it.
	scratch *scratch
}

// DefaultMaxFileBytes is the largest file ReadFile reads when
// ReadOptions.MaxFileBytes is zero (1 GiB).
const DefaultMaxFileBytes int64 = 1 << 30

// Limits that keep the memory a reader uses bounded by what the numbers
// themselves need, whatever the input holds.
const (
	// defaultMaxLineBytes is the longest line the readers accept (64 MiB),
	// enough for a wide table of a million columns of 60-byte numbers.
	defaultMaxLineBytes = 64 << 20
	// defaultMaxColumns is the most columns a delimited table may have.
	defaultMaxColumns = 1 << 20
	// maxJCAMPPoints is the largest NPOINTS a JCAMP-DX file may declare;
	// no UV-Vis scan comes near it.
	maxJCAMPPoints = 1 << 22
	// defaultMaxFileBytes is the largest file ReadFile reads (1 GiB):
	// a wide table of 100,000 scans of 1,000 wavelengths written with
	// 10 characters a number. The numbers parsed from it take at most
	// about as much memory again.
	defaultMaxFileBytes int64 = DefaultMaxFileBytes
)

func (o *ReadOptions) maxLine() int {
	if o.MaxLineBytes > 0 {
		return o.MaxLineBytes
	}
	return defaultMaxLineBytes
}

func (o *ReadOptions) maxCols() int {
	if o.MaxColumns > 0 {
		return o.MaxColumns
	}
	return defaultMaxColumns
}

func (o *ReadOptions) maxFile() int64 {
	if o.MaxFileBytes > 0 {
		return o.MaxFileBytes
	}
	return defaultMaxFileBytes
}

func (o *ReadOptions) warnf(file, format string, a ...any) {
	if o.Warn == nil {
		return
	}
	if file == "" {
		file = "<input>"
	}
	o.Warn(file + ": " + fmt.Sprintf(format, a...))
}

// detectPeek is how many bytes ReadFile looks at to choose the format.
const detectPeek = 64 << 10

// ReadFile reads all spectra of a file, choosing the format from its
// content (JCAMP-DX when the first non-blank line starts with "##",
// delimited text otherwise). Values are left in the quantity the file
// holds; call ToAbsorbance to convert.
//
// A directory, a missing or unreadable file is an error naming the path,
// and so is a named pipe, socket or device (ErrNotRegular: see
// OpenInput), refused before anything is read; problems inside the file are *ParseError values, and so is a file larger
// than opt.MaxFileBytes (wrapping errTooLarge, refused before anything is
// read).
func ReadFile(path string, opt ReadOptions) ([]*Spectrum, error) {
	if opt.Digest != nil {
		*opt.Digest = Digest{}
	}
	if ss, err, ok := readWhole(path, opt); ok {
		return ss, err
	}
	f, st, err := OpenInput(path)
	if errors.Is(err, ErrNotRegular) {
		return nil, pkgerr.Errorf("spectrum", "%w", err)
	}
	if err != nil {
		return nil, pkgerr.Errorf("spectrum", "cannot read %s: %w", path, unwrapPathError(err))
	}
	defer f.Close()
	if st.IsDir() {
		return nil, pkgerr.Errorf("spectrum", "%s is a directory, not a spectrum file", path)
	}
	limit := opt.maxFile()
	// The cap also holds for a file that grows while it is read.
	in := &capReader{r: f, left: limit, limit: limit, ctx: opt.Context}
	if st.Size() > limit {
		if opt.Digest != nil {
			opt.Digest.TooLarge = true
		}
		return nil, &ParseError{File: path, Err: fmt.Errorf("the file is %s, more than the %s a spectrum file may hold (%w: is it a spectrum file? split a bigger table into several files)",
			bytesize.Text(st.Size()), bytesize.Text(limit), errTooLarge)}
	}
	opt.sizeHint = st.Size()
	if opt.Digest != nil {
		in.hash = sha256.New()
		defer in.digest(opt.Digest)
	}
	size := detectPeek
	if s := st.Size(); s > 0 && s < int64(size) {
		size = max(int(s), 16)
	}
	br := bufio.NewReaderSize(in, size)
	head, err := br.Peek(size)
	if err != nil && err != io.EOF && !errors.Is(err, bufio.ErrBufferFull) {
		return nil, pkgerr.Errorf("spectrum", "cannot read %s: %w", path, unwrapPathError(err))
	}
	if looksJCAMP(head) {
		return ReadJCAMP(br, path, opt)
	}
	return ReadDelimited(br, path, opt)
}

// capReader passes at most limit bytes of r and then fails with
// errTooLarge, for inputs whose size is not known beforehand.
type capReader struct {
	r     io.Reader
	left  int64
	limit int64
	ctx   context.Context // nil: never stopped
	hash  hash.Hash       // nil, or takes every byte read
}

// digest reads what is left of the input (parsing may have stopped at
// an error) into the hash and fills d: the SHA-256 of every byte of the
// file, read once.
func (c *capReader) digest(d *Digest) {
	if _, err := io.Copy(io.Discard, c); err != nil {
		d.TooLarge = errors.Is(err, errTooLarge)
		return
	}
	c.hash.Sum(d.SHA256[:0])
	d.Read = true
}

func (c *capReader) Read(p []byte) (int, error) {
	if c.ctx != nil {
		if err := c.ctx.Err(); err != nil {
			return 0, err
		}
	}
	if c.left <= 0 {
		// One byte more tells a stream that ends exactly at the limit
		// from a longer one.
		var one [1]byte
		if n, err := c.r.Read(one[:]); n == 0 {
			return 0, err
		}
		return 0, fmt.Errorf("more than %s: %w", bytesize.Text(c.limit), errTooLarge)
	}
	if int64(len(p)) > c.left {
		p = p[:c.left]
	}
	n, err := c.r.Read(p)
	c.left -= int64(n)
	if c.hash != nil {
		c.hash.Write(p[:n])
	}
	return n, err
}

// unwrapPathError drops the *os.PathError layer, whose text repeats the
// path we already name.
func unwrapPathError(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// looksJCAMP reports whether the first non-blank line of head starts with
// "##" (after an optional UTF-8 byte order mark and leading blanks) and
// holds a labelled record ("##LABEL=..."); a "## note" line without '='
// is a comment of delimited text.
func looksJCAMP(head []byte) bool {
	head = bytes.TrimPrefix(head, utf8BOM)
	for len(head) > 0 {
		c := head[0]
		if c == ' ' || c == '\t' || c == '\r' || c == '\n' {
			head = head[1:]
			continue
		}
		if !bytes.HasPrefix(head, []byte("##")) {
			return false
		}
		if k := bytes.IndexByte(head, '\n'); k >= 0 {
			head = head[:k]
		}
		return bytes.IndexByte(head, '=') >= 0
	}
	return false
}

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// lineReader yields the lines of r without their end-of-line bytes (LF or
// CRLF), refusing lines longer than max bytes. The returned slice is only
// valid until the next call.
type lineReader struct {
	sc   *bufio.Scanner // nil: the lines of data
	data []byte         // the input not yet returned, when it is all in memory
	file string
	n    int // number of the line last returned (1-based)
	max  int
	// cr is the offset in data of its first CR (-1: none), when crKnown:
	// a file without CRs is searched for one once, not line by line.
	cr      int
	crKnown bool
}

// newBytesLineReader yields the lines of data, which holds the whole
// input, as newLineReader would yield them from a reader of data.
func newBytesLineReader(data []byte, file string, maxLine int) *lineReader {
	return &lineReader{data: data, file: file, max: maxLine}
}

func newLineReader(r io.Reader, file string, maxLine int, sizeHint int64) *lineReader {
	sc := bufio.NewScanner(r)
	initial := 4096
	if sizeHint > 0 && sizeHint < int64(initial) {
		initial = int(sizeHint) + 1
	}
	sc.Buffer(make([]byte, initial), maxLine+2) // +2 for the CRLF
	sc.Split(scanLines)
	return &lineReader{sc: sc, file: file, max: maxLine}
}

// scanLines is bufio.ScanLines that also ends a line at a lone CR (files
// from old instruments end lines with CR only).
func scanLines(data []byte, atEOF bool) (advance int, token []byte, err error) {
	if atEOF && len(data) == 0 {
		return 0, nil, nil
	}
	end := bytes.IndexByte(data, '\n')
	scope := data
	if end >= 0 {
		scope = data[:end]
	}
	if r := bytes.IndexByte(scope, '\r'); r >= 0 && r != len(scope)-1 || (r >= 0 && end < 0) {
		// A CR before the last byte of the line: a line of its own.
		// (A CR at the very end of the buffer may be the start of CRLF.)
		if end < 0 && r == len(data)-1 && !atEOF {
			return 0, nil, nil
		}
		return r + 1, data[:r], nil
	}
	if end >= 0 {
		return end + 1, bytes.TrimSuffix(data[:end], []byte{'\r'}), nil
	}
	if atEOF {
		return len(data), data, nil
	}
	return 0, nil, nil
}

// next returns the next line, or ok=false at the end of input (err tells
// whether the end was a failure).
func (lr *lineReader) next() (line []byte, ok bool, err error) {
	if lr.sc == nil {
		return lr.nextInMemory()
	}
	if !lr.sc.Scan() {
		if e := lr.sc.Err(); e != nil {
			if errors.Is(e, bufio.ErrTooLong) {
				return nil, false, &ParseError{File: lr.file, Line: lr.n + 1,
					Err: fmt.Errorf("line longer than %d bytes: refusing to read it (is this a spectrum file?)", lr.max)}
			}
			return nil, false, &ParseError{File: lr.file, Line: lr.n + 1, Err: e}
		}
		return nil, false, nil
	}
	return lr.took(lr.sc.Bytes())
}

// took counts line as the next line and returns it, checking its length.
func (lr *lineReader) took(line []byte) ([]byte, bool, error) {
	lr.n++
	if lr.n == 1 {
		line = bytes.TrimPrefix(line, utf8BOM)
	}
	if len(line) > lr.max {
		return nil, false, &ParseError{File: lr.file, Line: lr.n,
			Err: fmt.Errorf("line longer than %d bytes: refusing to read it (is this a spectrum file?)", lr.max)}
	}
	return line, true, nil
}

// nextInMemory is next on data held in memory: the line scanLines(data,
// true) would return, with the search for a CR done once for all the
// lines before it.
func (lr *lineReader) nextInMemory() ([]byte, bool, error) {
	data := lr.data
	if len(data) == 0 {
		return nil, false, nil
	}
	if !lr.crKnown {
		lr.cr, lr.crKnown = bytes.IndexByte(data, '\r'), true
	}
	end := bytes.IndexByte(data, '\n')
	r := lr.cr
	var adv int
	var tok []byte
	switch {
	case r >= 0 && (end < 0 || r < end-1):
		// A CR before the last byte of the line: a line of its own.
		adv, tok = r+1, data[:r]
	case end >= 0:
		adv, tok = end+1, data[:end]
		if r >= 0 && r == end-1 {
			tok = data[:r] // CRLF
		}
	default:
		adv, tok = len(data), data
	}
	lr.data = data[adv:]
	if r >= 0 {
		lr.cr -= adv
		lr.crKnown = lr.cr >= 0
	}
	return lr.took(tok)
}
