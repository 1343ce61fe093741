package unmix

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// pureSet calibrates compounds 1 and 2 of the test bands from pure
// standards at levels (absorbance = eps c + noise, least squares through
// the origin per wavelength), the calibration noise at each grid point
// being calSigma(l). It records what calibrate records: the residual SD
// per wavelength (on n - 2 degrees of freedom) and the absorptivities'
// covariance, here diag(1/Q_1, 1/Q_2) with Q_k = sum of c^2 over compound
// k's standards (the two compounds' columns never share a standard).
func pureSet(g, levels []float64, calSigma func(l float64) float64, rng *rand.Rand) *reference.Set {
	set := &reference.Set{Grid: g, PathCM: 1, Ceiling: 2, Noise: make([]float64, len(g))}
	q := 0.0
	for _, c := range levels {
		q += c * c
	}
	rss := make([]float64, len(g))
	for k := range 2 {
		eps := make([]float64, len(g))
		for i, l := range g {
			a := make([]float64, len(levels))
			num := 0.0
			for n, c := range levels {
				a[n] = c*bandsAt(testBands[k+1], l) + calSigma(l)*rng.NormFloat64()
				num += c * a[n]
			}
			eps[i] = num / q
			for n, c := range levels {
				r := a[n] - eps[i]*c
				rss[i] += r * r
			}
		}
		set.Compounds = append(set.Compounds, reference.Compound{Name: testNames[k], Absorptivity: eps})
	}
	for i := range g {
		set.Noise[i] = math.Sqrt(rss[i] / float64(2*len(levels)-2))
	}
	set.AbsorptivityCov = &reference.AbsorptivityCov{Unscaled: [][]float64{{1 / q, 0, 1 / q}}, Index: make([]int, len(g))}
	return set
}

// TestCalibrationPropagation checks the first-order formula of calerr.go,
// Var_cal(c_k) = sum_i P_ki^2 s_i^2 c' U_i c, against an independent
// computation: a noise-free sample is solved by gonum's least squares
// (QR, mat.Dense.Solve) on 4000 designs whose compound columns are
// perturbed by draws with the recorded covariance; the SD of those
// solutions must match the reported se_calibration. The formula is the
// first-order propagation of errors in the pure-component spectra of
// classical least squares (dc = -P dS c; recalled from memory, derived in
// calerr.go). The SD of 4000 values has a relative standard error of
// 1/sqrt(2*3999) = 1.1 %; second-order terms are far smaller at these
// errors (0.1-1 % of the absorptivities); the tolerance is 4 %.
func TestCalibrationPropagation(t *testing.T) {
	const (
		draws = 4000
		tol   = 0.04
	)
	g := gridNM(400, 700, 3)
	rng := rand.New(rand.NewPCG(5, 6))
	set := pureSet(g, []float64{2, 4, 6, 8, 10}, func(float64) float64 { return 0.004 }, rng)
	// A second matrix for the red half of the grid, as readings left out
	// under the ceiling would make, with a correlation between the two
	// compounds.
	set.AbsorptivityCov.Unscaled = append(set.AbsorptivityCov.Unscaled, []float64{0.02, -0.006, 0.012})
	for i, l := range g {
		if l > 550 {
			set.AbsorptivityCov.Index[i] = 1
		}
	}
	truth := []float64{6, 3}
	s := &spectrum.Spectrum{Wavelengths: g, Quantity: spectrum.Absorbance, Values: make([]float64, len(g))}
	for i := range g {
		s.Values[i] = truth[0]*set.Compounds[0].Absorptivity[i] + truth[1]*set.Compounds[1].Absorptivity[i] + 0.01
	}
	offset, _ := baseline.ParseModel("offset")
	r := mustSolve(t, mustModel(t, set, Options{Baseline: offset}), s, Factors{Dilution: 2})

	// Monte Carlo: S' = S + dS with dS_i ~ N(0, s_i^2 U_i), drawn by the
	// Cholesky factor of U_i (gonum), then c' = argmin ||S' c + b 1 - a||.
	var chol [2]mat.Cholesky
	for j, u := range set.AbsorptivityCov.Unscaled {
		if !chol[j].Factorize(mat.NewSymDense(2, []float64{u[0], u[1], u[1], u[2]})) {
			t.Fatal("covariance not positive definite")
		}
	}
	var lower [2]mat.TriDense
	chol[0].LTo(&lower[0])
	chol[1].LTo(&lower[1])
	n := len(g)
	x := mat.NewDense(n, 3, nil)
	y := mat.NewVecDense(n, s.Values)
	got := [2][]float64{}
	for range draws {
		for i := range n {
			l := &lower[set.AbsorptivityCov.Index[i]]
			z0, z1 := rng.NormFloat64(), rng.NormFloat64()
			d0 := set.Noise[i] * l.At(0, 0) * z0
			d1 := set.Noise[i] * (l.At(1, 0)*z0 + l.At(1, 1)*z1)
			x.Set(i, 0, set.Compounds[0].Absorptivity[i]+d0)
			x.Set(i, 1, set.Compounds[1].Absorptivity[i]+d1)
			x.Set(i, 2, 1)
		}
		var c mat.VecDense
		if err := c.SolveVec(x, y); err != nil {
			t.Fatal(err)
		}
		got[0] = append(got[0], 2*c.AtVec(0))
		got[1] = append(got[1], 2*c.AtVec(1))
	}
	for k := range 2 {
		sd := stat.StdDev(got[k], nil)
		a := r.Amounts[k]
		t.Logf("%s: se_calibration %.5g, Monte Carlo SD %.5g, total SE %.5g", a.Compound, a.SECal, sd, a.SE)
		if !(math.Abs(a.SECal/sd-1) <= tol) {
			t.Errorf("%s: se_calibration %.5g, SD of %d perturbed solutions %.5g", a.Compound, a.SECal, draws, sd)
		}
		if !(a.SE >= a.SECal) {
			t.Errorf("%s: total SE %g below its calibration part %g", a.Compound, a.SE, a.SECal)
		}
	}
}

