package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestReviewReportFile: solve --report writes the page with the run's
// provenance (reference set checksum, inputs) and the figures; a name
// that is not .html, the -o file, an input, or --check-only is refused
// as a bad command line; a run that solves nothing leaves an existing
// report as it was.
func TestReviewReportFile(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 0, 8}, 0, 1), solveScan("A2", []float64{2, 2, 2, 2}, 0, 2))
	page := filepath.Join(dir, "run.html")
	_, errOut, code := run(t, "solve", ref, scan, "--report", page, "--window", "420-680")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	data, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	html := string(data)
	for _, want := range []string{"Reference set checksum", "Input</dt><dd>", scan, "Setting window</dt><dd>420-680<", "131 (420-680 nm)", "--window 420-680",
		"Figures of merit", "Caution: results support", `<svg class="fig"`} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if n := strings.Count(html, `<svg class="fig"`); n != 2 {
		t.Errorf("%d figures, want 2", n)
	}

	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--report", filepath.Join(dir, "run.csv")}, "give a file name ending in .html"},
		{[]string{"--report", "-"}, "not written to standard output"},
		{[]string{"--report", page, "-o", page}, "give the HTML review report once"},
		{[]string{"--report", page, "--check-only"}, "leave out -o, --plots and --report"},
	} {
		_, errOut, code := run(t, append([]string{"solve", ref, scan}, c.args...)...)
		if code != exitUsage || !strings.Contains(errOut, c.want) {
			t.Errorf("%q: exit %d, want %d with %q:\n%s", c.args, code, exitUsage, c.want, errOut)
		}
	}
	bad := filepath.Join(dir, "a.html")
	if err := os.WriteFile(bad, []byte("not a scan\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, errOut, code := run(t, "solve", ref, bad, "--report", bad); code != exitUsage || !strings.Contains(errOut, "--report") {
		t.Errorf("--report naming an input: exit %d:\n%s", code, errOut)
	}

	// Nothing solved: the report of the earlier run stays.
	_, _, code = run(t, "solve", ref, filepath.Join(dir, "missing.csv"), "--report", page)
	if code != exitFailure {
		t.Errorf("nothing solved: exit %d, want %d", code, exitFailure)
	}
	if after, err := os.ReadFile(page); err != nil || string(after) != html {
		t.Errorf("a run that solved nothing changed the report (%v)", err)
	}
}
