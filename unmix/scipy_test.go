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
// detection limits; for the unweighted cases with every compound off the
// bound, the ordinary least-squares standard errors with s² = RSS/(n-p)
// and the 95 % interval with scipy.stats.t.ppf(0.975, n-p)) and compares.
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
			// SciPy's standard errors and 95 % interval; absent when
			// a compound is at the bound or the case is weighted.
			SE   []float64
			Lo   []float64 `json:"ci95_lo"`
			Hi   []float64 `json:"ci95_hi"`
			DoF  int
			T975 float64
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
		// seTol bounds the relative difference of the standard errors
		// and interval ends from SciPy's (unweighted cases: no tabulated
		// noise model enters). Measured: about 1e-13; the bound leaves
		// room for rounding in other BLAS builds and is still far below
		// the 2-digit display of a standard error.
		seTol = 1e-9
	)
	intervals := 0
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
			if c.SE != nil {
				intervals++
				if dof := r.Points - len(r.Amounts) - len(m.BaselineTerms()); dof != c.DoF {
					t.Errorf("degrees of freedom %d, SciPy n-p = %d", dof, c.DoF)
				}
				for k, a := range r.Amounts {
					// SciPy: OLS SE with s² = RSS/(n-p); interval
					// conc ∓ scipy.stats.t.ppf(0.975, n-p)·SE.
					for _, v := range []struct {
						what      string
						got, want float64
					}{{"SE", a.SE, c.SE[k]}, {"95 % low", a.Lo, c.Lo[k]}, {"95 % high", a.Hi, c.Hi[k]}} {
						if d := math.Abs(v.got/v.want - 1); d > seTol {
							t.Errorf("%s %s = %.10g, SciPy %.10g (t = %.10g on %d dof)", a.Compound, v.what, v.got, v.want, c.T975, c.DoF)
						}
					}
				}
			}
			for j, name := range m.BaselineTerms() {
				if d := math.Abs(r.Baseline[name] - c.BaselineCoef[j]); d > 1e-7 {
					t.Errorf("baseline %s = %.10g, SciPy %.10g", name, r.Baseline[name], c.BaselineCoef[j])
				}
			}
		})
	}
	if intervals < 2 {
		t.Errorf("%d cases carry SciPy's intervals, want 2 (regenerate the fixture)", intervals)
	}
}
