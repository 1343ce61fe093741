package calibration

import (
	"context"
	"fmt"
	"slices"
	"sort"
	"time"

	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/spectrum"
)

// builder is the state of one Build, filled in section by section.
type builder struct {
	ctx  context.Context
	sh   *Sheet
	opt  Options
	drop map[int]string // sheet lines to leave out (DropOutliers), with the reason
	res  *fitResult     // the final fit

	dropped []Row    // the rows drop left out
	notes   []string // the warnings given, for the provenance
	m       int      // compounds

	// Options and their defaults.
	path, ceiling, floor float64
	intercept            bool

	fit   []Row // the rows that enter the fit
	grid  []float64
	blank []float64 // nil when the absorbances are used as read
	prov  reference.Provenance

	abs   *mat.Dense // blank-corrected, pre-treated, one row per fit row
	keep  [][]bool   // under the ceiling, per fit row and wavelength
	reach int        // points a smoothing step carries a reading

	// What the refits within the linear range did, per compound.
	everCurved  []bool
	everClipped []bool
	leftOutRows [][]int // fit rows it caused to be left out
	noLinear    []bool
}

// warn keeps a note on what Build did and passes it to Options.Warn.
func (b *builder) warn(format string, a ...any) {
	msg := fmt.Sprintf(format, a...)
	b.notes = append(b.notes, msg)
	if b.opt.Warn != nil {
		b.opt.Warn(msg)
	}
}

// rowErr places err at the sheet row r.
func (b *builder) rowErr(r Row, err error) error {
	return &spectrum.ParseError{File: b.sh.Path, Line: r.Line, Err: err}
}

// checkSheet checks that the sheet has standards, compounds and units.
func (b *builder) checkSheet() error {
	sh := b.sh
	if sh == nil || len(sh.Standards) == 0 {
		return pkgerr.Errorf(buildPkg, "%w: the sheet has no standards", errTooFewStandards)
	}
	b.m = len(sh.Compounds)
	if b.m == 0 {
		return pkgerr.Errorf(buildPkg, "%s: no compounds", sh.Path)
	}
	if len(sh.Units) != b.m {
		return pkgerr.Errorf(buildPkg, "%s: %d units for %d compounds", sh.Path, len(sh.Units), b.m)
	}
	return nil
}

// defaults sets the options and their defaults, and checks them.
func (b *builder) defaults() error {
	b.path = b.opt.PathCM
	if b.path == 0 {
		b.path = reference.DefaultPathCM
	}
	b.ceiling = b.opt.Ceiling
	if b.ceiling == 0 {
		b.ceiling = reference.DefaultCeiling
	}
	b.floor = b.opt.Floor
	switch {
	case !finite(b.path) || b.path <= 0:
		return pkgerr.Errorf(buildPkg, "path length %g cm must be positive", b.path)
	case !finite(b.ceiling) || !finite(b.floor) || b.floor < 0 || b.ceiling <= b.floor:
		return pkgerr.Errorf(buildPkg, "ceiling %g and floor %g: need 0 <= floor < ceiling", b.ceiling, b.floor)
	}
	b.intercept = !b.opt.ThroughOrigin
	return nil
}

