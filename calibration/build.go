package calibration

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

const (
	// minLevels is the fewest distinct non-zero concentrations of a
	// compound that must remain under the ceiling at a wavelength for its
	// absorptivity there to be usable; two levels always fit a line
	// exactly, so three is the least that can show a misfit.
	minLevels = 3
	// usualLevels is the number of levels per compound below which the
	// few-levels flag is raised: five or more levels spanning the working
	// range is common practice (ISO 8466-1 asks for ten; recalled from
	// memory).
	usualLevels = 5
	// maxDesignCond bounds the 2-norm condition number of the
	// concentration design with each column scaled to unit length: the
	// project's refusal limit, lsq.CondRefuse.
	maxDesignCond = lsq.CondRefuse
	// warnDesignCond is the condition number of the column-scaled
	// concentration design above which Build warns that compounds vary
	// nearly together: the project's warning limit, lsq.CondWarn, which
	// solve applies to the spectra.
	warnDesignCond = lsq.CondWarn
	// gridSlack is the relative slack (of the span) allowed when checking
	// that a scan covers the window, so wavelengths rounded in a file
	// still match: the spectrum package's own.
	gridSlack = spectrum.GridSlack
)

// defaultVersion is the tool version recorded in a set's provenance when
// Options.Version is empty.
const defaultVersion = "dev"

// Options control Build. Zero values mean the documented defaults.
type Options struct {
	// WindowLo and WindowHi (nm) limit the grid; both 0 means the range
	// every scan covers.
	WindowLo, WindowHi float64
	// PathCM is the path length the standards were scanned at (default
	// DefaultPathCM).
	PathCM float64
	// Ceiling is the absorbance above which a reading is left out
	// (default DefaultCeiling); Floor the detector floor (default 0, none).
	Ceiling, Floor float64
	// ThroughOrigin fits absorbance = K c with no intercept; otherwise
	// absorbance = K c + intercept at each wavelength.
	ThroughOrigin bool
	// Pretreat steps are applied to every blank-corrected standard.
	Pretreat []baseline.Step
	// Blank, if not nil, is the blank scan subtracted from every standard;
	// the sheet's blank rows then enter the fit as zero-concentration
	// standards. If nil, the mean of the sheet's blank rows is the blank.
	Blank *spectrum.Spectrum
	// BlankSHA256 is the hash of Blank's file, for the provenance.
	BlankSHA256 string
	// Warn receives notes on what Build did (grids interpolated, readings
	// left out); nil discards them. They are also kept in the provenance.
	Warn func(msg string)
	// Version is the tool version for the provenance (default "dev").
	Version string
	// Now gives the creation time (default time.Now), for reproducible
	// tests.
	Now func() time.Time

	// MinR2 is the least R² of a compound's calibration line at its band
	// maximum, and MaxRelSD the largest relative residual standard
	// deviation of the line (see [relSD]), below or above which the
	// compound is flagged poor-fit. Zero means the default
	// (DefaultMinR2, DefaultMaxRelSD); a negative value turns the check
	// off.
	MinR2, MaxRelSD float64
	// DropOutliers leaves the standards found outlying (see [outliers])
	// out and fits again, once; the rows left out are recorded in the
	// compound's StandardsLeftOut and in the provenance notes.
	DropOutliers bool
	// Interferents are stored in the set as they are
	// (reference.Set.Interferents): scans of substances present in
	// samples but not quantified, which solve and verify then fit in
	// every sample. Build does not use them; the set's own check
	// (reference.Set.Validate) checks their fields.
	Interferents []reference.Interferent
}

// buildPkg is the prefix of Build's errors, "calibration: build": the
// package and its step, which pkgerr.Plain leaves out as one.
const buildPkg = "calibration: build"

// Sentinel causes of Build errors, tested with errors.Is.
var (
	// errDesign: the concentrations cannot separate the compounds.
	errDesign = errors.New("the concentration design cannot separate the compounds")
	// errWindow: a scan does not cover the window, or the window is empty.
	errWindow = errors.New("scan does not cover the window")
	// errTooFewStandards: not enough standards, levels or readings.
	errTooFewStandards = errors.New("too few standards")
)

