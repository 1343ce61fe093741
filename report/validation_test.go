package report

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"huesolve/reference"
	"huesolve/validate"
)

func valVerification(t *testing.T) *validate.Verification {
	t.Helper()
	loq := []float64{0.05, 0.05}
	checks := []validate.Check{
		{Name: "c1", Known: []float64{10, 5}, Found: []float64{9.9, 4.8}, SE: []float64{0.1, 0.1}, LOQ: loq},
		{Name: "c2", Known: []float64{20, 0}, Found: []float64{20.2, 0.01}, SE: []float64{0.1, 0.1}, LOQ: loq},
	}
	v, err := validate.Assess([]string{"red dye", "blue/dye"}, []string{"mg/L", ""}, checks, validate.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func TestWriteVerifyPlots(t *testing.T) {
	v := valVerification(t)
	cv := &validate.CrossValidation{Compounds: []string{"red dye", "blue/dye"},
		Predictions: []validate.Prediction{{Standard: "s1", Known: []float64{2, 0}, Found: []float64{2.1, 0.02}}}}
	dir := t.TempDir()
	for _, format := range []string{"png", "svg"} {
		files, err := WriteVerifyPlots(v, cv, dir, format)
		if err != nil {
			t.Fatal(err)
		}
		want := []string{"verify-red-dye." + format, "verify-blue-dye." + format}
		if len(files) != len(want) {
			t.Fatalf("%s: files %v, want %v", format, files, want)
		}
		for i, f := range files {
			if filepath.Base(f) != want[i] {
				t.Errorf("file %s, want %s", filepath.Base(f), want[i])
			}
			b, err := os.ReadFile(f)
			if err != nil || len(b) < 1000 {
				t.Errorf("%s: %d bytes, err %v", f, len(b), err)
			}
			if format == "png" && !bytes.HasPrefix(b, []byte("\x89PNG")) {
				t.Errorf("%s is not a PNG", f)
			}
			if format == "svg" {
				checkVerifySVG(t, f, v, cv, i)
			}
		}
	}
	if _, err := WriteVerifyPlots(v, nil, dir, "gif"); err == nil {
		t.Error("gif: no error")
	}
}

func TestWriteWindowPlots(t *testing.T) {
	var g []float64
	for w := 400.0; w <= 600; w += 2 {
		g = append(g, w)
	}
	band := func(c, s float64) []float64 {
		out := make([]float64, len(g))
		for i, w := range g {
			out[i] = math.Exp(-0.5 * math.Pow((w-c)/s, 2))
		}
		return out
	}
	set := &reference.Set{Grid: g, PathCM: 1, Ceiling: 2, Noise: make([]float64, len(g)),
		Compounds: []reference.Compound{{Name: "a", Absorptivity: band(470, 25)}, {Name: "b", Absorptivity: band(530, 25)}}}
	for i := range set.Noise {
		set.Noise[i] = 0.001
	}
	adv, err := validate.AdviseWindow(set, validate.WindowOptions{StepNM: 10})
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, format := range []string{"png", "svg"} {
		files, err := WriteWindowPlots(adv, dir, format)
		if err != nil {
			t.Fatal(err)
		}
		if len(files) != 2 {
			t.Fatalf("files %v", files)
		}
		for i, f := range files {
			if st, err := os.Stat(f); err != nil || st.Size() < 1000 {
				t.Errorf("%s: %v", f, err)
			}
			if format == "svg" {
				checkWindowSVG(t, f, adv, i)
			}
		}
	}
}

// checkVerifySVG reads back the found-vs-known figure of compound k:
// the labels of both panels, each legend entry once, and one glyph per
// check standard and cross-validated standard of the compound in the
// found-vs-known panel, again in the recovery panel where the known level
// is above zero, plus one legend swatch each.
func checkVerifySVG(t *testing.T, path string, v *validate.Verification, cv *validate.CrossValidation, k int) {
	t.Helper()
	d := readSVG(t, path)
	cmp := v.Compounds[k]
	unit := cmp.Unit
	if unit == "" {
		unit = "as given"
	}
	if !d.hasPrefix(cmp.Compound + ": found vs known (") {
		t.Errorf("%s: no title for %s in %q", path, cmp.Compound, d.texts)
	}
	for _, s := range []struct {
		text string
		n    int
	}{
		{"Known (" + unit + ")", 2}, // both panels
		{"Found (" + unit + ")", 1},
		{"Recovery (%)", 1},
		{"found = known", 1},
		{fmt.Sprintf("recovery %g-%g %%", v.Limits.RecoveryLo, v.Limits.RecoveryHi), 1},
		{"calibration standards, cross-validated", 1},
		{"check standards (±2 SE)", 1},
	} {
		if got := d.count(s.text); got != s.n {
			t.Errorf("%s: %d texts %q, want %d (texts %q)", path, got, s.text, s.n, d.texts)
		}
	}
	checks, cvs := 1, 1 // the legend swatches
	for _, r := range v.Rows {
		if r.Compound == cmp.Compound {
			checks++
			if r.Known > 0 {
				checks++
			}
		}
	}
	for _, pr := range cv.Predictions {
		cvs++
		if pr.Known[k] > 0 {
			cvs++
		}
	}
	if got := d.paths("fill:" + hex(colour(0))); got != checks {
		t.Errorf("%s: %d check-standard glyphs, want %d", path, got, checks)
	}
	if got := d.paths(stroke(colour(1), 0.5)); got != cvs {
		t.Errorf("%s: %d cross-validated glyphs, want %d", path, got, cvs)
	}
}

// checkWindowSVG reads back window figure i (0 the predicted error, 1
// the condition number): its labels, one legend entry per window width
// drawn and one for the recommended window, one glyph per candidate
// window of each width drawn, and the ring marking the recommended window (and swatch).
func checkWindowSVG(t *testing.T, path string, adv *validate.WindowAdvice, i int) {
	t.Helper()
	d := readSVG(t, path)
	title, ylabel := "Worst compound's predicted error by window", "Predicted relative SE (% of level)"
	if i == 1 {
		title, ylabel = "Condition number of the design by window", "Condition number"
	}
	best := adv.Candidates[adv.Best]
	for _, s := range []string{title, "Window start (nm)", ylabel, fmt.Sprintf("recommended %g-%g nm", best.Lo, best.Hi)} {
		if d.count(s) != 1 {
			t.Errorf("%s: %d texts %q, want 1 (texts %q)", path, d.count(s), s, d.texts)
		}
	}
	var widths []float64
	perWidth := map[float64]int{}
	for _, c := range adv.Candidates {
		if c.Singular {
			t.Fatalf("candidate %g-%g is singular: the counts below assume none is", c.Lo, c.Hi)
		}
		w := math.Round((c.Hi-c.Lo)*1e6) / 1e6 // as the plot groups them
		if perWidth[w] == 0 {
			widths = append(widths, w)
		}
		perWidth[w]++
	}
	sort.Float64s(widths)
	// The widths drawn are pickWidths' choice (tested in TestPickWidths).
	chosen := pickWidths(widths, math.Round((best.Hi-best.Lo)*1e6)/1e6, winLines)
	if len(chosen) < 2 {
		t.Fatalf("%d widths drawn of %v", len(chosen), widths)
	}
	entries := 0
	for _, x := range d.texts {
		if strings.HasSuffix(x, " nm wide") {
			entries++
		}
	}
	if entries != len(chosen) {
		t.Errorf("%s: %d width legend entries, want %d (%v)", path, entries, len(chosen), chosen)
	}
	for j, w := range chosen {
		if n := d.count(fmt.Sprintf("%g nm wide", w)); n != 1 {
			t.Errorf("%s: %d legend entries for %g nm, want 1", path, n, w)
		}
		if n := d.paths(stroke(colour(j), 0.5)); n != perWidth[w] {
			t.Errorf("%s: %d glyphs for %g nm, want one per candidate, %d", path, n, w, perWidth[w])
		}
	}
	if n := d.paths(stroke(colour(5), 0.5)); n != 2 {
		t.Errorf("%s: %d rings for the recommended window, want 2 (mark and legend)", path, n)
	}
}

func TestPickWidths(t *testing.T) {
	ws := []float64{40, 50, 60, 70, 80, 90, 100, 110, 120, 130}
	got := pickWidths(ws, 75, 6)
	if len(got) > 6 || got[0] != 40 || got[len(got)-1] != 130 {
		t.Errorf("pickWidths = %v, want the ends and 75 among at most 6", got)
	}
	found := false
	for _, w := range got {
		found = found || w == 75
	}
	if !found {
		t.Errorf("pickWidths = %v misses 75", got)
	}
}
