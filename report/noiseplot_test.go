package report

import (
	"os"
	"path/filepath"
	"testing"

	"huesolve/reference"
)

// noiseSet is an invented set with a measured noise model and three bins.
func noiseSet() *reference.Set {
	return &reference.Set{Grid: []float64{400, 401}, PathCM: 1, Ceiling: 2, Noise: []float64{1e-3, 1e-3},
		Compounds: []reference.Compound{{Name: "dye", Absorptivity: []float64{1, 1}}},
		NoiseModel: &reference.NoiseModel{KneeA: 1.4, KneeSE: 0.04, Readings: 300, MaxA: 1.95,
			Bins: []reference.NoiseBin{
				{LoA: 0, HiA: 0.5, MeanA: 0.25, Ratio: 1.02, N: 150},
				{LoA: 0.5, HiA: 1.25, MeanA: 0.9, Ratio: 1.1, N: 100},
				{LoA: 1.25, HiA: 1.95, MeanA: 1.7, Ratio: 2.2, N: 50},
			}}}
}

// TestWriteNoisePlot: the noise figure is written as SVG and PNG, not
// empty, and the SVG carries the axis labels, the knee and the model's
// formula; a set without a noise model writes nothing and says why.
func TestWriteNoisePlot(t *testing.T) {
	dir := t.TempDir()
	for _, format := range []string{"svg", "png"} {
		f, err := WriteNoisePlot(noiseSet(), dir, format)
		if err != nil {
			t.Fatal(err)
		}
		if want := filepath.Join(dir, NoisePlotName+"."+format); f != want {
			t.Errorf("file %s, want %s", f, want)
		}
		st, err := os.Stat(f)
		if err != nil || st.Size() == 0 {
			t.Fatalf("%s: %v, size %d", f, err, st.Size())
		}
	}
	doc := readSVG(t, filepath.Join(dir, NoisePlotName+".svg"))
	for _, want := range []string{"Absorbance (fitted)", "Residual SD / base noise", "knee A = 1.400 ± 0.040",
		"model: sqrt(1 + 10^(2 (A - 1.400)))", "standards: RMS residual / noise (± 1 SE)"} {
		if doc.count(want) != 1 {
			t.Errorf("SVG holds %q %d times, want once; texts %q", want, doc.count(want), doc.texts)
		}
	}
	s := noiseSet()
	s.NoiseModel = nil
	if _, err := WriteNoisePlot(s, dir, "svg"); err == nil {
		t.Error("a set without a noise model: no error")
	}
	if _, err := WriteNoisePlot(noiseSet(), dir, "gif"); err == nil {
		t.Error("format gif: no error")
	}
}

// TestBinSE: the error bar of a bin is its ratio over sqrt(2 n).
func TestBinSE(t *testing.T) {
	// 2.2 / sqrt(100) = 0.22.
	if got := binSE(reference.NoiseBin{Ratio: 2.2, N: 50}); got < 0.22-1e-12 || got > 0.22+1e-12 {
		t.Errorf("binSE %g, want 0.22", got)
	}
}