// Build makes a reference set from a standards sheet with its scans
// loaded. It is pure computation; nothing is read or written.
//
// Steps: the scans are brought onto one grid (the first standard's points
// within the window, or within the range all scans share; others are
// interpolated linearly and Warn says so); the blank is subtracted at each
// wavelength; the pre-treatment steps are applied; then at each wavelength
// l the absorbances of the standards are fitted by least squares (QR, via
// package lsq) on their concentrations,
//
//	A(i, l) = b * sum_k eps_k(l) c(i, k) [+ a0(l)] + e(i, l),
//
// which is the classical K-matrix calibration K = (C'C)^-1 C'A done without
// forming C'C; pure standards are its diagonal special case. eps = K / b
// is the absorptivity per unit concentration per cm. Readings above the
// ceiling (as read, before blank correction) are left out of that
// wavelength's fit and counted; a compound left with fewer than 3 levels at
// a wavelength is marked unusable there. The residual standard deviation
// at each wavelength is the noise model. At each compound's band maximum
// the calibration line is tested (see Linearity).
//
// Errors name the sheet row or file where one is to blame: a negative or
// non-finite concentration, a compound that never varies, a design that
// cannot separate the compounds (rank deficient, or column-scaled
// condition number above 1e3: errDesign), a scan not covering the window
// (errWindow), fewer standards than coefficients plus one
// (errTooFewStandards).
func Build(sh *Sheet, opt Options) (*reference.Set, error) {
	return BuildContext(context.Background(), sh, opt)
}

// BuildContext is Build stopping when ctx is done: it checks ctx between
// standards, wavelengths and refits, and then returns an error wrapping
// ctx.Err(). With Options.DropOutliers and outlying standards found, it
// builds a second time without them; the notes of the build that is kept
// are the ones passed to Options.Warn, after both.
func BuildContext(ctx context.Context, sh *Sheet, opt Options) (*reference.Set, error) {
	warn := opt.Warn
	opt.Warn = nil
	b := &builder{sh: sh, opt: opt, ctx: ctx}
	set, err := b.build()
	if err == nil && opt.DropOutliers && len(b.outlierRows()) > 0 {
		drop := b.outlierRows()
		b = &builder{sh: sh, opt: opt, ctx: ctx, drop: drop}
		set, err = b.build()
	}
	if warn != nil {
		for _, n := range b.notes {
			warn(n)
		}
	}
	if err == nil && len(opt.Interferents) > 0 {
		set.Interferents = opt.Interferents
		if err = set.Validate(); err != nil {
			return nil, pkgerr.Errorf(buildPkg, "interferents: %w", err)
		}
	}
	if err == nil {
		set.Schema = set.FileSchema()
	}
	return set, err
}

// build runs the steps of one Build.
func (b *builder) build() (*reference.Set, error) {
	opt := b.opt
	if err := b.checkSheet(); err != nil {
		return nil, err
	}
	if err := b.defaults(); err != nil {
		return nil, err
	}
	if err := b.rows(); err != nil {
		return nil, err
	}
	if err := b.gridAndBlank(); err != nil {
		return nil, err
	}
	if err := b.readings(); err != nil {
		return nil, err
	}
	res, err := b.fitWithinRange()
	if err != nil {
		return nil, err
	}
	set := res.set
	set.Pretreat = append([]baseline.Step(nil), opt.Pretreat...)
	b.ceilingNotes(res)
	b.res = res
	for k := range set.Compounds {
		b.finishCompound(&set.Compounds[k], k)
	}
	return b.finish(set)
}

// fitParams are the inputs of one least-squares pass of Build.
type fitParams struct {
	ctx                  context.Context
	sh                   *Sheet
	fit                  []Row
	abs                  *mat.Dense // blank-corrected, pre-treated, one row per fit row
	keep                 [][]bool   // under the ceiling, per fit row and wavelength
	grid                 []float64
	path, ceiling, floor float64
	intercept            bool
}

// fitResult is one pass: the set (absorptivities, noise, band maxima,
// standards range, linearity; flags not yet set) and what the ceiling did.
type fitResult struct {
	set      *reference.Set
	clipped  []bool // per compound: standards above the ceiling at its band maximum
	leftOut  int    // readings above the ceiling, over all wavelengths
	unsolved int    // wavelengths where too few standards stayed under the ceiling
	worst    float64
	// outliers are, per compound, the standards outlying on its
	// calibration line at the band maximum (see [outliers]).
	outliers [][]outlier
}