// rows chooses the rows that enter the fit, checks each of them and the
// concentration design they make.
func (b *builder) rows() error {
	sh := b.sh
	b.fit = append([]Row(nil), sh.Standards...)
	if b.opt.Blank != nil {
		b.fit = append(b.fit, sh.Blanks...)
	}
	if len(b.drop) > 0 {
		kept := b.fit[:0]
		for _, r := range b.fit {
			if _, ok := b.drop[r.Line]; ok {
				b.dropped = append(b.dropped, r)
				continue
			}
			kept = append(kept, r)
		}
		b.fit = kept
	}
	for _, r := range append(append([]Row(nil), b.fit...), sh.Blanks...) {
		if err := b.checkRow(r); err != nil {
			return err
		}
	}
	fit := b.fit
	for k, name := range sh.Compounds {
		varies := false
		for _, r := range fit[1:] {
			if r.Conc[k] != fit[0].Conc[k] {
				varies = true
				break
			}
		}
		if !varies {
			return pkgerr.Errorf(buildPkg, "%s: %w: %s is %g in every standard, so its absorptivity cannot be found", sh.Path, errNoVariation, name, fit[0].Conc[k])
		}
	}
	ncoef := b.m
	if b.intercept {
		ncoef++
	}
	if len(fit) <= ncoef {
		return pkgerr.Errorf(buildPkg, "%s: %w: %d standards for %d coefficients per wavelength; at least %d are needed to estimate the noise",
			sh.Path, errTooFewStandards, len(fit), ncoef, ncoef+1)
	}
	dcond, err := checkDesign(fit, sh.Compounds, b.intercept)
	if err != nil {
		return pkgerr.Errorf(buildPkg, "%s: %w", sh.Path, err)
	}
	if dcond > warnDesignCond {
		b.warn("%s: the concentrations of %s vary nearly together across the standards (condition number %.3g, above %g): their absorptivities are uncertain; add standards that vary each compound on its own",
			sh.Path, designNames(sh.Compounds, b.intercept), dcond, warnDesignCond)
	}
	return nil
}

// checkRow checks that row r has a valid scan and a finite, non-negative
// concentration of every compound.
func (b *builder) checkRow(r Row) error {
	if r.Scan == nil {
		return b.rowErr(r, fmt.Errorf("%w: %s: no scan loaded", errScanFile, r.File))
	}
	if err := r.Scan.Check(); err != nil {
		return b.rowErr(r, err)
	}
	if len(r.Conc) != b.m {
		return b.rowErr(r, fmt.Errorf("%w: %d concentrations for %d compounds", errConcentration, len(r.Conc), b.m))
	}
	for k, v := range r.Conc {
		if !finite(v) || v < 0 {
			return b.rowErr(r, fmt.Errorf("%w: %s is %v; concentrations must be finite and not negative", errConcentration, b.sh.Compounds[k], v))
		}
	}
	return nil
}

// gridAndBlank chooses the common grid and puts the blank on it, noting
// where it came from in the provenance.
func (b *builder) gridAndBlank() error {
	sh, opt := b.sh, b.opt
	grid, err := commonGrid(sh, b.fit, opt, b.warn)
	if err != nil {
		return err
	}
	b.grid = grid
	b.prov = reference.Provenance{Tool: "huesolve", Version: opt.Version, Sheet: sh.Path}
	if b.prov.Version == "" {
		b.prov.Version = defaultVersion
	}
	switch {
	case opt.Blank != nil:
		if err := b.separateBlank(); err != nil {
			return err
		}
		return b.checkBlanks()
	case len(sh.Blanks) > 0:
		if err := b.checkBlanks(); err != nil {
			return err
		}
		return b.sheetBlank()
	case b.intercept:
		b.warn("no blank given and no blank rows in %s: absorbances are used as read (the intercept takes up the solvent and cell)", sh.Path)
	default:
		b.warn("no blank given and no blank rows in %s: absorbances are used as read, so the solvent and cell count as analyte absorbance in a through-origin fit", sh.Path)
	}
	return nil
}

// blankAbsorbTol is the most absorbance a blank row (every concentration
// zero) may show above the lowest blank (or the --blank scan) anywhere on
// the grid: blanks of one solvent and cell agree to a few mAU, while the
// lowest standards of a dye read 0.05 AU and more; a "blank" that absorbs
// more is a standard whose compound column is missing or zero (project
// choice).
const blankAbsorbTol = 0.02

