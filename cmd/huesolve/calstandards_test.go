package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"huesolve/internal/demo"
	"huesolve/reference"
	"huesolve/spectrum"
)

// demoStandards writes the demo's files into a new folder and returns it
// with the text of its standards sheet.
func demoStandards(t *testing.T) (dir, text string) {
	t.Helper()
	dir = filepath.Join(t.TempDir(), "case")
	if _, errOut, code := run(t, "demo", "--files-only", dir); code != exitOK {
		t.Fatalf("demo: exit %d: %s", code, errOut)
	}
	b, err := os.ReadFile(filepath.Join(dir, demo.StandardsSheet))
	if err != nil {
		t.Fatal(err)
	}
	return dir, string(b)
}

// writeSheet writes text as a sheet in dir and returns its path.
func writeSheet(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestCalibrateBadStandard: one pasted row with a wrong concentration (an
// ambrelin 2 mg/L scan written as 20), or a typo onto an existing level
// (12 written as 16), is found by the outlier test and named by sheet
// line; the set is not written, an existing one is left as it was, and
// calibrate exits 4 with the fix. --accept-outliers writes it (exit 0,
// flag outlier kept); --drop-outliers leaves the row out, refits and
// records it in the set.
func TestCalibrateBadStandard(t *testing.T) {
	dir, text := demoStandards(t)
	appended := writeSheet(t, dir, "appended.csv", text+"standards/ambrelin-02b.csv,20,0,0,0\n")
	appendedLine := strings.Count(text, "\n") + 1
	typo := writeSheet(t, dir, "typo.csv", strings.Replace(text, "standards/ambrelin-12a.csv,12,", "standards/ambrelin-12a.csv,16,", 1))
	for _, c := range []struct {
		sheet, names string
	}{
		{appended, "standards/ambrelin-02b.csv (sheet line " + strconv.Itoa(appendedLine) + ")"},
		{typo, "standards/ambrelin-12a.csv (sheet line 11)"},
	} {
		out := filepath.Join(dir, "refs.json")
		old := []byte("yesterday's set\n")
		if err := os.WriteFile(out, old, 0o644); err != nil {
			t.Fatal(err)
		}
		_, errOut, code := run(t, "calibrate", c.sheet, "-o", out)
		if code != exitFlagged {
			t.Fatalf("%s: exit %d, want %d: %s", c.sheet, code, exitFlagged, errOut)
		}
		for _, want := range []string{c.names, "lies off the calibration line", "fits poorly: R² 0.", "the set was not written", "--drop-outliers", "--accept-outliers"} {
			if !strings.Contains(errOut, want) {
				t.Errorf("%s: stderr lacks %q:\n%s", c.sheet, want, errOut)
			}
		}
		if got, _ := os.ReadFile(out); !bytes.Equal(got, old) {
			t.Errorf("%s: the existing set was replaced", c.sheet)
		}

		_, errOut, code = run(t, "calibrate", c.sheet, "-o", out, "--accept-outliers")
		if code != exitOK {
			t.Fatalf("%s --accept-outliers: exit %d: %s", c.sheet, code, errOut)
		}
		set, err := reference.Load(out)
		if err != nil {
			t.Fatal(err)
		}
		if f := set.Compounds[0].Flags; !hasFlag(f, reference.FlagOutlier) {
			t.Errorf("%s --accept-outliers: Ambrelin flags %v, want outlier", c.sheet, f)
		}

		// Without the typo's row, level 12 has one reading left and the
		// lack-of-fit test may flag the line (exit 4, set written).
		_, errOut, code = run(t, "calibrate", c.sheet, "-o", out, "--drop-outliers")
		if code != exitOK && (code != exitFlagged || !strings.Contains(errOut, "the set was written")) {
			t.Fatalf("%s --drop-outliers: exit %d: %s", c.sheet, code, errOut)
		}
		if set, err = reference.Load(out); err != nil {
			t.Fatal(err)
		}
		amb := set.Compounds[0]
		if hasFlag(amb.Flags, reference.FlagOutlier) || hasFlag(amb.Flags, reference.FlagPoorFit) || len(amb.StandardsLeftOut) != 1 || !(amb.Linearity.R2 > 0.999) {
			t.Errorf("%s --drop-outliers: flags %v, %d left out, R² %g", c.sheet, amb.Flags, len(amb.StandardsLeftOut), amb.Linearity.R2)
		}
		if !strings.Contains(strings.Join(set.Provenance.Notes, "\n"), "left out with --drop-outliers and refitted without it: "+c.names) {
			t.Errorf("%s --drop-outliers: the provenance does not record the row left out:\n%s", c.sheet, strings.Join(set.Provenance.Notes, "\n"))
		}
	}
}

// TestCalibratePoorFitLimits: --min-r2 above the line's R² flags poor-fit
// and refuses to write; 0 turns the check off; out-of-range values and
// both of --accept-outliers and --drop-outliers are a usage error.
func TestCalibratePoorFitLimits(t *testing.T) {
	dir, _ := demoStandards(t)
	sheet := filepath.Join(dir, demo.StandardsSheet)
	out := filepath.Join(dir, "refs.json")
	_, errOut, code := run(t, "calibrate", sheet, "-o", out, "--min-r2", "0.9999999", "--max-rsd", "0.001")
	if code != exitFlagged || !strings.Contains(errOut, "(--min-r2)") || !strings.Contains(errOut, "(--max-rsd)") {
		t.Fatalf("strict limits: exit %d: %s", code, errOut)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a refused set was written: %v", err)
	}
	if _, errOut, code := run(t, "calibrate", sheet, "-o", out, "--min-r2", "0", "--max-rsd", "0"); code != exitOK {
		t.Errorf("limits off: exit %d: %s", code, errOut)
	}
	for _, args := range [][]string{{"--min-r2", "1.5"}, {"--max-rsd", "-1"}, {"--accept-outliers", "--drop-outliers"}} {
		if _, errOut, code := run(t, append([]string{"calibrate", sheet, "-o", out}, args...)...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d: %s", args, code, exitUsage, errOut)
		}
	}
}

// TestCalibrateInterrupted: calibrate stopped (as on the first Ctrl-C)
// before, during and after Build exits 130 and leaves the existing set as
// it was.
func TestCalibrateInterrupted(t *testing.T) {
	dir, _ := demoStandards(t)
	sheet := filepath.Join(dir, demo.StandardsSheet)
	for _, n := range []int{0, 1, 50, 400} {
		out := filepath.Join(dir, "refs.json")
		old := []byte("yesterday's set\n")
		if err := os.WriteFile(out, old, 0o644); err != nil {
			t.Fatal(err)
		}
		root := newRootCmd()
		var stdout, stderr bytes.Buffer
		root.SetArgs([]string{"calibrate", sheet, "-o", out})
		root.SetOut(&stdout)
		root.SetErr(&stderr)
		err := root.ExecuteContext(&countdownCtx{Context: context.Background(), n: n})
		ee, ok := err.(*exitError)
		if !ok || ee.code != exitInterrupt || !strings.Contains(ee.msg, "nothing written to "+out) {
			t.Fatalf("interrupted after %d checks: %v", n, err)
		}
		if got, _ := os.ReadFile(out); !bytes.Equal(got, old) || stdout.Len() != 0 {
			t.Errorf("interrupted after %d checks: the set was replaced or a table printed", n)
		}
		ents, _ := os.ReadDir(dir)
		for _, e := range ents {
			if strings.HasPrefix(e.Name(), ".") {
				t.Errorf("a temporary file was left: %s", e.Name())
			}
		}
	}
}

func hasFlag(fs []reference.Flag, f reference.Flag) bool {
	for _, x := range fs {
		if x == f {
			return true
		}
	}
	return false
}

// TestCalibrateImplausibleSheets: a deleted compound column (its
// standards become "blanks" that absorb) is refused, naming the rows, and
// the set being replaced names the compound lost; an extra numeric column
// (a batch number) is refused naming the column; a concentration of
// 1e300 is refused naming its line and column. The existing set is left
// as it was each time.
func TestCalibrateImplausibleSheets(t *testing.T) {
	dir, text := demoStandards(t)
	out := filepath.Join(dir, "refs.json")
	if _, errOut, code := run(t, "calibrate", filepath.Join(dir, demo.StandardsSheet), "-o", out); code != exitOK {
		t.Fatalf("demo standards: exit %d: %s", code, errOut)
	}
	good, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var deleted, batch, huge strings.Builder
	hugeLine := 0
	for i, line := range strings.Split(strings.TrimSuffix(text, "\n"), "\n") {
		f := strings.Split(line, ",")
		switch {
		case strings.HasPrefix(line, "#"):
			deleted.WriteString(line + "\n")
			batch.WriteString(line + "\n")
			huge.WriteString(line + "\n")
			continue
		case f[0] == "scan":
			batch.WriteString("scan,batch," + strings.Join(f[1:], ",") + "\n")
		default:
			batch.WriteString(f[0] + ",7," + strings.Join(f[1:], ",") + "\n")
		}
		// Corvasine is the third field.
		deleted.WriteString(strings.Join(append(f[:2:2], f[3:]...), ",") + "\n")
		if f[0] == "standards/ambrelin-04a.csv" {
			f[1], hugeLine = "1e300", i+1
		}
		huge.WriteString(strings.Join(f, ",") + "\n")
	}
	for _, c := range []struct {
		name, text string
		says       []string
	}{
		{"deleted.csv", deleted.String(), []string{"12 blank rows", "standards/corvasine-02a.csv (sheet line 17)", "is a compound column missing",
			"has compound Corvasine, which"}},
		{"batch.csv", batch.String(), []string{"batch.csv:3:2:", `column "batch" is non-zero in every row`}},
		{"huge.csv", huge.String(), []string{"huge.csv:" + strconv.Itoa(hugeLine) + ":2:", "Ambrelin is 1e+300, implausible"}},
	} {
		sheet := writeSheet(t, dir, c.name, c.text)
		_, errOut, code := run(t, "calibrate", sheet, "-o", out)
		if code != exitFailure {
			t.Errorf("%s: exit %d, want %d: %s", c.name, code, exitFailure, errOut)
		}
		for _, want := range c.says {
			if !strings.Contains(errOut, want) {
				t.Errorf("%s: stderr lacks %q:\n%s", c.name, want, errOut)
			}
		}
		if got, _ := os.ReadFile(out); !bytes.Equal(got, good) {
			t.Errorf("%s: the existing set was replaced", c.name)
		}
	}
}

// TestCalibratePercentTStandard: a standard of %T values in a file that
// does not say so, read as absorbance, is physically impossible (half its
// readings 5 AU and more): calibrate refuses it naming the file and the
// fix, and writes no reference set.
func TestCalibratePercentTStandard(t *testing.T) {
	dir, sheet := calCase(t)
	ss, err := spectrum.ReadFile(filepath.Join(dir, "red-6.csv"), spectrum.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("wavelength (nm),red 6\n")
	for i, l := range ss[0].Wavelengths {
		fmt.Fprintf(&b, "%g,%.4f\n", l, 100*math.Pow(10, -ss[0].Values[i]))
	}
	if err := os.WriteFile(filepath.Join(dir, "red-6.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "refs.json")
	_, errOut, code := run(t, "calibrate", sheet, "-o", out)
	if code != exitFailure || !strings.Contains(errOut, "red-6.csv:2:2: ") || !strings.Contains(errOut, "give --quantity %T") {
		t.Errorf("exit %d, stderr:\n%s", code, errOut)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a reference set was written")
	}
}

// TestCalibrateImpossibleStandard: a middle standard that reads above
// the ceiling where the standards holding more of its compound read low
// (absorbance grows with concentration) is refused, naming the sheet
// line, the scan and the higher standard, with the fix; no set is written.
func TestCalibrateImpossibleStandard(t *testing.T) {
	dir, sheet := calCase(t)
	ss, err := spectrum.ReadFile(filepath.Join(dir, "red-6.csv"), spectrum.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	s := ss[0]
	for i := range s.Values {
		s.Values[i] += 3.5 // above the ceiling everywhere, yet not %T-like
	}
	calWrite(t, filepath.Join(dir, "red-6.csv"), s)
	out := filepath.Join(dir, "refs.json")
	_, errOut, code := run(t, "calibrate", sheet, "-o", out)
	if code != exitFailure || !strings.Contains(errOut, "red-6.csv") || !strings.Contains(errOut, "impossible for its level") ||
		!strings.Contains(errOut, "red-8.csv") || !strings.Contains(errOut, "--quantity %T") {
		t.Errorf("exit %d, stderr:\n%s", code, errOut)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a reference set was written")
	}
}
