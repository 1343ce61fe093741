package lsq

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Lack-of-fit thresholds (see [Result.LackOfFit]).
const (
	// LOFAlpha is the one-sided false-alarm rate of the two lack-of-fit
	// tests when the model is right and the noise independent.
	LOFAlpha = 0.01
	// DWSevere: a Durbin-Watson statistic below 1 means a lag-one
	// autocorrelation of the residual above about 0.5, structure no noise
	// model explains (common practice).
	DWSevere = 1.0
	// ChiSqSevere: a reduced chi-square above 4 means residuals over twice
	// the expected noise in SD (common practice).
	ChiSqSevere = 4.0
)

// LackOfFit is a verdict on a fit's residual.
type LackOfFit struct {
	// Verdict is Warn when either test below fails, Refuse when DW <
	// DWSevere or ChiSqRed > ChiSqSevere, Sound otherwise.
	Verdict Verdict
	// Structured: DW is below DWLimit, so neighbouring residuals are
	// correlated: an unmodelled component, a shift or a poor baseline
	// model. WorstLo..WorstHi of the Result shows where to look.
	Structured bool
	// DWLimit is 2 - z(1-LOFAlpha) * 2/sqrt(n), the lower one-sided limit
	// of DW under independent residuals from the large-sample normal
	// approximation DW ~ N(2, 4/n) (Durbin & Watson, Biometrika 1950-51;
	// recalled from memory).
	DWLimit float64
	// Excess: ChiSqRed is above ChiSqLimit: the residual is larger than
	// the stated noise (an unmodelled component, or noise understated).
	Excess bool
	// ChiSqLimit is the upper LOFAlpha point of chi-square(DoF)/DoF
	// (gonum distuv); NaN when ChiSqRed is NaN (noise unknown or DoF 0).
	ChiSqLimit float64
}

// LackOfFit grades the residual of r: Durbin-Watson over row order against
// independence, and the reduced chi-square against the stated noise. A
// statistic that is NaN (zero residual, noise unknown) does not fail its
// test.
func (r *Result) LackOfFit() LackOfFit {
	n := len(r.Residual)
	lf := LackOfFit{ChiSqLimit: math.NaN(), DWLimit: math.NaN()}
	if n > 0 {
		z := distuv.UnitNormal.Quantile(1 - LOFAlpha)
		lf.DWLimit = 2 - z*2/math.Sqrt(float64(n))
		lf.Structured = r.DW < lf.DWLimit
	}
	if !math.IsNaN(r.ChiSqRed) && r.DoF > 0 {
		k := float64(r.DoF)
		lf.ChiSqLimit = distuv.ChiSquared{K: k}.Quantile(1-LOFAlpha) / k
		lf.Excess = r.ChiSqRed > lf.ChiSqLimit
	}
	switch {
	case r.DW < DWSevere || r.ChiSqRed > ChiSqSevere:
		lf.Verdict = Refuse
	case lf.Structured || lf.Excess:
		lf.Verdict = Warn
	}
	return lf
}
