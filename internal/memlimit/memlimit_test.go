package memlimit

import (
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"testing"
	"time"
)

// The limit is process-wide: these tests change it and put it back, and
// do not run in parallel.

func TestGuardSetsAndLifts(t *testing.T) {
	if Limit() != math.MaxInt64 {
		t.Skip("a memory limit is in force (GOMEMLIMIT)")
	}
	dir := t.TempDir()
	small := filepath.Join(dir, "small.csv")
	if err := os.WriteFile(small, []byte("400,0.1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	big := filepath.Join(dir, "big.csv")
	f, err := os.Create(big)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(MinFileBytes); err != nil { // sparse: no disk used
		t.Fatal(err)
	}
	f.Close()

	g := Start()
	defer g.Stop()
	g.Before(small)
	g.After(MinValueBytes - 1)
	if Limit() != math.MaxInt64 {
		t.Fatalf("limit %d after a small input, want none", Limit())
	}
	// Two reads under way: the first to end leaves the limit alone.
	g.Before(small)
	g.Before(small)
	g.After(MinValueBytes)
	if Limit() != math.MaxInt64 {
		t.Fatalf("limit %d with a read still under way, want none", Limit())
	}
	g.After(MinValueBytes)
	lim, use := Limit(), InUse()
	if lim == math.MaxInt64 {
		t.Fatal("no limit after a large input")
	}
	// The headroom is a sixteenth of the memory in use, at least
	// MinHeadroom; the memory in use moves a little between the two
	// readings (1 MiB allowed).
	want := use + max(use/16, MinHeadroom)
	if d := lim - want; d < -1<<20 || d > 1<<20 {
		t.Errorf("limit %d, want about %d (in use %d)", lim, want, use)
	}
	// A small file read later keeps it; a large one lifts it.
	g.Before(small)
	if Limit() != lim {
		t.Errorf("limit %d after starting a small read, want %d", Limit(), lim)
	}
	g.After(0)
	g.Before(big)
	if Limit() != math.MaxInt64 {
		t.Errorf("limit %d while a large file is read, want none", Limit())
	}
	g.After(MinValueBytes)
	if Limit() == math.MaxInt64 {
		t.Fatal("no limit after the second large input")
	}
	g.Stop()
	if Limit() != math.MaxInt64 {
		t.Errorf("limit %d after Stop, want none", Limit())
	}
}

// A limit the user set (GOMEMLIMIT, here SetMemoryLimit) is left as it
// is.
func TestGuardLeavesUserLimit(t *testing.T) {
	const user = 1 << 40
	old := debug.SetMemoryLimit(user)
	defer debug.SetMemoryLimit(old)
	g := Start()
	g.Before("nowhere")
	g.After(1 << 30)
	if Limit() != user {
		t.Errorf("limit %d after a large input, want the user's %d", Limit(), user)
	}
	g.Stop()
	if Limit() != user {
		t.Errorf("limit %d after Stop, want the user's %d", Limit(), user)
	}
}

// After each collection the limit follows the live heap, only upward,
// and is lifted when the live heap outgrows the input by a quarter and
// MinHeadroom (a run that keeps much per sample).
func TestGuardFollowsLiveHeap(t *testing.T) {
	if Limit() != math.MaxInt64 {
		t.Skip("a memory limit is in force (GOMEMLIMIT)")
	}
	const mib = 1 << 20
	defer debug.SetMemoryLimit(math.MaxInt64)
	debug.SetMemoryLimit(600 * mib)
	// The Guard as After leaves it for an input of 400 MiB of values.
	g := &Guard{prev: math.MaxInt64, set: true, values: 400 * mib}
	// Below the limit in force: it stays.
	if !g.adjust(450*mib, 20*mib) || Limit() != 600*mib {
		t.Errorf("limit %d MiB, want 600 kept", Limit()/mib)
	}
	// Live 520 MiB (within 400 + 100 + 32), other 60: 580 MiB in use
	// and a sixteenth more.
	if !g.adjust(520*mib, 60*mib) {
		t.Fatal("lifted within the allowance")
	}
	if want := int64(580*mib + 580*mib/16); Limit() != want {
		t.Errorf("limit %d, want %d", Limit(), want)
	}
	// Falling back does not lower it.
	if !g.adjust(100*mib, 10*mib) || Limit() != 580*mib+580*mib/16 {
		t.Errorf("limit %d MiB after the live heap fell, want it kept", Limit()/mib)
	}
	// Live past 400 + 100 + 32 MiB: lifted.
	if g.adjust(533*mib, 20*mib) || Limit() != math.MaxInt64 {
		t.Errorf("limit %d with a live heap past the allowance, want none", Limit())
	}
}

// The hook runs after collections while the limit is in force.
func TestGuardHookRuns(t *testing.T) {
	if Limit() != math.MaxInt64 {
		t.Skip("a memory limit is in force (GOMEMLIMIT)")
	}
	g := Start()
	defer g.Stop()
	g.Before("nowhere")
	g.After(MinValueBytes)
	for range 50 {
		runtime.GC()
		g.mu.Lock()
		n := g.cycles
		g.mu.Unlock()
		if n >= 2 {
			return
		}
		time.Sleep(time.Millisecond)
	}
	t.Error("the collection hook did not run twice in 50 collections")
}