// pass is the state of one run of fitParams.
type pass struct {
	*fitParams
	use   []bool
	sel   []int    // indexes of the fit rows in use
	rows  []Row    // the fit rows in use
	masks [][]bool // their keep masks
	res   *fitResult
	kraw  [][]float64 // fitted K*b per compound, absorbance per unit concentration
	icpt  []float64   // fitted intercept, when there is one
	// The readings behind the noise model (see fitNoiseModel), per
	// wavelength.
	nobs [][]noiseObs
	// Per wavelength: the mask fit solved there (nil where none), for
	// foldNoiseGrowth.
	mfAt []*maskFit
}

// run fits the rows marked in use: at each wavelength, one solver per
// distinct mask of readings under the ceiling; then each compound's band
// maximum, standards range and calibration line. Rows not in use still
// appear in the lines' Data, as readings not used.
func (fp *fitParams) run(use []bool) (*fitResult, error) {
	ps := fp.newPass(use)
	solved, err := ps.solveWavelengths()
	if err != nil {
		return nil, err
	}
	var rebased []bool
	ps.res.set.NoiseModel, rebased = fitNoiseModel(ps.nobs, ps.res.set.Noise, ps.ceiling)
	if nm := ps.res.set.NoiseModel; nm != nil {
		ps.foldNoiseGrowth(nm.KneeA, rebased)
		ps.res.set.AbsorptivityCov.Growth = true
	}
	if err := ps.fillUnsolved(solved); err != nil {
		return nil, err
	}
	// Per compound: band maximum, standards range, linearity.
	for k := range ps.res.set.Compounds {
		if err := ps.compoundLine(k); err != nil {
			return nil, err
		}
	}
	return ps.res, nil
}

// newPass selects the rows in use and makes the set to fill.
func (fp *fitParams) newPass(use []bool) *pass {
	m, p := len(fp.sh.Compounds), len(fp.grid)
	ps := &pass{fitParams: fp, use: use}
	for i, u := range use {
		if u {
			ps.sel = append(ps.sel, i)
		}
	}
	n := len(ps.sel)
	ps.rows = make([]Row, n)
	ps.masks = make([][]bool, n)
	for r, i := range ps.sel {
		ps.rows[r], ps.masks[r] = fp.fit[i], fp.keep[i]
	}
	set := &reference.Set{
		Schema:    reference.SchemaVersion,
		Grid:      fp.grid,
		Compounds: make([]reference.Compound, m),
		Noise:     make([]float64, p),
		PathCM:    fp.path,
		Ceiling:   fp.ceiling,
		Floor:     fp.floor,
		Intercept: fp.intercept,
	}
	set.AbsorptivityCov = &reference.AbsorptivityCov{Index: make([]int, p)}
	for j := range set.AbsorptivityCov.Index {
		set.AbsorptivityCov.Index[j] = -1
	}
	ps.res = &fitResult{set: set, clipped: make([]bool, m), outliers: make([][]outlier, m)}
	ps.kraw = make([][]float64, m)
	if fp.intercept {
		ps.icpt = make([]float64, p)
	}
	for k := range set.Compounds {
		c := &set.Compounds[k]
		c.Name, c.Unit = fp.sh.Compounds[k], fp.sh.Units[k]
		c.Absorptivity = make([]float64, p)
		c.SE = make([]float64, p)
		c.Usable = make([]bool, p)
		ps.kraw[k] = make([]float64, p)
	}
	return ps
}

// solveWavelengths fits each wavelength and reports where the fit had
// degrees of freedom left.
func (ps *pass) solveWavelengths() ([]bool, error) {
	p := len(ps.grid)
	fits := map[string]*maskFit{}
	key := make([]byte, len(ps.rows))
	solved := make([]bool, p)
	for j := range p {
		if err := ps.ctx.Err(); err != nil {
			return nil, pkgerr.Errorf(buildPkg, "stopped at %g nm: %w", ps.grid[j], err)
		}
		ps.maskKey(key, j)
		mf, ok := fits[string(key)]
		if !ok {
			var err error
			if mf, err = newMaskFit(ps.rows, ps.masks, j, len(ps.res.set.Compounds), ps.intercept); err != nil {
				return nil, pkgerr.Errorf(buildPkg, "%s: least squares at %g nm: %w", ps.sh.Path, ps.grid[j], err)
			}
			ps.keepCov(mf)
			fits[string(key)] = mf
		}
		if mf.solver == nil {
			continue
		}
		var err error
		if solved[j], err = ps.solveAt(mf, j); err != nil {
			return nil, err
		}
	}
	return solved, nil
}

