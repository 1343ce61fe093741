package unmix

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// shared is the immutable part of a model, shared by its clones.
type shared struct {
	set    *reference.Set
	opt    Options
	grid   []float64 // set grid
	lo, hi int       // window [lo, hi) on the set grid
	wlo    int       // work range [wlo, whi) on the set grid
	whi    int       // (the whole grid with pre-treatment, else the window)
	needLo float64   // nm a scan must cover
	needHi float64
	design *Design     // rows, columns and signs on the window
	rows0  []int       // usable window rows (reference set's Usable): design.Rows
	cols   [][]float64 // design columns on the window (compounds, then baseline): design.Cols
	dcols  [][]float64 // d/dl of compound columns on the window (shift only)
	nonneg []bool      // design.nonNeg
	ncomp  int
	names  []string // baseline term names
	interf []string // interferent names; their columns end cols
	// interfLeak is each compound's leakage with the baseline terms and
	// the interferents all free (nil without interferents): an
	// interferent that imitates a compound raises FlagMimic as a
	// baseline term does.
	interfLeak []float64
	noise      []float64  // floored calibration noise on the window (reference.Set.NoiseFloor)
	cal        *calWindow // the absorptivities' covariance on the window (nil: not recorded)
	ceiling    float64
	maxStd     []float64 // highest concentration in the cell not flagged FlagOverRange
	// fullNorm is the norm of each compound's column over the whole grid.
	fullNorm []float64
	smooth   bool // pre-treatment correlates neighbouring residuals (Savitzky-Golay)
	// reach is how many grid points either side a reading above the
	// ceiling spreads into through the Savitzky-Golay steps (the sum of
	// their half-windows, as the filters are applied one after another).
	reach   int
	blankWL []float64 // blank in absorbance on its own grid
	blankA  []float64
	blank0  []float64 // blank on the work grid, unshifted
	base    *design
	// gtab tabulates the set's noise growth (reference.Set.NoiseGrowth) at
	// A = i * growthStep for A in [0, ceiling].
	gtab []float64
}

// growthStep is the absorbance step of the noise-growth table; linear
// interpolation in it is off by less than 1e-6 relative (the second
// derivative of the growth is at most (ln 10)^2 times its value).
const growthStep = 1.0 / 1024

// growth returns the set's NoiseGrowth(a) for a in [0, ceiling] by
// interpolation in the table.
func (sh *shared) growth(a float64) float64 {
	x := a / growthStep
	i := int(x)
	if i >= len(sh.gtab)-1 {
		i = len(sh.gtab) - 2
	}
	t := x - float64(i)
	return sh.gtab[i] + t*(sh.gtab[i+1]-sh.gtab[i])
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
	buf   scratch
	// wd is the clone's design for weighted fits, refactorised for each
	// sample in its storage (weightedDesign).
	wd *design
	// wfrom, for a candidate of the automatic model in a weighted fit,
	// is the candidate whose design extends this one's by a last column:
	// its weighted design, factored for the same scan, gives this one's
	// factorisation (autoModel.pre, weightedDesign).
	wfrom *Model
	// auto, with Options.Auto, holds the candidate models the sample's
	// nuisance model is chosen from (auto.go); the model's own design is
	// then the floor's.
	auto *autoModel
}

// scratch is per-clone storage reused from one sample to the next, so
// that a solve allocates nothing in steady state. It carries no meaning
// from one step to the next: SolveTo hands each step a scan value whose
// slices are views of this storage.
type scratch struct {
	abs  []float64 // sample absorbance on its own grid
	raw  []float64 // raw absorbance on the work grid
	net  []float64 // blank-corrected, pre-treated
	blk  []float64 // blank on the work grid
	y    []float64 // fit rows
	sig  []float64 // noise sigma on the window
	sr   []float64 // noise sigma on the fit rows
	wsig []float64 // noise sigma on the rows of a weighted design
	g    []float64 // shift direction on the fit rows
	pg   []float64 // response of the coefficients to the shift direction
	xg   []float64 // the design's prediction X P g of the shift direction
	// The unshifted reading and fit of a shifted model's scan (fitShift).
	raw0, net0, blk0, y0 []float64
	res0                 lsq.Result
	rows                 []int
	key                  []byte
	tainted              []bool
	res                  lsq.Result
	gridOK               []float64 // last sample grid found equal to the set grid
	lrows                []int     // rows left after leaveOut
	lkey                 []byte    // their mask key (leaveOut)
	cq                   []float64 // z' U z per covariance matrix of the set (calTerms)
	cvar                 []float64 // the calibration's variance per compound (calTerms)
	cv                   []float64 // the calibration's variance v_i on the fitted rows (calTerms)
}

