package spectrum

import (
	"math"
	"slices"
	"sync"
	"sync/atomic"
)

// A folder of thousands of small files is read one file after another on
// each reading goroutine; what a file needs only while it is parsed (its
// wavelengths as read, its values before they are copied out at their
// exact size, the staging row) is kept in a scratch taken from a pool, so
// that a file leaves only its spectra behind. And files of one instrument
// share their grid: a grid equal to the last one read is handed out as
// that same slice (read-only, as a wide table's is), which also lets a
// model recognise it at once.

// scratch is the reusable memory of readWhole's delimited parse of a
// narrow table (tableFill.direct).
type scratch struct {
	wl    []float64 // wavelengths as read (file order)
	vals  []float64 // values, column-major with the fill's ld
	stage []float64 // one parsed row
}

// scratches holds the scratches of readWhole.
var scratches = sync.Pool{New: func() any { return new(scratch) }}

// floats returns *buf grown to at least n values (its contents are not
// kept).
func floats(buf *[]float64, n int) []float64 {
	if cap(*buf) < n {
		*buf = make([]float64, n)
	}
	return (*buf)[:n]
}

// lastGrid is the grid last handed out by sharedGrid (checked, read-only).
var lastGrid atomic.Pointer[[]float64]

// sharedGrid returns wl, ascending wavelengths read into a scratch, as a
// slice of its own: the last grid handed out when equal to it (already
// checked), else a copy of wl once checkGrid passes it, which becomes the
// last grid.
func sharedGrid(wl []float64) ([]float64, error) {
	if g := lastGrid.Load(); g != nil && sameBits(*g, wl) {
		return *g, nil
	}
	if err := checkGrid(wl); err != nil {
		return nil, err
	}
	g := slices.Clone(wl)
	g = g[:len(g):len(g)]
	lastGrid.Store(&g)
	return g, nil
}

// sameBits reports whether a and b hold the same values bit for bit (so
// that -0 and 0 are told apart, as their text would be).
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i, x := range a {
		if math.Float64bits(x) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}
