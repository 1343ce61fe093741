package unmix

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// scan is one sample on its way through SolveTo. Each step of the solve
// takes it explicitly and fills its own part; nothing of it outlives the
// call (its slices are views of the model's reused storage).
type scan struct {
	s          *spectrum.Spectrum
	name       string
	dil, path  float64 // dilution and path length with defaults applied
	notInSheet bool    // Factors.NotInSheet: flagged FlagNotInSheet

	// Set by read: the scan on the work grid at the current shift.
	raw []float64 // raw absorbance
	blk []float64 // blank
	net []float64 // blank-corrected, pre-treated
	// Set by read: the window rows at or below the ceiling, the mask key
	// of the rows left out, how many were left out, and the first
	// wavelength read at 0 %T or below that the fit needed with the
	// window points lost to such readings (0 if none).
	rows    []int
	key     []byte
	dropped int
	darkNM  float64
	darkPts int

	sig []float64 // set by noise: the noise model on the window

	// Set by fit: the design, the fitted rows and the solve.
	d      *design
	y      []float64
	res    *lsq.Result
	noConv bool // the iteration cap was hit
	// from, if not nil, is another model's unshifted fit of this scan on
	// the same design and rows (runShared): the unshifted fit, taken
	// from it rather than solved again.
	from *scan

	// Set by fitShift (zero, and interpVar 1, without a shift).
	shift     float64   // applied shift (nm)
	shiftSE   float64   // standard error of the estimated shift (NaN if undefined)
	shiftDen  float64   // squared norm of the projected shift direction
	interpVar float64   // interpNoise for the applied shift (1 when none)
	pg        []float64 // response of the coefficients to the shift direction
}

// Solve fits one sample spectrum (any grid covering the model window; any
// quantity, converted to absorbance). See SolveTo.
func (m *Model) Solve(s *spectrum.Spectrum, f Factors) (*Result, error) {
	r := new(Result)
	if err := m.SolveTo(r, s, f); err != nil {
		return nil, err
	}
	return r, nil
}

// SolveTo fits one sample spectrum and fills dst, reusing its storage.
//
// The spectrum may be on any grid that covers the model's window (the
// whole reference grid when the set has pre-treatment steps, widened by
// the shift limit when a shift is estimated) and in any quantity; points
// with a transmittance of zero or below count as above the ceiling.
// Errors name the sample: ErrCoverage when the scan does not cover the
// needed range (both ranges are named), errTooDark when too few points are
// below the ceiling (with a dilution to try), ErrFactor for a bad
// dilution or path length. A fit that hits the iteration cap is not an
// error: it is flagged FlagNoConverge.
func (m *Model) SolveTo(dst *Result, s *spectrum.Spectrum, f Factors) error {
	if m.auto != nil {
		return m.solveAuto(dst, s, f)
	}
	sc, err := m.runShared(s, f, nil, nil, nil)
	if err != nil {
		return err
	}
	if !m.overCeiling(&sc) {
		m.fill(dst, &sc)
		return nil
	}
	_, last, err := settleCeiling(m, &sc, func(extra []int) (*Model, *scan, error) {
		sc, err := m.runShared(s, f, nil, nil, extra)
		return m, &sc, err
	})
	if err != nil {
		return err
	}
	m.fill(dst, last)
	return nil
}

// runShared reads, fits and (with Options.Shift) shifts one sample: every
// step of SolveTo but filling the result (the scan's slices are views of
// the model's storage, valid until its next solve). It shares the reading
// of the scan through rd when it is not nil (the candidates of the automatic model, which read a scan
// alike): a model that finds rd filled takes the scan as read from it,
// else it reads the scan and fills rd. from, if not nil, is the fit of
// the same scan on the same design (rows and columns) by another model:
// its result stands for m's own first fit. extra are window rows
// (ascending) left out besides those read above the ceiling: those the
// fit predicts above it (settleCeiling).
func (m *Model) runShared(s *spectrum.Spectrum, f Factors, rd *readState, from *scan, extra []int) (scan, error) {
	shared := rd != nil && rd.filled
	sc, err := m.prepareChecked(s, f, shared)
	if err != nil {
		return sc, err
	}
	if shared {
		rd.restore(m, &sc)
		err = m.enough(&sc)
	} else if err = m.read(&sc); err == nil {
		m.noise(&sc)
		if rd != nil {
			rd.save(m, &sc)
		}
	}
	if err == nil && len(extra) > 0 {
		m.leaveOut(&sc, extra)
		err = m.enough(&sc)
	}
	if err != nil {
		return sc, sc.fail(err)
	}
	if sc.d, err = m.designFor(&sc); err != nil {
		return sc, sc.fail(err)
	}
	if from != nil && slices.Equal(from.d.rows, sc.d.rows) {
		sc.from = from
	}
	if sc.from != nil {
		m.copyFit(&sc, sc.from)
	} else if err := m.fit(&sc); err != nil {
		return sc, sc.fail(err)
	}
	sc.interpVar = 1
	if m.opt.Shift {
		if err := m.fitShift(&sc); err != nil {
			return sc, sc.fail(err)
		}
	}
	return sc, nil
}

