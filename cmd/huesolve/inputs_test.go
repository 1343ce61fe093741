package main

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// inputWait is how long a test waits for a command that should refuse its
// input at once; only a hang (the bug these tests guard against) comes
// near it.
const inputWait = 20 * time.Second

// runWithin runs a command in-process like run, failing the test if it
// has not returned within inputWait.
func runWithin(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	type result struct {
		out, errOut string
		code        int
	}
	done := make(chan result, 1)
	go func() {
		out, errOut, code := run(t, args...)
		done <- result{out, errOut, code}
	}()
	select {
	case r := <-done:
		return r.out, r.errOut, r.code
	case <-time.After(inputWait):
		t.Fatalf("%s still runs after %v", strings.Join(args, " "), inputWait)
	}
	return "", "", 0
}

// TestFIFOInputsRefused: a named pipe with no writer, given as any input
// of any command, is refused at once with a message naming it (before,
// each of these waited for ever for a writer).
func TestFIFOInputsRefused(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	ref := writeSolveSet(t, dir)
	good := writeScans(t, filepath.Join(dir, "good.csv"), solveScan("G1", []float64{5, 3, 2, 8}, 0, 1))
	out := filepath.Join(dir, "out")
	says := fifo + " is a named pipe (FIFO), not a regular file"
	for _, c := range []struct {
		name string
		args []string
		code int
	}{
		{"reference set", []string{"solve", fifo, good}, exitFailure},
		{"scan", []string{"solve", ref, fifo}, exitFailure},
		{"scan among others", []string{"solve", ref, good, fifo}, exitSkipped},
		{"blank", []string{"solve", ref, good, "--blank", fifo}, exitFailure},
		{"sample sheet", []string{"solve", ref, good, "--samples", fifo}, exitFailure},
		{"standards sheet", []string{"calibrate", fifo, "-o", out}, exitFailure},
		{"look", []string{"look", fifo}, exitFailure},
		{"inspect", []string{"inspect", fifo}, exitFailure},
		{"convert", []string{"convert", fifo, "-o", out, "--to", "csv"}, exitFailure},
		{"verify set", []string{"verify", fifo, good}, exitFailure},
		{"verify checks", []string{"verify", ref, fifo}, exitFailure},
		{"window", []string{"window", fifo}, exitFailure},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, errOut, code := runWithin(t, c.args...)
			if code != c.code || !strings.Contains(errOut, says) {
				t.Errorf("exit %d, stderr:\n%s\nwant exit %d and %q", code, errOut, c.code, says)
			}
		})
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused command wrote %s", out)
	}
}
