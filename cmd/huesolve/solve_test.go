package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
)

var update = flag.Bool("update", false, "rewrite the golden files of solve")

// Invented test data for solve: four compounds with Gaussian bands on
// 400-700 nm at 2 nm. The golden files fix the output format; the
// numbers in them are checked against the known mixtures by the unmix
// tests.

type solveBand struct{ peak, width, height float64 }

var solveBands = [][]solveBand{
	{{430, 25, 0.05}},
	{{505, 30, 0.04}},
	{{560, 35, 0.06}, {420, 30, 0.005}},
	{{630, 30, 0.08}},
}

func solveGrid() []float64 {
	var g []float64
	for l := 400.0; l <= 700; l += 2 {
		g = append(g, l)
	}
	return g
}

func solveAbs(k int, l float64) float64 {
	v := 0.0
	for _, b := range solveBands[k] {
		d := (l - b.peak) / b.width
		v += b.height * math.Exp(-0.5*d*d)
	}
	return v
}

// writeSolveSet saves the reference set to dir/refs.json.
func writeSolveSet(t *testing.T, dir string) string {
	t.Helper()
	g := solveGrid()
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: 1, Ceiling: 2,
		Provenance: reference.Provenance{Tool: "huesolve test", Version: "test", Created: "2026-01-01T00:00:00Z", Sheet: "invented"}}
	names := []string{"amber", "rose", "violet", "teal"}
	set.Noise = make([]float64, len(g))
	for i := range g {
		set.Noise[i] = 0.002
	}
	for k, n := range names {
		c := reference.Compound{Name: n, Unit: "mg/L", MinStandard: 1, MaxStandard: 20,
			Absorptivity: make([]float64, len(g)), SE: make([]float64, len(g)), Usable: make([]bool, len(g))}
		for i, l := range g {
			c.Absorptivity[i] = solveAbs(k, l)
			c.SE[i] = 1e-4
			c.Usable[i] = true
		}
		c.PeakNM = solveBands[k][0].peak
		set.Compounds = append(set.Compounds, c)
	}
	path := filepath.Join(dir, "refs.json")
	if err := set.Save(path); err != nil {
		t.Fatal(err)
	}
	return path
}

// solveScan is one invented sample scan.
func solveScan(name string, conc []float64, offset float64, seed uint64) *spectrum.Spectrum {
	g := solveGrid()
	rng := rand.New(rand.NewPCG(seed, 3))
	s := &spectrum.Spectrum{Name: name, Wavelengths: g, Quantity: spectrum.Absorbance, Values: make([]float64, len(g))}
	for i, l := range g {
		a := offset + 0.002*rng.NormFloat64()
		for k, c := range conc {
			a += c * solveAbs(k, l)
		}
		s.Values[i] = math.Round(a*1e5) / 1e5 // as an instrument writes it
	}
	return s
}

