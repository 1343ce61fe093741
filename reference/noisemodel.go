package reference

import (
	"math"
)

// NoiseModel is the growth of the noise with absorbance measured from
// the calibration standards' residuals (package calibration estimates
// it). The noise SD of a reading of absorbance A at grid point i is
//
//	sigma_i(A) = NoiseFloor(i) * sqrt(1 + 10^(2 (A - KneeA)))
//
// that is sigma² = a_i² + (b_i 10^A)² with b_i = a_i 10^-KneeA: a part
// that does not depend on the light (sigma_A constant) and a part from
// noise constant in transmittance (sigma_A = 0.434 sigma_T 10^A), two
// of the cases of the classic analysis of spectrophotometric precision
// (Rothman, Crouch and Ingle, Anal. Chem. 47 (1975) 1226; recalled from
// memory). KneeA is the absorbance where the two parts are equal. A set
// without a NoiseModel (every set written before it existed) keeps the
// fixed knee WeightKneeA.
type NoiseModel struct {
	// KneeA is the estimated knee (absorbance), KneeSE its standard
	// error (from the curvature of the profile log-likelihood).
	KneeA  float64 `json:"knee_a"`
	KneeSE float64 `json:"knee_se"`
	// Readings is the number of standards' residuals the estimate rests
	// on; MaxA the highest fitted absorbance among them.
	Readings int     `json:"readings"`
	MaxA     float64 `json:"max_a"`
	// Bins summarise the residuals for inspect's table and plot: the
	// residuals divided by their wavelength's base noise, grouped by
	// fitted absorbance.
	Bins []NoiseBin `json:"bins,omitempty"`
}

// NoiseBin is one group of standards' residuals by fitted absorbance.
type NoiseBin struct {
	// LoA and HiA bound the group's fitted absorbance; MeanA is its mean.
	LoA   float64 `json:"lo_a"`
	HiA   float64 `json:"hi_a"`
	MeanA float64 `json:"mean_a"`
	// Ratio is the RMS of residual / NoiseFloor over the group: the
	// measured growth, to be compared with Growth(MeanA).
	Ratio float64 `json:"ratio"`
	N     int     `json:"n"`
}

// MinKneeA and MaxKneeA bound a measured knee: at 0 the noise doubles in
// variance already at A = 0; above MaxCeiling + 1 the growth is below
// 1.005 at every absorbance a set may read.
const (
	MinKneeA = 0
	MaxKneeA = MaxCeiling + 1
)

// GrowthAt is the factor sqrt(1 + 10^(2 (a - knee))) by which the noise of
// a reading of absorbance a exceeds the base noise. A negative a or NaN
// counts as 0.
func GrowthAt(a, knee float64) float64 {
	if !(a > 0) {
		a = 0
	}
	return math.Sqrt(1 + math.Exp(2*math.Ln10*(a-knee)))
}

// Knee is the set's noise knee: the measured one when the set has a
// noise model, else WeightKneeA.
func (s *Set) Knee() float64 {
	if s.NoiseModel != nil {
		return s.NoiseModel.KneeA
	}
	return WeightKneeA
}

// NoiseGrowth is the set's growth factor at absorbance a:
// GrowthAt(a, s.Knee()); for a set without a noise model exactly the
// package's NoiseGrowth (the fixed rule).
func (s *Set) NoiseGrowth(a float64) float64 {
	if s.NoiseModel == nil {
		return NoiseGrowth(a)
	}
	return GrowthAt(a, s.NoiseModel.KneeA)
}

// validateNoiseModel checks a stored noise model: knee in
// [MinKneeA, MaxKneeA], finite non-negative SE, counts and bins sane.
func (s *Set) validateNoiseModel() error {
	m := s.NoiseModel
	if m == nil {
		return nil
	}
	if !finite(m.KneeA) || m.KneeA < MinKneeA || m.KneeA > MaxKneeA {
		return invalid("noise_model knee_a %g is outside %g-%g (absorbance)", m.KneeA, float64(MinKneeA), float64(MaxKneeA))
	}
	if !finite(m.KneeSE) || m.KneeSE < 0 || m.Readings < 1 || !finite(m.MaxA) {
		return invalid("noise_model: knee_se %g, readings %d, max_a %g out of range", m.KneeSE, m.Readings, m.MaxA)
	}
	for _, b := range m.Bins {
		if !finite(b.LoA) || !finite(b.HiA) || !finite(b.MeanA) || !finite(b.Ratio) || b.Ratio < 0 || b.N < 1 || b.LoA > b.HiA {
			return invalid("noise_model: a bin (%g-%g, ratio %g, n %d) is out of range", b.LoA, b.HiA, b.Ratio, b.N)
		}
	}
	return nil
}