// checkBlanks refuses blank rows that absorb clearly above the lowest
// blank (or the separate blank): a deleted compound column turns that
// compound's standards into such rows.
func (b *builder) checkBlanks() error {
	blanks := b.sh.Blanks
	if len(blanks) == 0 {
		return nil
	}
	vals := make([][]float64, len(blanks))
	for i, r := range blanks {
		v, _, err := onGrid(r.Scan, b.grid)
		if err != nil {
			return b.rowErr(r, err)
		}
		vals[i] = v
	}
	ref := b.blank
	if b.opt.Blank == nil {
		ref = append([]float64(nil), vals[0]...)
		for _, v := range vals[1:] {
			for j := range ref {
				ref[j] = min(ref[j], v[j])
			}
		}
	}
	var bad []int
	worst := 0.0
	for i, v := range vals {
		d := 0.0
		for j := range v {
			d = max(d, v[j]-ref[j])
		}
		if d > blankAbsorbTol {
			bad = append(bad, i)
			worst = max(worst, d)
		}
	}
	if len(bad) == 0 {
		return nil
	}
	than := "the lowest blank row"
	if b.opt.Blank != nil {
		than = "the blank scan"
	}
	return pkgerr.Errorf(buildPkg, "%s: %d blank %s (every concentration zero) absorb up to %.3g above %s (limit %g): %s; is a compound column missing from the sheet, or its concentrations left at 0? Give each standard's concentrations, or rescan the blanks",
		b.sh.Path, len(bad), plural(len(bad), "row", "rows"), worst, than, blankAbsorbTol, rowList(bad, blanks))
}

// separateBlank puts Options.Blank on the grid.
func (b *builder) separateBlank() error {
	bl := b.opt.Blank.Clone()
	if err := bl.ToAbsorbance(); err != nil {
		return pkgerr.Errorf("calibration", "blank: %w", err)
	}
	var err error
	if b.blank, _, err = onGrid(bl, b.grid); err != nil {
		return pkgerr.Errorf("calibration", "blank %s: %w", bl.Source, err)
	}
	b.prov.Blank = bl.Source.File
	if b.prov.Blank == "" {
		b.prov.Blank = bl.Name
	}
	b.prov.BlankSHA256 = b.opt.BlankSHA256
	return nil
}

// sheetBlank makes the blank the mean of the sheet's blank rows.
func (b *builder) sheetBlank() error {
	blanks := b.sh.Blanks
	blank := make([]float64, len(b.grid))
	for _, r := range blanks {
		v, _, err := onGrid(r.Scan, b.grid)
		if err != nil {
			return b.rowErr(r, err)
		}
		for j := range blank {
			blank[j] += v[j]
		}
	}
	for j := range blank {
		blank[j] /= float64(len(blanks))
	}
	b.blank = blank
	b.prov.Blank = "sheet rows"
	return nil
}

// readings puts the fit rows on the grid: raw readings, ceiling mask,
// corrected and pre-treated absorbances.
func (b *builder) readings() error {
	n, p := len(b.fit), len(b.grid)
	b.abs = mat.NewDense(n, p, nil)
	// A reading above the ceiling is left out, and so are the pre-treated
	// values a smoothing step carried it into (baseline.Reach points
	// either side), as solve does for samples.
	b.reach = baseline.Reach(b.opt.Pretreat)
	b.keep = make([][]bool, n)
	raw := make([][]float64, n)
	for i, r := range b.fit {
		if err := b.ctx.Err(); err != nil {
			return pkgerr.Errorf(buildPkg, "stopped at standard %d of %d: %w", i, n, err)
		}
		v, _, err := onGrid(r.Scan, b.grid)
		if err != nil {
			return b.rowErr(r, err)
		}
		b.keep[i] = underCeiling(v, b.ceiling, b.reach)
		raw[i] = slices.Clone(v)
		if b.blank != nil {
			for j := range v {
				v[j] -= b.blank[j]
			}
		}
		t, err := b.pretreat(r, v)
		if err != nil {
			return err
		}
		b.abs.SetRow(i, t)
	}
	return b.impossible(raw)
}