// fail names the sample in err.
func (sc *scan) fail(err error) error { return pkgerr.Errorf("unmix", "%s: %w", sc.name, err) }

// Check tells whether s could be solved with factors f, without solving
// it: its values are finite and its grid sound (spectrum.Check), the
// factors are valid, the scan covers the range the model needs, and
// enough of its points lie below the absorbance ceiling to fit (a file
// of %T read as absorbance fails here as it would in SolveTo). The
// errors are those SolveTo gives for the same faults; the fit itself is
// not made.
func (m *Model) Check(s *spectrum.Spectrum, f Factors) error {
	sc, err := m.prepare(s, f)
	if err != nil {
		return err
	}
	if err := m.read(&sc); err != nil {
		return sc.fail(err)
	}
	return nil
}

// prepare checks s and f for SolveTo and returns the scan with the
// dilution and path, defaults applied.
func (m *Model) prepare(s *spectrum.Spectrum, f Factors) (scan, error) {
	return m.prepareChecked(s, f, false)
}

// prepareChecked is prepare, skipping the check of s's values and grid
// when checked (s passed it for another candidate of the automatic
// model).
func (m *Model) prepareChecked(s *spectrum.Spectrum, f Factors, checked bool) (scan, error) {
	sc := scan{s: s, name: sampleName(s)}
	if !checked {
		if err := m.check(s); err != nil {
			return sc, err
		}
	}
	sc.dil, sc.path, sc.notInSheet = f.Dilution, f.PathCM, f.NotInSheet
	if sc.dil == 0 {
		sc.dil = 1
	}
	if sc.path == 0 {
		sc.path = m.set.PathCM
	}
	if err := CheckFactors(Factors{Dilution: sc.dil, PathCM: sc.path}); err != nil {
		return sc, sc.fail(err)
	}
	if err := covers(s.Wavelengths, m.sh.needLo, m.sh.needHi); err != nil {
		if ce, ok := err.(*CoverageError); ok {
			ce.Hint = m.windowHint(ce.ScanLo, ce.ScanHi)
		}
		return sc, sc.fail(err)
	}
	return sc, nil
}

// read turns the scan into absorbance on the work grid (sc.raw, sc.net)
// and finds the window rows at or below the ceiling (sc.rows, sc.key) and
// the readings too dark to convert; it returns errTooDark when too few
// rows remain to fit.
func (m *Model) read(sc *scan) error {
	sh, b := m.sh, &m.buf
	firstDark := m.absorbance(sc.s)
	nw := sh.whi - sh.wlo
	b.raw = grow(b.raw, nw)
	b.net = grow(b.net, nw)
	b.blk = grow(b.blk, nw)
	sc.raw, sc.net, sc.blk = b.raw, b.net, b.blk
	if err := m.resample(sc, 0); err != nil {
		return err
	}
	m.mask(sc)
	if sc.darkPts > 0 && firstDark >= 0 {
		sc.darkNM = sc.s.Wavelengths[firstDark]
	}
	return m.enough(sc)
}

// enough returns errTooDark when too few of the scan's rows remain to fit
// the model's columns.
func (m *Model) enough(sc *scan) error {
	sh := m.sh
	if len(sc.rows) < len(sh.cols)+minDoF {
		dark := ""
		if sc.darkPts > 0 {
			dark = fmt.Sprintf(" (%s: %d of them read 0 %%T or below, from %g nm: too dark to read)", sc.s.Source.File, sc.darkPts, sc.darkNM)
		}
		return fmt.Errorf("%w: %d of %d points are above the ceiling A = %g%s; %s",
			errTooDark, sc.dropped, len(sh.rows0), sh.ceiling, dark, m.diluteHint(sc))
	}
	return nil
}

// diluteHint is the advice that ends a too-dark error for sc.
func (m *Model) diluteHint(sc *scan) string {
	sh := m.sh
	off := sh.lo - sh.wlo
	return diluteHint(maxFinite(sc.raw[off:off+sh.hi-sh.lo]) / sh.ceiling)
}