// maskKey writes the mask of the rows in use at wavelength j into key
// ('1' kept, '0' above the ceiling) and counts the readings left out.
func (ps *pass) maskKey(key []byte, j int) {
	set := ps.res.set
	for i := range ps.rows {
		key[i] = '0'
		if ps.masks[i][j] {
			key[i] = '1'
			continue
		}
		ps.res.leftOut++
		for k := range set.Compounds {
			if ps.rows[i].Conc[k] > 0 {
				set.Compounds[k].LeftOut++
			}
		}
	}
}

// solveAt fits wavelength j with mf and stores the coefficients; false
// when no degrees of freedom are left for the noise.
func (ps *pass) solveAt(mf *maskFit, j int) (bool, error) {
	set := ps.res.set
	for r, i := range mf.rows {
		mf.y[r] = ps.abs.At(ps.sel[i], j)
	}
	if err := mf.solver.Solve(&mf.res, mf.y); err != nil {
		return false, pkgerr.Errorf(buildPkg, "least squares at %g nm: %w", ps.grid[j], err)
	}
	if mf.res.DoF <= 0 {
		return false, nil
	}
	for q, k := range mf.comps {
		c := &set.Compounds[k]
		ps.kraw[k][j] = mf.res.Coef[q]
		c.Absorptivity[j] = mf.res.Coef[q] / ps.path
		c.SE[j] = mf.res.SE[q] / ps.path
		c.Usable[j] = mf.levelsOK[q]
	}
	if ps.intercept {
		ps.icpt[j] = mf.res.Coef[len(mf.comps)]
	}
	set.Noise[j] = math.Sqrt(mf.res.RSS / float64(mf.res.DoF))
	set.AbsorptivityCov.Index[j] = mf.covIdx
	if ps.nobs == nil {
		ps.nobs = make([][]noiseObs, len(ps.grid))
		ps.mfAt = make([]*maskFit, len(ps.grid))
	}
	ps.mfAt[j] = mf
	ps.nobs[j] = mf.noiseReadings()
	return true, nil
}

// fillUnsolved sets the noise where nothing was solved to the largest
// found; an error when nothing was solved.
func (ps *pass) fillUnsolved(solved []bool) error {
	res, set := ps.res, ps.res.set
	nsolved := 0
	for j, ok := range solved {
		if ok {
			nsolved++
			res.worst = max(res.worst, set.Noise[j])
		}
	}
	if nsolved == 0 {
		return pkgerr.Errorf(buildPkg, "%s: %w: at no wavelength did enough standards stay under the ceiling of A = %g to fit (dilute the standards or choose another window)",
			ps.sh.Path, errTooFewStandards, ps.ceiling)
	}
	if nsolved < len(solved) {
		res.unsolved = len(solved) - nsolved
		for j, ok := range solved {
			if !ok {
				set.Noise[j] = res.worst
			}
		}
	}
	return nil
}

