//go:build linux

package hugepage

import "syscall"

// advise asks Linux to back b with transparent huge pages. An error
// (a kernel without them, a non-aligned length) only means no advice.
func advise(b []byte) {
	if len(b) == 0 {
		return
	}
	_ = syscall.Madvise(b[:len(b)&^(pageBytes-1)], syscall.MADV_HUGEPAGE)
}