// NewModel checks the options against the set and builds the design. It
// returns an error wrapping errSet for an inconsistent set
// (reference.Set.Validate), ErrCoverage for a window or blank outside the
// set's grid, and the solver's error when the design's columns are
// linearly dependent.
func NewModel(set *reference.Set, opt Options) (*Model, error) {
	if set == nil {
		return nil, pkgerr.Errorf("unmix", "%w: nil set", errSet)
	}
	if err := set.Validate(); err != nil {
		return nil, pkgerr.Errorf("unmix", "%w: %w", errSet, err)
	}
	if len(set.Noise) == 0 {
		return nil, pkgerr.Errorf("unmix", "%w: the set has no noise model", errSet)
	}
	sh := &shared{set: set, opt: opt, grid: set.Grid, ncomp: len(set.Compounds)}
	if err := sh.limits(); err != nil {
		return nil, err
	}
	if err := sh.window(); err != nil {
		return nil, err
	}
	if opt.Auto {
		// Every candidate fits the same window: the one a shift needs.
		lo, hi := sh.autoWindow()
		return newAuto(opt, func(o Options) (*Model, error) {
			o.WindowLo, o.WindowHi = lo, hi
			return NewModel(set, o)
		})
	}
	if err := sh.columns(); err != nil {
		return nil, err
	}
	if opt.Blank != nil {
		if err := sh.setBlank(opt.Blank); err != nil {
			return nil, err
		}
	}
	wl := sh.grid[sh.lo:sh.hi]
	var err error
	if sh.base, err = sh.buildDesign(sh.rows0, nil); err != nil {
		return nil, pkgerr.Errorf("unmix", "window %g-%g nm, baseline %q: %w", wl[0], wl[len(wl)-1], opt.Baseline, err)
	}
	m := &Model{set: set, opt: sh.opt, sh: sh}
	m.init(sh.base)
	return m, nil
}

// limits fills in and checks the shift limit and the ceiling (at most
// reference.MaxCeiling), and tabulates the noise growth up to the
// ceiling.
func (sh *shared) limits() error {
	opt, set := sh.opt, sh.set
	if sh.opt.MaxShiftNM == 0 {
		sh.opt.MaxShiftNM = DefaultMaxShiftNM
	}
	if !(sh.opt.MaxShiftNM > 0) || math.IsInf(sh.opt.MaxShiftNM, 0) {
		return pkgerr.Errorf("unmix", "the shift limit must be a positive number of nm, not %g", opt.MaxShiftNM)
	}
	sh.ceiling = opt.Ceiling
	if sh.ceiling == 0 {
		sh.ceiling = set.Ceiling
	}
	if sh.ceiling == 0 {
		sh.ceiling = defaultCeiling
	}
	// The growth table is sized by the ceiling: bounded here, whatever
	// the options or a set from a file say, so that no allocation is
	// sized by an unchecked number (at MaxCeiling it holds some 10,000
	// values).
	if !(sh.ceiling > 0 && sh.ceiling <= reference.MaxCeiling) {
		return pkgerr.Errorf("unmix", "the absorbance ceiling must be above 0 and at most %d, not %g", reference.MaxCeiling, sh.ceiling)
	}
	nt := int(math.Ceil(sh.ceiling/growthStep)) + 2
	sh.gtab = make([]float64, nt)
	for i := range sh.gtab {
		sh.gtab[i] = set.NoiseGrowth(float64(i) * growthStep)
	}
	return nil
}

// window sets the fit window [lo, hi) on the set grid (kept clear of the
// grid's ends by the shift limit when a shift is estimated), the work
// range and the wavelengths a scan must cover.
func (sh *shared) window() error {
	opt := sh.opt
	g := sh.grid
	glo, ghi := g[0], g[len(g)-1]
	wlo, whi := opt.WindowLo, opt.WindowHi
	if wlo == 0 && whi == 0 {
		wlo, whi = glo, ghi
	}
	if !(whi > wlo) {
		return pkgerr.Errorf("unmix", "window %g-%g nm is empty", wlo, whi)
	}
	slack := spectrum.GridSlack * (ghi - glo)
	if wlo < glo-slack || whi > ghi+slack {
		how := "lies partly"
		if whi <= glo || wlo >= ghi {
			how = "lies"
		}
		return &windowError{fmt.Sprintf("the window %g-%g nm %s outside the reference grid %g-%g nm: choose a window within %g-%g nm", wlo, whi, how, glo, ghi, glo, ghi)}
	}
	if opt.Shift {
		wlo = max(wlo, glo+opt.MaxShiftNM)
		whi = min(whi, ghi-opt.MaxShiftNM)
	}
	sh.lo, sh.hi = WindowRange(g, wlo, whi)
	if sh.hi-sh.lo < 2 {
		return pkgerr.Errorf("unmix", "window %g-%g nm holds %d reference points: %w", wlo, whi, max(sh.hi-sh.lo, 0), ErrCoverage)
	}
	wl := g[sh.lo:sh.hi]
	sh.reach = baseline.Reach(sh.set.Pretreat)
	sh.smooth = sh.reach > 0
	if len(sh.set.Pretreat) > 0 {
		sh.wlo, sh.whi = 0, len(g)
		sh.needLo, sh.needHi = glo, ghi
	} else {
		sh.wlo, sh.whi = sh.lo, sh.hi
		sh.needLo, sh.needHi = wl[0], wl[len(wl)-1]
		if opt.Shift {
			sh.needLo -= opt.MaxShiftNM
			sh.needHi += opt.MaxShiftNM
		}
	}
	return nil
}