// impossibleShare is the share of the grid at which a standard must read
// above the ceiling where a standard holding at least as much of every
// compound reads below half the ceiling before it is refused: far more
// than noise or a stray point can make (project choice).
const impossibleShare = 0.1

// impossible refuses a standard whose raw readings (raw, per fit row)
// are impossible for its level: absorbance grows with every compound's
// concentration (Beer-Lambert, absorptivities >= 0), so a standard that
// reads above the ceiling where one holding at least as much of every
// compound reads below half the ceiling, at impossibleShare of the grid
// or more, was not read as meant (%T read as absorbance, most often) or
// has its concentrations on the wrong row.
func (b *builder) impossible(raw [][]float64) error {
	p := len(b.grid)
	for i, ri := range b.fit {
		for j, rj := range b.fit {
			if i == j || !dominates(rj.Conc, ri.Conc) {
				continue
			}
			n := 0
			for w := range p {
				if raw[i][w] > b.ceiling && raw[j][w] < b.ceiling/2 {
					n++
				}
			}
			if float64(n) >= impossibleShare*float64(p) {
				return b.rowErr(ri, pkgerr.Errorf(buildPkg, "%s reads above the ceiling A = %g at %d of %d wavelengths where %s (line %d), which holds at least as much of every compound, reads below %g: impossible for its level; if the scan is %%T, give --quantity %%T (or say %%T in its header), else check its concentrations in the sheet",
					ri.Scan.Source, b.ceiling, n, p, rj.Scan.Source, rj.Line, b.ceiling/2))
			}
		}
	}
	return nil
}

// dominates reports whether hi holds at least as much of every compound
// as lo, and more of one.
func dominates(hi, lo []float64) bool {
	more := false
	for k := range hi {
		if hi[k] < lo[k] {
			return false
		}
		more = more || hi[k] > lo[k]
	}
	return more
}

// pretreat applies the pre-treatment steps to the blank-corrected
// readings v of row r and checks what they return.
func (b *builder) pretreat(r Row, v []float64) ([]float64, error) {
	t, err := baseline.ApplyAll(b.opt.Pretreat, b.grid, v)
	if err != nil {
		return nil, b.rowErr(r, fmt.Errorf("pre-treatment of %s: %w", r.File, err))
	}
	if len(t) != len(b.grid) {
		return nil, b.rowErr(r, fmt.Errorf("pre-treatment of %s returned %d points for %d", r.File, len(t), len(b.grid)))
	}
	for j, x := range t {
		if !finite(x) {
			return nil, b.rowErr(r, fmt.Errorf("pre-treatment of %s gave %v at %g nm", r.File, x, b.grid[j]))
		}
	}
	return t, nil
}

// underCeiling marks the readings raw kept: false at a reading above the
// ceiling and within reach points of one.
func underCeiling(raw []float64, ceiling float64, reach int) []bool {
	p := len(raw)
	keep := make([]bool, p)
	for j := range keep {
		keep[j] = true
	}
	for j, v := range raw {
		if v > ceiling {
			for k := max(j-reach, 0); k <= min(j+reach, p-1); k++ {
				keep[k] = false
			}
		}
	}
	return keep
}

