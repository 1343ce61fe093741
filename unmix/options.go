package unmix

import (
	"errors"
	"fmt"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// Defaults and limits. Each tolerance says what it bounds.
const (
	// DefaultMaxShiftNM is the shift limit when Options.MaxShiftNM is 0.
	DefaultMaxShiftNM = 3.0
	// defaultCeiling is the absorbance ceiling when neither the options
	// nor the reference set give one: reference.DefaultCeiling (about 2
	// by common practice: above it stray light bends the response).
	defaultCeiling = reference.DefaultCeiling
	// WeightKneeA is the knee of the noise model, defined once in
	// package reference (see reference.Set.Sigma).
	WeightKneeA = reference.WeightKneeA
	// dropLimitFrac is the fraction of window points above the ceiling
	// beyond which the sample is flagged FlagDilute.
	dropLimitFrac = 0.05
	// poorFitChiSq is the reduced chi-square above which a fit is flagged
	// FlagMisfit: the residual's RMS is more than twice the expected
	// noise. (With 100 or more degrees of freedom a correct noise model
	// gives chi-square above 1.5 with probability below 1e-4; the factor
	// 4 leaves room for an imperfect noise model.) It is the fit
	// verdict's limit, lsq.ChiSqSevere.
	poorFitChiSq = lsq.ChiSqSevere
	// patternDW is the Durbin-Watson statistic below which a residual is
	// flagged FlagPattern. White residuals give about 2 +- 2/sqrt(n)
	// (Durbin & Watson 1950); 1 is far below that for n >= 50 and is still
	// reached by mildly correlated instrument noise only rarely. Not
	// applied when the reference set's pre-treatment includes
	// Savitzky-Golay smoothing or a derivative: the filter makes
	// neighbouring residuals correlated, so even a perfect fit reads far
	// below 2 (see Model.DurbinWatsonFlagged). It is the fit verdict's
	// limit, lsq.DWSevere.
	patternDW = lsq.DWSevere
	// CondLimit is the condition number (unit-norm columns) above which
	// the design is flagged FlagIllCond: the project's warning limit,
	// lsq.CondWarn (condition indexes above 30 signal moderate to strong
	// dependence).
	CondLimit = lsq.CondWarn
	// leakLimit: a compound whose spectrum keeps less than this fraction
	// of its norm after projecting out the baseline terms is flagged
	// FlagMimic: the baseline terms then reproduce more than 3/4 of its
	// sum of squares (common practice). It is lsq.LeakageWarn.
	leakLimit = lsq.LeakageWarn
	// shiftTolNM ends the shift iteration when a step is smaller.
	shiftTolNM = 1e-3
	// shiftMaxIter caps the shift iterations.
	shiftMaxIter = 12
	// shiftNoteNM is the smallest estimated shift that is flagged
	// FlagShift: smaller shifts are within what wavelength settings of
	// UV-Vis instruments repeat to (about 0.1 nm, common practice).
	shiftNoteNM = 0.1
	// shiftSigmas: a shift is applied (and may be flagged) only when it
	// is more than this many standard errors of its estimate
	// (Result.ShiftSE) away from zero, so that noise alone moves a
	// sample with a probability near 5 % (two-sided normal quantile
	// 1.96, rounded up). A nearly blank sample, whose estimate wanders
	// with a standard error of several nm, is left unshifted.
	shiftSigmas = 2.0
	// LODFactor and LOQFactor multiply sigma / sensitivity (ICH Q2).
	LODFactor = 3.3
	LOQFactor = 10.0
	// minDoF is the fewest residual degrees of freedom a fit may have.
	minDoF = 2
	// maskCacheSize bounds the designs cached per model clone.
	maskCacheSize = 64
)

// Options describe the sample model. Zero values mean the documented
// defaults.
type Options struct {
	// WindowLo, WindowHi crop the fit to a wavelength window (nm); both 0
	// means the whole reference grid.
	WindowLo, WindowHi float64
	// Baseline chooses the nuisance terms; with Auto it is the floor
	// the selection starts from.
	Baseline baseline.Model
	// Auto chooses each sample's nuisance model (auto.go): from Baseline
	// (and a shift when Shift is set) terms are added one at a time,
	// the next polynomial degree up to quadratic, the scattering term
	// or a wavelength shift, while an F-test says the data need them.
	// Every candidate fits the window a shift needs (kept MaxShiftNM
	// clear of the grid's ends).
	Auto bool
	// Interferents are coloured substances present in samples but not
	// quantified: each gets a free non-negative amount in units of its
	// scan (Result.Interferents).
	Interferents []Interferent
	// Weighted weights points by the reference set's noise model, with
	// noise growing as 10^A at high absorbance.
	Weighted bool
	// Shift estimates a small wavelength shift of the sample, limited to
	// +-MaxShiftNM (default 3 nm).
	Shift      bool
	MaxShiftNM float64
	// Ceiling overrides the reference set's absorbance ceiling (0: use the set's).
	Ceiling float64
	// Blank, if not nil, is subtracted from every sample (absorbance).
	Blank *spectrum.Spectrum
	// KeepCurves fills the plot curves of each Result (Grid, Measured,
	// ...). Off, a solve allocates only the Result itself.
	KeepCurves bool
}

// Factors are per-sample: dilution factor (1 if 0) and path length in cm
// (the reference set's if 0). NotInSheet says that a sample sheet was
// given but names no such sample, so the factors are the defaults for
// every sample rather than the sample's own: the result is flagged
// FlagNotInSheet.
type Factors struct {
	Dilution   float64
	PathCM     float64
	NotInSheet bool
}

// Plausible per-sample factors. A path or dilution outside these bounds
// is almost surely a typing slip (a unit or an exponent wrong), and so
// far out that the scaled amounts could overflow to infinity: Solve
// refuses it rather than report amounts no one can use.
const (
	// MinPathCM and MaxPathCM bound the cell path length in cm: 1 µm
	// (thinner than any demountable cell) to 1 m (longer than any
	// long-path cell used for liquids); the same limits bound a
	// reference set's path (reference.MinPathCM, reference.MaxPathCM).
	MinPathCM = reference.MinPathCM
	MaxPathCM = reference.MaxPathCM
	// MinDilution and MaxDilution bound the dilution factor: a
	// millionfold concentration to a billionfold dilution.
	MinDilution = 1e-6
	MaxDilution = 1e9
)

// CheckFactors returns an error wrapping ErrFactor when a non-zero
// factor of f lies outside [MinDilution, MaxDilution] or
// [MinPathCM, MaxPathCM], or is not a number. Zero fields (defaults)
// pass.
func CheckFactors(f Factors) error {
	if f.Dilution != 0 && !(f.Dilution >= MinDilution && f.Dilution <= MaxDilution) {
		return fmt.Errorf("%w: dilution factor %g is outside %g to %g", ErrFactor, f.Dilution, float64(MinDilution), float64(MaxDilution))
	}
	if f.PathCM != 0 && !(f.PathCM >= MinPathCM && f.PathCM <= MaxPathCM) {
		return fmt.Errorf("%w: path length %g cm is outside %g to %g cm", ErrFactor, f.PathCM, float64(MinPathCM), float64(MaxPathCM))
	}
	return nil
}

// windowError is NewModel's error for a window that reaches outside the
// reference grid: its message names the window as the cause, and it is
// ErrCoverage for errors.Is. msg is the text without the package prefix.
type windowError struct{ msg string }

func (e *windowError) Error() string        { return "unmix: " + e.msg }
func (e *windowError) Unprefixed() string   { return e.msg }
func (e *windowError) Is(target error) bool { return target == ErrCoverage }

// Errors returned by NewModel and Solve, tested with errors.Is.
var (
	// errSet: the reference set is unusable (inconsistent lengths,
	// non-finite numbers, no compounds, no noise model).
	errSet = errors.New("unusable reference set")
	// ErrCoverage: a scan or blank does not cover the wavelengths the
	// model needs.
	ErrCoverage = errors.New("scan does not cover the model's wavelengths")
	// errTooDark: so many points are above the ceiling that no fit is
	// possible.
	errTooDark = errors.New("too few points below the absorbance ceiling")
	// ErrFactor: a dilution factor or path length is not a positive
	// finite number.
	ErrFactor = errors.New("bad sample factor")
)
