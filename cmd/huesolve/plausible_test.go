package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/reference"
)

// tamperSet writes to dst the reference set at src edited by edit, with
// its checksum recomputed as reference.Set.Save computes it (SHA-256 of
// the compact JSON with the checksum empty): a set changed by someone who
// knows the format, which the checksum alone does not catch.
func tamperSet(t *testing.T, src, dst string, edit func(s *reference.Set)) string {
	t.Helper()
	raw, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	var s reference.Set
	if err := json.Unmarshal(raw, &s); err != nil {
		t.Fatal(err)
	}
	edit(&s)
	s.Checksum = ""
	compact, err := json.Marshal(&s)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(compact)
	s.Checksum = hex.EncodeToString(sum[:])
	b, err := json.MarshalIndent(&s, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(dst, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return dst
}

// TestCalibrateCeilingBound: calibrate's --ceiling has the same upper
// bound as solve's (reference.MaxCeiling); 1e308 used to write a set
// that made solve panic.
func TestCalibrateCeilingBound(t *testing.T) {
	dir, sheet := calCase(t)
	refs := filepath.Join(dir, "refs.json")
	for _, v := range []string{"1e308", "11", "Inf"} {
		_, errOut, code := run(t, "calibrate", sheet, "-o", refs, "--ceiling", v)
		if code != exitUsage || !strings.Contains(errOut, "--ceiling") || !strings.Contains(errOut, "at most 10") {
			t.Errorf("--ceiling %s: exit %d, stderr %q; want %d and the bound", v, code, errOut, exitUsage)
		}
		if _, err := os.Stat(refs); err == nil {
			t.Fatalf("--ceiling %s wrote a reference set", v)
		}
	}
}

// TestSolveRefusesImplausibleSet: a set whose checksum was recomputed
// after an implausible edit is refused by solve and inspect with exit 1
// and a message naming the file, the field and the value; a ceiling of
// 1e308 used to make them panic in unmix.NewModel, and the others to
// load without complaint.
func TestSolveRefusesImplausibleSet(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 1, 8}, 0, 1))
	for _, c := range []struct {
		name string
		edit func(s *reference.Set)
		says string
	}{
		{"ceiling", func(s *reference.Set) { s.Ceiling = 1e308 }, "ceiling 1e+308"},
		{"noise", func(s *reference.Set) { s.Noise[3] = 1e308 }, "noise 1e+308"},
		{"max standard", func(s *reference.Set) { s.Compounds[1].MaxStandard = 0 }, `"rose": min_standard 1 and max_standard 0`},
		{"escape in name", func(s *reference.Set) { s.Compounds[0].Name = "\x1b[2Jamber" }, `"\x1b[2Jamber"`},
	} {
		p := tamperSet(t, ref, filepath.Join(dir, c.name+".json"), c.edit)
		for _, args := range [][]string{{"solve", p, scan}, {"inspect", p}} {
			out, errOut, code := run(t, args...)
			if code != exitFailure || out != "" || !strings.Contains(errOut, c.says) || !strings.Contains(errOut, p) ||
				strings.Contains(errOut, "\x1b") {
				t.Errorf("%s, %s: exit %d, stdout %q, stderr %q; want exit 1 naming %s and saying %s", c.name, args[0], code, out, errOut, p, c.says)
			}
		}
	}
}

// TestSolveFormulaNames: a compound name a spreadsheet would run as a
// formula loads (it is a name, not a fault), and solve's CSV protects
// it with a leading single quote while its JSON keeps it exact.
func TestSolveFormulaNames(t *testing.T) {
	dir := t.TempDir()
	ref := tamperSet(t, writeSolveSet(t, dir), filepath.Join(dir, "formula.json"), func(s *reference.Set) {
		s.Compounds[0].Name = "=HYPERLINK(\"http://x\")"
	})
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("-A1", []float64{5, 3, 1, 8}, 0, 1))
	out, errOut, code := run(t, "solve", ref, scan, "--format", "csv")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	recs, err := commentedCSV(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if recs[0][2] != `'=HYPERLINK("http://x")_conc` || recs[1][0] != "'-A1" {
		t.Errorf("CSV header %q, first row %q", recs[0][:3], recs[1][:3])
	}
	out, errOut, code = run(t, "solve", ref, scan, "--format", "json")
	if code != exitOK || !strings.Contains(out, `"name": "=HYPERLINK(\"http://x\")"`) || !strings.Contains(out, `"sample": "-A1"`) {
		t.Errorf("JSON: exit %d, %s\n%s", code, errOut, out)
	}
}
