package main

import (
	"path/filepath"
	"strings"
	"testing"
)

const spectraDir = "../../testdata/spectra"

func TestLookTable(t *testing.T) {
	wide := filepath.Join(spectraDir, "same-wide.tsv")
	jdx := filepath.Join(spectraDir, "same-scan.jdx")
	out, errOut, code := run(t, "look", wide, jdx)
	if code != exitOK || errOut != "" {
		t.Fatalf("look: code %d, stderr %q", code, errOut)
	}
	for _, want := range []string{
		wide + ": 3 spectra", jdx + ": 1 spectrum",
		"Spectrum", "Range (nm)", "Step (nm)",
		"mix B", "41", "400-600", "absorbance",
		"same scan",
		"0.6602", // largest value of the scan in testdata/spectra/same-scan.csv
	} {
		if !strings.Contains(out, want) {
			t.Errorf("look output lacks %q:\n%s", want, out)
		}
	}
}

func TestLookPlain(t *testing.T) {
	f := filepath.Join(spectraDir, "same-scan.csv")
	out, _, code := run(t, "look", "--plain", f)
	want := f + "\tsame-scan\t41\t400-600\t5\tabsorbance\t0.01\t0.6602\n"
	if code != exitOK || out != want {
		t.Errorf("look --plain = %q (code %d), want %q", out, code, want)
	}
}

func TestLookWarnsAndSkips(t *testing.T) {
	bad := filepath.Join(spectraDir, "bad", "ragged.csv")
	good := filepath.Join(spectraDir, "bad", "zero-percent-t.csv")
	out, errOut, code := run(t, "look", "--plain", bad, good)
	if code != exitSkipped {
		t.Errorf("exit code %d, want %d", code, exitSkipped)
	}
	if !strings.Contains(errOut, bad+":4:3: ragged row") || !strings.Contains(errOut, "1 of 2 files could not be read") {
		t.Errorf("stderr %q", errOut)
	}
	if !strings.Contains(out, "%T") {
		t.Errorf("stdout %q", out)
	}
	// --quantity against a header word: the file wins, with a warning
	// naming the file.
	out, errOut, _ = run(t, "look", filepath.Join(spectraDir, "same-scan.csv"), "--quantity", "T")
	if !strings.Contains(errOut, "same-scan.csv: the header states absorbance") || !strings.Contains(errOut, "not the transmittance requested") ||
		!strings.Contains(out, "absorbance") {
		t.Errorf("--quantity against a header word: stdout %q, stderr %q", out, errOut)
	}
	_, _, code = run(t, "look", "--quantity", "ppm", good)
	if code != exitUsage {
		t.Errorf("bad --quantity: code %d", code)
	}
	// A folder: its files, each read on its own (the generator scripts in
	// it are not scans).
	out, errOut, code = run(t, "look", "--plain", spectraDir)
	if code != exitSkipped || !strings.Contains(out, "interp-scipy.csv") || !strings.Contains(errOut, "gen-interp.py") {
		t.Errorf("directory: code %d, stderr %q", code, errOut)
	}
}