// absorbance converts s to absorbance on its own grid into m.buf.abs,
// unreadable (too dark) points as +Inf, and returns the index of the
// first such point the fit needs (-1 if none).
func (m *Model) absorbance(s *spectrum.Spectrum) int {
	b := &m.buf
	b.abs = grow(b.abs, s.Len())
	firstDark := -1
	if s.Quantity == spectrum.Absorbance || s.Quantity == spectrum.Unstated {
		copy(b.abs, s.Values)
		return firstDark
	}
	for i, v := range s.Values {
		a, err := spectrum.ToAbsorbance(s.Quantity, v)
		if err != nil {
			a = math.Inf(1)
			if firstDark < 0 || m.darkNeeded(s.Wavelengths, i) && !m.darkNeeded(s.Wavelengths, firstDark) {
				firstDark = i
			}
		}
		b.abs[i] = a
	}
	return firstDark
}

// over reports whether a raw absorbance is above the ceiling or unreadable.
func (sh *shared) over(a float64) bool {
	return a > sh.ceiling || math.IsInf(a, 0) || math.IsNaN(a)
}

// mask sets sc.rows, sc.key, sc.dropped and sc.darkPts from the unshifted
// raw absorbance. With Savitzky-Golay steps a reading above the ceiling
// (held at it) also spoils the pre-treated values within sh.reach points
// of it: those are left out and counted as dropped too.
func (m *Model) mask(sc *scan) {
	sh, b := m.sh, &m.buf
	nw := len(sc.raw)
	off := sh.lo - sh.wlo // window row r is work index off+r
	b.tainted = b.tainted[:0]
	if sh.reach > 0 {
		b.tainted = slices.Grow(b.tainted, nw)[:nw]
		clear(b.tainted)
		last := -1 // last work index marked
		for i, a := range sc.raw {
			if !sh.over(a) {
				continue
			}
			for j := max(i-sh.reach, last+1); j <= min(i+sh.reach, nw-1); j++ {
				b.tainted[j] = true
				last = j
			}
		}
	}
	b.rows = b.rows[:0]
	b.key = b.key[:0]
	for _, r := range sh.rows0 {
		a := sc.raw[off+r]
		if sh.over(a) || len(b.tainted) > 0 && b.tainted[off+r] {
			sc.dropped++
			if math.IsInf(a, 0) || math.IsNaN(a) {
				sc.darkPts++
			}
			b.key = append(b.key, byte(r>>16), byte(r>>8), byte(r))
			continue
		}
		b.rows = append(b.rows, r)
	}
	sc.rows, sc.key = b.rows, b.key
}

// noise sets sc.sig, the noise model on the window from the raw
// absorbance (held within [0, ceiling]).
func (m *Model) noise(sc *scan) {
	sh := m.sh
	nwin := sh.hi - sh.lo
	off := sh.lo - sh.wlo
	m.buf.sig = grow(m.buf.sig, nwin)
	sc.sig = m.buf.sig
	for r, a := range sc.raw[off : off+nwin] {
		if !(a >= 0) { // also NaN
			a = 0
		} else if a > sh.ceiling {
			a = sh.ceiling
		}
		sc.sig[r] = sh.noise[r] * sh.growth(a)
	}
}

// designFor returns the design for the scan's rows: its own, weighted
// by its noise, in a weighted fit; else the cached one for its mask.
func (m *Model) designFor(sc *scan) (*design, error) {
	sh := m.sh
	if m.opt.Weighted {
		return m.weightedDesign(sc)
	}
	if d := m.cache[string(sc.key)]; d != nil {
		return d, nil
	}
	d, err := sh.buildDesign(slices.Clone(sc.rows), nil)
	if err != nil {
		if errors.Is(err, errRank) {
			return nil, fmt.Errorf("%w: with %d of %d points above the ceiling A = %g left out, the rest cannot tell the compounds apart; %s",
				errTooDark, sc.dropped, len(sh.rows0), sh.ceiling, m.diluteHint(sc))
		}
		return nil, fmt.Errorf("with %d points above the ceiling left out: %w", sc.dropped, err)
	}
	if len(m.cache) >= maskCacheSize {
		clear(m.cache)
		m.cache[""] = m.base
	}
	m.cache[string(sc.key)] = d
	return d, nil
}

// weightedDesign factors the scan's own design, its rows weighted by its
// noise, into the clone's one weighted design (m.wd), reusing its storage
// from the sample before: a weighted fit refactorises for every sample,
// but allocates almost nothing for it in steady state.
func (m *Model) weightedDesign(sc *scan) (*design, error) {
	if m.wd == nil {
		m.wd = &design{}
	}
	d, b := m.wd, &m.buf
	b.wsig = grow(b.wsig, len(sc.rows))
	for i, r := range sc.rows {
		b.wsig[i] = sc.sig[r]
	}
	if d.ready && slices.Equal(d.rows, sc.rows) {
		// The same rows as the sample before: only the weights change.
		var src *lsq.Solver
		if w := m.wfrom; w != nil && w.wd != nil && w.wd.ready {
			src = w.wd.solver
		}
		return d, m.sh.reweight(d, b.wsig, src)
	}
	d.rows = append(d.rows[:0], sc.rows...)
	if err := m.sh.setDesign(d, b.wsig); err != nil {
		return nil, err
	}
	return d, nil
}

