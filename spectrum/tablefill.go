package spectrum

import (
	"runtime"

	"huesolve/internal/hugepage"
)

// A table's values go straight into their final column-major store (one
// allocation, sized from the file size), a block of rows at a time: each
// block's text is parsed into a small row-major staging array, which is
// then written into the store with a leading dimension (rows reserved per
// column) that is a multiple of the block length, so that workers
// filling different blocks never write the same cache line.
//
// Large tables are parsed on all cores: a worker parses a block with the
// fast path alone (plain numbers between delimiters, the decimal mark
// already settled) and touches no shared state; the reading goroutine
// takes finished blocks in order and checks their wavelengths as
// addWavelength always does. A block the fast path refuses is parsed
// again, in order, by the serial code (parseRow), so every error keeps
// its wording, line and column, and the first error in the file is the
// one reported.

// Block and parallelism sizes.
const (
	// blockBytes is the staging size a block aims at (values of its
	// rows); a block has at least blockAlign rows.
	blockBytes = 256 << 10
	// blockAlign is the row multiple of blocks and of the store's
	// leading dimension in parallel reading: 8 float64 make a 64-byte
	// cache line.
	blockAlign = 8
	// parallelMinBytes is the smallest input read in parallel; below
	// it the goroutines cost more than they save.
	parallelMinBytes = 4 << 20
	// firstRows is the store's initial rows per column when the input
	// size is unknown (it doubles as needed).
	firstRows = 64
)

// rowBlock is a run of data rows: their text, then their parsed values.
type rowBlock struct {
	r0    int       // index in the table of the first row
	text  []byte    // the rows' trimmed text, back to back
	ends  []int     // end of each row in text
	lines []int     // line number of each row
	stage []float64 // parsed rows, row-major, ncols values a row
	mark  byte      // decimal mark settled when the block was sent out
	ok    bool      // the fast path parsed every row and stored them
	done  chan struct{}
}

func (b *rowBlock) rows() int { return len(b.ends) }

// row returns the text of row i.
func (b *rowBlock) row(i int) []byte {
	start := 0
	if i > 0 {
		start = b.ends[i-1]
	}
	return b.text[start:b.ends[i]]
}

// tableFill collects a table's data rows into blocks and fills the store.
type tableFill struct {
	d       *delimReader
	ns      int // spectra (columns after the wavelength)
	lineLen int // length of the first data row, to size block text
	// direct: rows are parsed as they come, straight into the store
	// (serial reading of a narrow table, where a block buys nothing).
	direct  bool
	brows   int // rows per block
	align   int // multiple of the leading dimension
	vals    []float64
	ld      int // rows reserved per column in vals
	rows    int // rows handed to blocks so far
	cur     *rowBlock
	free    []*rowBlock
	pending []*rowBlock // sent to the workers, in row order
	work    chan *rowBlock
}

// newTableFill sizes the store from the input size and the first data
// row's length (lineLen bytes).
func newTableFill(d *delimReader, lineLen int) *tableFill {
	nc := d.ncols
	f := &tableFill{d: d, ns: nc - 1, align: 1, lineLen: lineLen}
	f.brows = max(blockBytes/(8*nc), 1)
	hint := d.opt.sizeHint
	rows := int64(firstRows)
	if hint > 0 {
		rows = hint/int64(lineLen+1) + blockAlign
	}
	workers := d.opt.workers
	if workers == 0 {
		workers = 1
		if hint >= parallelMinBytes && d.delim != whitespace {
			workers = runtime.GOMAXPROCS(0)
		}
	}
	if d.delim == whitespace {
		workers = 1 // the fast path knows delimiters, not runs of blanks
	}
	if workers > 1 || f.brows >= blockAlign {
		f.align = blockAlign
		f.brows = roundUp(f.brows, blockAlign)
	}
	if r := d.opt.blockRows; r > 0 {
		f.brows = r
	}
	f.brows = max(min(f.brows, int(min(rows, 1<<30))), 1)
	ld := roundUp(int(min(rows, int64(maxStoreValues/max(f.ns, 1)))), f.align)
	f.ld = max(ld, f.align)
	if workers == 1 && f.ns < blockAlign && d.opt.blockRows == 0 {
		f.direct = true
		f.brows = 1
	}
	if sc := d.opt.scratch; f.direct && sc != nil {
		// The spectra get copies of the values (delimReader.build).
		f.vals = floats(&sc.vals, f.ld*f.ns)
		f.cur = &rowBlock{stage: floats(&sc.stage, nc)}
		return f
	}
	f.vals = hugepage.Float64s(f.ld * f.ns)
	f.cur = f.newBlock()
	if workers > 1 {
		// Each block spans every column, so when columns are short (at
		// most a huge page each: every huge page holds the first rows
		// of some column) the first one stored would take the
		// first-touch fault of every page of the store on one goroutine
		// (the reading one: the first block is parsed serially); the
		// pages are mapped on all cores instead. Longer columns are left
		// to be mapped as they fill, so that rows reserved beyond the
		// size estimate cost no memory.
		if f.ld*8 <= hugepage.Bytes {
			hugepage.Touch(f.vals, workers)
		}
		f.work = make(chan *rowBlock)
		for range workers {
			go f.worker(f.work)
		}
		for range workers {
			f.free = append(f.free, f.newBlock())
		}
	}
	return f
}