func writeScans(t *testing.T, path string, ss ...*spectrum.Spectrum) string {
	t.Helper()
	var b bytes.Buffer
	if err := spectrum.WriteDelimited(&b, ss, spectrum.WriteOptions{Comments: []string{"invented test scans"}}); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// solveInputs writes the fixed input of the golden tests into dir and
// returns the file names relative to it: refs.json, a single scan, a
// wide table of four (one with an absent compound, one too concentrated,
// one diluted per the sample sheet) and the sheet.
func solveInputs(t *testing.T, dir string) {
	t.Helper()
	writeSolveSet(t, dir)
	writeScans(t, filepath.Join(dir, "s1.csv"), solveScan("S1", []float64{5, 3, 2, 8}, 0.01, 1))
	writeScans(t, filepath.Join(dir, "wide.csv"),
		solveScan("W1", []float64{5, 3, 0, 8}, 0.02, 8),
		solveScan("W2", []float64{1, 12, 4, 30}, 0, 3),
		solveScan("W3-d10", []float64{0.8, 0.3, 0.2, 0.05}, 0, 4),
		solveScan("W4", []float64{0.02, 4, 6, 2}, 0.005, 5),
	)
	if err := os.WriteFile(filepath.Join(dir, "sheet.csv"), []byte("sample,dilution,path_cm\nW1,,\nW2,,\nW3-d10,10,\nW4,,\ns1,,0.5\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// checkGolden compares got with dir/name, rewriting it with -update.
func checkGolden(t *testing.T, dir, name string, got []byte) {
	t.Helper()
	path := filepath.Join(dir, name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/huesolve -run Golden -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		gl, wl := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
		for i := range max(len(gl), len(wl)) {
			var g, w string
			if i < len(gl) {
				g = gl[i]
			}
			if i < len(wl) {
				w = wl[i]
			}
			if g != w {
				t.Fatalf("%s differs from the golden file at line %d:\ngot:  %s\nwant: %s\n(run with -update if the change is intended)", path, i+1, g, w)
			}
		}
	}
}

// TestSolveGolden runs solve on the fixed input, from inside its folder
// so that file names in the output do not depend on where it lies.
func TestSolveGolden(t *testing.T) {
	golden, err := filepath.Abs(filepath.Join("testdata", "solve"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	solveInputs(t, dir)
	t.Chdir(dir)
	// The fixed offset's golden files predate the automatic model and
	// stay as they were; the default (--baseline auto) has its own, with
	// the model column and the candidates' scores.
	for _, c := range []struct{ format, model, golden string }{
		{"csv", "offset", "results_golden.csv"}, {"json", "offset", "results_golden.json"},
		{"csv", "auto", "results_auto_golden.csv"}, {"json", "auto", "results_auto_golden.json"},
	} {
		format := c.format
		out := "results." + format
		_, errOut, code := run(t, "solve", "refs.json", "s1.csv", "wide.csv", "--samples", "sheet.csv", "--format", format, "-o", out, "-j", "3", "--baseline", c.model)
		if code != exitFlagged {
			t.Fatalf("%s: exit code %d, want %d (a too concentrated sample); stderr:\n%s", format, code, exitFlagged, errOut)
		}
		if !strings.Contains(errOut, "5 sample(s) solved from 2 input(s): 1 flagged, 0 failed") {
			t.Errorf("%s: summary line missing:\n%s", format, errOut)
		}
		got, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		checkGolden(t, golden, c.golden, []byte(maskTime(string(got))))
	}
}

// TestSolveWorkersSameBytes: the output does not depend on -j.
func TestSolveWorkersSameBytes(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	var ss []*spectrum.Spectrum
	for i := range 60 {
		c := []float64{float64(i%7) * 0.8, 3, float64(i%3) * 2, 8}
		if i%11 == 5 {
			c[3] = 28 // a masked design now and then
		}
		ss = append(ss, solveScan(fmt.Sprintf("T%02d", i), c, 0.01, uint64(100+i)))
	}
	wide := writeScans(t, filepath.Join(dir, "wide.csv"), ss...)
	single := writeScans(t, filepath.Join(dir, "one.csv"), solveScan("one", []float64{1, 2, 3, 4}, 0, 9))
	for _, format := range []string{"csv", "json", "table"} {
		var outs [2]string
		for i, j := range []string{"1", "4"} {
			out, errOut, code := run(t, "solve", ref, single, wide, single, "--format", format, "-j", j, "--shift")
			if code != exitFlagged && code != exitOK {
				t.Fatalf("-j %s: exit %d\n%s", j, code, errOut)
			}
			outs[i] = maskCommand(maskTime(out)) // the record says which -j was typed
		}
		if outs[0] != outs[1] {
			t.Errorf("%s output differs between -j 1 and -j 4", format)
		}
		if n := strings.Count(outs[0], "T59"); n != 1 {
			t.Errorf("%s: sample T59 appears %d times", format, n)
		}
	}
}

// TestSolveBadInputs runs the reader's catalogue of bad files through
// solve with good files between them: each bad file is named with its
// line on stderr, the good ones are solved, the exit code is 3, and -o
// gets a complete file with no temporary files left behind.
func TestSolveBadInputs(t *testing.T) {
	bad, err := filepath.Glob(filepath.Join("..", "..", "testdata", "spectra", "bad", "*"))
	if err != nil || len(bad) < 10 {
		t.Fatalf("bad-file catalogue: %v, %d files", err, len(bad))
	}
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	good1 := writeScans(t, filepath.Join(dir, "good1.csv"), solveScan("G1", []float64{5, 3, 2, 8}, 0, 1))
	good2 := writeScans(t, filepath.Join(dir, "good2.csv"), solveScan("G2", []float64{1, 3, 2, 1}, 0, 2))
	outDir := filepath.Join(dir, "out")
	if err := os.Mkdir(outDir, 0o755); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(outDir, "r.csv")
	args := append([]string{"solve", ref, good1}, bad...)
	args = append(args, good2, filepath.Join(dir, "missing.csv"), filepath.Join(dir, "nothing-*.csv"), "--format", "csv", "-o", out)
	stdout, errOut, code := run(t, args...)
	if code != exitSkipped {
		t.Fatalf("exit code %d, want %d\n%s", code, exitSkipped, errOut)
	}
	if stdout != "" {
		t.Errorf("stdout with -o: %q", stdout)
	}
	for _, b := range bad {
		if !strings.Contains(errOut, b) {
			t.Errorf("stderr does not name %s", b)
		}
	}
	for _, want := range []string{"missing.csv", "no file matches pattern", "inf.csv:4:2", "ragged.csv:4:3", "2 sample(s) solved"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	if strings.Contains(errOut, "panic") {
		t.Errorf("stderr:\n%s", errOut)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(dataLines(string(data))), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[1], "G1,") || !strings.HasPrefix(lines[2], "G2,") {
		t.Errorf("output rows:\n%s", data)
	}
	ents, _ := os.ReadDir(outDir)
	if len(ents) != 1 {
		t.Errorf("output folder holds %d entries, want only r.csv", len(ents))
	}

	// A run that cannot start writes nothing.
	out2 := filepath.Join(outDir, "none.csv")
	_, errOut, code = run(t, "solve", good1, good2, "-o", out2)
	if code != exitFailure {
		t.Errorf("reference set that is a scan: exit %d\n%s", code, errOut)
	}
	if _, err := os.Stat(out2); !os.IsNotExist(err) {
		t.Errorf("%s exists after a failed run", out2)
	}
	// Every input unreadable: nothing solved is a failure (exit 1), with
	// an empty but complete document; a table prints nothing at all.
	stdout, errOut, code = run(t, "solve", ref, bad[0], "--format", "json")
	if code != exitFailure || !strings.Contains(stdout, `"samples": [`) || !strings.Contains(stdout, `"failed": [`) || !strings.Contains(errOut, "nothing could be solved") {
		t.Errorf("all bad: exit %d, output %q, stderr %q", code, stdout, errOut)
	}
	stdout, errOut, code = run(t, "solve", ref, bad[0], good1)
	if code != exitSkipped || strings.Contains(stdout, "could not be solved") || !strings.Contains(errOut, "1 sample(s) solved from 2 input(s)") {
		t.Errorf("one bad, one good: exit %d, stdout %q, stderr %q", code, stdout, errOut)
	}
	stdout, _, code = run(t, "solve", ref, bad[0])
	if code != exitFailure || stdout != "" {
		t.Errorf("all bad, table: exit %d, stdout %q", code, stdout)
	}
}

func TestSolveTableAndPlots(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 0, 8}, 0, 1), solveScan("A/2", []float64{2, 2, 2, 2}, 0, 2))
	plots := filepath.Join(dir, "figs")
	out, errOut, code := run(t, "solve", ref, scan, "--plots", plots, "--plot-format", "svg", "--baseline", "linear", "--weighted")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	for _, want := range []string{"amber (mg/L)", "A1", "zero", "held at zero"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	for _, f := range []string{"0001-A1.svg", "0002-A-2.svg"} {
		if fi, err := os.Stat(filepath.Join(plots, f)); err != nil || fi.Size() < 1000 {
			t.Errorf("figure %s: %v", f, err)
		}
	}
	if want := "huesolve: 2 plots written to " + plots + "\n"; !strings.Contains(errOut, want) {
		t.Errorf("stderr lacks %q:\n%s", want, errOut)
	}
}

// TestSolveSmallMessages: the step of a bad --pretreat is quoted once;
// --max-shift without --shift gets a note; --path-cm's help says what 0
// means; of two columns of one wide file with the same sample name, the
// second is renamed after the file, and the note names its column.
func TestSolveSmallMessages(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	wide := writeScans(t, filepath.Join(dir, "w.csv"), solveScan("S", []float64{5, 3, 2, 8}, 0, 1), solveScan("S", []float64{1, 1, 1, 1}, 0, 2))
	// A fixed model: auto considers a shift and so uses --max-shift.
	_, errOut, code := run(t, "solve", ref, wide, "--max-shift", "2", "--baseline", "offset")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	for _, want := range []string{
		"note: --max-shift 2 has no effect without --shift",
		"1 sample(s) have a name an earlier scan already gave, and are named after their file or numbered in the results: S (w) (" + wide + " column 3)",
	} {
		if !strings.Contains(errOut, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errOut)
		}
	}
	if _, errOut, _ := run(t, "solve", ref, wide, "--max-shift", "2", "--shift"); strings.Contains(errOut, "no effect") {
		t.Errorf("--max-shift with --shift noted:\n%s", errOut)
	}
	help, _, _ := run(t, "solve", "--help")
	if !strings.Contains(help, "cell path length in cm (0: the reference set's") {
		t.Errorf("--path-cm help does not say what 0 means:\n%s", help)
	}
}

func TestSolveUsage(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 0, 8}, 0, 1))
	for _, args := range [][]string{
		{"solve", ref},
		{"solve", ref, scan, "--format", "xml"},
		{"solve", ref, scan, "--plot-format", "gif"},
		{"solve", ref, scan, "--baseline", "wiggly"},
		{"solve", ref, scan, "--window", "500"},
		{"solve", ref, scan, "--quantity", "furlongs"},
		{"solve", ref, scan, "--dilution", "0"},
		{"solve", ref, scan, "--dilution", "2e9"},
		{"solve", ref, scan, "--path-cm", "4e-324"},
		{"solve", ref, scan, "--path-cm", "150"},
		{"solve", ref, scan, "--max-shift", "-1"},
		{"solve", ref, scan, "-j", "-2"},
	} {
		_, errOut, code := run(t, args...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d\n%s", args[2:], code, exitUsage, errOut)
		}
	}
	// A window outside the reference grid is a failure naming both ranges.
	_, errOut, code := run(t, "solve", ref, scan, "--window", "300-600")
	if code != exitFailure || !strings.Contains(errOut, "300-600 nm") || !strings.Contains(errOut, "400-700 nm") {
		t.Errorf("window outside: exit %d, %s", code, errOut)
	}
	// The help documents the exit codes and the flags.
	out, _, _ := run(t, "solve", "--help")
	for _, want := range []string{"Exit codes:", "3 some files", "misfit!", "Caution: results support", "responsible licensed professional", "--samples SHEET"} {
		if !strings.Contains(out, want) {
			t.Errorf("help lacks %q", want)
		}
	}
	// Short enough that the options are not buried: the details are in
	// README.md.
	if i := strings.Index(out, "\nFlags:"); i < 0 || strings.Count(out[:i], "\n") > 45 {
		t.Errorf("solve --help lists its options only after %d lines, want at most 45", strings.Count(out[:max(i, 0)], "\n"))
	}
}

// TestSolveInterrupted: a cancelled run (as on Ctrl-C) says so and leaves
// no output file.
func TestSolveInterrupted(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 0, 8}, 0, 1))
	out := filepath.Join(dir, "r.json")
	root := newRootCmd()
	var stdout, stderr bytes.Buffer
	root.SetArgs([]string{"solve", ref, scan, "--format", "json", "-o", out})
	root.SetOut(&stdout)
	root.SetErr(&stderr)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	err := root.ExecuteContext(ctx)
	var ee *exitError
	if !errors.As(err, &ee) || ee.code != exitInterrupt || !strings.Contains(ee.msg, "nothing written to "+out) {
		t.Fatalf("cancelled run: %v", err)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("%s written by an interrupted run", out)
	}
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("temporary file %s left", e.Name())
		}
	}
}

// TestSolveExcludedPoints: wavelengths where a compound's absorptivity is
// not usable are left out of every fit, and solve says so.
func TestSolveExcludedPoints(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	set, err := reference.Load(ref)
	if err != nil {
		t.Fatal(err)
	}
	for i := 10; i < 15; i++ {
		set.Compounds[3].Usable[i] = false
	}
	if err := set.Save(ref); err != nil {
		t.Fatal(err)
	}
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 1, 8}, 0, 1))
	// A fixed model fits the whole grid (auto keeps the shift limit clear of its ends).
	out, errOut, code := run(t, "solve", ref, scan, "--format", "csv", "--baseline", "offset")
	if code != exitOK || !strings.Contains(errOut, "5 of the 151 window points are left out of every fit") {
		t.Errorf("exit %d, stderr:\n%s", code, errOut)
	}
	if !strings.Contains(out, ",146,0,") {
		t.Errorf("points used should be 146:\n%s", out)
	}
}
