package batch

import (
	"testing"

	"huesolve/internal/synth"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Synthetic test data from internal/synth, the same as package unmix's
// tests use: invented Gaussian bands on a 400-800 nm grid at 1 nm.

const testNoise = synth.NoiseAU // AU, the noise added to samples and in the set's noise model

var testSet = synth.Set

// mixture is a synthetic sample (see synth.Sample): concentrations of
// the band groups, scanned at synth.PathCM, plus Gaussian noise of sd
// noise.
type mixture struct {
	conc  []float64
	noise float64
	seed  uint64
}

func (mx mixture) spectrum() *spectrum.Spectrum {
	return synth.Sample{Conc: mx.conc, Noise: mx.noise, Seed: mx.seed}.Spectrum()
}

func mustModel(t testing.TB, set *reference.Set, opt unmix.Options) *unmix.Model {
	t.Helper()
	m, err := unmix.NewModel(set, opt)
	if err != nil {
		t.Fatalf("NewModel: %v", err)
	}
	return m
}
