package unmix

import (
	"errors"
	"math"
	"testing"
)

// TestCheckTooDark: Check refuses what SolveTo would refuse for too many
// points above the ceiling (a %T file read as absorbance, say), with the
// same error, and passes a sample SolveTo can fit.
func TestCheckTooDark(t *testing.T) {
	m := mustModel(t, testSet(4), Options{})
	good := mixture{conc: []float64{5, 3, 2, 8}, noise: testNoise, seed: 31}.spectrum()
	if err := m.Check(good, Factors{}); err != nil {
		t.Errorf("good sample: %v", err)
	}
	pt := good.Clone()
	for i, a := range good.Values {
		pt.Values[i] = 100 * math.Pow(10, -a) // %T values, taken as absorbance
	}
	cerr := m.Check(pt, Factors{})
	_, serr := m.Solve(pt, Factors{})
	if !errors.Is(cerr, errTooDark) || serr == nil || cerr.Error() != serr.Error() {
		t.Errorf("%%T read as absorbance: Check %v, Solve %v", cerr, serr)
	}
}
