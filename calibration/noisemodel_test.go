package calibration

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
)

// noiseSheet is an invented one-dye calibration whose readings have
// noise SD sqrt(a² + (a 10^(A - knee))²) at true absorbance A: a blank and
// seven levels in triplicate, the highest reaching A = 1.9 at the band
// maximum (500 nm) on a 401-point grid.
func noiseSheet(knee, a, perConc float64, seed uint64) *Sheet {
	rng := rand.New(rand.NewPCG(seed, 11))
	grid := linGrid(350, 1, 401)
	shape := band(grid, 500, 40, 1)
	sh := &Sheet{Path: "noise.csv", Compounds: []string{"dye"}, Units: []string{"mg/L"}}
	line := 2
	for _, c := range []float64{0, 0.04, 0.08, 0.12, 0.16, 0.2, 0.24, 0.28} {
		for rep := range 3 {
			v := make([]float64, len(grid))
			for j := range v {
				tA := perConc * c * shape[j] // absorbance per mg/L at the maximum
				sd := a * math.Sqrt(1+math.Pow(10, 2*(tA-knee)))
				v[j] = tA + sd*rng.NormFloat64()
			}
			r := Row{File: fmt.Sprintf("s%g-%d.csv", c, rep), Line: line, Conc: []float64{c},
				Scan: &spectrum.Spectrum{Wavelengths: grid, Values: v, Quantity: spectrum.Absorbance}}
			line++
			if c == 0 {
				sh.Blanks = append(sh.Blanks, r)
			} else {
				sh.Standards = append(sh.Standards, r)
			}
		}
	}
	return sh
}

// noiseKneeBias is a small allowance beyond 3 standard errors: the
// standards have replicates, so the knee rests on pure error, but
// readings near the ceiling are left out and the group mean stands for
// the true absorbance (seen here: deviations up to 2.5 standard errors).
const noiseKneeBias = 0.05

// TestNoiseModelKnee: standards simulated with a known noise growth give
// back its knee within 3 standard errors plus noiseKneeBias (and the
// errors are small), for
// a knee inside the standards' range and for the fixed rule's own knee;
// the base noise comes back near the simulated one. The model is the one
// of reference.NoiseModel (constant-absorbance plus constant-transmittance
// noise; Rothman, Crouch and Ingle 1975, recalled from memory).
func TestNoiseModelKnee(t *testing.T) {
	for _, tc := range []struct {
		knee float64
		seed uint64
	}{{1.5, 1}, {1.0, 2}, {1.7, 3}, {1.3, 4}} {
		set, err := Build(noiseSheet(tc.knee, 0.001, 10, tc.seed), Options{MinR2: -1, MaxRelSD: -1})
		if err != nil {
			t.Fatal(err)
		}
		m := set.NoiseModel
		if m == nil {
			t.Fatalf("knee %g: no noise model", tc.knee)
		}
		if !(m.KneeSE > 0 && m.KneeSE < 0.15) || math.Abs(m.KneeA-tc.knee) > 3*m.KneeSE+noiseKneeBias {
			t.Errorf("knee %g: estimated %g ± %g", tc.knee, m.KneeA, m.KneeSE)
		}
		t.Logf("knee %g: estimated %.3f ± %.3f from %d readings up to A = %.2f", tc.knee, m.KneeA, m.KneeSE, m.Readings, m.MaxA)
		// Far from the band the growth is nil: the base noise is the
		// simulated 0.001 (RMS over 350-399 nm, within 15 %).
		ms := 0.0
		for _, v := range set.Noise[:50] {
			ms += v * v / 50
		}
		if n := math.Sqrt(ms); math.Abs(n/0.001-1) > 0.15 {
			t.Errorf("knee %g: base noise at 350-399 nm %g, want about 0.001", tc.knee, n)
		}
		if len(m.Bins) == 0 {
			t.Errorf("knee %g: no bins", tc.knee)
		}
		if set.Schema < 2 {
			t.Errorf("a set with a noise model has schema %d, want 2 or more", set.Schema)
		}
	}
}

// TestNoiseModelNeedsHighReadings: standards that stay below A = 1 say
// nothing about the growth, and the set keeps the fixed rule (no model).
func TestNoiseModelNeedsHighReadings(t *testing.T) {
	sh := noiseSheet(1.5, 0.001, 3, 5) // top A about 0.84
	set, err := Build(sh, Options{MinR2: -1, MaxRelSD: -1})
	if err != nil {
		t.Fatal(err)
	}
	if set.NoiseModel != nil {
		t.Errorf("noise model %+v from standards below A = 1", *set.NoiseModel)
	}
	if g := set.NoiseGrowth(1.9); g != reference.NoiseGrowth(1.9) {
		t.Errorf("growth at 1.9: %g, want the fixed rule's %g", g, reference.NoiseGrowth(1.9))
	}
}
