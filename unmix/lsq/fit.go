package lsq

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Limits callers compare a fit's residual statistics with.
const (
	// DWSevere: a Durbin-Watson statistic below 1 means a lag-one
	// autocorrelation of the residual above about 0.5, structure no noise
	// model explains (common practice).
	DWSevere = 1.0
	// ChiSqSevere: a reduced chi-square above 4 means residuals over twice
	// the expected noise in SD (common practice).
	ChiSqSevere = 4.0
)

// lofAlpha is the one-sided false-alarm rate of the two lack-of-fit tests
// of [Result.lackOfFit] when the model is right and the noise independent.
const lofAlpha = 0.01

// lofTests are the two lack-of-fit tests of a fit's residual.
type lofTests struct {
	// structured: DW is below dwLimit, so neighbouring residuals are
	// correlated: an unmodelled component, a shift or a poor baseline
	// model. worstLo..worstHi of the Result shows where to look.
	structured bool
	// dwLimit is 2 - z(1-lofAlpha) * 2/sqrt(n), the lower one-sided limit
	// of DW under independent residuals from the large-sample normal
	// approximation DW ~ N(2, 4/n) (Durbin & Watson, Biometrika 1950-51;
	// recalled from memory).
	dwLimit float64
	// excess: chiSqRed is above chiSqLimit: the residual is larger than
	// the stated noise (an unmodelled component, or noise understated).
	excess bool
	// chiSqLimit is the upper lofAlpha point of chi-square(DoF)/DoF
	// (gonum distuv); NaN when chiSqRed is NaN (noise unknown or DoF 0).
	chiSqLimit float64
}

// lackOfFit tests the residual of r: Durbin-Watson over row order against
// independence, and the reduced chi-square against the stated noise. A
// statistic that is NaN (zero residual, noise unknown) does not fail its
// test.
func (r *Result) lackOfFit() lofTests {
	n := len(r.Residual)
	lf := lofTests{chiSqLimit: math.NaN(), dwLimit: math.NaN()}
	if n > 0 {
		z := distuv.UnitNormal.Quantile(1 - lofAlpha)
		lf.dwLimit = 2 - z*2/math.Sqrt(float64(n))
		lf.structured = r.DW < lf.dwLimit
	}
	if !math.IsNaN(r.chiSqRed) && r.DoF > 0 {
		k := float64(r.DoF)
		lf.chiSqLimit = distuv.ChiSquared{K: k}.Quantile(1-lofAlpha) / k
		lf.excess = r.chiSqRed > lf.chiSqLimit
	}
	return lf
}
