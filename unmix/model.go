// Package unmix solves sample spectra against a reference set: it builds
// the design (reference absorptivities times path length, plus baseline
// terms), fits each sample by non-negative least squares (package lsq),
// and turns the fit into concentrations with uncertainties, fit figures
// and quality flags.
//
// # The sample model
//
// A sample scan is converted to absorbance, brought onto the reference
// grid by linear interpolation (never extrapolated), blank-corrected,
// given the reference set's pre-treatment, cropped to the window and
// fitted as
//
//	A(l) = sum_k b_ref eps_k(l) c_k + sum_j beta_j B_j(l) + e(l)
//
// with c_k >= 0 (compounds) and beta_j free (polynomial baseline) or
// non-negative (scattering term). Concentrations are then scaled to the
// sample: c = c_fit * (b_ref / b_sample) * dilution.
//
// Points whose raw absorbance exceeds the ceiling are left out. The noise
// model is
//
//	sigma(l) = noise(l) * sqrt(1 + 10^(2 (A(l) - WeightKneeA)))
//
// where noise(l) is the reference set's calibration noise and A(l) the
// sample's raw absorbance: flat at low absorbance, growing as 10^A where
// photometric noise dominates (s_A = 0.434 s_T / T for constant
// transmittance noise s_T). With Options.Weighted the fit weights by
// 1/sigma^2; either way the reduced chi-square, the detection limits and
// the plotted noise band use sigma.
//
// # Uncertainty
//
// Unweighted, standard errors are the least-squares ones scaled by the
// residual variance; weighted, they come from the noise model, scaled up
// by sqrt(chi-square) when that exceeds 1. Either way they carry the
// error the absorptivities bring from calibration, which adds to the
// residual as it adds to the variance of the concentrations (a simulation
// in the tests checks this). Intervals are c +- t(0.975, DoF) SE, cut at
// zero; a compound held at zero reports [0, max(0, u + t SE_u)] with u
// the unconstrained estimate. Detection and quantitation limits are 3.3
// and 10 times the noise-model standard deviation of the unconstrained
// estimate (sigma / net analyte signal for constant noise). Per-compound
// calibration intercepts (Compound.Intercept) are not used.
//
// # Cost
//
// The design is factorised once per model. A sample with points above the
// ceiling needs a design on fewer rows; those are cached by mask per
// model clone (up to maskCacheSize). A weighted fit depends on the
// sample's own absorbance, so it factors its own design for every sample
// (two thin QR factorisations of n x p, about the cost of the solve
// itself for p = 5).
package unmix

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// Defaults and limits. Each tolerance says what it bounds.
const (
	// DefaultMaxShiftNM is the shift limit when Options.MaxShiftNM is 0.
	DefaultMaxShiftNM = 3.0
	// DefaultCeiling is the absorbance ceiling when neither the options
	// nor the reference set give one: reference.DefaultCeiling (about 2
	// by common practice: above it stray light bends the response).
	DefaultCeiling = reference.DefaultCeiling
	// NoiseFloorAU is the smallest noise sigma (absorbance units) used
	// anywhere: it keeps weights and chi-square finite where a reference
	// set's noise is zero (a zeroed region, say). Typical UV-Vis
	// photometric noise is near 1e-4 AU (common practice), so the floor
	// does not bind on real data.
	NoiseFloorAU = 1e-5
	// WeightKneeA is the absorbance above which the noise model grows as
	// 10^A (below it the calibration noise holds). Photometric noise
	// takes over near A = 1 on common instruments (common practice).
	WeightKneeA = 1.0
	// DropLimitFrac is the fraction of window points above the ceiling
	// beyond which the sample is flagged FlagDilute.
	DropLimitFrac = 0.05
	// PoorFitChiSq is the reduced chi-square above which a fit is flagged
	// FlagMisfit: the residual's RMS is more than twice the expected
	// noise. (With 100 or more degrees of freedom a correct noise model
	// gives chi-square above 1.5 with probability below 1e-4; the factor
	// 4 leaves room for an imperfect noise model.) It is the fit
	// verdict's limit, lsq.ChiSqSevere.
	PoorFitChiSq = lsq.ChiSqSevere
	// PatternDW is the Durbin-Watson statistic below which a residual is
	// flagged FlagPattern. White residuals give about 2 +- 2/sqrt(n)
	// (Durbin & Watson 1950); 1 is far below that for n >= 50 and is still
	// reached by mildly correlated instrument noise only rarely. Not
	// applied when the reference set's pre-treatment includes
	// Savitzky-Golay smoothing or a derivative: the filter makes
	// neighbouring residuals correlated, so even a perfect fit reads far
	// below 2 (see Model.DurbinWatsonFlagged). It is the fit verdict's
	// limit, lsq.DWSevere.
	PatternDW = lsq.DWSevere
	// CondLimit is the condition number (unit-norm columns) above which
	// the design is flagged FlagIllCond. Belsley, Kuh & Welsch,
	// Regression Diagnostics (1980): condition indexes above 30 signal
	// moderate to strong dependence (recalled from memory). Two unit
	// columns at condition 30 correlate at 0.998, inflating variances
	// about 250-fold.
	CondLimit = 30.0
	// LeakLimit: a compound whose spectrum keeps less than this fraction
	// of its norm after projecting out the baseline terms is flagged
	// FlagMimic: the baseline terms then reproduce more than 3/4 of its
	// sum of squares (common practice). It is lsq.LeakageWarn.
	LeakLimit = lsq.LeakageWarn
	// ShiftTolNM ends the shift iteration when a step is smaller.
	ShiftTolNM = 1e-3
	// ShiftMaxIter caps the shift iterations.
	ShiftMaxIter = 12
	// ShiftNoteNM is the smallest estimated shift that is flagged
	// FlagShift: smaller shifts are within what wavelength settings of
	// UV-Vis instruments repeat to (about 0.1 nm, common practice).
	ShiftNoteNM = 0.1
	// ShiftSigmas: a shift is applied (and may be flagged) only when it
	// is more than this many standard errors of its estimate
	// (Result.ShiftSE) away from zero, so that noise alone moves a
	// sample with a probability near 5 % (two-sided normal quantile
	// 1.96, rounded up). A nearly blank sample, whose estimate wanders
	// with a standard error of several nm, is left unshifted.
	ShiftSigmas = 2.0
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
	// Baseline chooses the nuisance terms.
	Baseline baseline.Model
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
// (the reference set's if 0).
type Factors struct {
	Dilution float64
	PathCM   float64
}

// Plausible per-sample factors. A path or dilution outside these bounds
// is almost surely a typing slip (a unit or an exponent wrong), and so
// far out that the scaled amounts could overflow to infinity: Solve
// refuses it rather than report amounts no one can use.
const (
	// MinPathCM and MaxPathCM bound the cell path length in cm: 1 µm
	// (thinner than any demountable cell) to 1 m (longer than any
	// long-path cell used for liquids).
	MinPathCM = 1e-4
	MaxPathCM = 100
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

// Flag is a quality flag on a sample or on one compound's amount.
type Flag string

// Amount is one compound's concentration in a sample. All concentrations
// are in the reference set's unit, scaled to the original sample
// (dilution and path applied).
type Amount struct {
	Compound string  `json:"compound"`
	Unit     string  `json:"unit"`
	Conc     float64 `json:"conc"`
	SE       float64 `json:"se"`
	Lo       float64 `json:"ci95_lo"`
	Hi       float64 `json:"ci95_hi"`
	Flags    []Flag  `json:"flags,omitempty"`
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
	// ShiftNM is the applied shift: 0 when none was estimated or the
	// estimate was within ShiftSigmas standard errors of zero (not
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
	Noise         []float64   `json:"-"`
	// Gaps are the stretches of the window the fit left out, in
	// wavelength order (with Options.KeepCurves): plots break their
	// lines there instead of drawing across.
	Gaps []Gap `json:"-"`
}

// windowError is NewModel's error for a window that reaches outside the
// reference grid: its message names the window as the cause, and it is
// ErrCoverage for errors.Is.
type windowError struct{ msg string }

func (e *windowError) Error() string        { return e.msg }
func (e *windowError) Is(target error) bool { return target == ErrCoverage }

// Errors returned by NewModel and Solve, tested with errors.Is.
var (
	// ErrSet: the reference set is unusable (inconsistent lengths,
	// non-finite numbers, no compounds, no noise model).
	ErrSet = errors.New("unusable reference set")
	// ErrCoverage: a scan or blank does not cover the wavelengths the
	// model needs.
	ErrCoverage = errors.New("scan does not cover the model's wavelengths")
	// ErrTooDark: so many points are above the ceiling that no fit is
	// possible.
	ErrTooDark = errors.New("too few points below the absorbance ceiling")
	// ErrFactor: a dilution factor or path length is not a positive
	// finite number.
	ErrFactor = errors.New("bad sample factor")
)

// shared is the immutable part of a model, shared by its clones.
type shared struct {
	set     *reference.Set
	opt     Options
	grid    []float64 // set grid
	lo, hi  int       // window [lo, hi) on the set grid
	wlo     int       // work range [wlo, whi) on the set grid
	whi     int       // (the whole grid with pre-treatment, else the window)
	needLo  float64   // nm a scan must cover
	needHi  float64
	rows0   []int       // usable window rows (reference set's Usable)
	cols    [][]float64 // design columns on the window (compounds, then baseline)
	dcols   [][]float64 // d/dl of compound columns on the window (shift only)
	nonneg  []bool
	ncomp   int
	names   []string // baseline term names
	noise   []float64
	ceiling float64
	maxStd  []float64 // highest concentration in the cell not flagged FlagOverRange
	smooth  bool      // pre-treatment correlates neighbouring residuals (Savitzky-Golay)
	// reach is how many grid points either side a reading above the
	// ceiling spreads into through the Savitzky-Golay steps (the sum of
	// their half-windows, as the filters are applied one after another).
	reach   int
	blankWL []float64 // blank in absorbance on its own grid
	blankA  []float64
	blank0  []float64 // blank on the work grid, unshifted
	base    *design
	// gtab tabulates the noise growth sqrt(1 + 10^(2 (A - WeightKneeA)))
	// at A = i * growthStep for A in [0, ceiling].
	gtab []float64
}

// growthStep is the absorbance step of the noise-growth table; linear
// interpolation in it is off by less than 1e-6 relative (the second
// derivative of the growth is at most (ln 10)^2 times its value).
const growthStep = 1.0 / 1024

// growth returns sqrt(1 + 10^(2 (a - WeightKneeA))) for a in [0, ceiling]
// by interpolation in the table.
func (sh *shared) growth(a float64) float64 {
	x := a / growthStep
	i := int(x)
	if i >= len(sh.gtab)-1 {
		i = len(sh.gtab) - 2
	}
	t := x - float64(i)
	return sh.gtab[i] + t*(sh.gtab[i+1]-sh.gtab[i])
}

func growthExact(a float64) float64 {
	return math.Sqrt(1 + math.Exp(2*math.Ln10*(a-WeightKneeA)))
}

// Model is a reference set plus options, set up once and used for many
// samples. A Model is not safe for concurrent use: give each goroutine
// its own Clone, which shares the factorised design.
type Model struct {
	set   *reference.Set
	opt   Options
	sh    *shared
	base  *design // this clone's design on all usable rows
	cache map[string]*design
	tq    map[int]float64
	ws    workspace
}

// workspace is per-clone scratch storage reused across samples.
type workspace struct {
	abs    []float64 // sample absorbance on its own grid
	raw    []float64 // raw absorbance on the work grid (at the current shift)
	net    []float64 // blank-corrected
	blk    []float64 // blank on the work grid at the current shift
	y      []float64 // fit rows
	sig    []float64 // noise sigma on the window
	sr     []float64 // noise sigma on the fit rows
	g      []float64 // shift direction on the fit rows
	rows   []int
	key    []byte
	res    lsq.Result
	gridOK []float64 // last sample grid found equal to the set grid
	// darkNM and darkPts: the first wavelength of the current scan read
	// at 0 %T or below that the fit needed, and the window points lost
	// to such readings (0 if none).
	darkNM   float64
	darkPts  int
	tainted  []bool  // work-grid points within sh.reach of a reading above the ceiling
	shiftDen float64 // squared norm of the projected shift direction
	shiftSE  float64 // standard error of the estimated shift (NaN if undefined)
	// interpVar is interpNoise for the applied shift (1 when none).
	interpVar float64
	// pg holds b = X+ g, the compounds' (and baseline terms') response
	// to the shift direction, from the last shift iteration.
	pg []float64
}

// NewModel checks the options against the set and builds the design. It
// returns an error wrapping ErrSet for an inconsistent set, ErrCoverage
// for a window or blank outside the set's grid, and the solver's error
// when the design's columns are linearly dependent.
func NewModel(set *reference.Set, opt Options) (*Model, error) {
	if set == nil {
		return nil, fmt.Errorf("unmix: %w: nil set", ErrSet)
	}
	if err := checkSet(set); err != nil {
		return nil, err
	}
	sh := &shared{set: set, opt: opt, grid: set.Grid, ncomp: len(set.Compounds)}
	if sh.opt.MaxShiftNM == 0 {
		sh.opt.MaxShiftNM = DefaultMaxShiftNM
	}
	if !(sh.opt.MaxShiftNM > 0) || math.IsInf(sh.opt.MaxShiftNM, 0) {
		return nil, fmt.Errorf("unmix: the shift limit must be a positive number of nm, not %g", opt.MaxShiftNM)
	}
	sh.ceiling = opt.Ceiling
	if sh.ceiling == 0 {
		sh.ceiling = set.Ceiling
	}
	if sh.ceiling == 0 {
		sh.ceiling = DefaultCeiling
	}
	if !(sh.ceiling > 0) || math.IsInf(sh.ceiling, 0) {
		return nil, fmt.Errorf("unmix: the absorbance ceiling must be positive, not %g", sh.ceiling)
	}
	nt := int(math.Ceil(sh.ceiling/growthStep)) + 2
	sh.gtab = make([]float64, nt)
	for i := range sh.gtab {
		sh.gtab[i] = growthExact(float64(i) * growthStep)
	}
	g := set.Grid
	glo, ghi := g[0], g[len(g)-1]
	wlo, whi := opt.WindowLo, opt.WindowHi
	if wlo == 0 && whi == 0 {
		wlo, whi = glo, ghi
	}
	if !(whi > wlo) {
		return nil, fmt.Errorf("unmix: window %g-%g nm is empty", wlo, whi)
	}
	slack := spectrum.GridSlack * (ghi - glo)
	if wlo < glo-slack || whi > ghi+slack {
		how := "lies partly"
		if whi <= glo || wlo >= ghi {
			how = "lies"
		}
		return nil, &windowError{fmt.Sprintf("unmix: the window %g-%g nm %s outside the reference grid %g-%g nm: choose a window within %g-%g nm", wlo, whi, how, glo, ghi, glo, ghi)}
	}
	if opt.Shift {
		wlo = max(wlo, glo+sh.opt.MaxShiftNM)
		whi = min(whi, ghi-sh.opt.MaxShiftNM)
	}
	sh.lo = searchGE(g, wlo-slack)
	sh.hi = searchGT(g, whi+slack)
	if sh.hi-sh.lo < 2 {
		return nil, fmt.Errorf("unmix: window %g-%g nm holds %d reference points: %w", wlo, whi, max(sh.hi-sh.lo, 0), ErrCoverage)
	}
	wl := g[sh.lo:sh.hi]
	sh.reach = baseline.Reach(set.Pretreat)
	sh.smooth = sh.reach > 0
	if len(set.Pretreat) > 0 {
		sh.wlo, sh.whi = 0, len(g)
		sh.needLo, sh.needHi = glo, ghi
	} else {
		sh.wlo, sh.whi = sh.lo, sh.hi
		sh.needLo, sh.needHi = wl[0], wl[len(wl)-1]
		if opt.Shift {
			sh.needLo -= sh.opt.MaxShiftNM
			sh.needHi += sh.opt.MaxShiftNM
		}
	}

	// Rows every compound's absorptivity is known at.
	for r := range wl {
		ok := true
		for _, c := range set.Compounds {
			if len(c.Usable) == len(g) && !c.Usable[sh.lo+r] {
				ok = false
			}
		}
		if ok {
			sh.rows0 = append(sh.rows0, r)
		}
	}

	// Design columns: absorptivity x reference path, then baseline terms.
	for _, c := range set.Compounds {
		col := make([]float64, len(wl))
		for r := range wl {
			col[r] = c.Absorptivity[sh.lo+r] * set.PathCM
		}
		sh.cols = append(sh.cols, col)
		sh.nonneg = append(sh.nonneg, true)
		sh.maxStd = append(sh.maxStd, upperLimit(c))
	}
	if err := opt.Baseline.Check(wl); err != nil {
		return nil, fmt.Errorf("unmix: %w", err)
	}
	bcols, bnn, bnames := opt.Baseline.Columns(wl)
	if len(bcols) != len(bnn) || len(bcols) != len(bnames) {
		return nil, fmt.Errorf("unmix: baseline %q gave %d columns, %d signs, %d names", opt.Baseline, len(bcols), len(bnn), len(bnames))
	}
	for j, c := range bcols {
		if len(c) != len(wl) {
			return nil, fmt.Errorf("unmix: baseline term %s has %d values for %d wavelengths", bnames[j], len(c), len(wl))
		}
	}
	sh.cols = append(sh.cols, bcols...)
	sh.nonneg = append(sh.nonneg, bnn...)
	sh.names = bnames
	if opt.Shift {
		for k := range sh.ncomp {
			sh.dcols = append(sh.dcols, derivative(set.Compounds[k].Absorptivity, g, sh.lo, sh.hi, set.PathCM))
		}
	}
	sh.noise = make([]float64, len(wl))
	for r := range wl {
		sh.noise[r] = math.Max(set.Noise[sh.lo+r], NoiseFloorAU)
	}
	if opt.Blank != nil {
		if err := sh.setBlank(opt.Blank); err != nil {
			return nil, err
		}
	}
	var err error
	if sh.base, err = sh.buildDesign(sh.rows0, nil); err != nil {
		return nil, fmt.Errorf("unmix: window %g-%g nm, baseline %q: %w", wl[0], wl[len(wl)-1], opt.Baseline, err)
	}
	m := &Model{set: set, opt: sh.opt, sh: sh}
	m.init(sh.base)
	return m, nil
}

// upperLimit is the highest concentration of c a result may have in the
// cell without FlagOverRange: the top of the linear range where the
// calibration states one below the highest standard, else the highest
// standard (0: unknown, never flagged).
func upperLimit(c reference.Compound) float64 {
	hi := c.MaxStandard
	if r := c.Linearity.RangeHi; r > 0 && !math.IsInf(r, 0) && (hi <= 0 || r < hi) {
		hi = r
	}
	return hi
}

// DurbinWatsonFlagged reports whether a low Durbin-Watson statistic
// raises FlagPattern with this model: not when the reference set's
// pre-treatment smooths or differentiates (Savitzky-Golay), which
// correlates neighbouring residuals by construction.
func (m *Model) DurbinWatsonFlagged() bool { return !m.sh.smooth }

// init gives a model its own caches and workspace.
func (m *Model) init(base *design) {
	m.base = base
	m.cache = map[string]*design{"": base}
	m.tq = map[int]float64{}
	m.ws = workspace{}
}

// Clone returns a model sharing the design with fresh workspace, for
// another goroutine.
func (m *Model) Clone() *Model {
	c := &Model{set: m.set, opt: m.opt, sh: m.sh}
	b := *m.sh.base
	b.solver = m.sh.base.solver.Clone()
	c.init(&b)
	return c
}

// Compounds returns the compound names in result order.
func (m *Model) Compounds() []string {
	out := make([]string, m.sh.ncomp)
	for k, c := range m.set.Compounds {
		out[k] = c.Name
	}
	return out
}

// Units returns the concentration unit of each compound.
func (m *Model) Units() []string {
	out := make([]string, m.sh.ncomp)
	for k, c := range m.set.Compounds {
		out[k] = c.Unit
	}
	return out
}

// BaselineTerms returns the names of the baseline coefficients (keys of
// Result.Baseline) in design order.
func (m *Model) BaselineTerms() []string { return slices.Clone(m.sh.names) }

// Window returns the wavelengths of the fit window.
func (m *Model) Window() []float64 { return slices.Clone(m.sh.grid[m.sh.lo:m.sh.hi]) }

// Gap is a run of consecutive window points left out of a fit.
type Gap struct {
	// LoNM and HiNM are the first and last wavelength left out.
	LoNM, HiNM float64
	// Saturated: the points read above the absorbance ceiling; else a
	// compound's absorptivity is not known there (Model.Excluded).
	Saturated bool
}

// Excluded is the number of window points left out for every sample
// because a compound's absorptivity is not known there.
func (m *Model) Excluded() int { return m.sh.hi - m.sh.lo - len(m.sh.rows0) }

// Cond is the condition number of the unweighted design on all usable
// window points.
func (m *Model) Cond() float64 { return m.sh.base.cond }

// Leakage is, per compound, the fraction of its spectrum's norm the
// baseline terms cannot imitate (1: none can, 0: all can).
func (m *Model) Leakage() []float64 { return slices.Clone(m.sh.base.leak[:m.sh.ncomp]) }

// Ceiling is the absorbance ceiling in use.
func (m *Model) Ceiling() float64 { return m.sh.ceiling }

// Options returns the options with defaults filled in.
func (m *Model) Options() Options { return m.opt }

// Solve fits one sample spectrum (any grid covering the model window; any
// quantity, converted to absorbance). See SolveTo.
func (m *Model) Solve(s *spectrum.Spectrum, f Factors) (*Result, error) {
	r := new(Result)
	if err := m.SolveTo(r, s, f); err != nil {
		return nil, err
	}
	return r, nil
}

// checkSet verifies the parts of a reference set the model relies on.
func checkSet(set *reference.Set) error {
	n := len(set.Grid)
	bad := func(format string, a ...any) error {
		return fmt.Errorf("unmix: reference set: %s: %w", fmt.Sprintf(format, a...), ErrSet)
	}
	if n < 2 {
		return bad("grid has %d points", n)
	}
	if err := spectrum.CheckGrid(set.Grid); err != nil {
		return bad("%v", err)
	}
	if len(set.Compounds) == 0 {
		return bad("no compounds")
	}
	if !(set.PathCM > 0) || math.IsInf(set.PathCM, 0) {
		return bad("path length %g cm", set.PathCM)
	}
	if len(set.Noise) != n {
		return bad("noise model has %d values for %d wavelengths", len(set.Noise), n)
	}
	for i, v := range set.Noise {
		if !(v >= 0) || math.IsInf(v, 0) {
			return bad("noise at %g nm is %g", set.Grid[i], v)
		}
	}
	seen := map[string]bool{}
	for _, c := range set.Compounds {
		if seen[c.Name] {
			return bad("compound %q appears twice", c.Name)
		}
		seen[c.Name] = true
		if len(c.Absorptivity) != n {
			return bad("compound %q has %d absorptivities for %d wavelengths", c.Name, len(c.Absorptivity), n)
		}
		for i, v := range c.Absorptivity {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return bad("compound %q absorptivity at %g nm is %v", c.Name, set.Grid[i], v)
			}
		}
		if len(c.Usable) != 0 && len(c.Usable) != n {
			return bad("compound %q has %d usable marks for %d wavelengths", c.Name, len(c.Usable), n)
		}
	}
	return nil
}

// setBlank converts the blank to absorbance and checks its range.
func (sh *shared) setBlank(b *spectrum.Spectrum) error {
	if err := b.Check(); err != nil {
		return fmt.Errorf("unmix: blank: %w", err)
	}
	a := make([]float64, b.Len())
	for i, v := range b.Values {
		x, err := spectrum.ToAbsorbance(b.Quantity, v)
		if err != nil {
			return fmt.Errorf("unmix: blank %s at %g nm: %w", b.Source, b.Wavelengths[i], err)
		}
		a[i] = x
	}
	if err := covers(b.Wavelengths, sh.needLo, sh.needHi); err != nil {
		return fmt.Errorf("unmix: blank %s: %w", b.Source, err)
	}
	sh.blankWL, sh.blankA = b.Wavelengths, a
	sh.blank0 = make([]float64, sh.whi-sh.wlo)
	interpShifted(sh.blank0, sh.blankWL, sh.blankA, sh.grid[sh.wlo:sh.whi], 0)
	return nil
}

// covers checks that wl spans [lo, hi].
func covers(wl []float64, lo, hi float64) error {
	if len(wl) < 2 {
		return fmt.Errorf("%d points: %w", len(wl), ErrCoverage)
	}
	slack := spectrum.GridSlack * (wl[len(wl)-1] - wl[0] + 1)
	if wl[0] > lo+slack || wl[len(wl)-1] < hi-slack {
		return fmt.Errorf("the scan covers %g-%g nm but the model needs %g-%g nm: %w",
			wl[0], wl[len(wl)-1], lo, hi, ErrCoverage)
	}
	return nil
}

// derivative returns path * d(a)/dl on the set grid rows [lo, hi), by
// central differences (one-sided at the grid's ends).
func derivative(a, g []float64, lo, hi int, path float64) []float64 {
	out := make([]float64, hi-lo)
	n := len(g)
	for i := lo; i < hi; i++ {
		l, r := max(i-1, 0), min(i+1, n-1)
		out[i-lo] = path * (a[r] - a[l]) / (g[r] - g[l])
	}
	return out
}

// searchGE returns the first index with g[i] >= v.
func searchGE(g []float64, v float64) int {
	i, _ := slices.BinarySearch(g, v)
	return i
}

// searchGT returns the first index with g[i] > v.
func searchGT(g []float64, v float64) int {
	i, found := slices.BinarySearch(g, v)
	for found && i < len(g) && g[i] == v {
		i++
	}
	return i
}

// interpNoise is the mean, over the rows of grid listed in rows, of the
// variance factor (1-t)^2 + t^2 that linear interpolation at grid + delta
// between readings of wl applies to independent noise. Interpolated
// residuals look quieter than the readings by this factor; the noise
// itself and the parameters' scatter are not reduced, so residual-based
// standard errors are divided by its square root.
func interpNoise(wl, grid []float64, rows []int, delta float64) float64 {
	n := len(wl)
	sum := 0.0
	for _, r := range rows {
		x := grid[r] + delta
		k, _ := slices.BinarySearch(wl, x)
		v := 1.0
		if k > 0 && k < n {
			t := (x - wl[k-1]) / (wl[k] - wl[k-1])
			v = (1-t)*(1-t) + t*t
		}
		sum += v
	}
	if len(rows) == 0 {
		return 1
	}
	return sum / float64(len(rows))
}

// interpShifted writes into dst the linear interpolation of (wl, y) at
// grid[i]+delta, holding the end values beyond wl's range (callers check
// coverage first, so holding only happens in the margin a shift or a
// pre-treatment needs). A non-finite neighbour with non-zero weight gives
// +Inf (a point too dark to read).
func interpShifted(dst, wl, y, grid []float64, delta float64) {
	k := 0
	n := len(wl)
	for i, g0 := range grid {
		x := g0 + delta
		if x <= wl[0] {
			dst[i] = y[0]
			continue
		}
		if x >= wl[n-1] {
			dst[i] = y[n-1]
			continue
		}
		for k < n-2 && wl[k+1] < x {
			k++
		}
		t := (x - wl[k]) / (wl[k+1] - wl[k])
		a, b := y[k], y[k+1]
		switch {
		case t == 0:
			dst[i] = a
		case t == 1:
			dst[i] = b
		case math.IsInf(a, 0) || math.IsInf(b, 0) || math.IsNaN(a) || math.IsNaN(b):
			dst[i] = math.Inf(1)
		default:
			dst[i] = a + t*(b-a)
		}
	}
}

// tQuantile returns the two-sided Student t quantile of coverage
// lsq.Confidence (95 %) on dof degrees of freedom, cached per model clone.
func (m *Model) tQuantile(dof int) float64 {
	if q, ok := m.tq[dof]; ok {
		return q
	}
	q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile(0.5 + lsq.Confidence/2)
	m.tq[dof] = q
	return q
}

// grow returns s resized to n, reusing its storage.
func grow[T any](s []T, n int) []T {
	if cap(s) >= n {
		return s[:n]
	}
	return make([]T, n)
}