// TestCalibrationErrorUneven repeats TestCalibrationError's whole chain
// (calibration from noisy pure standards, then a noisy sample, 1500
// times) with the absorptivities' covariance recorded in the set, once
// with the calibration noise even over the grid and once uneven: eight
// times larger on the first compound's band (450-530 nm) than elsewhere.
// There the error the calibration brings sits where the estimate looks
// (P's weight) while the residual averages it over the whole grid, so a
// residual-scaled SE alone misses the spread (measured before the term
// existed: the first compound's mean SE 0.041 for an SD of 0.068, the
// second's 0.025 for 0.017; the even case agreed, 0.0165 for 0.0161);
// with the propagated term and its share taken out of the
// residual (calerr.go) the mean reported SE must match the SD of the
// results within 6 % in both (the SD of 1500 values has a relative
// standard error of 1.8 %).
func TestCalibrationErrorUneven(t *testing.T) {
	const (
		sigma = 0.002
		reps  = 1500
		tol   = 0.06
	)
	g := gridNM(400, 700, 3)
	levels := []float64{2, 4, 6, 8, 10}
	truth := []float64{8, 6}
	none, _ := baseline.ParseModel("none")
	for _, uneven := range []bool{false, true} {
		calSigma := func(l float64) float64 {
			if uneven && l >= 450 && l <= 530 {
				return 8 * sigma
			}
			return sigma
		}
		rng := rand.New(rand.NewPCG(7, 8))
		var got [2][]float64
		var se, seCal [2]float64
		for range reps {
			set := pureSet(g, levels, calSigma, rng)
			// The sample's noise is the instrument's, even over the grid;
			// the set's noise model is its own (uneven), so the fit is
			// unweighted, as solve's default.
			m := mustModel(t, set, Options{Baseline: none})
			s := &spectrum.Spectrum{Wavelengths: g, Quantity: spectrum.Absorbance, Values: make([]float64, len(g))}
			for i, l := range g {
				s.Values[i] = truth[0]*bandsAt(testBands[1], l) + truth[1]*bandsAt(testBands[2], l) + sigma*rng.NormFloat64()
			}
			r := mustSolve(t, m, s, Factors{})
			for k := range 2 {
				got[k] = append(got[k], r.Amounts[k].Conc)
				se[k] += r.Amounts[k].SE / reps
				seCal[k] += r.Amounts[k].SECal / reps
			}
		}
		for k := range 2 {
			sd := stat.StdDev(got[k], nil)
			t.Logf("uneven=%v %s: mean SE %.4g (calibration %.4g), SD of results %.4g", uneven, testNames[k], se[k], seCal[k], sd)
			if !(math.Abs(se[k]/sd-1) <= tol) {
				t.Errorf("uneven=%v %s: mean reported SE %.4g, SD of %d results %.4g", uneven, testNames[k], se[k], reps, sd)
			}
		}
	}
}
