package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// TestSolveSheetNotes: a sample sheet with a misspelt column is refused
// naming sheet, line and column; one with a misspelt sample name makes
// solve name the row that matched nothing and the sample that took the
// defaults.
func TestSolveSheetNotes(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "runs.csv"), solveScan("S1", []float64{5, 3, 2, 8}, 0, 1), solveScan("S10", []float64{1, 3, 2, 1}, 0, 2))
	hdr := filepath.Join(dir, "ss-hdr.csv")
	if err := os.WriteFile(hdr, []byte("sample,dilution,path\nS10,4,0.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errOut, code := run(t, "solve", ref, scan, "--samples", hdr)
	if code != exitFailure || out != "" || !strings.Contains(errOut, hdr+`:1:3: unknown column "path"`) || !strings.Contains(errOut, "path_cm") {
		t.Errorf("misspelt column: exit %d, stderr:\n%s", code, errOut)
	}
	typo := filepath.Join(dir, "ss-typo.csv")
	if err := os.WriteFile(typo, []byte("sample,dilution,path_cm\nS10,4,0.5\nS1O,2,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errOut, code = run(t, "solve", ref, scan, "--samples", typo)
	for _, want := range []string{
		"1 sample(s) not in the sample sheet " + typo + " took --dilution 1 and the reference set's path and are flagged nosheet: S1\n",
		"1 row(s) of the sample sheet " + typo + " matched no sample: S1O (line 3)\n",
		"no --blank given",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	// The sample that took the defaults is flagged in the table, which
	// shows every sample's dilution and path as one differs; the run is
	// "flagged", not a clean exit 0.
	if code != exitFlagged || !regexp.MustCompile(`S1 .*│ 1 +│ 1 +│ nosheet`).MatchString(out) ||
		!regexp.MustCompile(`S10 .*│ 4 +│ 0.5 +│`).MatchString(out) || !strings.Contains(out, "nosheet   ! not in the sample sheet") {
		t.Errorf("table: exit %d\n%s", code, out)
	}
	for _, f := range []string{"csv", "json"} {
		out, _, code = run(t, "solve", ref, scan, "--samples", typo, "--format", f)
		if code != exitFlagged || strings.Count(out, "nosheet") != 1 {
			t.Errorf("%s: exit %d, want one nosheet flag:\n%s", f, code, out)
		}
	}
	// A row that differs from the scan's name only in a leading zero is
	// named as the likely match, but not used.
	near := filepath.Join(dir, "ss-near.csv")
	if err := os.WriteFile(near, []byte("sample,dilution\nS10,4\nS01,2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, code = run(t, "solve", ref, scan, "--samples", near)
	if code != exitFlagged || !strings.Contains(errOut, "flagged nosheet: S1 (the sheet has S01, line 3)") {
		t.Errorf("near match: exit %d\n%s", code, errOut)
	}
	// --check-only looks the sheet up too.
	_, errOut, _ = run(t, "solve", ref, scan, "--samples", typo, "--check-only")
	if !strings.Contains(errOut, "matched no sample: S1O (line 3)") || !strings.Contains(errOut, "2 warning(s) above") {
		t.Errorf("check-only with a sheet typo:\n%s", errOut)
	}
}

// TestSolveDarkAndDuplicates: a %T scan with a reading of 0 inside the
// window is flagged sat and dilute, with the file and wavelength named;
// of two scans with the same sample name (and file stem) the second is
// numbered s4#2, with a warning naming it.
func TestSolveDarkAndDuplicates(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	s := solveScan("D1", []float64{5, 3, 2, 8}, 0, 1)
	s.Quantity = spectrum.PercentT
	for i, a := range s.Values {
		s.Values[i] = math.Round(1e4*100*math.Pow(10, -a)) / 1e4
		if s.Wavelengths[i] == 500 {
			s.Values[i] = 0
		}
	}
	dark := writeScans(t, filepath.Join(dir, "dark.csv"), s)
	for _, d := range []string{"a", "b"} {
		if err := os.Mkdir(filepath.Join(dir, d), 0o755); err != nil {
			t.Fatal(err)
		}
		writeScans(t, filepath.Join(dir, d, "s4.csv"), solveScan("s4", []float64{1, 1, 1, 1}, 0, 4))
	}
	out, errOut, code := run(t, "solve", ref, dark, filepath.Join(dir, "a"), filepath.Join(dir, "b"))
	if code != exitFlagged || !strings.Contains(out, "sat,dilute") {
		t.Errorf("0 %%T at 500 nm: exit %d, table:\n%s", code, out)
	}
	for _, want := range []string{
		dark + ": D1 reads 0 %T or below from 500 nm (1 point(s) of the window): too dark to read there",
		"1 sample(s) have a name an earlier scan already gave, and are named after their file or numbered in the results: s4#2 (" + filepath.Join(dir, "b", "s4.csv") + " column 2)",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	// Both scans are in the table, under names that tell them apart.
	if !regexp.MustCompile(`(?m)^│ s4 +│`).MatchString(out) || !regexp.MustCompile(`(?m)^│ s4#2 +│`).MatchString(out) {
		t.Errorf("duplicate names not made unique:\n%s", out)
	}
}

// TestSolveCheckOnlyWarns: an unlabelled file of %T values read as
// absorbance is refused by solve and by --check-only alike, naming the
// fix; --check-only's summary counts the reader's warning.
func TestSolveCheckOnlyWarns(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	s := solveScan("P1", []float64{5, 3, 2, 8}, 0, 1)
	var b strings.Builder
	b.WriteString("wavelength,P1\n")
	for i, l := range s.Wavelengths {
		b.WriteString(ftoa(l) + "," + ftoa(100*math.Pow(10, -s.Values[i])) + "\n")
	}
	p := filepath.Join(dir, "pt.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	// Refused as read, naming the file and the fix (not solved with
	// "dilute" advice, which was the answer before).
	_, solveErr, code := run(t, "solve", ref, p)
	if code != exitFailure || strings.Contains(solveErr, "dilute at least") || !strings.Contains(solveErr, "skipped "+p+":2:2: ") ||
		!strings.Contains(solveErr, "look like percent transmittance") || !strings.Contains(solveErr, "give --quantity %T") {
		t.Fatalf("solve of %%T read as absorbance: exit %d\n%s", code, solveErr)
	}
	_, errOut, code := run(t, "solve", ref, p, "--check-only")
	// Nothing can be solved: exit 1 as solving gives, not 3.
	if code != exitFailure || strings.Contains(errOut, "1 ready to solve") || !strings.Contains(errOut, "give --quantity %T") ||
		!strings.Contains(errOut, "warning(s) above, which solving would give too") {
		t.Errorf("check-only: exit %d\n%s", code, errOut)
	}
	if _, errOut, code := run(t, "solve", ref, p, "--quantity", "%T"); code != exitOK {
		t.Errorf("with --quantity %%T: exit %d\n%s", code, errOut)
	}
}

func ftoa(v float64) string { return strconv.FormatFloat(v, 'f', 4, 64) }

// TestSolveSetNotes: compounds flagged curved or lack-of-fit in the set
// are named before solving, and a Savitzky-Golay pre-treatment says why
// Durbin-Watson raises no flag.
func TestSolveSetNotes(t *testing.T) {
	dir := t.TempDir()
	path := writeSolveSet(t, dir)
	set, err := reference.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	set.Compounds[3].Flags = []reference.Flag{reference.FlagCurved, reference.FlagFewLevels}
	st, err := baseline.ParseStep("sg:11,2")
	if err != nil {
		t.Fatal(err)
	}
	set.Pretreat = []baseline.Step{st}
	for k := range set.Compounds {
		if set.Compounds[k].Absorptivity, err = st.Apply(set.Grid, set.Compounds[k].Absorptivity); err != nil {
			t.Fatal(err)
		}
	}
	if err := set.Save(path); err != nil {
		t.Fatal(err)
	}
	scan := writeScans(t, filepath.Join(dir, "s.csv"), solveScan("S1", []float64{5, 3, 2, 8}, 0, 1))
	out, errOut, code := run(t, "solve", path, scan, "--blank", scan)
	for _, want := range []string{
		"the reference set's calibration flags teal (curved): results hold only within the stated linear range",
		"pre-treatment (sg:11,2) smooths the scans",
		"Durbin-Watson is reported but does not raise the pattern flag",
		"the blank " + scan + " is also among the scans to solve",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	if strings.Contains(out, "pattern") || code == exitFailure {
		t.Errorf("exit %d, table:\n%s", code, out)
	}
}

// TestSolveSheetLatin1: a sample sheet that is not UTF-8 is read as
// Latin-1 and solve says so on stderr, naming the sheet.
func TestSolveSheetLatin1(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "runs.csv"), solveScan("S1", []float64{5, 3, 2, 8}, 0, 1))
	sheet := filepath.Join(dir, "ss-latin1.csv")
	if err := os.WriteFile(sheet, []byte("sample,dilution,note\nS1,2,lot \xb5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "solve", ref, scan, "--samples", sheet)
	if code != exitOK || !strings.Contains(errOut, "huesolve: warning: "+sheet) || !strings.Contains(errOut, "Latin-1") {
		t.Errorf("Latin-1 sample sheet: exit %d, stderr:\n%s", code, errOut)
	}
}

// TestProgressLog: when standard error is not a terminal, solve says how
// far it got every interval, the first time one interval after the start
// (a short run says nothing), with the rate (before, a long run in a log
// said nothing until the end). A fake clock stands in for time.
func TestProgressLog(t *testing.T) {
	var buf bytes.Buffer
	now := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	p := newProgressLog(&buf, func() time.Time { return now }, 10*time.Second, "solving")
	for done := 1; done <= 300; done++ {
		now = now.Add(100 * time.Millisecond)
		p.update(done, 300)
	}
	want := "huesolve: solving: 100 of 300 scans done (10/s)\nhuesolve: solving: 200 of 300 scans done (10/s)\nhuesolve: solving: 300 of 300 scans done (10/s)\n"
	if buf.String() != want {
		t.Errorf("progress lines:\n%s\nwant\n%s", buf.String(), want)
	}
}

// TestSolveHalfReadFiles: a comma-separated file whose numbers carry a
// decimal comma, and a scan that reads 0 everywhere, are refused naming
// the file, the reason and the fix; they are not solved (exit 1: nothing
// could be).
func TestSolveHalfReadFiles(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	s := solveScan("M1", []float64{1, 1, 1, 1}, 0, 1)
	var dc, zero strings.Builder
	dc.WriteString("wavelength (nm),M1\n")
	zero.WriteString("wavelength (nm);Z1 [absorbance]\n")
	for i, l := range s.Wavelengths {
		dc.WriteString(ftoa(l) + "," + strings.Replace(ftoa(s.Values[i]), ".", ",", 1) + "\n")
		zero.WriteString(strconv.FormatFloat(l, 'f', -1, 64) + ";0,000\n")
	}
	pdc, pz := filepath.Join(dir, "dc.csv"), filepath.Join(dir, "zero.csv")
	for p, text := range map[string]string{pdc: dc.String(), pz: zero.String()} {
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	out, errOut, code := run(t, "solve", ref, pdc, pz)
	for _, want := range []string{
		"skipped " + pdc + ":2:2: ", "decimal comma", "semicolon or tab",
		pz + " column 2: the file was not read as it was meant: it reads 0 at every wavelength",
		"0 sample(s) solved from 2 input(s)",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	if code != exitFailure || out != "" {
		t.Errorf("exit %d, stdout:\n%s", code, out)
	}
}

// TestSolveCoverageHint: scans a little short of the reference range (one
// starting a grid step late, one ending early) are refused with the
// window that would fit each, and solve names the largest window every
// input covers, which then solves them all.
func TestSolveCoverageHint(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir) // grid 400-700 nm in 2 nm steps
	crop := func(s *spectrum.Spectrum, lo, hi float64) *spectrum.Spectrum {
		var wl, v []float64
		for i, l := range s.Wavelengths {
			if l >= lo && l <= hi {
				wl, v = append(wl, l), append(v, s.Values[i])
			}
		}
		s.Wavelengths, s.Values = wl, v
		return s
	}
	full := writeScans(t, filepath.Join(dir, "full.csv"), solveScan("F", []float64{1, 2, 1, 1}, 0, 1))
	late := writeScans(t, filepath.Join(dir, "late.csv"), crop(solveScan("L", []float64{1, 2, 1, 1}, 0, 2), 401, 700))
	early := writeScans(t, filepath.Join(dir, "early.csv"), crop(solveScan("E", []float64{1, 2, 1, 1}, 0, 3), 400, 696))
	_, errOut, code := run(t, "solve", ref, full, late, early, "--baseline", "offset")
	for _, want := range []string{
		"the scan covers 402-700 nm but the model needs 400-700 nm", "--window 402-700 would fit this scan",
		"--window 400-696 would fit this scan",
		"2 scan(s) do not cover the wavelengths the window needs; the largest window every input covers is --window 402-696",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	if code != exitSkipped {
		t.Errorf("exit %d", code)
	}
	if _, errOut, code := run(t, "solve", ref, full, late, early, "--check-only", "--baseline", "offset"); !strings.Contains(errOut, "--window 402-696") || code != exitSkipped {
		t.Errorf("check-only: exit %d\n%s", code, errOut)
	}
	if _, errOut, code := run(t, "solve", ref, full, late, early, "--window", "402-696", "--baseline", "offset"); code != exitOK {
		t.Errorf("with the window named: exit %d\n%s", code, errOut)
	}
}
