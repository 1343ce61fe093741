package report

import (
	"bytes"
	"strings"
	"testing"

	"huesolve/reference"
)

// TestSetSummaryNoiseModel: a set with a measured noise model shows its
// knee and the measured growth per absorbance group beside the model's
// (reference.GrowthAt); a set without one shows no such section.
func TestSetSummaryNoiseModel(t *testing.T) {
	s := &reference.Set{Grid: []float64{400, 401}, PathCM: 1, Ceiling: 2, Noise: []float64{1e-3, 1e-3},
		Compounds: []reference.Compound{{Name: "dye", Absorptivity: []float64{1, 1}}}}
	var b bytes.Buffer
	if err := WriteSetSummary(&b, s); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(b.String(), "Noise growth") {
		t.Errorf("a set without a noise model shows one:\n%s", b.String())
	}
	s.NoiseModel = &reference.NoiseModel{KneeA: 1.5, KneeSE: 0.05, Readings: 100, MaxA: 1.9,
		Bins: []reference.NoiseBin{{LoA: 1.75, HiA: 2, MeanA: 1.9, Ratio: 2.6, N: 20}}}
	b.Reset()
	if err := WriteSetSummary(&b, s); err != nil {
		t.Fatal(err)
	}
	// Model at A = 1.9 with knee 1.5: sqrt(1 + 10^0.8) = sqrt(7.3096) = 2.704.
	for _, want := range []string{"10^(2 (A - 1.500))", "knee SE 0.050", "1.75-2.00", "2.600", "2.704"} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("summary lacks %q:\n%s", want, b.String())
		}
	}
}

// TestSetSummaryInterferents: the summary lists the stored interferents
// with their range, file and SHA-256; a set without them says nothing.
func TestSetSummaryInterferents(t *testing.T) {
	s := &reference.Set{Grid: []float64{400, 401}, PathCM: 1, Ceiling: 2, Noise: []float64{1e-3, 1e-3},
		Compounds: []reference.Compound{{Name: "dye", Absorptivity: []float64{1, 1}}}}
	var b bytes.Buffer
	if err := WriteSetSummary(&b, s); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(b.String(), "Interferents") {
		t.Errorf("a set without interferents lists some:\n%s", b.String())
	}
	s.Interferents = []reference.Interferent{{Name: "haze.csv", File: "scans/haze.csv", SHA256: strings.Repeat("ab", 32),
		Grid: []float64{380, 720}, Absorbance: []float64{0.1, 0.2}}}
	b.Reset()
	if err := WriteSetSummary(&b, s); err != nil {
		t.Fatal(err)
	}
	if want := "  haze.csv: 380-720 nm, from scans/haze.csv (SHA-256 abababababab...)"; !strings.Contains(b.String(), want) {
		t.Errorf("summary lacks %q:\n%s", want, b.String())
	}
}
