// Package hugepage allocates large float64 arrays that the operating
// system is asked to back with huge pages where it can.
//
// On Linux with transparent huge pages in "madvise" mode, memory that
// asks for them (madvise MADV_HUGEPAGE) before it is first written is
// mapped 2 MiB at a time instead of 4 KiB at a time, which saves one page
// fault per 4 KiB on first touch (tens of milliseconds per 100 MB on a
// virtual machine). Elsewhere the advice is a no-op. It is advice only:
// the values and the program's behaviour are the same either way.
package hugepage

import (
	"sync"
	"unsafe"
)

// minBytes is the smallest array worth advising: below two huge pages
// the advice cannot cover a whole aligned huge page of it.
const minBytes = 4 << 20

// Bytes is the size of a huge page on the platforms the advice is given
// on (2 MiB on x86-64 and arm64 Linux with 4 KiB base pages).
const Bytes = 2 << 20

// pageBytes is the page size madvise aligns to (4 KiB on every platform
// the advice is given on).
const pageBytes = 4096

// Float64s returns a new zeroed slice of n float64, advised for huge
// pages when it is large (see the package comment).
func Float64s(n int) []float64 {
	v := make([]float64, n)
	if n*8 >= minBytes {
		advise(bytesOf(v))
	}
	return v
}

// bytesOf is v's memory as bytes, starting at the first page boundary
// inside it (madvise wants an aligned start).
func bytesOf(v []float64) []byte {
	b := unsafe.Slice((*byte)(unsafe.Pointer(unsafe.SliceData(v))), len(v)*8)
	off := int(-uintptr(unsafe.Pointer(unsafe.SliceData(b))) & (pageBytes - 1))
	if off >= len(b) {
		return nil
	}
	return b[off:]
}

// Touch writes a zero into every page of v (which must hold zeros), on
// parts goroutines each taking one contiguous part, and returns when all
// are done: the pages are then mapped, so that their first-touch faults
// (and the zeroing of fresh pages by the kernel) are taken on all cores
// at once rather than by whichever goroutine first writes each page. The
// values are unchanged.
func Touch(v []float64, parts int) {
	const step = pageBytes / 8
	if parts < 2 || len(v)*8 < minBytes {
		return
	}
	per := (len(v) + parts - 1) / parts
	var wg sync.WaitGroup
	for lo := 0; lo < len(v); lo += per {
		part := v[lo:min(lo+per, len(v))]
		wg.Go(func() {
			for i := 0; i < len(part); i += step {
				part[i] = 0
			}
		})
	}
	wg.Wait()
}
