package report

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
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
	files, err := WriteWindowPlots(adv, dir, "png")
	if err != nil {
		t.Fatal(err)
	}
	if len(files) != 2 {
		t.Fatalf("files %v", files)
	}
	for _, f := range files {
		if st, err := os.Stat(f); err != nil || st.Size() < 1000 {
			t.Errorf("%s: %v", f, err)
		}
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
