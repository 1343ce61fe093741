package unmix

import "huesolve/reference"

// Flag is a quality flag on a sample or on one compound's amount: the
// one flag type of the reference set's compounds, the samples and the
// check results.
type Flag = reference.Flag

// Amount is one compound's concentration in a sample. All concentrations
// are in the reference set's unit, scaled to the original sample
// (dilution and path applied).
type Amount struct {
	Compound string  `json:"compound"`
	Unit     string  `json:"unit"`
	Conc     float64 `json:"conc"`
	// SE is the standard error: the sample's own part (its residual or
	// the noise model, and the shift's) and the calibration's (SECal)
	// added in quadrature.
	SE float64 `json:"se"`
	// SECal is the calibration's part of SE: the absorptivities' errors
	// propagated to first order (see calerr.go); for a compound held at
	// zero, that of the unconstrained estimate, which the interval's
	// upper end includes. 0 (left out of files) when the reference set
	// records no absorptivity covariance (Model.CalibrationIncluded).
	SECal float64 `json:"se_calibration"`
	Lo    float64 `json:"ci95_lo"`
	Hi    float64 `json:"ci95_hi"`
	Flags []Flag  `json:"flags,omitempty"`
	// LOD and LOQ are the detection and quantitation limits for this
	// sample (3.3 and 10 sigma / sensitivity, from the design and the
	// noise model).
	LOD float64 `json:"lod"`
	LOQ float64 `json:"loq"`
	// Free and FreeSE are the unconstrained (ordinary least squares)
	// estimate and its standard error from the noise model, for every
	// compound; the result files show them where a compound is held at
	// zero, to tell how far below zero the data would push. FreeSE, like
	// every standard error from the noise model (SE too in a weighted
	// fit), is scaled by the Birge ratio sqrt(ChiSqRed) when ChiSqRed > 1;
	// LOD and LOQ are not.
	Free   float64 `json:"unconstrained"`
	FreeSE float64 `json:"unconstrained_se"`
}

// Result is the outcome for one sample.
type Result struct {
	Sample   string             `json:"sample"`
	Source   string             `json:"source"`
	Amounts  []Amount           `json:"amounts"`
	Baseline map[string]float64 `json:"baseline,omitempty"`
	Flags    []Flag             `json:"flags,omitempty"`
	RMS      float64            `json:"rms_residual"`
	ChiSqRed float64            `json:"reduced_chi_square"`
	DW       float64            `json:"durbin_watson"`
	R2       float64            `json:"r2"`
	Cond     float64            `json:"condition_number"`
	Points   int                `json:"points_used"`
	Dropped  int                `json:"points_dropped"`
	ShiftNM  float64            `json:"shift_nm"`
	// Model is the nuisance model Options.Auto chose for the sample
	// ("offset", "linear+scatter", "offset+shift", ...), and ModelScores
	// what each candidate tried scored; both empty with a fixed model.
	Model string `json:"model,omitempty"`
	// Interferents are the fitted amounts of Options.Interferents, in
	// units of each one's scan as given (1: as much as in that scan, in
	// the cell as measured: no dilution or path applied).
	Interferents []InterferentAmount `json:"interferents,omitempty"`
	ModelScores  []ModelScore        `json:"model_scores,omitempty"`
	// ShiftNM is the applied shift: 0 when none was estimated or the
	// estimate was within shiftSigmas standard errors of zero (not
	// determined; the sample is then fitted unshifted).
	// ShiftSE is the standard error of the shift estimate (0 when no
	// shift was estimated or it is undefined), also when the estimate
	// was not applied: the residual SD over the norm of the shift
	// direction left after projecting out the design. The compounds'
	// standard errors of a shifted sample include the shift's
	// uncertainty, and residual-based figures allow for the noise the
	// interpolation to the shifted grid averages away.
	ShiftSE float64 `json:"shift_se_nm,omitempty"`
	// Dilution and PathCM are the factors applied.
	Dilution float64 `json:"dilution"`
	PathCM   float64 `json:"path_cm"`
	// SuggestDilution, when FlagDilute or an amount's FlagOverRange is
	// set, is a further dilution factor (a step of 1, 1.5, 2, 2.5, 3, 4,
	// 5, 6, 8 times a power of ten) that brings both the sample's highest
	// band below the ceiling and every compound's concentration in the
	// cell to at most the top of its calibrated range (0 otherwise).
	SuggestDilution float64 `json:"suggest_dilution,omitempty"`
	// DarkNM is the first wavelength of the scan read at 0 %T or below
	// (transmittance that cannot be turned into absorbance) among the
	// points the fit needed, and DarkPoints the number of window points
	// lost to such readings; 0 when there are none. Such a sample is
	// flagged FlagSaturated and FlagDilute whatever the count.
	DarkNM     float64 `json:"-"`
	DarkPoints int     `json:"-"`
	// Curves for plots (not in JSON): grid, measured, fitted, residual,
	// per-compound contributions, baseline, expected noise. Filled only
	// with Options.KeepCurves, on the points used by the fit.
	Grid          []float64   `json:"-"`
	Measured      []float64   `json:"-"`
	Fitted        []float64   `json:"-"`
	Residual      []float64   `json:"-"`
	Contributions [][]float64 `json:"-"`
	BaselineCurve []float64   `json:"-"`
	// InterferentCurves are the interferents' fitted parts (with
	// KeepCurves), one per interferent.
	InterferentCurves [][]float64 `json:"-"`
	Noise             []float64   `json:"-"`
	// Gaps are the stretches of the window the fit left out, in
	// wavelength order (with Options.KeepCurves): plots break their
	// lines there instead of drawing across.
	Gaps []Gap `json:"-"`
}

// InterferentAmount is one interferent's fitted amount in a sample.
type InterferentAmount struct {
	Name   string  `json:"name"`
	Amount float64 `json:"amount"`
	SE     float64 `json:"se"`
}

// Gap is a run of consecutive window points left out of a fit.
type Gap struct {
	// LoNM and HiNM are the first and last wavelength left out.
	LoNM, HiNM float64
	// Saturated: the points read above the absorbance ceiling; else a
	// compound's absorptivity is not known there (Model.Excluded).
	Saturated bool
}