// compoundLine finds compound k's band maximum and standards range, and
// fits and tests its calibration line there and over its band.
func (ps *pass) compoundLine(k int) error {
	c := &ps.res.set.Compounds[k]
	if ps.intercept {
		c.Intercept = ps.icpt
	}
	jp := -1
	for j := range ps.grid {
		if c.Usable[j] && (jp < 0 || c.Absorptivity[j] > c.Absorptivity[jp]) {
			jp = j
		}
	}
	if jp < 0 {
		return pkgerr.Errorf(buildPkg, "%s: %w: %s has fewer than %d levels under the ceiling of A = %g at every wavelength (dilute the standards or add levels)",
			ps.sh.Path, errTooFewStandards, c.Name, minLevels, ps.ceiling)
	}
	c.PeakNM = ps.grid[jp]
	c.MinStandard, c.MaxStandard = math.Inf(1), 0
	for _, r := range ps.rows {
		if v := r.Conc[k]; v > 0 {
			c.MinStandard = min(c.MinStandard, v)
			c.MaxStandard = max(c.MaxStandard, v)
		}
	}
	for i, r := range ps.fit {
		if (r.Conc[k] != 0 || r.isBlank()) && ps.use[i] && !ps.keep[i][jp] {
			ps.res.clipped[k] = true
		}
	}
	var band []int
	for j := range ps.grid {
		if c.Usable[j] && c.Absorptivity[j] >= reference.BandFraction*c.Absorptivity[jp] {
			band = append(band, j)
		}
	}
	pointsAt := func(j int) []reference.Point { return ps.pointsAt(k, j) }
	bl := bandLine(ps.grid, band, jp, pointsAt)
	lin, err := lineTestAt(pointsAt(jp), ps.floor, bl.ConfirmsPeak())
	if err != nil {
		return pkgerr.Errorf(buildPkg, "%s: %s at %g nm: %w", ps.sh.Path, c.Name, c.PeakNM, err)
	}
	lin.Band = bl
	c.Linearity = lin
	rows := ps.lineRows(k)
	ps.res.outliers[k] = append(outliers(lin.Data, rows), falling(lin, rows)...)
	return nil
}

// pointsAt is the calibration line of compound k at grid index j: the
// readings of its standards (and blanks) with the other compounds' fitted
// contributions removed.
func (ps *pass) pointsAt(k, j int) []reference.Point {
	var pts []reference.Point
	for i, r := range ps.fit {
		if !onLine(r, k) {
			continue
		}
		y := ps.abs.At(i, j)
		for l := range ps.kraw {
			if l != k {
				y -= r.Conc[l] * ps.kraw[l][j]
			}
		}
		pts = append(pts, reference.Point{Conc: r.Conc[k], Absorbance: y, Used: ps.use[i] && ps.keep[i][j]})
	}
	return pts
}

// onLine reports whether row r is a point of compound k's calibration
// line: a standard holding k, or a blank.
func onLine(r Row, k int) bool { return r.Conc[k] != 0 || r.isBlank() }

// lineRows are the fit rows behind the points pointsAt returns for
// compound k, in the same order.
func (ps *pass) lineRows(k int) []int {
	var rows []int
	for i, r := range ps.fit {
		if onLine(r, k) {
			rows = append(rows, i)
		}
	}
	return rows
}

// checkKept checks that the rows kept still determine every compound:
// each varies, there are more rows than coefficients, and the design is
// well conditioned.
func checkKept(fit []Row, use []bool, names []string, intercept bool) error {
	var rows []Row
	for i, u := range use {
		if u {
			rows = append(rows, fit[i])
		}
	}
	ncoef := len(names)
	if intercept {
		ncoef++
	}
	if len(rows) <= ncoef {
		return fmt.Errorf("%w: %d standards would remain for %d coefficients per wavelength", errTooFewStandards, len(rows), ncoef)
	}
	for k, name := range names {
		varies := false
		for _, r := range rows[1:] {
			if r.Conc[k] != rows[0].Conc[k] {
				varies = true
				break
			}
		}
		if !varies {
			return fmt.Errorf("%w: %s would be %g in every standard left", errNoVariation, name, rows[0].Conc[k])
		}
	}
	_, err := checkDesign(rows, names, intercept)
	return err
}

// curvedWithinRange reports whether the used readings of l up to its
// range's top still fail Mandel's test (the range search stopped at the
// fewest levels the test can judge).
func curvedWithinRange(l reference.Linearity) bool {
	var x, y []float64
	for _, p := range l.Data {
		if p.Used && p.Conc <= l.RangeHi {
			x = append(x, p.Conc)
			y = append(y, p.Absorbance)
		}
	}
	_, _, curved := mandel(x, y)
	return curved
}

// levelList names the used non-zero levels of l within its range: "2, 5,
// 10".
func levelList(l reference.Linearity) string {
	var used []float64
	for _, p := range l.Data {
		if p.Used && p.Conc <= l.RangeHi {
			used = append(used, p.Conc)
		}
	}
	var x []float64
	for v := range levelSet(used) {
		x = append(x, v)
	}
	sort.Float64s(x)
	return numList(x)
}