// fitWithinRange fits per-wavelength least squares on all rows, then
// again without the standards above a compound's linear range (or above
// what the ceiling let through at its band maximum) until nothing more is
// left out: the absorptivities rest on the range the set states.
func (b *builder) fitWithinRange() (*fitResult, error) {
	fp := fitParams{ctx: b.ctx, sh: b.sh, fit: b.fit, abs: b.abs, keep: b.keep, grid: b.grid, path: b.path,
		ceiling: b.ceiling, floor: b.floor, intercept: b.intercept}
	n, m := len(b.fit), b.m
	use := make([]bool, n)
	for i := range use {
		use[i] = true
	}
	res, err := fp.run(use)
	if err != nil {
		return nil, err
	}
	b.everCurved = make([]bool, m)
	b.everClipped = make([]bool, m)
	b.leftOutRows = make([][]int, m)
	b.noLinear = make([]bool, m)
	for range n {
		for k := range m {
			b.everCurved[k] = b.everCurved[k] || res.set.Compounds[k].Linearity.Curved
			b.everClipped[k] = b.everClipped[k] || res.clipped[k]
		}
		next, cutBy, changed := b.cutAboveRange(res, use)
		if !changed {
			break
		}
		if err := checkKept(b.fit, next, b.sh.Compounds, b.intercept); err != nil {
			b.refitFailed(err)
			break
		}
		nres, err := fp.run(next)
		if cerr := b.ctx.Err(); cerr != nil {
			return nil, pkgerr.Errorf(buildPkg, "stopped while refitting within the linear range: %w", cerr)
		}
		if err != nil {
			b.refitFailed(err)
			break
		}
		for k := range m {
			b.leftOutRows[k] = append(b.leftOutRows[k], cutBy[k]...)
		}
		use, res = next, nres
	}
	return res, nil
}

// cutAboveRange leaves out of the rows in use those above each compound's
// linear range in res, returning the rows kept, the rows each compound
// cut and whether any were cut.
func (b *builder) cutAboveRange(res *fitResult, use []bool) (next []bool, cutBy [][]int, changed bool) {
	next = append([]bool(nil), use...)
	for k := range b.m {
		l := res.set.Compounds[k].Linearity
		// Curved even on the lowest levels Mandel's test can judge
		// (3): no linear range to fit within; the lowest levels are
		// still the nearest to one, so the fit keeps to them.
		b.noLinear[k] = l.Curved && curvedWithinRange(l)
		cut := l.RangeHi
		var rows []int
		for i, r := range b.fit {
			if next[i] && r.Conc[k] > cut {
				next[i] = false
				rows = append(rows, i)
			}
		}
		cutBy = append(cutBy, rows)
		changed = changed || len(rows) > 0
	}
	return next, cutBy, changed
}

// refitFailed warns that the refit within the linear range failed with err.
func (b *builder) refitFailed(err error) {
	b.warn("%s: the absorptivities could not be refitted within the linear range (%v); they rest on all standards, so results above the stated linear range are biased", b.sh.Path, err)
}

// ceilingNotes says how many readings the ceiling left out and at how
// many wavelengths nothing could be fitted.
func (b *builder) ceilingNotes(res *fitResult) {
	if res.leftOut > 0 {
		if b.reach > 0 {
			b.warn("%d readings above the ceiling (A > %g), or within %d points of one after smoothing, were left out of the fit", res.leftOut, b.ceiling, b.reach)
		} else {
			b.warn("%d readings above the ceiling (A > %g) were left out of the fit", res.leftOut, b.ceiling)
		}
	}
	if res.unsolved > 0 {
		b.warn("at %d of %d wavelengths too few standards stayed under the ceiling to fit; no compound is usable there (noise set to the largest found, %.3g)",
			res.unsolved, len(b.grid), res.worst)
	}
}

// finishCompound sets the flags of compound k (c) and warns about its
// calibration line and the standards left out for it.
func (b *builder) finishCompound(c *reference.Compound, k int) {
	b.unbendFalling(c, k)
	c.Flags = compoundFlags(c.Linearity, b.everClipped[k], b.floor)
	if bl := c.Linearity.Band; bl.TooCurved() && !c.Linearity.Curved {
		b.warn("%s: the calibration line bends at %d of %d wavelengths of its band (%g-%g nm) by Mandel's test, though not at its maximum (%g nm); check the upper standards and the linear range",
			c.Name, bl.Curved, bl.Tested, bl.LoNM, bl.HiNM, c.PeakNM)
	}
	if l := c.Linearity; l.CurvedUnconfirmed && !hasString(c.Flags, reference.FlagCurved) {
		b.warn("%s: curvature at the band maximum (%g nm) only, not confirmed at neighbouring wavelengths: likely chance at the %g %% level (Mandel p %.2g); not flagged, and the linear range keeps every level",
			c.Name, c.PeakNM, 100*reference.TestLevel, l.MandelP)
	}
	if b.everCurved[k] && !hasString(c.Flags, reference.FlagCurved) {
		c.Flags = append([]reference.Flag{reference.FlagCurved}, c.Flags...)
	}
	if b.noLinear[k] {
		b.warn("%s: the calibration line at %g nm bends even over its lowest levels %s: it cannot be quantified linearly with these standards, and its results are approximate (add lower levels, closer together)",
			c.Name, c.PeakNM, levelList(c.Linearity))
	}
	if rows := b.leftOutRows[k]; len(rows) > 0 {
		b.standardsLeftOut(c, k, rows)
	}
	b.outlierNotes(c, k)
}

