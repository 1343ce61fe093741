package reference

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

const (
	// DefaultCeiling is the absorbance above which readings are left out
	// when no ceiling is given. Stray light bends readings above about
	// A = 2 on ordinary instruments: common practice, not a property of
	// any one instrument.
	DefaultCeiling = 2.0
	// DefaultPathCM is the path length when none is given: the common
	// 1 cm cuvette.
	DefaultPathCM = 1.0

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

// Version is the tool version recorded in a set's provenance when
// Options.Version is empty.
var Version = "dev"

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
	// Version is the tool version for the provenance (default Version).
	Version string
	// Now gives the creation time (default time.Now), for reproducible
	// tests.
	Now func() time.Time
}

// Sentinel causes of Build errors, tested with errors.Is.
var (
	// ErrDesign: the concentrations cannot separate the compounds.
	ErrDesign = errors.New("the concentration design cannot separate the compounds")
	// ErrWindow: a scan does not cover the window, or the window is empty.
	ErrWindow = errors.New("scan does not cover the window")
	// ErrTooFewStandards: not enough standards, levels or readings.
	ErrTooFewStandards = errors.New("too few standards")
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
// condition number above 1e3: ErrDesign), a scan not covering the window
// (ErrWindow), fewer standards than coefficients plus one
// (ErrTooFewStandards).
func Build(sh *Sheet, opt Options) (*Set, error) {
	var notes []string
	warn := func(format string, a ...any) {
		msg := fmt.Sprintf(format, a...)
		notes = append(notes, msg)
		if opt.Warn != nil {
			opt.Warn(msg)
		}
	}
	if sh == nil || len(sh.Standards) == 0 {
		return nil, fmt.Errorf("reference: build: %w: the sheet has no standards", ErrTooFewStandards)
	}
	m := len(sh.Compounds)
	if m == 0 {
		return nil, fmt.Errorf("reference: build: %s: no compounds", sh.Path)
	}
	if len(sh.Units) != m {
		return nil, fmt.Errorf("reference: build: %s: %d units for %d compounds", sh.Path, len(sh.Units), m)
	}
	rowErr := func(r Row, err error) error {
		return &spectrum.ParseError{File: sh.Path, Line: r.Line, Err: err}
	}

	// Options and their defaults.
	path := opt.PathCM
	if path == 0 {
		path = DefaultPathCM
	}
	ceiling := opt.Ceiling
	if ceiling == 0 {
		ceiling = DefaultCeiling
	}
	floor := opt.Floor
	switch {
	case !finite(path) || path <= 0:
		return nil, fmt.Errorf("reference: build: path length %g cm must be positive", path)
	case !finite(ceiling) || !finite(floor) || floor < 0 || ceiling <= floor:
		return nil, fmt.Errorf("reference: build: ceiling %g and floor %g: need 0 <= floor < ceiling", ceiling, floor)
	}
	intercept := !opt.ThroughOrigin

	// The rows that enter the fit.
	fit := append([]Row(nil), sh.Standards...)
	if opt.Blank != nil {
		fit = append(fit, sh.Blanks...)
	}
	for _, r := range append(append([]Row(nil), fit...), sh.Blanks...) {
		if r.Scan == nil {
			return nil, rowErr(r, fmt.Errorf("%w: %s: no scan loaded", ErrScanFile, r.File))
		}
		if err := r.Scan.Check(); err != nil {
			return nil, rowErr(r, err)
		}
		if len(r.Conc) != m {
			return nil, rowErr(r, fmt.Errorf("%w: %d concentrations for %d compounds", ErrConcentration, len(r.Conc), m))
		}
		for k, v := range r.Conc {
			if !finite(v) || v < 0 {
				return nil, rowErr(r, fmt.Errorf("%w: %s is %v; concentrations must be finite and not negative", ErrConcentration, sh.Compounds[k], v))
			}
		}
	}
	for k, name := range sh.Compounds {
		varies := false
		for _, r := range fit[1:] {
			if r.Conc[k] != fit[0].Conc[k] {
				varies = true
				break
			}
		}
		if !varies {
			return nil, fmt.Errorf("reference: build: %s: %w: %s is %g in every standard, so its absorptivity cannot be found", sh.Path, ErrNoVariation, name, fit[0].Conc[k])
		}
	}
	ncoef := m
	if intercept {
		ncoef++
	}
	if len(fit) <= ncoef {
		return nil, fmt.Errorf("reference: build: %s: %w: %d standards for %d coefficients per wavelength; at least %d are needed to estimate the noise",
			sh.Path, ErrTooFewStandards, len(fit), ncoef, ncoef+1)
	}
	dcond, err := checkDesign(fit, sh.Compounds, intercept)
	if err != nil {
		return nil, fmt.Errorf("reference: build: %s: %w", sh.Path, err)
	}
	if dcond > warnDesignCond {
		warn("%s: the concentrations of %s vary nearly together across the standards (condition number %.3g, above %g): their absorptivities are uncertain; add standards that vary each compound on its own",
			sh.Path, designNames(sh.Compounds, intercept), dcond, warnDesignCond)
	}

	// Common grid.
	grid, err := commonGrid(sh, fit, opt, warn)
	if err != nil {
		return nil, err
	}
	p := len(grid)
	var blank []float64
	prov := Provenance{Tool: "huesolve", Version: opt.Version, Sheet: sh.Path}
	if prov.Version == "" {
		prov.Version = Version
	}
	switch {
	case opt.Blank != nil:
		b := opt.Blank.Clone()
		if err := b.ToAbsorbance(); err != nil {
			return nil, fmt.Errorf("reference: blank: %w", err)
		}
		if blank, _, err = onGrid(b, grid); err != nil {
			return nil, fmt.Errorf("reference: blank %s: %w", b.Source, err)
		}
		prov.Blank = b.Source.File
		if prov.Blank == "" {
			prov.Blank = b.Name
		}
		prov.BlankSHA256 = opt.BlankSHA256
	case len(sh.Blanks) > 0:
		blank = make([]float64, p)
		for _, r := range sh.Blanks {
			v, _, err := onGrid(r.Scan, grid)
			if err != nil {
				return nil, rowErr(r, err)
			}
			for j := range blank {
				blank[j] += v[j]
			}
		}
		for j := range blank {
			blank[j] /= float64(len(sh.Blanks))
		}
		prov.Blank = "sheet rows"
	default:
		if intercept {
			warn("no blank given and no blank rows in %s: absorbances are used as read (the intercept takes up the solvent and cell)", sh.Path)
		} else {
			warn("no blank given and no blank rows in %s: absorbances are used as read, so the solvent and cell count as analyte absorbance in a through-origin fit", sh.Path)
		}
	}

	// Raw readings, ceiling mask, corrected and pre-treated absorbances.
	n := len(fit)
	raw := mat.NewDense(n, p, nil)
	abs := mat.NewDense(n, p, nil)
	for i, r := range fit {
		v, _, err := onGrid(r.Scan, grid)
		if err != nil {
			return nil, rowErr(r, err)
		}
		raw.SetRow(i, v)
		if blank != nil {
			for j := range v {
				v[j] -= blank[j]
			}
		}
		t, err := baseline.ApplyAll(opt.Pretreat, grid, v)
		if err != nil {
			return nil, rowErr(r, fmt.Errorf("pre-treatment of %s: %w", r.File, err))
		}
		if len(t) != p {
			return nil, rowErr(r, fmt.Errorf("pre-treatment of %s returned %d points for %d", r.File, len(t), p))
		}
		for j, x := range t {
			if !finite(x) {
				return nil, rowErr(r, fmt.Errorf("pre-treatment of %s gave %v at %g nm", r.File, x, grid[j]))
			}
		}
		abs.SetRow(i, t)
	}
	// A reading above the ceiling is left out, and so are the pre-treated
	// values a smoothing step carried it into (baseline.Reach points
	// either side), as solve does for samples.
	reach := baseline.Reach(opt.Pretreat)
	keep := make([][]bool, n)
	for i := range keep {
		keep[i] = make([]bool, p)
		for j := range keep[i] {
			keep[i][j] = true
		}
		for j, v := range raw.RawRowView(i) {
			if v > ceiling {
				for k := max(j-reach, 0); k <= min(j+reach, p-1); k++ {
					keep[i][k] = false
				}
			}
		}
	}

	// Per-wavelength least squares on all rows, then again without the
	// standards above a compound's linear range (or above what the
	// ceiling let through at its band maximum) until nothing more is
	// left out: the absorptivities rest on the range the set states.
	fp := fitParams{sh: sh, fit: fit, abs: abs, keep: keep, grid: grid, path: path,
		ceiling: ceiling, floor: floor, intercept: intercept}
	use := make([]bool, n)
	for i := range use {
		use[i] = true
	}
	res, err := fp.run(use)
	if err != nil {
		return nil, err
	}
	everCurved := make([]bool, m)
	everClipped := make([]bool, m)
	leftOutRows := make([][]int, m) // per compound: fit rows it caused to be left out
	noLinear := make([]bool, m)
	for range len(fit) {
		for k := range m {
			everCurved[k] = everCurved[k] || res.set.Compounds[k].Linearity.Curved
			everClipped[k] = everClipped[k] || res.clipped[k]
		}
		next := append([]bool(nil), use...)
		var cutBy [][]int
		changed := false
		for k := range m {
			c := &res.set.Compounds[k]
			l := c.Linearity
			// Curved even on the lowest levels Mandel's test can judge
			// (3): no linear range to fit within; the lowest levels are
			// still the nearest to one, so the fit keeps to them.
			noLinear[k] = l.Curved && curvedWithinRange(l)
			cut := l.RangeHi
			var rows []int
			for i, r := range fit {
				if next[i] && r.Conc[k] > cut {
					next[i] = false
					rows = append(rows, i)
				}
			}
			cutBy = append(cutBy, rows)
			changed = changed || len(rows) > 0
		}
		if !changed {
			break
		}
		if err := checkKept(fit, next, sh.Compounds, intercept); err != nil {
			warn("%s: the absorptivities could not be refitted within the linear range (%v); they rest on all standards, so results above the stated linear range are biased", sh.Path, err)
			break
		}
		nres, err := fp.run(next)
		if err != nil {
			warn("%s: the absorptivities could not be refitted within the linear range (%v); they rest on all standards, so results above the stated linear range are biased", sh.Path, err)
			break
		}
		for k := range m {
			leftOutRows[k] = append(leftOutRows[k], cutBy[k]...)
		}
		use, res = next, nres
	}
	set := res.set
	set.Pretreat = append([]baseline.Step(nil), opt.Pretreat...)
	if res.leftOut > 0 {
		if reach > 0 {
			warn("%d readings above the ceiling (A > %g), or within %d points of one after smoothing, were left out of the fit", res.leftOut, ceiling, reach)
		} else {
			warn("%d readings above the ceiling (A > %g) were left out of the fit", res.leftOut, ceiling)
		}
	}
	if res.unsolved > 0 {
		warn("at %d of %d wavelengths too few standards stayed under the ceiling to fit; no compound is usable there (noise set to the largest found, %.3g)",
			res.unsolved, p, res.worst)
	}
	for k := range set.Compounds {
		c := &set.Compounds[k]
		c.Flags = compoundFlags(c.Linearity, everClipped[k], floor)
		if b := c.Linearity.Band; b.TooCurved() && !c.Linearity.Curved {
			warn("%s: the calibration line bends at %d of %d wavelengths of its band (%g-%g nm) by Mandel's test, though not at its maximum (%g nm); check the upper standards and the linear range",
				c.Name, b.Curved, b.Tested, b.LoNM, b.HiNM, c.PeakNM)
		}
		if l := c.Linearity; l.CurvedUnconfirmed && !hasString(c.Flags, FlagCurved) {
			warn("%s: curvature at the band maximum (%g nm) only, not confirmed at neighbouring wavelengths: likely chance at the %g %% level (Mandel p %.2g); not flagged, and the linear range keeps every level",
				c.Name, c.PeakNM, 100*TestLevel, l.MandelP)
		}
		if everCurved[k] && !hasString(c.Flags, FlagCurved) {
			c.Flags = append([]string{FlagCurved}, c.Flags...)
		}
		if noLinear[k] {
			warn("%s: the calibration line at %g nm bends even over its lowest levels %s: it cannot be quantified linearly with these standards, and its results are approximate (add lower levels, closer together)",
				c.Name, c.PeakNM, levelList(c.Linearity))
		}
		if rows := leftOutRows[k]; len(rows) > 0 {
			var levels []float64
			seen := map[float64]bool{}
			for _, i := range rows {
				r := fit[i]
				c.StandardsLeftOut = append(c.StandardsLeftOut, Standard{File: r.File, Column: r.Column, SHA256: r.SHA256,
					Conc: append([]float64(nil), r.Conc...), Line: r.Line})
				if v := r.Conc[k]; !seen[v] {
					seen[v] = true
					levels = append(levels, v)
				}
			}
			sort.Float64s(levels)
			why := "its calibration line bends above that by Mandel's test"
			if !everCurved[k] {
				why = fmt.Sprintf("higher standards read above the ceiling of A = %g at the band maximum", ceiling)
			}
			warn("%s: the absorptivities rest on the standards up to %s only, as %s; left out %s %s: %s",
				c.Name, fmtNum(c.MaxStandard), why, plural(len(levels), "level", "levels"), numList(levels), rowList(rows, fit))
		}
	}

	// Provenance.
	now := time.Now
	if opt.Now != nil {
		now = opt.Now
	}
	prov.Created = now().UTC().Format(time.RFC3339)
	for _, r := range append(append([]Row(nil), sh.Standards...), sh.Blanks...) {
		prov.Standards = append(prov.Standards, Standard{
			File: r.File, Column: r.Column, SHA256: r.SHA256,
			Conc: append([]float64(nil), r.Conc...), Line: r.Line,
		})
	}
	sort.SliceStable(prov.Standards, func(a, b int) bool { return prov.Standards[a].Line < prov.Standards[b].Line })
	prov.Notes = notes
	set.Provenance = prov
	if err := set.Validate(); err != nil {
		return nil, fmt.Errorf("reference: build: %s: %w", sh.Path, err)
	}
	return set, nil
}

// fitParams are the inputs of one least-squares pass of Build.
type fitParams struct {
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
	set      *Set
	clipped  []bool // per compound: standards above the ceiling at its band maximum
	leftOut  int    // readings above the ceiling, over all wavelengths
	unsolved int    // wavelengths where too few standards stayed under the ceiling
	worst    float64
}

// run fits the rows marked in use: at each wavelength, one solver per
// distinct mask of readings under the ceiling; then each compound's band
// maximum, standards range and calibration line. Rows not in use still
// appear in the lines' Data, as readings not used.
func (fp *fitParams) run(use []bool) (*fitResult, error) {
	sh, grid, path, intercept := fp.sh, fp.grid, fp.path, fp.intercept
	m, p := len(sh.Compounds), len(grid)
	var sel []int
	for i, u := range use {
		if u {
			sel = append(sel, i)
		}
	}
	n := len(sel)
	fit := make([]Row, n)
	keep := make([][]bool, n)
	for r, i := range sel {
		fit[r], keep[r] = fp.fit[i], fp.keep[i]
	}
	set := &Set{
		Schema:    SchemaVersion,
		Grid:      grid,
		Compounds: make([]Compound, m),
		Noise:     make([]float64, p),
		PathCM:    path,
		Ceiling:   fp.ceiling,
		Floor:     fp.floor,
		Intercept: intercept,
	}
	res := &fitResult{set: set, clipped: make([]bool, m)}
	kraw := make([][]float64, m) // fitted K*b, absorbance per unit concentration
	var icpt []float64
	if intercept {
		icpt = make([]float64, p)
	}
	for k := range set.Compounds {
		c := &set.Compounds[k]
		c.Name, c.Unit = sh.Compounds[k], sh.Units[k]
		c.Absorptivity = make([]float64, p)
		c.SE = make([]float64, p)
		c.Usable = make([]bool, p)
		kraw[k] = make([]float64, p)
	}
	fits := map[string]*maskFit{}
	key := make([]byte, n)
	solved := make([]bool, p)
	for j := range p {
		for i := range n {
			key[i] = '0'
			if keep[i][j] {
				key[i] = '1'
			} else {
				res.leftOut++
				for k := range m {
					if fit[i].Conc[k] > 0 {
						set.Compounds[k].LeftOut++
					}
				}
			}
		}
		mf, ok := fits[string(key)]
		if !ok {
			var err error
			if mf, err = newMaskFit(fit, keep, j, m, intercept); err != nil {
				return nil, fmt.Errorf("reference: build: %s: least squares at %g nm: %w", sh.Path, grid[j], err)
			}
			fits[string(key)] = mf
		}
		if mf.solver == nil {
			continue
		}
		for r, i := range mf.rows {
			mf.y[r] = fp.abs.At(sel[i], j)
		}
		if err := mf.solver.Solve(&mf.res, mf.y); err != nil {
			return nil, fmt.Errorf("reference: build: least squares at %g nm: %w", grid[j], err)
		}
		if mf.res.DoF <= 0 {
			continue
		}
		solved[j] = true
		for q, k := range mf.comps {
			c := &set.Compounds[k]
			kraw[k][j] = mf.res.Coef[q]
			c.Absorptivity[j] = mf.res.Coef[q] / path
			c.SE[j] = mf.res.SE[q] / path
			c.Usable[j] = mf.levelsOK[q]
		}
		if intercept {
			icpt[j] = mf.res.Coef[len(mf.comps)]
		}
		set.Noise[j] = math.Sqrt(mf.res.RSS / float64(mf.res.DoF))
	}
	nsolved := 0
	for j, ok := range solved {
		if ok {
			nsolved++
			res.worst = max(res.worst, set.Noise[j])
		}
	}
	if nsolved == 0 {
		return nil, fmt.Errorf("reference: build: %s: %w: at no wavelength did enough standards stay under the ceiling of A = %g to fit (dilute the standards or choose another window)",
			sh.Path, ErrTooFewStandards, fp.ceiling)
	}
	if nsolved < p {
		res.unsolved = p - nsolved
		for j, ok := range solved {
			if !ok {
				set.Noise[j] = res.worst
			}
		}
	}

	// Per compound: band maximum, standards range, linearity.
	for k := range set.Compounds {
		c := &set.Compounds[k]
		if intercept {
			c.Intercept = icpt
		}
		jp := -1
		for j := range p {
			if c.Usable[j] && (jp < 0 || c.Absorptivity[j] > c.Absorptivity[jp]) {
				jp = j
			}
		}
		if jp < 0 {
			return nil, fmt.Errorf("reference: build: %s: %w: %s has fewer than %d levels under the ceiling of A = %g at every wavelength (dilute the standards or add levels)",
				sh.Path, ErrTooFewStandards, c.Name, minLevels, fp.ceiling)
		}
		c.PeakNM = grid[jp]
		c.MinStandard, c.MaxStandard = math.Inf(1), 0
		for _, r := range fit {
			if v := r.Conc[k]; v > 0 {
				c.MinStandard = min(c.MinStandard, v)
				c.MaxStandard = max(c.MaxStandard, v)
			}
		}
		// pointsAt is the calibration line of compound k at grid index
		// j: the readings of its standards (and blanks) with the other
		// compounds' fitted contributions removed.
		pointsAt := func(j int) []Point {
			var pts []Point
			for i, r := range fp.fit {
				if r.Conc[k] == 0 && !allZero(r.Conc) {
					continue
				}
				y := fp.abs.At(i, j)
				for l := range m {
					if l != k {
						y -= r.Conc[l] * kraw[l][j]
					}
				}
				pts = append(pts, Point{Conc: r.Conc[k], Absorbance: y, Used: use[i] && fp.keep[i][j]})
			}
			return pts
		}
		for i, r := range fp.fit {
			if (r.Conc[k] != 0 || allZero(r.Conc)) && use[i] && !fp.keep[i][jp] {
				res.clipped[k] = true
			}
		}
		var band []int
		for j := range p {
			if c.Usable[j] && c.Absorptivity[j] >= BandFraction*c.Absorptivity[jp] {
				band = append(band, j)
			}
		}
		bl := bandLine(grid, band, jp, pointsAt)
		lin, err := lineTestAt(pointsAt(jp), fp.floor, bl.ConfirmsPeak())
		if err != nil {
			return nil, fmt.Errorf("reference: build: %s: %s at %g nm: %w", sh.Path, c.Name, c.PeakNM, err)
		}
		lin.Band = bl
		c.Linearity = lin
	}
	return res, nil
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
		return fmt.Errorf("%w: %d standards would remain for %d coefficients per wavelength", ErrTooFewStandards, len(rows), ncoef)
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
			return fmt.Errorf("%w: %s would be %g in every standard left", ErrNoVariation, name, rows[0].Conc[k])
		}
	}
	_, err := checkDesign(rows, names, intercept)
	return err
}

