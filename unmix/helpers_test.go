package unmix

import (
	"testing"

	"huesolve/internal/synth"
	"huesolve/reference"
	"huesolve/spectrum"
)

// Synthetic test data (package internal/synth, shared with batch's
// tests): Gaussian bands on a 400-800 nm grid at 1 nm. The data are
// invented; the tests check that the model recovers what was put in,
// which is known exactly.

const (
	testNoise = synth.NoiseAU // AU, the noise added to synthetic samples and in the set's noise model
	testPath  = synth.PathCM  // cm
)

type band = synth.Band

var (
	testBands = synth.Bands()
	testNames = synth.Names()
	gridNM    = synth.Grid
	bandsAt   = synth.Absorbance
	testSet   = synth.Set
)

// mixture is a synthetic sample (see synth.Sample).
type mixture struct {
	conc          []float64
	extra         []band // bands of compounds not in the set (absorbance)
	path          float64
	shift         float64
	offset, slope float64
	noise         float64
	seed          uint64
	grid          []float64
}

func (mx mixture) spectrum() *spectrum.Spectrum {
	return synth.Sample{Conc: mx.conc, Extra: mx.extra, Path: mx.path, Shift: mx.shift,
		Offset: mx.offset, Slope: mx.slope, Noise: mx.noise, Seed: mx.seed, Grid: mx.grid}.Spectrum()
}

func mustModel(t testing.TB, set *reference.Set, opt Options) *Model {
	t.Helper()
	m, err := NewModel(set, opt)
	if err != nil {
		t.Fatalf("NewModel: %v", err)
	}
	return m
}

func mustSolve(t testing.TB, m *Model, s *spectrum.Spectrum, f Factors) *Result {
	t.Helper()
	r, err := m.Solve(s, f)
	if err != nil {
		t.Fatalf("Solve: %v", err)
	}
	return r
}