// resample fills sc.raw, sc.blk and sc.net on the work grid for a shift
// delta: raw absorbance, blank, and the blank-corrected, pre-treated
// values.
func (m *Model) resample(sc *scan, delta float64) error {
	sh := m.sh
	wl := sc.s.Wavelengths
	grid := sh.grid[sh.wlo:sh.whi]
	if delta == 0 && m.sameGrid(wl) {
		copy(sc.raw, m.buf.abs[sh.wlo:sh.whi])
	} else {
		interpShifted(sc.raw, wl, m.buf.abs, grid, delta)
	}
	switch {
	case sh.blankA == nil:
		clear(sc.blk)
	case delta == 0:
		copy(sc.blk, sh.blank0)
	default:
		interpShifted(sc.blk, sh.blankWL, sh.blankA, grid, delta)
	}
	for i, a := range sc.raw {
		if sh.over(a) {
			// Never fitted; held at the ceiling so that a pre-treatment
			// spanning neighbours stays finite.
			a = sh.ceiling
		}
		sc.net[i] = a - sc.blk[i]
	}
	if len(m.set.Pretreat) > 0 {
		t, err := baseline.ApplyAll(m.set.Pretreat, grid, sc.net)
		if err != nil {
			return fmt.Errorf("pre-treatment: %w", err)
		}
		if len(t) != len(sc.net) {
			return fmt.Errorf("pre-treatment gave %d values for %d wavelengths", len(t), len(sc.net))
		}
		copy(sc.net, t)
	}
	return nil
}

// check verifies a scan as spectrum.Check does, skipping the grid when it
// is the slice last found equal to the set grid.
func (m *Model) check(s *spectrum.Spectrum) error {
	wl := s.Wavelengths
	ok := m.buf.gridOK
	if len(wl) == 0 || len(wl) != len(s.Values) || len(ok) != len(wl) || &ok[0] != &wl[0] {
		return s.Check()
	}
	for _, v := range s.Values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return s.Check() // for its message
		}
	}
	return nil
}

// sameGrid reports whether wl is the set grid, remembering the last slice
// found equal so a wide table's shared grid is checked once.
func (m *Model) sameGrid(wl []float64) bool {
	g := m.sh.grid
	if len(wl) != len(g) {
		return false
	}
	if ok := m.buf.gridOK; len(ok) == len(wl) && &ok[0] == &wl[0] {
		return true
	}
	if spectrum.SameGrid(wl, g) {
		m.buf.gridOK = wl
		return true
	}
	return false
}

// fit solves the scan's current net absorbance on its design into
// sc.res (sc.y the fitted rows): the coefficients, residual and its sum of
// squares (lsq.Solver.SolveCoef), all that the shift's steps and the
// automatic model's tests read; fill completes the fit it keeps (finish).
func (m *Model) fit(sc *scan) error {
	b := &m.buf
	off := m.sh.lo - m.sh.wlo
	b.y = grow(b.y, len(sc.d.rows))
	sc.y, sc.res = b.y, &b.res
	for i, r := range sc.d.rows {
		sc.y[i] = sc.net[off+r]
	}
	return sc.d.solver.SolveCoef(sc.res, sc.y)
}

// finish completes the scan's fit (lsq.Solver.Finish: statistics,
// standard errors, the KKT certificate) and sets sc.noConv when the
// iteration cap was hit or the certificate failed.
func (m *Model) finish(sc *scan) {
	err := sc.d.solver.Finish(sc.res, sc.y)
	sc.noConv = errors.Is(err, lsq.ErrNoConvergence) || errors.Is(err, lsq.ErrInaccurate)
}

// copyFit gives sc the fit of from, made on the same design and rows
// (runShared), in m's storage, as fit would have made it.
func (m *Model) copyFit(sc *scan, from *scan) {
	b := &m.buf
	b.y = append(b.y[:0], from.y...)
	sc.y, sc.res = b.y, &b.res
	from.res.CopyTo(sc.res)
}

// darkNeeded reports whether scan point i (wavelengths wl) lies in or
// next to the fit window, so that its reading reaches the fit.
func (m *Model) darkNeeded(wl []float64, i int) bool {
	lo, hi := m.sh.grid[m.sh.lo], m.sh.grid[m.sh.hi-1]
	prev, next := wl[max(i-1, 0)], wl[min(i+1, len(wl)-1)]
	if prev > next {
		prev, next = next, prev
	}
	return next >= lo && prev <= hi
}
