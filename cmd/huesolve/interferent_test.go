package main

import (
	"encoding/json"
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

// hazeBand is an invented coloured impurity for the tests: a band at
// 585 nm overlapping the yellow dye of valCase (540 nm), 1.0 at its peak.
func hazeBand(l float64) float64 {
	d := (l - 585) / 22
	return math.Exp(-0.5 * d * d)
}

// writeOneScan writes one invented scan on wl with values f(l).
func writeOneScan(t *testing.T, path string, wl []float64, f func(l float64) float64) string {
	t.Helper()
	s := &spectrum.Spectrum{Name: strings.TrimSuffix(filepath.Base(path), ".csv"), Wavelengths: wl, Quantity: spectrum.Absorbance, Values: make([]float64, len(wl))}
	for i, l := range wl {
		s.Values[i] = f(l)
	}
	return writeScans(t, path, s)
}

// TestInterferentStored: calibrate --interferent stores the scan in the
// set (schema 3, with its file and SHA-256); verify fits it in every check
// standard with a note, as verify --interferent does with a set without
// it, and both pass checks that hold the impurity, which fail without it;
// the run's record (JSON run, CSV comment lines) lists it with its
// SHA-256; solve refuses it given again.
func TestInterferentStored(t *testing.T) {
	dir, refs, _ := valCase(t, 1)
	var wl []float64
	for w := 400.0; w <= 700; w += 2 {
		wl = append(wl, w)
	}
	haze := writeOneScan(t, filepath.Join(dir, "haze.csv"), wl, hazeBand)
	sum, err := reference.FileSHA256(haze)
	if err != nil {
		t.Fatal(err)
	}
	withHaze := filepath.Join(dir, "with-haze.json")
	if _, e, code := run(t, "calibrate", filepath.Join(dir, "standards.csv"), "--interferent", haze, "-o", withHaze); code != exitOK {
		t.Fatalf("calibrate --interferent: exit %d\n%s", code, e)
	}
	set, err := reference.Load(withHaze)
	if err != nil {
		t.Fatal(err)
	}
	if set.Schema != 3 || len(set.Interferents) != 1 || set.Interferents[0].Name != "haze.csv" || set.Interferents[0].SHA256 != sum || set.Interferents[0].File != haze {
		t.Fatalf("stored: schema %d, %+v", set.Schema, set.Interferents)
	}

	// Check standards holding 0.15 of the haze scan.
	k := valDyes(wl)
	rng := rand.New(rand.NewPCG(11, 12))
	sheet := "scan,red (mg/L),yellow (mg/L)\n"
	write := func(name string, c0, c1, h float64) {
		i := 0
		writeOneScan(t, filepath.Join(dir, name), wl, func(l float64) float64 {
			v := 0.02 + c0*k[0][i] + c1*k[1][i] + h*hazeBand(l) + 0.0002*rng.NormFloat64()
			i++
			return v
		})
		sheet += fmt.Sprintf("%s,%g,%g\n", name, c0, c1)
	}
	write("hz-blank.csv", 0, 0, 0)
	for i, c := range [][2]float64{{5, 5}, {5, 5}, {8, 2}, {2, 8}} {
		write(fmt.Sprintf("hz-%d.csv", i+1), c[0], c[1], 0.15)
	}
	checks := filepath.Join(dir, "hz-checks.csv")
	if err := os.WriteFile(checks, []byte(sheet), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, e, code := run(t, "verify", refs, checks); code != exitFlagged {
		t.Errorf("verify without the interferent: exit %d, want %d\n%s", code, exitFlagged, e)
	}
	if _, e, code := run(t, "verify", refs, checks, "--interferent", haze); code != exitOK {
		t.Errorf("verify --interferent: exit %d\n%s", code, e)
	}
	out, e, code := run(t, "verify", withHaze, checks, "--format", "json")
	if code != exitOK || !strings.Contains(e, "stores interferent haze.csv") {
		t.Fatalf("verify with the stored interferent: exit %d\n%s", code, e)
	}
	var doc struct {
		Run struct {
			Interferents []struct{ Role, Path, SHA256 string } `json:"interferents"`
		} `json:"run"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if it := doc.Run.Interferents; len(it) != 1 || it[0].SHA256 != sum || it[0].Path != haze || it[0].Role != "stored in the reference set" {
		t.Errorf("JSON run interferents %+v", it)
	}
	out, e, code = run(t, "solve", withHaze, filepath.Join(dir, "hz-1.csv"), "--format", "csv")
	if code != exitOK || !strings.Contains(out, "# interferent: "+sum+"  "+haze+"\n") || !strings.Contains(out, "interferent_haze.csv") {
		t.Errorf("solve with the stored interferent: exit %d\n%s\n%s", code, e, out)
	}
	if _, e, code := run(t, "solve", withHaze, filepath.Join(dir, "hz-1.csv"), "--interferent", haze); code == exitOK || !strings.Contains(e, "haze.csv is given twice") {
		t.Errorf("the stored interferent given again: exit %d\n%s", code, e)
	}

	// A method saved by verify --interferent carries the scan (path and
	// SHA-256): solve --method fits it; once the file changes, the method
	// is refused naming it.
	m := filepath.Join(dir, "m.json")
	if _, e, code := run(t, "verify", refs, checks, "--interferent", haze, "--baseline", "offset", "--save-method", m); code != exitOK {
		t.Fatalf("verify --save-method: exit %d\n%s", code, e)
	}
	raw, err := os.ReadFile(m)
	if err != nil || !strings.Contains(string(raw), `"path": "haze.csv"`) || !strings.Contains(string(raw), sum) {
		t.Fatalf("method %v:\n%s", err, raw)
	}
	out, e, code = run(t, "solve", "--method", m, filepath.Join(dir, "hz-2.csv"), "--format", "csv")
	if code != exitOK || !strings.Contains(out, "interferent_haze.csv") || !strings.Contains(out, "# interferent: "+sum) {
		t.Errorf("solve --method with an interferent: exit %d\n%s\n%s", code, e, out)
	}
	writeOneScan(t, haze, wl, func(l float64) float64 { return 1.1 * hazeBand(l) })
	if _, e, code := run(t, "solve", "--method", m, filepath.Join(dir, "hz-2.csv")); code == exitOK || !strings.Contains(e, "haze.csv has changed since the method was saved") {
		t.Errorf("solve --method with the interferent changed: exit %d\n%s", code, e)
	}
}

// TestInterferentBadInput: calibrate --interferent refuses, naming the
// file, a scan on a grid that does not cover the set's, a near-copy of a
// compound, a combination of the compounds (a singular design, naming
// them) and a flat scan (the offset's double); nothing is written.
func TestInterferentBadInput(t *testing.T) {
	dir, _, _ := valCase(t, 1)
	var wl, far []float64
	for w := 400.0; w <= 700; w += 2 {
		wl = append(wl, w)
	}
	for w := 200.0; w <= 380; w += 2 {
		far = append(far, w)
	}
	k := valDyes(wl)
	at := func(j int) func(float64) float64 {
		return func(l float64) float64 { return k[j][int(math.Round((l-400)/2))] }
	}
	cases := []struct {
		file string
		grid []float64
		f    func(float64) float64
		want []string
	}{
		{"far.csv", far, hazeBand, []string{"far.csv", "covers 200-380 nm"}},
		{"short.csv", wl[10:120], hazeBand, []string{"short.csv", "covers 420-638 nm"}},
		{"copy.csv", wl, func(l float64) float64 { return 3 * at(0)(l) }, []string{"copy.csv", "near-copy of compound red"}},
		{"both.csv", wl, func(l float64) float64 { return 2*at(0)(l) + 5*at(1)(l) }, []string{"both.csv", "compound red and compound yellow"}},
		{"flat.csv", wl, func(float64) float64 { return 0.4 }, []string{"flat.csv", "the baseline terms"}},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			f := writeOneScan(t, filepath.Join(dir, c.file), c.grid, c.f)
			out := filepath.Join(dir, "bad-"+c.file+".json")
			_, e, code := run(t, "calibrate", filepath.Join(dir, "standards.csv"), "--interferent", f, "-o", out)
			if code == exitOK {
				t.Fatalf("accepted\n%s", e)
			}
			for _, w := range c.want {
				if !strings.Contains(e, w) {
					t.Errorf("stderr lacks %q:\n%s", w, e)
				}
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("%s was written", out)
			}
		})
	}
}
