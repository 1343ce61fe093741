package validate

import (
	"math"
	"testing"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// agreeTol bounds the relative difference between the detection limit a
// solve reports for a blank and the one the figures of merit predict for
// the same design. Both are sqrt(sum (P_ki sigma_i)^2) for the same rows,
// columns and noise model, computed by different factorisations (lsq's
// thin QR, validate's SVD projector), so they differ by rounding, about
// cond * eps (1e-14 here); 1e-9 leaves ample room and still catches any
// difference in the noise floor, the rows or the weights.
const agreeTol = 1e-9

// TestSolveLODAgreesWithMerits: for one compound, window, weighting,
// baseline and path, the LOD unmix reports for a blank (absorbance 0,
// where solve's noise model and the merits' are both evaluated at A = 0)
// equals the LOD of FiguresOfMerit. The sets are invented: one with
// constant noise and rows marked unusable, and one with a median noise of
// 0.02 AU and a quiet stretch at 1.5e-5 AU (below a thousandth of the
// median but above reference.NoiseFloorAU, where a floor relative to the
// median would differ from solve's).
func TestSolveLODAgreesWithMerits(t *testing.T) {
	g := grid(400, 700, 2)
	a := gauss(g, 470, 30, 0.05)
	b := gauss(g, 520, 35, 0.04)
	c := add(gauss(g, 600, 25, 0.03), 1, gauss(g, 430, 15, 0.01))
	plain := memSet(g, []string{"a", "b", "c"}, [][]float64{a, b, c}, 0.002)
	for i := range plain.Compounds {
		plain.Compounds[i].Usable = make([]bool, len(g))
		for j := range g {
			plain.Compounds[i].Usable[j] = j%17 != 3+i
		}
	}
	quiet := memSet(g, []string{"a", "b", "c"}, [][]float64{a, b, c}, 0.02)
	for i, w := range g {
		switch {
		case w >= 500 && w < 560:
			quiet.Noise[i] = 1.5e-5
		case w >= 640 && w < 650:
			quiet.Noise[i] = 0 // a zeroed stretch: the floor binds
		}
	}
	for _, tc := range []struct {
		name   string
		set    *reference.Set
		lo, hi float64
		model  baseline.Model
		path   float64
	}{
		{"constant noise", plain, 0, 0, baseline.Model{Degree: 1}, 0},
		{"constant noise, window, path", plain, 420, 660, baseline.Model{Degree: 2}, 2},
		{"quiet stretch", quiet, 0, 0, baseline.Model{Degree: 0}, 0},
		{"quiet stretch, window", quiet, 450, 680, baseline.Model{Degree: 1}, 0.5},
	} {
		for _, weighted := range []bool{false, true} {
			m, err := FiguresOfMerit(tc.set, MeritOptions{WindowLo: tc.lo, WindowHi: tc.hi, Baseline: tc.model, PathCM: tc.path, Weighted: weighted})
			if err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
			um, err := unmix.NewModel(tc.set, unmix.Options{WindowLo: tc.lo, WindowHi: tc.hi, Baseline: tc.model, Weighted: weighted})
			if err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
			blank := &spectrum.Spectrum{Wavelengths: g, Values: make([]float64, len(g)), Quantity: spectrum.Absorbance}
			res, err := um.Solve(blank, unmix.Factors{PathCM: tc.path})
			if err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
			if res.Points != m.Points {
				t.Errorf("%s, weighted %v: solve fits %d points, the merits use %d", tc.name, weighted, res.Points, m.Points)
			}
			for k, am := range res.Amounts {
				want := m.Compounds[k].LOD
				if !(want > 0) || math.Abs(am.LOD-want) > agreeTol*want {
					t.Errorf("%s, weighted %v: %s LOD from solve %.12g, figures of merit %.12g", tc.name, weighted, am.Compound, am.LOD, want)
				}
			}
		}
	}
}
