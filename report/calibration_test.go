package report

import (
	"bytes"
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
		// Same compound name twice: the second file gets a suffix.
		want := []string{"absorptivity." + format, "line-dye-a." + format, "line-dye-a-2." + format}
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
				if !strings.Contains(string(b), "<svg") {
					t.Errorf("%s is not SVG", f)
				}
			}
		}
	}
	if _, err := WriteCalibrationPlots(set, t.TempDir(), "bmp"); err == nil {
		t.Error("bmp format accepted")
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
