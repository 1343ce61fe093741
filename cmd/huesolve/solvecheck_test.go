package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSolveCheckOnly: --check-only reads and checks every scan, reports
// the bad ones as solve would and prints nothing on standard output.
func TestSolveCheckOnly(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	good := writeScans(t, filepath.Join(dir, "good.csv"), solveScan("G1", []float64{5, 3, 2, 8}, 0, 1), solveScan("G2", []float64{1, 3, 2, 1}, 0, 2))
	short := solveScan("short", []float64{1, 1, 1, 1}, 0, 3)
	short.Wavelengths, short.Values = short.Wavelengths[10:], short.Values[10:]
	part := writeScans(t, filepath.Join(dir, "short.csv"), short)
	bad := filepath.Join("..", "..", "testdata", "spectra", "bad", "ragged.csv")

	out, errOut, code := run(t, "solve", ref, good, "--check-only")
	if code != exitOK || out != "" || !strings.Contains(errOut, "2 sample(s) read from 1 input(s): 2 ready to solve, 0 cannot be solved, 0 input(s) unreadable") {
		t.Errorf("good file: exit %d, stdout %q, stderr:\n%s", code, out, errOut)
	}
	// A fixed model needs the whole grid (auto's window is narrower by the shift limit).
	out, errOut, code = run(t, "solve", ref, good, part, bad, "--check-only", "--baseline", "offset")
	if code != exitSkipped || out != "" {
		t.Errorf("bad files: exit %d, stdout %q", code, out)
	}
	for _, want := range []string{"ragged.csv:4:3", "short.csv: short: the scan covers 420-700 nm but the model needs 400-700 nm",
		"3 sample(s) read from 3 input(s): 2 ready to solve, 1 cannot be solved, 1 input(s) unreadable"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	o := filepath.Join(dir, "r.csv")
	if _, errOut, code := run(t, "solve", ref, good, "--check-only", "-o", o); code != exitUsage {
		t.Errorf("--check-only with -o: exit %d\n%s", code, errOut)
	}
	if _, err := os.Stat(o); !os.IsNotExist(err) {
		t.Errorf("--check-only wrote %s", o)
	}
}