// columns builds the design on the window (NewDesign, at the set's path
// length), the shift's derivative columns, the per-compound upper limits
// and the floored noise.
func (sh *shared) columns() error {
	set := sh.set
	d, err := NewDesign(set, sh.lo, sh.hi, sh.opt.Baseline, set.PathCM, sh.opt.Interferents...)
	if err != nil {
		return pkgerr.Errorf("unmix", "%w", err)
	}
	sh.design = d
	nb := len(d.Terms) - len(d.interf)
	sh.rows0, sh.cols, sh.nonneg, sh.names, sh.interf = d.Rows, d.Cols, d.nonNeg, d.Terms[:nb], d.interf
	if len(sh.interf) > 0 {
		if sh.interfLeak, err = sh.leakAllFree(); err != nil {
			return pkgerr.Errorf("unmix", "with interferents %v: %w", sh.interf, err)
		}
	}
	for _, c := range set.Compounds {
		sh.maxStd = append(sh.maxStd, upperLimit(c))
		sh.fullNorm = append(sh.fullNorm, floats.Norm(c.Absorptivity, 2)*set.PathCM)
	}
	if sh.opt.Shift {
		for k := range sh.ncomp {
			sh.dcols = append(sh.dcols, derivative(set.Compounds[k].Absorptivity, sh.grid, sh.lo, sh.hi, set.PathCM))
		}
	}
	sh.noise = make([]float64, sh.hi-sh.lo)
	for r := range sh.noise {
		sh.noise[r] = set.NoiseFloor(sh.lo + r)
	}
	sh.setCal()
	return nil
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

// init gives a model its own caches and scratch storage.
func (m *Model) init(base *design) {
	m.base = base
	m.cache = map[string]*design{"": base}
	m.tq = map[int]float64{}
	m.buf = scratch{}
}

// Clone returns a model sharing the design with fresh scratch storage, for
// another goroutine.
func (m *Model) Clone() *Model {
	c := &Model{set: m.set, opt: m.opt, sh: m.sh}
	if m.auto != nil {
		c.auto = m.auto.clone()
	}
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

// PathCM returns the reference set's path length in cm: a sample's path
// when none is given.
func (m *Model) PathCM() float64 { return m.set.PathCM }

// BaselineTerms returns the names of the baseline coefficients (keys of
// Result.Baseline) in design order.
func (m *Model) BaselineTerms() []string {
	if m.auto != nil {
		return slices.Clone(m.auto.terms)
	}
	return slices.Clone(m.sh.names)
}

// Interferents returns the names of the interferents (Options.Interferents)
// in result order.
func (m *Model) Interferents() []string { return slices.Clone(m.sh.interf) }

// Auto reports whether the model chooses each sample's nuisance model
// (Options.Auto; Result.Model names the choice).
func (m *Model) Auto() bool { return m.auto != nil }

// Window returns the wavelengths of the fit window.
func (m *Model) Window() []float64 { return slices.Clone(m.sh.grid[m.sh.lo:m.sh.hi]) }

// Excluded is the number of window points left out for every sample
// because a compound's absorptivity is not known there.
func (m *Model) Excluded() int { return m.sh.hi - m.sh.lo - len(m.sh.rows0) }

// setBlank converts the blank to absorbance and checks its range.
func (sh *shared) setBlank(b *spectrum.Spectrum) error {
	if err := b.Check(); err != nil {
		return pkgerr.Errorf("unmix", "blank: %w", err)
	}
	a := make([]float64, b.Len())
	for i, v := range b.Values {
		x, err := spectrum.ToAbsorbance(b.Quantity, v)
		if err != nil {
			return pkgerr.Errorf("unmix", "blank %s at %g nm: %w", b.Source, b.Wavelengths[i], err)
		}
		a[i] = x
	}
	if err := covers(b.Wavelengths, sh.needLo, sh.needHi); err != nil {
		return pkgerr.Errorf("unmix", "blank %s: %w", b.Source, err)
	}
	sh.blankWL, sh.blankA = b.Wavelengths, a
	sh.blank0 = make([]float64, sh.whi-sh.wlo)
	interpShifted(sh.blank0, sh.blankWL, sh.blankA, sh.grid[sh.wlo:sh.whi], 0)
	return nil
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
