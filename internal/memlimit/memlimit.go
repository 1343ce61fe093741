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
// headroom. After each collection the limit follows the live heap (live
// plus the runtime's other memory plus the headroom), and it is lifted
// when the live heap outgrows the input by a quarter and MinHeadroom
// (the run keeps more per sample than the input, say the figures of a
// review report): a limit that the live heap presses against makes the
// collector run again and again. The limit is lifted again before another large file is read
// (a read needs room of its own, and a limit below what a read must
// hold makes the collector run without end), and when the Guard stops.
// A limit set by the user (GOMEMLIMIT) is left alone: the Guard then
// does nothing. The limit changes when the collector runs, never what
// is computed.
package memlimit

import (
	"math"
	"os"
	"runtime"
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
	values  int64 // bytes of values of the input the limit was set after
	gen     int   // counts the limits set, so a stale collection hook stops
	cycles  int   // collections the hook has seen (for tests)
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
	debug.SetMemoryLimit(use + headroom(use))
	g.set = true
	g.values = valueBytes
	g.gen++
	g.arm(g.gen)
}

// headroom is the room for garbage above use bytes in use.
func headroom(use int64) int64 { return max(use/16, MinHeadroom) }

// arm asks for cycle(gen) after the next collection: a cleanup attached
// to an object nothing refers to runs once a collection has found it
// unreachable.
func (g *Guard) arm(gen int) {
	sentinel := &struct {
		_ [32]byte // not a tiny allocation, whose cleanup may not run
		p *int
	}{}
	runtime.AddCleanup(sentinel, g.cycle, gen)
}

// cycle runs after a collection while the limit of generation gen is in
// force: it moves the limit to follow the live heap, or lifts it when
// the live heap has outgrown the input, and asks for the next cycle.
func (g *Guard) cycle(gen int) {
	g.mu.Lock()
	defer g.mu.Unlock()
	if !g.set || gen != g.gen {
		return
	}
	g.cycles++
	live, other := heapLive()
	if !g.adjust(live, other) {
		return
	}
	g.arm(gen)
}

// adjust sets the limit for a live heap of live bytes and other bytes of
// the runtime's memory besides the heap's objects, or lifts it when the
// live heap is more than the input's values by a quarter and
// MinHeadroom; it reports whether the limit is still in force. The
// limit only rises: it falls only by being lifted.
func (g *Guard) adjust(live, other int64) bool {
	if live > g.values+g.values/4+MinHeadroom {
		debug.SetMemoryLimit(g.prev)
		g.set = false
		return false
	}
	use := live + other
	if want := use + headroom(use); want > Limit() {
		debug.SetMemoryLimit(want)
	}
	return true
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

// heapLive returns the live heap after the last collection and the
// memory the soft limit counts besides the heap's objects.
func heapLive() (live, other int64) {
	s := []metrics.Sample{
		{Name: "/gc/heap/live:bytes"},
		{Name: "/memory/classes/heap/objects:bytes"},
	}
	metrics.Read(s)
	return int64(s[0].Value.Uint64()), InUse() - int64(s[1].Value.Uint64())
}

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