// fmtNum formats a concentration for a message (at most 6 significant
// digits).
func fmtNum(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

// numList is "20, 40, 60".
func numList(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmtNum(x)
	}
	return strings.Join(s, ", ")
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// listMax is how many files a message names before it counts the rest.
const listMax = 5

// rowList names the fit rows' scans with their sheet lines, the first
// listMax of them: "stdc/L20a.csv (sheet line 8), ... and 3 more".
func rowList(rows []int, fit []Row) string {
	var b strings.Builder
	for n, i := range rows {
		if n == listMax {
			fmt.Fprintf(&b, " and %d more", len(rows)-listMax)
			break
		}
		if n > 0 {
			b.WriteString(", ")
		}
		b.WriteString(rowName(fit[i]))
	}
	return b.String()
}

// rowName is a standard's scan and sheet line: "L20a.csv (sheet line 8)",
// with the column of a wide table after the file.
func rowName(r Row) string {
	f := r.File
	if r.Column != "" {
		f += " column " + r.Column
	}
	if r.Line > 0 {
		return fmt.Sprintf("%s (sheet line %d)", f, r.Line)
	}
	return f
}

func hasString[S ~string](list []S, s S) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func allZero(c []float64) bool {
	for _, v := range c {
		if v != 0 {
			return false
		}
	}
	return true
}

// maskFit is the least-squares problem for one set of rows kept under the
// ceiling: a solver, its workspace and which compounds it holds.
type maskFit struct {
	rows     []int  // fit rows kept
	comps    []int  // compounds with some non-zero concentration in rows
	levelsOK []bool // per comps entry: at least minLevels levels
	solver   *lsq.Solver
	res      lsq.Result
	y        []float64
	lev      []float64 // leverage of each row (hatDiag)
	groups   [][]int   // replicate groups of rows (replicateGroups)
	// unscaled is the compounds' block of (X'X)^-1, packed as
	// reference.AbsorptivityCov stores it (all compounds of the set,
	// zero for those not in comps); covIdx its place in the set's list.
	unscaled []float64
	covIdx   int
	// pinv holds the compounds' rows of the pseudo-inverse (X'X)^-1 X'
	// (for the sandwich covariance, foldNoiseGrowth).
	pinv *mat.Dense
}

// newMaskFit sets up the fit for the rows kept at wavelength j. The solver
// is nil when the rows cannot determine the coefficients (too few rows, or
// rank deficient once readings above the ceiling are left out).
func newMaskFit(fit []Row, keep [][]bool, j, m int, intercept bool) (*maskFit, error) {
	mf := &maskFit{}
	for i := range fit {
		if keep[i][j] {
			mf.rows = append(mf.rows, i)
		}
	}
	for k := range m {
		levels := map[float64]bool{}
		for _, i := range mf.rows {
			if v := fit[i].Conc[k]; v > 0 {
				levels[v] = true
			}
		}
		if len(levels) > 0 {
			mf.comps = append(mf.comps, k)
			mf.levelsOK = append(mf.levelsOK, len(levels) >= minLevels)
		}
	}
	nc := len(mf.comps)
	if intercept {
		nc++
	}
	if len(mf.comps) == 0 || len(mf.rows) <= nc {
		return mf, nil
	}
	x := mat.NewDense(len(mf.rows), nc, nil)
	for r, i := range mf.rows {
		for q, k := range mf.comps {
			x.Set(r, q, fit[i].Conc[k])
		}
		if intercept {
			x.Set(r, nc-1, 1)
		}
	}
	s, err := lsq.NewSolver(x, make([]bool, nc), lsq.Options{})
	if errors.Is(err, lsq.ErrRankDeficient) {
		// Rank deficient on this subset of rows: nothing is usable here.
		return mf, nil
	}
	if err != nil {
		return nil, err
	}
	mf.solver = s
	mf.y = make([]float64, len(mf.rows))
	if mf.unscaled, mf.pinv, err = unscaledCov(x, mf.comps, m); err != nil {
		return nil, err
	}
	mf.lev = hatDiag(x)
	mf.groups = replicateGroups(fit, mf.rows)
	return mf, nil
}

// checkDesign refuses a concentration design (with its intercept column)
// that is rank deficient or badly conditioned once each column is scaled
// to unit length, and returns its condition number.
func checkDesign(fit []Row, names []string, intercept bool) (float64, error) {
	m := len(names)
	nc := m
	if intercept {
		nc++
	}
	x := mat.NewDense(len(fit), nc, nil)
	for i, r := range fit {
		for k := range m {
			x.Set(i, k, r.Conc[k])
		}
		if intercept {
			x.Set(i, m, 1)
		}
	}
	for q := range nc {
		col := mat.Col(nil, q, x)
		norm := 0.0
		for _, v := range col {
			norm = math.Hypot(norm, v)
		}
		for i := range col {
			x.Set(i, q, col[i]/norm)
		}
	}
	var svd mat.SVD
	if !svd.Factorize(x, mat.SVDNone) {
		return 0, fmt.Errorf("%w: the singular value decomposition of the design failed", errDesign)
	}
	sv := svd.Values(nil)
	hint := "vary each compound on its own, for example with pure standards of each"
	if sv[len(sv)-1] <= lsq.RankTol(x.Dims())*sv[0] {
		return math.Inf(1), fmt.Errorf("%w: the concentrations of %s are linearly dependent across the standards (%s)", errDesign, designNames(names, intercept), hint)
	}
	c := sv[0] / sv[len(sv)-1]
	if c > maxDesignCond {
		return c, fmt.Errorf("%w: the concentrations of %s vary too nearly together (condition number %.3g, limit %g; %s)", errDesign, designNames(names, intercept), c, maxDesignCond, hint)
	}
	return c, nil
}

func designNames(names []string, intercept bool) string {
	s := strings.Join(names, ", ")
	if intercept {
		s += " and the intercept"
	}
	return s
}

// commonGrid chooses the grid: the first standard's wavelengths within the
// window, or within the range all scans share.
func commonGrid(sh *Sheet, fit []Row, opt Options, warn func(string, ...any)) ([]float64, error) {
	rows := append(append([]Row(nil), fit...), sh.Blanks...)
	first := sh.Standards[0].Scan.Wavelengths
	var lo, hi float64
	if opt.WindowLo != 0 || opt.WindowHi != 0 {
		lo, hi = opt.WindowLo, opt.WindowHi
		if !finite(lo) || !finite(hi) || lo >= hi || lo < 0 {
			return nil, pkgerr.Errorf(buildPkg, "%w: window %g-%g nm is empty", errWindow, lo, hi)
		}
		covers := func(wl []float64) bool {
			s := gridSlack * (wl[len(wl)-1] - wl[0])
			return wl[0] <= lo+s && wl[len(wl)-1] >= hi-s
		}
		for _, r := range rows {
			if wl := r.Scan.Wavelengths; !covers(wl) {
				return nil, &spectrum.ParseError{File: sh.Path, Line: r.Line, Err: fmt.Errorf("%w: %s covers %g-%g nm, the window is %g-%g nm",
					errWindow, r.File, wl[0], wl[len(wl)-1], lo, hi)}
			}
		}
		if b := opt.Blank; b != nil && !covers(b.Wavelengths) {
			return nil, pkgerr.Errorf(buildPkg, "%w: blank %s covers %g-%g nm, the window is %g-%g nm",
				errWindow, b.Source, b.Wavelengths[0], b.Wavelengths[len(b.Wavelengths)-1], lo, hi)
		}
	} else {
		ss := make([]*spectrum.Spectrum, 0, len(rows)+1)
		for _, r := range rows {
			ss = append(ss, r.Scan)
		}
		if opt.Blank != nil {
			ss = append(ss, opt.Blank)
		}
		var err error
		if lo, hi, err = spectrum.CommonRange(ss); err != nil {
			return nil, pkgerr.Errorf(buildPkg, "%s: %w", sh.Path, err)
		}
		if lo > first[0] || hi < first[len(first)-1] {
			warn("%s", narrowNote(rows, opt.Blank, first, lo, hi))
		}
	}
	s := gridSlack * (first[len(first)-1] - first[0])
	var grid []float64
	for _, w := range first {
		if w >= lo-s && w <= hi+s {
			grid = append(grid, w)
		}
	}
	if len(grid) < 2 {
		return nil, pkgerr.Errorf(buildPkg, "%w: %s has %d points within %g-%g nm; need at least 2",
			errWindow, sh.Standards[0].File, len(grid), lo, hi)
	}
	var moved []int
	for i, r := range rows {
		if !onGridRun(r.Scan, grid) {
			moved = append(moved, i)
		}
	}
	if len(moved) > 0 {
		warn("%d of %d scans %s on other wavelength grids and %s interpolated linearly onto the %d points (%g-%g nm) of %s: %s",
			len(moved), len(rows), plural(len(moved), "was", "were"), plural(len(moved), "was", "were"),
			len(grid), grid[0], grid[len(grid)-1], rowName(sh.Standards[0]), rowList(moved, rows))
	}
	return grid, nil
}

// narrowNote says which scans limit the shared range lo-hi to less than
// the first standard's grid (first): those starting at lo or ending at
// hi, each with its own range, and the range the other scans share.
func narrowNote(rows []Row, blank *spectrum.Spectrum, first []float64, lo, hi float64) string {
	s := gridSlack * (first[len(first)-1] - first[0])
	cutLo, cutHi := lo > first[0]+s, hi < first[len(first)-1]-s
	limits := func(wl []float64) bool {
		return cutLo && wl[0] >= lo-s || cutHi && wl[len(wl)-1] <= hi+s
	}
	var names []string
	otherLo, otherHi := math.Inf(-1), math.Inf(1)
	span := func(wl []float64) string { return fmt.Sprintf("%g-%g nm", wl[0], wl[len(wl)-1]) }
	for _, r := range rows {
		wl := r.Scan.Wavelengths
		if limits(wl) {
			n := r.File
			if r.Column != "" {
				n += " column " + r.Column
			}
			names = append(names, fmt.Sprintf("%s (sheet line %d, %s)", n, r.Line, span(wl)))
			continue
		}
		otherLo, otherHi = max(otherLo, wl[0]), min(otherHi, wl[len(wl)-1])
	}
	if blank != nil {
		if wl := blank.Wavelengths; limits(wl) {
			names = append(names, fmt.Sprintf("the blank %s (%s)", blank.Source, span(wl)))
		} else {
			otherLo, otherHi = max(otherLo, wl[0]), min(otherHi, wl[len(wl)-1])
		}
	}
	total := len(names)
	if total > listMax {
		names = append(names[:listMax], fmt.Sprintf("and %d more", total-listMax))
	}
	return fmt.Sprintf("the grid is limited to %g-%g nm, the range all scans share, by %s %s; the other scans share %g-%g nm (leave out or rescan %s, or give a window within %g-%g nm)",
		lo, hi, plural(total, "the scan", "the scans"), strings.Join(names, ", "), otherLo, otherHi, plural(total, "it", "them"), lo, hi)
}

// onGridRun reports whether s holds the wavelengths of grid as a run, so
// that onGrid copies rather than interpolates.
func onGridRun(s *spectrum.Spectrum, grid []float64) bool {
	wl := s.Wavelengths
	i := sort.SearchFloat64s(wl, grid[0]-gridSlack*(grid[len(grid)-1]-grid[0]))
	return i+len(grid) <= len(wl) && spectrum.SameGrid(wl[i:i+len(grid)], grid)
}

// onGrid returns the values of s on grid: copied when s holds those
// wavelengths as a run, else linearly interpolated (resampled true).
func onGrid(s *spectrum.Spectrum, grid []float64) (v []float64, resampled bool, err error) {
	wl := s.Wavelengths
	i := sort.SearchFloat64s(wl, grid[0]-gridSlack*(grid[len(grid)-1]-grid[0]))
	if i+len(grid) <= len(wl) && spectrum.SameGrid(wl[i:i+len(grid)], grid) {
		return append([]float64(nil), s.Values[i:i+len(grid)]...), false, nil
	}
	v = make([]float64, len(grid))
	if err := spectrum.ResampleTo(v, wl, s.Values, grid); err != nil {
		return nil, false, fmt.Errorf("%s: %w", s.Source, err)
	}
	return v, true, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