// maxStoreValues bounds the first store made from a size estimate (2 GiB
// of values); a larger table grows it as it is read.
const maxStoreValues = 1 << 28

func roundUp(n, m int) int { return (n + m - 1) / m * m }

func (f *tableFill) newBlock() *rowBlock {
	return &rowBlock{
		text:  make([]byte, 0, f.brows*(f.lineLen+1)+64),
		ends:  make([]int, 0, f.brows),
		lines: make([]int, 0, f.brows),
		stage: make([]float64, f.brows*f.d.ncols),
		done:  make(chan struct{}, 1),
	}
}

// close stops the workers.
func (f *tableFill) close() {
	if f.work != nil {
		close(f.work)
		f.work = nil
	}
}

// add takes the trimmed text of the data row on line n.
func (f *tableFill) add(t []byte, n int) error {
	if f.direct {
		if f.ns == 1 && f.d.delim != whitespace {
			return f.addPair(t, n)
		}
		return f.addDirect(t, n)
	}
	b := f.cur
	b.text = append(b.text, t...)
	b.ends = append(b.ends, len(b.text))
	b.lines = append(b.lines, n)
	if b.rows() == f.brows {
		return f.flush()
	}
	return nil
}

// flush sends the current block on its way (or parses it here) and
// starts a new one.
func (f *tableFill) flush() error {
	b := f.cur
	if f.direct || b.rows() == 0 {
		return nil
	}
	if f.rows+b.rows() > f.ld {
		if err := f.drain(); err != nil {
			return err
		}
		f.grow(f.rows + b.rows())
	}
	b.r0 = f.rows
	f.rows += b.rows()
	// The first block is parsed here, settling the decimal mark.
	if f.work == nil || b.r0 == 0 {
		if err := f.serial(b); err != nil {
			return err
		}
		f.recycle(b)
		return nil
	}
	if len(f.free) == 0 {
		if err := f.finishOldest(); err != nil {
			return err
		}
	}
	b.mark = f.d.mark
	f.pending = append(f.pending, b)
	f.work <- b
	f.cur = f.free[len(f.free)-1]
	f.free = f.free[:len(f.free)-1]
	return nil
}

// addDirect parses the data row t on line n into the store.
func (f *tableFill) addDirect(t []byte, n int) error {
	d, nc := f.d, f.d.ncols
	row, err := d.parseRow(t, n, f.cur.stage[:0:nc])
	if err != nil {
		return err
	}
	if err := d.addWavelength(row[0], n); err != nil {
		return err
	}
	if f.rows == f.ld {
		f.grow(f.rows + 1)
	}
	for j, v := range row[1:] {
		f.vals[j*f.ld+f.rows] = v
	}
	f.rows++
	return nil
}

// addPair is addDirect for a two-column table (a scan): a row of two
// plain numbers, the rows parseRow's fast path takes, is stored without
// its loop; any other row is left to addDirect, which words the errors.
func (f *tableFill) addPair(t []byte, n int) error {
	d := f.d
	w, m, k, err := scanNumber(t, d.allowComma)
	if err != nil || k >= len(t) || t[k] != d.delim || (m != 0 && m != d.mark) {
		return f.addDirect(t, n)
	}
	rest := t[k+1:]
	v, m, k, err := scanNumber(rest, d.allowComma)
	if err != nil || (m != 0 && m != d.mark) || (k < len(rest) && (rest[k] != d.delim || len(trimBlank(rest[k+1:])) != 0)) {
		return f.addDirect(t, n)
	}
	if err := d.addWavelength(w, n); err != nil {
		return err
	}
	if f.rows == f.ld {
		f.grow(f.rows + 1)
	}
	f.vals[f.rows] = v
	f.rows++
	return nil
}

