package unmix

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"testing"

	"huesolve/baseline"
	"huesolve/internal/near"
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
	// Tolerances (the fixture's numbers are printed to full precision).
	// The noise model here is tabulated (relative error below 1e-6), so
	// weighted answers differ from SciPy's at that level; unweighted
	// cases involve no tabulated model. Measured worst cases are those
	// of this fixture.
	const (
		// concTolUnweighted bounds |conc - SciPy| (absolute, in
		// concentration units; answers are 0.1-20) for unweighted cases,
		// also the unconstrained NumPy lstsq values and the baseline
		// coefficients. Measured: 9.1e-14; a factor of about 100.
		concTolUnweighted = 1e-11
		// concTolWeighted is the same for weighted cases. Measured:
		// 2.5e-9; a factor of 40.
		concTolWeighted = 1e-7
		// lodTol bounds the relative difference of the detection limits
		// from NumPy pinv: they scale with the tabulated noise model,
		// so the bound is its stated accuracy. Measured: 2.6e-7.
		lodTol = 1e-6
		// seTol bounds the relative difference of the standard errors
		// and interval ends from SciPy's (unweighted cases only).
		// Measured: 1.0e-13; a factor of 100, still far below the
		// 2-digit display of a standard error.
		seTol = 1e-11
	)
	var worstConcU, worstConcW, worstLOD, worstSE float64
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
			concTol, worstConc := concTolUnweighted, &worstConcU
			if c.Weighted {
				concTol, worstConc = concTolWeighted, &worstConcW
			}
			conc := func(what string, got, want float64) {
				t.Helper()
				*worstConc = math.Max(*worstConc, near.Abs(t, what, got, want, concTol))
			}
			for k, a := range r.Amounts {
				// SciPy lsq_linear(method="bvls"), testdata/scipy_mixture.json.
				conc(a.Compound+" (SciPy bvls, "+fx.Source+")", a.Conc, c.Conc[k])
				if (c.Conc[k] == 0) != a.HasFlag(FlagZero) {
					t.Errorf("%s: flags %v, SciPy gives %g", a.Compound, a.Flags, c.Conc[k])
				}
				if a.HasFlag(FlagZero) {
					conc(a.Compound+" unconstrained (NumPy lstsq)", a.Free, c.Unconstrained[k])
				}
				worstLOD = math.Max(worstLOD, near.Rel(t, a.Compound+" LOD (NumPy pinv)", a.LOD, c.LOD[k], lodTol))
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
						what := fmt.Sprintf("%s %s (SciPy, t = %.10g on %d dof)", a.Compound, v.what, c.T975, c.DoF)
						worstSE = math.Max(worstSE, near.Rel(t, what, v.got, v.want, seTol))
					}
				}
			}
			for j, name := range m.BaselineTerms() {
				// SciPy bvls's baseline coefficients.
				conc("baseline "+name+" (SciPy bvls)", r.Baseline[name], c.BaselineCoef[j])
			}
		})
	}
	t.Logf("worst agreement with SciPy: concentration %.2g unweighted, %.2g weighted; LOD %.2g relative; SE and interval %.2g relative",
		worstConcU, worstConcW, worstLOD, worstSE)
	if intervals < 2 {
		t.Errorf("%d cases carry SciPy's intervals, want 2 (regenerate the fixture)", intervals)
	}
}