// unbendFalling undoes the bend found for compound k (c) when every
// standard left out above its linear range is a falling reading (see
// [falling]): the curvature was that reading's doing, not the line's, so
// the compound is not flagged curved and the standards are recorded as
// left out without the word bend; outlierNotes names them.
func (b *builder) unbendFalling(c *reference.Compound, k int) {
	rows := b.leftOutRows[k]
	if len(rows) == 0 {
		return
	}
	falls := map[int]bool{}
	for _, o := range b.res.outliers[k] {
		if o.falls {
			falls[o.row] = true
		}
	}
	for _, i := range rows {
		if !falls[i] {
			return
		}
	}
	b.everCurved[k] = false
	b.leftOutRows[k] = nil
	for _, i := range rows {
		r := b.fit[i]
		c.StandardsLeftOut = append(c.StandardsLeftOut, reference.Standard{File: r.File, Column: r.Column, SHA256: r.scanSHA256,
			Conc: append([]float64(nil), r.Conc...), Line: r.Line})
	}
}

// standardsLeftOut records the fit rows left out for compound k (c) and
// says why.
func (b *builder) standardsLeftOut(c *reference.Compound, k int, rows []int) {
	var levels []float64
	seen := map[float64]bool{}
	for _, i := range rows {
		r := b.fit[i]
		c.StandardsLeftOut = append(c.StandardsLeftOut, reference.Standard{File: r.File, Column: r.Column, SHA256: r.scanSHA256,
			Conc: append([]float64(nil), r.Conc...), Line: r.Line})
		if v := r.Conc[k]; !seen[v] {
			seen[v] = true
			levels = append(levels, v)
		}
	}
	sort.Float64s(levels)
	why := "its calibration line bends above that by Mandel's test"
	if !b.everCurved[k] {
		why = fmt.Sprintf("higher standards read above the ceiling of A = %g at the band maximum", b.ceiling)
	}
	b.warn("%s: the absorptivities rest on the standards up to %s only, as %s; left out %s %s: %s",
		c.Name, fmtNum(c.MaxStandard), why, plural(len(levels), "level", "levels"), numList(levels), rowList(rows, b.fit))
}

// finish completes the provenance and checks the set.
func (b *builder) finish(set *reference.Set) (*reference.Set, error) {
	sh, prov := b.sh, b.prov
	now := time.Now
	if b.opt.Now != nil {
		now = b.opt.Now
	}
	prov.Created = now().UTC().Format(time.RFC3339)
	for _, r := range append(append([]Row(nil), sh.Standards...), sh.Blanks...) {
		prov.Standards = append(prov.Standards, reference.Standard{
			File: r.File, Column: r.Column, SHA256: r.scanSHA256,
			Conc: append([]float64(nil), r.Conc...), Line: r.Line,
		})
	}
	sort.SliceStable(prov.Standards, func(a, b int) bool { return prov.Standards[a].Line < prov.Standards[b].Line })
	b.droppedNotes(set)
	prov.Notes = b.notes
	set.Provenance = prov
	if err := set.Validate(); err != nil {
		return nil, pkgerr.Errorf(buildPkg, "%s: %w", sh.Path, err)
	}
	return set, nil
}
