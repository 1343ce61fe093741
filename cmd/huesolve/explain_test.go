package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestSolveExplain: --explain ends the table with each candidate's score
// under the sample's chosen model, and is refused where it cannot show
// anything (a fixed model, or CSV/JSON output).
func TestSolveExplain(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 1, 8}, 0.01, 1))
	out, errOut, code := run(t, "solve", ref, scan, "--explain")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	for _, want := range []string{"Model", "A1: offset\n", "(start)  <- chosen", "offset+scatter ", "against offset: F "} {
		if !strings.Contains(out, want) {
			t.Errorf("--explain output lacks %q:\n%s", want, out)
		}
	}
	for _, args := range [][]string{{"--baseline", "offset"}, {"--format", "csv"}} {
		_, errOut, code := run(t, append([]string{"solve", ref, scan, "--explain"}, args...)...)
		if code != exitUsage || !strings.Contains(errOut, "--explain") {
			t.Errorf("--explain %v: exit %d, want %d\n%s", args, code, exitUsage, errOut)
		}
	}
}
