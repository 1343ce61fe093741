package spectrum

import (
	"bytes"
	"crypto/sha256"
	"sync"

	"huesolve/internal/pkgerr"
)

// Digest is what ReadFile found of a file's bytes for the record of a
// run (ReadOptions.Digest): the SHA-256 of the very bytes it parsed, so
// the file is read once and the digest cannot describe another content
// than the one the results came from.
type Digest struct {
	// SHA256 is the digest of every byte of the file (valid when Read).
	SHA256 [32]byte
	// Read: the whole file was read and hashed, also when parsing
	// stopped at an error in it.
	Read bool
	// TooLarge: the file is larger than ReadOptions.MaxFileBytes and
	// was refused before it was read.
	TooLarge bool
}

// wholeMaxBytes is the largest file ReadFile reads in one piece into a
// reused buffer (a scan of one or a few spectra); larger files are read
// through a buffered reader, and the largest in parallel.
const wholeMaxBytes = 1 << 20

// wholeBufs holds the buffers of readWhole, up to wholeMaxBytes + 1
// bytes each.
var wholeBufs sync.Pool // of *[]byte

// wholeMinBuf is the size of a new buffer of readWhole: a file that
// states no size (size 0, as under /proc) is read into it.
const wholeMinBuf = 16 << 10

// readWhole reads a regular file of at most wholeMaxBytes with one open,
// one status call and (as a rule) one read into a reused buffer, then
// parses the buffer; ok false leaves the file to the general path of
// ReadFile, which opens it again (an open that fails, a folder, a pipe or
// device, a larger file, a file that grew while it was read), so that
// every error keeps its wording. The spectra refer to no byte of the
// buffer, which goes back to the pool.
func readWhole(path string, opt ReadOptions) (ss []*Spectrum, err error, ok bool) {
	if opt.Context != nil && opt.Context.Err() != nil {
		return nil, nil, false
	}
	bp := getWholeBuf()
	defer wholeBufs.Put(bp)
	n, ok, err := readSmallFile(path, min(opt.maxFile(), wholeMaxBytes), bp)
	if !ok {
		return nil, nil, false
	}
	if err != nil {
		return nil, pkgerr.Errorf("spectrum", "cannot read %s: %w", path, err), true
	}
	data := (*bp)[:n]
	if opt.Digest != nil {
		opt.Digest.SHA256 = sha256.Sum256(data)
		opt.Digest.Read = true
	}
	opt.sizeHint = int64(n)
	if looksJCAMP(data[:min(n, detectPeek)]) {
		ss, err = ReadJCAMP(bytes.NewReader(data), path, opt)
		return ss, err, true
	}
	sc := scratches.Get().(*scratch)
	defer scratches.Put(sc)
	opt.scratch = sc
	ss, err = readDelimited(newBytesLineReader(data, path, opt.maxLine()), path, opt)
	return ss, err, true
}

// getWholeBuf returns a buffer of readWhole from the pool, or a new one.
func getWholeBuf() *[]byte {
	if bp, _ := wholeBufs.Get().(*[]byte); bp != nil {
		return bp
	}
	b := make([]byte, wholeMinBuf)
	return &b
}

// growWholeBuf makes *bp at least n bytes long.
func growWholeBuf(bp *[]byte, n int) {
	if len(*bp) < n {
		*bp = make([]byte, n)
	}
}
