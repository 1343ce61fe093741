package unmix

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// TestAgainstSciPy solves the mixtures of testdata/scipy_mixture.json
// (made by testdata/gen_mixture.py with SciPy 1.10.1 / NumPy 1.24.2:
// scipy.optimize.lsq_linear(method="bvls") for the constrained fit,
// numpy.linalg.lstsq for the unconstrained one, numpy.linalg.pinv for the
// detection limits) and compares.
func TestAgainstSciPy(t *testing.T) {
	data, err := os.ReadFile("testdata/scipy_mixture.json")
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		Source       string
		Grid         []float64
		Absorptivity [][]float64
		Noise        []float64
		Cases        []struct {
			Name          string
			Baseline      string
			Weighted      bool
			Sample        []float64
			Conc          []float64
			BaselineCoef  []float64 `json:"baseline_coef"`
			Unconstrained []float64
			LOD           []float64
		}
	}
	if err := json.Unmarshal(data, &fx); err != nil {
		t.Fatal(err)
	}
	set := &reference.Set{Grid: fx.Grid, PathCM: 1, Ceiling: 2, Noise: fx.Noise}
	for k, a := range fx.Absorptivity {
		set.Compounds = append(set.Compounds, reference.Compound{Name: testNames[k], Absorptivity: a})
	}
	// Tolerances: the fixture's numbers are printed to full precision;
	// the noise model here is tabulated (relative error below 1e-6), so
	// weighted answers may differ at that level.
	const (
		concTol = 1e-7 // absolute, in concentration units (answers are 0.1-20)
		lodTol  = 1e-6 // relative
	)
	for _, c := range fx.Cases {
		t.Run(c.Name, func(t *testing.T) {
			bl, err := baseline.ParseModel(c.Baseline)
			if err != nil {
				t.Fatal(err)
			}
			m := mustModel(t, set, Options{Baseline: bl, Weighted: c.Weighted})
			s := &spectrum.Spectrum{Name: c.Name, Wavelengths: fx.Grid, Values: c.Sample, Quantity: spectrum.Absorbance}
			r := mustSolve(t, m, s, Factors{})
			for k, a := range r.Amounts {
				if d := math.Abs(a.Conc - c.Conc[k]); d > concTol {
					t.Errorf("%s = %.10g, SciPy bvls %.10g (%s)", a.Compound, a.Conc, c.Conc[k], fx.Source)
				}
				if (c.Conc[k] == 0) != a.HasFlag(FlagZero) {
					t.Errorf("%s: flags %v, SciPy gives %g", a.Compound, a.Flags, c.Conc[k])
				}
				if a.HasFlag(FlagZero) && math.Abs(a.Free-c.Unconstrained[k]) > concTol {
					t.Errorf("%s unconstrained = %.10g, NumPy lstsq %.10g", a.Compound, a.Free, c.Unconstrained[k])
				}
				if d := math.Abs(a.LOD/c.LOD[k] - 1); d > lodTol {
					t.Errorf("%s LOD = %.10g, NumPy pinv %.10g", a.Compound, a.LOD, c.LOD[k])
				}
			}
			for j, name := range m.BaselineTerms() {
				if d := math.Abs(r.Baseline[name] - c.BaselineCoef[j]); d > 1e-7 {
					t.Errorf("baseline %s = %.10g, SciPy %.10g", name, r.Baseline[name], c.BaselineCoef[j])
				}
			}
		})
	}
}
