package validate

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"

	"huesolve/baseline"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// The LOD from the figures of merit must agree with the spread of results
// of repeated blank samples: LOD = 3.3 σ/SEN is 3.3 standard deviations of
// a blank-level result (ICH Q2(R2), "based on the standard deviation of
// the response and the slope"). 2000 synthetic blanks (white noise of SD
// σ, fixed seed) are solved with unmix; the SD of their unconstrained
// estimates is compared with LOD/3.3. The relative standard error of an SD
// from 2000 values is 1/√(2·1999) = 1.6 %; the tolerance is 6 % (almost
// four of those).
func TestLODAgreesWithBlankSpread(t *testing.T) {
	const (
		sigma  = 0.002
		blanks = 2000
		tol    = 0.06
	)
	g := grid(400, 700, 2)
	a := gauss(g, 470, 30, 0.05)
	b := gauss(g, 520, 35, 0.04)
	c := add(gauss(g, 560, 25, 0.03), 1, gauss(g, 430, 15, 0.01))
	set := memSet(g, []string{"a", "b", "c"}, [][]float64{a, b, c}, sigma)
	model := baseline.Model{Degree: 1}
	m, err := FiguresOfMerit(set, MeritOptions{Baseline: model})
	if err != nil {
		t.Fatal(err)
	}
	um, err := unmix.NewModel(set, unmix.Options{Baseline: model})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	free := make([][]float64, 3)
	s := &spectrum.Spectrum{Wavelengths: g, Values: make([]float64, len(g)), Quantity: spectrum.Absorbance}
	for range blanks {
		for i := range s.Values {
			s.Values[i] = sigma * rng.NormFloat64()
		}
		res, err := um.Solve(s, unmix.Factors{})
		if err != nil {
			t.Fatal(err)
		}
		for k, am := range res.Amounts {
			free[k] = append(free[k], am.Free)
			// Same noise model as solve at A = 0; solve evaluates it at
			// the sample's own (noisy, clipped at 0) absorbance, so
			// they differ by a few 1e-5 relative.
			if math.Abs(am.LOD-m.Compounds[k].LOD) > 1e-3*m.Compounds[k].LOD {
				t.Fatalf("%s: LOD per sample %g, figures of merit %g", am.Compound, am.LOD, m.Compounds[k].LOD)
			}
		}
	}
	for k, cm := range m.Compounds {
		sd := stat.StdDev(free[k], nil)
		got := LODFactor * sd
		t.Logf("%s: selectivity %.3f, LOD %.4g, 3.3 × SD of %d blanks %.4g", cm.Compound, cm.Selectivity, cm.LOD, blanks, got)
		if math.Abs(got-cm.LOD) > tol*cm.LOD {
			t.Errorf("%s: 3.3 × SD of blank results = %.4g, LOD = %.4g (tolerance %g %%)", cm.Compound, got, cm.LOD, 100*tol)
		}
	}
}
