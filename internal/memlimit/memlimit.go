// Package memlimit keeps the garbage a run lets build up beside a large
// input held in memory in proportion to that input.
//
// Go's collector starts a cycle when the heap has grown by GOGC percent
// (100 by default) over what the previous cycle left live. A wide
// table's values are one large block that stays live while its samples
// are solved, so after it is read the next cycle waits until as many
// bytes again of garbage (per-sample scratch, formatted rows) have been
// made: for a 300 MB table, up to 300 MB more memory that holds nothing.
// The block holds no pointers, so a cycle costs little whatever its size.
//
// A Guard therefore sets a soft memory limit (runtime/debug.SetMemoryLimit)
// once a large input has been read and no other read is under way: the
// memory in use then plus a headroom (a sixteenth of it, at least
// MinHeadroom), so that the collector runs when the garbage reaches the
// headroom. The limit is lifted again before another large file is read
// (a read needs room of its own, and a limit below what a read must
// hold makes the collector run without end), and when the Guard stops.
// A limit set by the user (GOMEMLIMIT) is left alone: the Guard then
// does nothing. The limit changes when the collector runs, never what
// is computed.
package memlimit

import (
	"math"
	"os"
	"runtime/debug"
	"runtime/metrics"
	"sync"
)

const (
	// MinValueBytes is the size of the values read at or above which an
	// input counts as large.
	MinValueBytes = 64 << 20
	// MinFileBytes is the size of a file at or above which its read lifts
	// the limit: a file this size can hold MinValueBytes of values
	// (a value takes 8 bytes in memory and seldom fewer than 4 as text).
	MinFileBytes = MinValueBytes / 2
	// MinHeadroom is the least room for garbage above the memory in use
	// when the limit is set.
	MinHeadroom = 32 << 20
)

// Guard sets and lifts the soft memory limit around the reading of a
// run's inputs (see the package comment). Its methods are safe for
// concurrent use.
type Guard struct {
	mu      sync.Mutex
	off     bool  // a limit was in force at Start: leave it alone
	prev    int64 // the limit at Start
	set     bool  // the Guard's limit is in force
	reading int   // reads under way
}

// Start returns a Guard for one run, remembering the limit in force.
func Start() *Guard {
	prev := debug.SetMemoryLimit(-1)
	return &Guard{prev: prev, off: prev != math.MaxInt64}
}

// Before is called before path is read: when the Guard's limit is in
// force and the file is large, the limit is lifted.
func (g *Guard) Before(path string) {
	g.mu.Lock()
	defer g.mu.Unlock()
	g.reading++
	if g.off || !g.set {
		return
	}
	if st, err := os.Stat(path); err == nil && st.Size() >= MinFileBytes {
		debug.SetMemoryLimit(g.prev)
		g.set = false
	}
}

// After is called when a read begun with Before has ended, with the
// bytes of values it holds in memory: after a large input, when no other
// read is under way, the limit is set to the memory in use plus the
// headroom.
func (g *Guard) After(valueBytes int64) {
	g.mu.Lock()
	defer g.mu.Unlock()
	g.reading--
	if g.off || valueBytes < MinValueBytes || g.reading > 0 {
		return
	}
	use := InUse()
	debug.SetMemoryLimit(use + max(use/16, MinHeadroom))
	g.set = true
}

// Stop restores the limit in force at Start.
func (g *Guard) Stop() {
	g.mu.Lock()
	defer g.mu.Unlock()
	if g.set {
		debug.SetMemoryLimit(g.prev)
		g.set = false
	}
}

// Limit reports the soft memory limit in force.
func Limit() int64 { return debug.SetMemoryLimit(-1) }

// InUse is the memory the runtime holds that the soft limit counts: all
// it has mapped less what it has returned to the operating system.
func InUse() int64 {
	s := []metrics.Sample{
		{Name: "/memory/classes/total:bytes"},
		{Name: "/memory/classes/heap/released:bytes"},
	}
	metrics.Read(s)
	return int64(s[0].Value.Uint64()) - int64(s[1].Value.Uint64())
}