// recycle empties b for the next rows.
func (f *tableFill) recycle(b *rowBlock) {
	b.text, b.ends, b.lines, b.ok = b.text[:0], b.ends[:0], b.lines[:0], false
}

// finishOldest waits for the oldest block sent out and takes it in.
func (f *tableFill) finishOldest() error {
	b := f.pending[0]
	f.pending = f.pending[1:]
	<-b.done
	err := f.take(b)
	f.recycle(b)
	f.free = append(f.free, b)
	return err
}

// drain takes in every block sent out.
func (f *tableFill) drain() error {
	for len(f.pending) > 0 {
		if err := f.finishOldest(); err != nil {
			return err
		}
	}
	return nil
}

// finish flushes the last rows and takes in every block.
func (f *tableFill) finish() error {
	if err := f.flush(); err != nil {
		return err
	}
	return f.drain()
}

// take checks the wavelengths of a block the fast path parsed, or parses
// it serially if the fast path refused it.
func (f *tableFill) take(b *rowBlock) error {
	if !b.ok {
		return f.serial(b)
	}
	nc := f.d.ncols
	for i, n := range b.lines {
		if err := f.d.addWavelength(b.stage[i*nc], n); err != nil {
			return err
		}
	}
	return nil
}

// serial parses b with the serial code, row by row, and stores it.
func (f *tableFill) serial(b *rowBlock) error {
	d, nc := f.d, f.d.ncols
	for i, n := range b.lines {
		row, err := d.parseRow(b.row(i), n, b.stage[i*nc:i*nc:(i+1)*nc])
		if err != nil {
			return err
		}
		if err := d.addWavelength(row[0], n); err != nil {
			return err
		}
	}
	f.store(b)
	return nil
}

// worker parses the blocks it is sent with the fast path.
func (f *tableFill) worker(work <-chan *rowBlock) {
	d := f.d
	for b := range work {
		b.ok = fastBlock(b, d.ncols, d.delim, d.allowComma)
		if b.ok {
			f.store(b)
		}
		b.done <- struct{}{}
	}
}

// fastBlock parses every row of b into its staging array with the fast
// path alone; false means some row needs the serial code.
func fastBlock(b *rowBlock, nc int, delim byte, allowComma bool) bool {
	for i := range b.ends {
		if !fastRow(b.row(i), b.stage[i*nc:(i+1)*nc], delim, allowComma, b.mark) {
			return false
		}
	}
	return true
}

// fastRow parses t into exactly len(dst) values when every field is a
// plain number (parseRow's fast path) with no decimal mark other than
// mark; it reports false for anything else, parseRow then decides.
func fastRow(t []byte, dst []float64, delim byte, allowComma bool, mark byte) bool {
	rest := t
	for col := range dst {
		v, m, k, err := scanNumber(rest, allowComma)
		if err != nil || (k < len(rest) && rest[k] != delim) || (m != 0 && m != mark) {
			return false
		}
		dst[col] = v
		if k == len(rest) {
			return col == len(dst)-1
		}
		rest = rest[k+1:]
	}
	return len(trimBlank(rest)) == 0 // one trailing delimiter is tolerated
}

// store writes b's staged values (all but the wavelength column) into
// the store at rows b.r0.., in tiles for the cache.
func (f *tableFill) store(b *rowBlock) {
	const tile = 32
	nr, nc, ld := b.rows(), f.d.ncols, f.ld
	dst, src := f.vals[b.r0:], b.stage
	for j0 := 1; j0 < nc; j0 += tile {
		j1 := min(j0+tile, nc)
		for i := 0; i < nr; i++ {
			r := src[i*nc : (i+1)*nc]
			for j := j0; j < j1; j++ {
				dst[(j-1)*ld+i] = r[j]
			}
		}
	}
}

// grow makes room for at least rows rows per column, doubling the store.
// No block may be out with a worker.
func (f *tableFill) grow(rows int) {
	ld := roundUp(max(2*f.ld, rows), f.align)
	var vals []float64
	if sc := f.d.opt.scratch; f.direct && sc != nil {
		var next []float64
		vals = floats(&next, ld*f.ns)
		sc.vals = next
	} else {
		vals = hugepage.Float64s(ld * f.ns)
	}
	for j := 0; j < f.ns; j++ {
		copy(vals[j*ld:j*ld+f.rows], f.vals[j*f.ld:j*f.ld+f.rows])
	}
	f.vals, f.ld = vals, ld
}