// curvedWithinRange reports whether the used readings of l up to its
// range's top still fail Mandel's test (the range search stopped at the
// fewest levels the test can judge).
func curvedWithinRange(l Linearity) bool {
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
func levelList(l Linearity) string {
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

func hasString(list []string, s string) bool {
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
		return 0, fmt.Errorf("%w: the singular value decomposition of the design failed", ErrDesign)
	}
	sv := svd.Values(nil)
	hint := "vary each compound on its own, for example with pure standards of each"
	if sv[len(sv)-1] <= lsq.RankTol(x.Dims())*sv[0] {
		return math.Inf(1), fmt.Errorf("%w: the concentrations of %s are linearly dependent across the standards (%s)", ErrDesign, designNames(names, intercept), hint)
	}
	c := sv[0] / sv[len(sv)-1]
	if c > maxDesignCond {
		return c, fmt.Errorf("%w: the concentrations of %s vary too nearly together (condition number %.3g, limit %g; %s)", ErrDesign, designNames(names, intercept), c, maxDesignCond, hint)
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
			return nil, fmt.Errorf("reference: build: %w: window %g-%g nm is empty", ErrWindow, lo, hi)
		}
		covers := func(wl []float64) bool {
			s := gridSlack * (wl[len(wl)-1] - wl[0])
			return wl[0] <= lo+s && wl[len(wl)-1] >= hi-s
		}
		for _, r := range rows {
			if wl := r.Scan.Wavelengths; !covers(wl) {
				return nil, &spectrum.ParseError{File: sh.Path, Line: r.Line, Err: fmt.Errorf("%w: %s covers %g-%g nm, the window is %g-%g nm",
					ErrWindow, r.File, wl[0], wl[len(wl)-1], lo, hi)}
			}
		}
		if b := opt.Blank; b != nil && !covers(b.Wavelengths) {
			return nil, fmt.Errorf("reference: build: %w: blank %s covers %g-%g nm, the window is %g-%g nm",
				ErrWindow, b.Source, b.Wavelengths[0], b.Wavelengths[len(b.Wavelengths)-1], lo, hi)
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
			return nil, fmt.Errorf("reference: build: %s: %w", sh.Path, err)
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
		return nil, fmt.Errorf("reference: build: %w: %s has %d points within %g-%g nm; need at least 2",
			ErrWindow, sh.Standards[0].File, len(grid), lo, hi)
	}
	var moved []int
	for i, r := range rows {
		if _, resampled, err := onGrid(r.Scan, grid); err != nil {
			return nil, &spectrum.ParseError{File: sh.Path, Line: r.Line, Err: err}
		} else if resampled {
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
