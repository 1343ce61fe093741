package report

import (
	"bytes"
	"fmt"
	"image/color"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/reference"
)

// calSet is an invented two-compound reference set (values for drawing
// only), with a gap where the first compound is unusable and one reading
// left out above the ceiling.
func calSet() *reference.Set {
	var grid []float64
	for w := 400.0; w <= 600; w += 5 {
		grid = append(grid, w)
	}
	n := len(grid)
	s := &reference.Set{Schema: reference.SchemaVersion, Grid: grid, PathCM: 1, Ceiling: 2, Noise: make([]float64, n)}
	for k, centre := range []float64{460, 540} {
		c := reference.Compound{Name: []string{"dye A", "dye A"}[k], Unit: "mg/L",
			Absorptivity: make([]float64, n), SE: make([]float64, n), Usable: make([]bool, n), PeakNM: centre}
		for j, w := range grid {
			d := (w - centre) / 30
			c.Absorptivity[j] = 0.08 * math.Exp(-d*d/2)
			c.SE[j] = 0.002
			c.Usable[j] = !(k == 0 && j > 10 && j < 14)
		}
		c.Linearity = reference.Linearity{Slope: 0.08, Intercept: 0.002, R2: 0.9995, Data: []reference.Point{
			{Conc: 2, Absorbance: 0.163, Used: true}, {Conc: 4, Absorbance: 0.321, Used: true},
			{Conc: 8, Absorbance: 0.645, Used: true}, {Conc: 30, Absorbance: 2.1, Used: false}}}
		s.Compounds = append(s.Compounds, c)
	}
	return s
}

func TestWriteCalibrationPlots(t *testing.T) {
	set := calSet()
	for _, format := range []string{"png", "svg"} {
		dir := t.TempDir()
		files, err := WriteCalibrationPlots(set, dir, format)
		if err != nil {
			t.Fatal(err)
		}
		// File names keep the compounds' case; the same name twice: the
		// second file gets a suffix.
		want := []string{"absorptivity." + format, "line-dye-A." + format, "line-dye-A-2." + format}
		if len(files) != len(want) {
			t.Fatalf("%s: wrote %v, want %v", format, files, want)
		}
		for i, f := range files {
			if filepath.Base(f) != want[i] {
				t.Errorf("file %d = %s, want %s", i, filepath.Base(f), want[i])
			}
			b, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			switch format {
			case "png":
				img, err := png.Decode(bytes.NewReader(b))
				if err != nil {
					t.Fatalf("%s: %v", f, err)
				}
				if r := img.Bounds(); r.Dx() < 300 || r.Dy() < 200 {
					t.Errorf("%s: %v is too small", f, r)
				}
			case "svg":
				if i == 0 {
					checkAbsorptivitySVG(t, f)
				} else {
					checkLineSVG(t, f, set, i-1)
				}
			}
		}
	}
	if _, err := WriteCalibrationPlots(set, t.TempDir(), "bmp"); err == nil {
		t.Error("bmp format accepted")
	}
}

// checkAbsorptivitySVG reads back calSet's absorptivity figure: title,
// axis labels, one legend entry per compound, one line per usable run of
// each compound (the first has a gap at 455-465 nm, so two runs; the
// second one) plus its legend swatch, one ±2 SE band per run.
func checkAbsorptivitySVG(t *testing.T, path string) {
	t.Helper()
	d := readSVG(t, path)
	for _, s := range []string{"Absorptivity spectra (band: ±2 SE)", "Wavelength (nm)", "Absorptivity (L/(mg·cm))"} {
		if d.count(s) != 1 {
			t.Errorf("%s: %d texts %q, want 1 (texts %q)", path, d.count(s), s, d.texts)
		}
	}
	if n := d.count("dye A"); n != 2 {
		t.Errorf("%s: %d legend entries \"dye A\", want 2 (one per compound)", path, n)
	}
	bands := 0
	for style, n := range d.styles {
		if strings.Contains(style, "fill-opacity") {
			bands += n
		}
	}
	for k, runs := range []int{2, 1} {
		if n := d.paths(stroke(colour(k), 1.2)); n != runs+1 {
			t.Errorf("%s: compound %d: %d line paths, want %d runs and a legend swatch", path, k, n, runs)
		}
	}
	if bands != 3 {
		t.Errorf("%s: %d translucent bands, want 3 (one per run)", path, bands)
	}
}

// checkLineSVG reads back the calibration-line figure of calSet's
// compound k: labels of both panels, the three legend entries, the fitted
// line (and swatch), the three used standards in the line panel, their
// three residuals and the legend glyph, the reading left out (a cross of
// two strokes, and its swatch), the residual panel's zero line.
func checkLineSVG(t *testing.T, path string, set *reference.Set, k int) {
	t.Helper()
	d := readSVG(t, path)
	c := set.Compounds[k]
	for _, s := range []struct {
		text string
		n    int
	}{
		{fmt.Sprintf("dye A at %g nm: A = 0.08·c + 0.002, R² = 0.99950", c.PeakNM), 1},
		{"Concentration (mg/L)", 2}, // both panels
		{fmt.Sprintf("Absorbance at %g nm", c.PeakNM), 1},
		{"Residual (absorbance)", 1},
		{"fitted line", 1},
		{"standards", 1},
		{"above the ceiling (left out)", 1},
	} {
		if got := d.count(s.text); got != s.n {
			t.Errorf("%s: %d texts %q, want %d (texts %q)", path, got, s.text, s.n, d.texts)
		}
	}
	for _, p := range []struct {
		what, style string
		n           int
	}{
		{"fitted line and swatch", stroke(colour(k), 0), 2},
		{"standards: 3 readings, 3 residuals, 1 swatch", stroke(colour(k), 0.5), 7},
		{"left-out reading and swatch, 2 strokes each", stroke(color.Gray{Y: 0x80}, 0.5), 4},
		{"zero line of the residuals", stroke(color.Gray{Y: 0x60}, 0), 1},
	} {
		if got := d.paths(p.style); got != p.n {
			t.Errorf("%s: %d paths %q for the %s, want %d", path, got, p.style, p.what, p.n)
		}
	}
}

func TestUsableRuns(t *testing.T) {
	u := []bool{true, true, false, true, false, true, true, true}
	got := usableRuns(u)
	want := [][2]int{{0, 2}, {5, 8}}
	if len(got) != len(want) || got[0] != want[0] || got[1] != want[1] {
		t.Errorf("usableRuns(%v) = %v, want %v", u, got, want)
	}
}

// TestUniqueNameIgnoresCase: names that differ only in case would be one
// file in a folder that ignores case, so the second gets a suffix.
func TestUniqueNameIgnoresCase(t *testing.T) {
	used := map[string]bool{}
	for _, c := range [][2]string{{"Red", "Red"}, {"red", "red-2"}, {"RED", "RED-3"}, {"blue", "blue"}} {
		if got := uniqueName(c[0], used); got != c[1] {
			t.Errorf("uniqueName(%q) = %q, want %q", c[0], got, c[1])
		}
	}
}
