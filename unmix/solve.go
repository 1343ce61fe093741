package unmix

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/floats"

	"huesolve/baseline"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// SolveTo fits one sample spectrum and fills dst, reusing its storage.
//
// The spectrum may be on any grid that covers the model's window (the
// whole reference grid when the set has pre-treatment steps, widened by
// the shift limit when a shift is estimated) and in any quantity; points
// with a transmittance of zero or below count as above the ceiling.
// Errors name the sample: ErrCoverage when the scan does not cover the
// needed range (both ranges are named), ErrTooDark when too few points are
// below the ceiling (with a dilution to try), ErrFactor for a bad
// dilution or path length. A fit that hits the iteration cap is not an
// error: it is flagged FlagNoConverge.
func (m *Model) SolveTo(dst *Result, s *spectrum.Spectrum, f Factors) error {
	sh, w := m.sh, &m.ws
	name := sampleName(s)
	fail := func(err error) error { return fmt.Errorf("unmix: %s: %w", name, err) }
	dil, path, err := m.prepare(s, f)
	if err != nil {
		return err
	}

	dropped, err := m.readMask(s)
	if err != nil {
		return fail(err)
	}
	nwin := sh.hi - sh.lo
	off := sh.lo - sh.wlo // window row r is work index off+r

	// Noise model on the window, from the raw absorbance.
	w.sig = grow(w.sig, nwin)
	raw := w.raw[off : off+nwin]
	for r, a := range raw {
		if !(a >= 0) { // also NaN
			a = 0
		} else if a > sh.ceiling {
			a = sh.ceiling
		}
		w.sig[r] = sh.noise[r] * sh.growth(a)
	}

	// The design for this mask.
	var d *design
	if m.opt.Weighted {
		sig := make([]float64, len(w.rows))
		for i, r := range w.rows {
			sig[i] = w.sig[r]
		}
		if d, err = sh.buildDesign(slices.Clone(w.rows), sig); err != nil {
			return fail(err)
		}
	} else if d = m.cache[string(w.key)]; d == nil {
		if d, err = sh.buildDesign(slices.Clone(w.rows), nil); err != nil {
			if errors.Is(err, errRank) {
				return fail(fmt.Errorf("%w: with %d of %d points above the ceiling A = %g left out, the rest cannot tell the compounds apart; %s",
					ErrTooDark, dropped, len(sh.rows0), sh.ceiling, diluteHint(maxFinite(w.raw[off:off+nwin])/sh.ceiling)))
			}
			return fail(fmt.Errorf("with %d points above the ceiling left out: %w", dropped, err))
		}
		if len(m.cache) >= maskCacheSize {
			clear(m.cache)
			m.cache[""] = m.base
		}
		m.cache[string(w.key)] = d
	}

	noConv, err := m.fit(d)
	if err != nil {
		return fail(err)
	}
	shift := 0.0
	w.shiftDen, w.shiftSE, w.interpVar = 0, 0, 1
	if m.opt.Shift {
		if shift, noConv, err = m.estimateShift(d, s.Wavelengths); err != nil {
			return fail(err)
		}
		if shift != 0 {
			w.interpVar = interpNoise(s.Wavelengths, sh.grid, offsetRows(d.rows, sh.lo), shift)
		}
		w.shiftSE = m.shiftSE(d)
		if !shiftDetermined(shift, w.shiftSE) {
			// Not told apart from zero: the unshifted fit stands, and
			// the standard error says how little the data could tell.
			shift, w.interpVar = 0, 1
			if err := m.sample(s.Wavelengths, 0); err != nil {
				return fail(err)
			}
			if noConv, err = m.fit(d); err != nil {
				return fail(err)
			}
			clear(w.pg)
		}
	}
	m.fill(dst, d, s, name, dil, path, dropped, shift, noConv)
	return nil
}

// readMask turns s into absorbance on the work grid (w.raw, w.net) and
// finds the window rows at or below the ceiling (w.rows, w.key), the
// readings too dark to convert (w.darkNM, w.darkPts); it returns the
// number of rows left out, or ErrTooDark when too few remain to fit.
func (m *Model) readMask(s *spectrum.Spectrum) (int, error) {
	sh, w := m.sh, &m.ws
	// Absorbance on the scan's own grid; unreadable (too dark) points are +Inf.
	w.abs = grow(w.abs, s.Len())
	firstDark := -1
	if s.Quantity == spectrum.Absorbance || s.Quantity == spectrum.Unstated {
		copy(w.abs, s.Values)
	} else {
		for i, v := range s.Values {
			a, err := spectrum.ToAbsorbance(s.Quantity, v)
			if err != nil {
				a = math.Inf(1)
				if firstDark < 0 || m.darkNeeded(s.Wavelengths, i) && !m.darkNeeded(s.Wavelengths, firstDark) {
					firstDark = i
				}
			}
			w.abs[i] = a
		}
	}
	nw := sh.whi - sh.wlo
	w.raw = grow(w.raw, nw)
	w.net = grow(w.net, nw)
	w.blk = grow(w.blk, nw)
	nwin := sh.hi - sh.lo
	off := sh.lo - sh.wlo // window row r is work index off+r
	if err := m.sample(s.Wavelengths, 0); err != nil {
		return 0, err
	}

	// Saturation mask, from the unshifted raw absorbance. With
	// Savitzky-Golay steps a reading above the ceiling (held at it)
	// also spoils the pre-treated values within sh.reach points of it:
	// those are left out and counted as dropped too.
	over := func(a float64) bool { return a > sh.ceiling || math.IsInf(a, 0) || math.IsNaN(a) }
	w.tainted = w.tainted[:0]
	if sh.reach > 0 {
		w.tainted = slices.Grow(w.tainted, nw)[:nw]
		clear(w.tainted)
		last := -1 // last work index marked
		for i, a := range w.raw {
			if !over(a) {
				continue
			}
			for j := max(i-sh.reach, last+1); j <= min(i+sh.reach, nw-1); j++ {
				w.tainted[j] = true
				last = j
			}
		}
	}
	w.rows = w.rows[:0]
	w.key = w.key[:0]
	dropped := 0
	w.darkPts, w.darkNM = 0, 0
	for _, r := range sh.rows0 {
		a := w.raw[off+r]
		if over(a) || len(w.tainted) > 0 && w.tainted[off+r] {
			dropped++
			if math.IsInf(a, 0) || math.IsNaN(a) {
				w.darkPts++
			}
			w.key = append(w.key, byte(r>>16), byte(r>>8), byte(r))
			continue
		}
		w.rows = append(w.rows, r)
	}
	if w.darkPts > 0 && firstDark >= 0 {
		w.darkNM = s.Wavelengths[firstDark]
	}
	p := len(sh.cols)
	if len(w.rows) < p+minDoF {
		dark := ""
		if w.darkPts > 0 {
			dark = fmt.Sprintf(" (%s: %d of them read 0 %%T or below, from %g nm: too dark to read)", s.Source.File, w.darkPts, w.darkNM)
		}
		return 0, fmt.Errorf("%w: %d of %d points are above the ceiling A = %g%s; %s",
			ErrTooDark, dropped, len(sh.rows0), sh.ceiling, dark, diluteHint(maxFinite(w.raw[off:off+nwin])/sh.ceiling))
	}
	return dropped, nil
}

// Check tells whether s could be solved with factors f, without solving
// it: its values are finite and its grid sound (spectrum.Check), the
// factors are valid, the scan covers the range the model needs, and
// enough of its points lie below the absorbance ceiling to fit (a file
// of %T read as absorbance fails here as it would in SolveTo). The
// errors are those SolveTo gives for the same faults; the fit itself is
// not made.
func (m *Model) Check(s *spectrum.Spectrum, f Factors) error {
	if _, _, err := m.prepare(s, f); err != nil {
		return err
	}
	if _, err := m.readMask(s); err != nil {
		return fmt.Errorf("unmix: %s: %w", sampleName(s), err)
	}
	return nil
}

// prepare checks s and f for SolveTo and returns the dilution and path
// with defaults applied.
func (m *Model) prepare(s *spectrum.Spectrum, f Factors) (dil, path float64, err error) {
	fail := func(err error) error { return fmt.Errorf("unmix: %s: %w", sampleName(s), err) }
	if err := m.check(s); err != nil {
		return 0, 0, err
	}
	dil, path = f.Dilution, f.PathCM
	if dil == 0 {
		dil = 1
	}
	if path == 0 {
		path = m.set.PathCM
	}
	if err := CheckFactors(Factors{Dilution: dil, PathCM: path}); err != nil {
		return 0, 0, fail(err)
	}
	if err := covers(s.Wavelengths, m.sh.needLo, m.sh.needHi); err != nil {
		return 0, 0, fail(err)
	}
	return dil, path, nil
}

// sample fills w.raw, w.blk and w.net on the work grid for a shift delta:
// raw absorbance, blank, and the blank-corrected, pre-treated values.
func (m *Model) sample(wl []float64, delta float64) error {
	sh, w := m.sh, &m.ws
	grid := sh.grid[sh.wlo:sh.whi]
	if delta == 0 && m.sameGrid(wl) {
		copy(w.raw, w.abs[sh.wlo:sh.whi])
	} else {
		interpShifted(w.raw, wl, w.abs, grid, delta)
	}
	switch {
	case sh.blankA == nil:
		clear(w.blk)
	case delta == 0:
		copy(w.blk, sh.blank0)
	default:
		interpShifted(w.blk, sh.blankWL, sh.blankA, grid, delta)
	}
	for i, a := range w.raw {
		if a > sh.ceiling || math.IsInf(a, 0) || math.IsNaN(a) {
			// Never fitted; held at the ceiling so that a pre-treatment
			// spanning neighbours stays finite.
			a = sh.ceiling
		}
		w.net[i] = a - w.blk[i]
	}
	if len(m.set.Pretreat) > 0 {
		t, err := baseline.ApplyAll(m.set.Pretreat, grid, w.net)
		if err != nil {
			return fmt.Errorf("pre-treatment: %w", err)
		}
		if len(t) != len(w.net) {
			return fmt.Errorf("pre-treatment gave %d values for %d wavelengths", len(t), len(w.net))
		}
		copy(w.net, t)
	}
	return nil
}

// check verifies a scan as spectrum.Check does, skipping the grid when it
// is the slice last found equal to the set grid.
func (m *Model) check(s *spectrum.Spectrum) error {
	wl := s.Wavelengths
	if len(wl) == 0 || len(wl) != len(s.Values) || len(m.ws.gridOK) != len(wl) || &m.ws.gridOK[0] != &wl[0] {
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
	if len(m.ws.gridOK) == len(wl) && &m.ws.gridOK[0] == &wl[0] {
		return true
	}
	if spectrum.SameGrid(wl, g) {
		m.ws.gridOK = wl
		return true
	}
	return false
}

// fit solves the current w.net on design d into w.res. It reports whether
// the iteration cap was hit.
func (m *Model) fit(d *design) (noConv bool, err error) {
	w := &m.ws
	off := m.sh.lo - m.sh.wlo
	w.y = grow(w.y, len(d.rows))
	for i, r := range d.rows {
		w.y[i] = w.net[off+r]
	}
	err = d.solver.Solve(&w.res, w.y)
	if errors.Is(err, lsq.ErrNoConvergence) || errors.Is(err, lsq.ErrInaccurate) {
		return true, nil
	}
	return false, err
}

// estimateShift iterates the shift: with the sample read at l + delta and
// fitted, the remaining shift is the coefficient gamma of the derivative
// g = sum_k c_k d(b eps_k)/dl of the fitted compound spectrum, found by
// projecting g and the residual onto the complement of the design,
//
//	gamma = <M g, r> / <M g, M g>,  M = I - X X+,
//
// and the sample is read again at delta - gamma (first-order Taylor term;
// the fixed point is exact up to interpolation error). It returns the
// shift in nm: positive when the sample's bands lie at longer wavelengths
// than the references'.
func (m *Model) estimateShift(d *design, wl []float64) (float64, bool, error) {
	sh, w := m.sh, &m.ws
	n, p := len(d.rows), len(sh.cols)
	w.g = grow(w.g, n)
	lim := m.opt.MaxShiftNM
	delta := 0.0
	noConv := false
	weighted := m.opt.Weighted
	for range ShiftMaxIter {
		// g on the fit rows (whitened when weighted).
		for i, r := range d.rows {
			v := 0.0
			for k := range sh.ncomp {
				v += w.res.Coef[k] * sh.dcols[k][r]
			}
			if weighted {
				v /= w.sig[r]
			}
			w.g[i] = v
		}
		// M g = g - Xw (pinv g); then <Mg, r> with r whitened.
		var coef [16]float64
		pg := coef[:0]
		if p > len(coef) {
			pg = make([]float64, 0, p)
		}
		for k := range p {
			row := d.pinv[k*n : (k+1)*n]
			v := 0.0
			for i, gi := range w.g {
				v += row[i] * gi
			}
			pg = append(pg, v)
		}
		w.pg = append(w.pg[:0], pg...)
		xr := d.x.RawMatrix()
		num, den := 0.0, 0.0
		for i, r := range d.rows {
			xi := xr.Data[i*xr.Stride : i*xr.Stride+p]
			fit := 0.0
			for k, v := range pg {
				fit += xi[k] * v
			}
			res := w.res.Residual[i]
			if weighted {
				fit /= w.sig[r]
				res /= w.sig[r]
			}
			mg := w.g[i] - fit
			num += mg * res
			den += mg * mg
		}
		w.shiftDen = den
		if !(den > 0) {
			break
		}
		gamma := num / den
		next := math.Max(-lim, math.Min(lim, delta-gamma))
		if math.Abs(next-delta) < ShiftTolNM {
			break
		}
		delta = next
		if err := m.sample(wl, delta); err != nil {
			return 0, false, err
		}
		var err error
		if noConv, err = m.fit(d); err != nil {
			return 0, false, err
		}
	}
	return delta, noConv, nil
}

// shiftDetermined reports whether an estimated shift is told apart from
// zero: more than ShiftSigmas standard errors from it. A shift whose
// standard error is undefined (no signal to move) is not.
func shiftDetermined(shift, se float64) bool {
	return se > 0 && !math.IsInf(se, 0) && math.Abs(shift) > ShiftSigmas*se
}

// offsetRows returns rows with off added to each, in a new slice.
func offsetRows(rows []int, off int) []int {
	out := make([]int, len(rows))
	for i, r := range rows {
		out[i] = r + off
	}
	return out
}

// shiftSE is the standard error of the shift estimated by estimateShift
// for the fit in w.res: the residual SD (in noise-model units and at
// least 1 when weighted, as for the compounds) over the norm of the shift
// direction left after projecting out the design. It is NaN when the
// direction vanishes (nothing fitted to move) or no degrees of freedom
// remain.
func (m *Model) shiftSE(d *design) float64 {
	w := &m.ws
	n, dof := len(d.rows), w.res.DoF
	if !(w.shiftDen > 0) || dof <= 0 {
		return math.NaN()
	}
	s2 := sumSq(w.res.Residual[:n]) / float64(dof) / w.interpVar
	if m.opt.Weighted {
		chi := 0.0
		for i, r := range d.rows {
			e := w.res.Residual[i] / w.sig[r]
			chi += e * e
		}
		s2 = math.Max(chi/float64(dof)/w.interpVar, 1)
	}
	return math.Sqrt(s2 / w.shiftDen)
}

// fill turns the solve in w.res into dst.
func (m *Model) fill(dst *Result, d *design, s *spectrum.Spectrum, name string, dil, path float64, dropped int, shift float64, noConv bool) {
	sh, w := m.sh, &m.ws
	res := &w.res
	n := len(d.rows)
	weighted := m.opt.Weighted
	scale := dil * m.set.PathCM / path // fitted (reference path, in the cell) -> sample
	cell := m.set.PathCM / path        // fitted -> concentration in the cell

	// Noise on the fit rows, and the reduced chi-square against it.
	w.sr = grow(w.sr, n)
	sr := w.sr
	for i, r := range d.rows {
		sr[i] = w.sig[r]
	}
	chi := 0.0
	for i, e := range res.Residual[:n] {
		e /= sr[i]
		chi += e * e
	}
	dof := res.DoF
	chiRed := math.NaN()
	if dof > 0 {
		// A shifted sample's residual is interpolated, hence quieter
		// than its noise by w.interpVar (1 without a shift).
		chiRed = chi / float64(dof) / w.interpVar
	}
	// Birge ratio: scales every noise-model standard error (FreeSE in
	// any fit, SE in a weighted one) when the fit is worse than the noise.
	inflate := 1.0
	if chiRed > 1 {
		inflate = math.Sqrt(chiRed)
	}
	t := math.NaN()
	if dof > 0 {
		t = m.tQuantile(dof)
	}

	*dst = Result{
		Sample:   name,
		Source:   s.Source.String(),
		Amounts:  grow(dst.Amounts, sh.ncomp),
		Baseline: dst.Baseline,
		Flags:    dst.Flags[:0],
		RMS:      res.RMS,
		ChiSqRed: chiRed,
		DW:       res.DW,
		R2:       res.R2,
		Cond:     d.cond,
		Points:   n,
		Dropped:  dropped,
		ShiftNM:  shift,
		Dilution: dil,
		PathCM:   path,
	}
	if len(sh.names) > 0 {
		if dst.Baseline == nil {
			dst.Baseline = make(map[string]float64, len(sh.names))
		}
		for j, nm := range sh.names {
			dst.Baseline[nm] = res.Coef[sh.ncomp+j]
		}
	} else {
		dst.Baseline = nil
	}

	for k := range sh.ncomp {
		a := &dst.Amounts[k]
		c := &m.set.Compounds[k]
		// Noise-model standard deviation of the unconstrained estimate
		// and the estimate itself: row k of the pseudo-inverse.
		row := d.pinv[k*n : (k+1)*n]
		s0, free := 0.0, 0.0
		if weighted {
			s0 = floats.Norm(row, 2)
		} else {
			s0 = math.Sqrt(sumSqScaled(row, sr))
		}
		if weighted {
			for i, v := range row {
				free += v * w.y[i] / sr[i]
			}
		} else {
			free = floats.Dot(row, w.y[:n])
		}
		coef := res.Coef[k]
		se := res.SE[k]
		if weighted {
			se *= inflate
		} else {
			se /= math.Sqrt(w.interpVar) // residual-based, see interpNoise
		}
		if shift != 0 && k < len(w.pg) {
			// The shift is a fitted parameter too: with b = X+ g the
			// compound's response to it, the partitioned inverse of
			// [X g] adds (b_k SE_shift)^2 to the variance.
			se = math.Hypot(se, w.pg[k]*w.shiftSE)
		}
		*a = Amount{
			Compound: c.Name,
			Unit:     c.Unit,
			Conc:     coef * scale,
			SE:       se * scale,
			LOD:      LODFactor * s0 * scale,
			LOQ:      LOQFactor * s0 * scale,
			Free:     free * scale,
			FreeSE:   s0 * inflate * scale,
			Flags:    a.Flags[:0],
		}
		switch {
		case res.AtBound[k]:
			a.SE = 0
			a.Lo = 0
			a.Hi = math.Max(0, a.Free+t*a.FreeSE)
			a.Flags = append(a.Flags, FlagZero)
		default:
			a.Lo = math.Max(0, a.Conc-t*a.SE)
			a.Hi = a.Conc + t*a.SE
			if a.Conc < a.LOD {
				a.Flags = append(a.Flags, FlagBelowLOD)
			} else if a.Conc < a.LOQ {
				a.Flags = append(a.Flags, FlagBelowLOQ)
			}
		}
		if sh.maxStd[k] > 0 && coef*cell > sh.maxStd[k] {
			a.Flags = append(a.Flags, FlagOverRange)
		}
		if d.leak != nil && d.leak[k] < LeakLimit {
			a.Flags = append(a.Flags, FlagMimic)
		}
	}

	// Sample flags. A reading at 0 %T or below in the window forces sat
	// and dilute: the sample is too dark to read there, however few such
	// points there are.
	dst.DarkNM, dst.DarkPoints = w.darkNM, w.darkPts
	dilute := false
	if dropped > 0 {
		dst.Flags = append(dst.Flags, FlagSaturated)
		if float64(dropped) > DropLimitFrac*float64(len(sh.rows0)) || w.darkPts > 0 {
			dst.Flags = append(dst.Flags, FlagDilute)
			dilute = true
		}
	}
	over := 0.0 // largest concentration in the cell over its upper limit
	for k := range sh.ncomp {
		if sh.maxStd[k] > 0 {
			over = math.Max(over, res.Coef[k]*cell/sh.maxStd[k])
		}
	}
	if dilute || over > 1 {
		dst.SuggestDilution = suggestDilution(m.predictedMax()/sh.ceiling, over, dilute)
	}
	if chiRed > PoorFitChiSq {
		dst.Flags = append(dst.Flags, FlagMisfit)
	}
	if res.DW < PatternDW && !sh.smooth {
		dst.Flags = append(dst.Flags, FlagPattern)
	}
	if m.opt.Shift {
		// An undetermined shift was set to 0 in SolveTo and is never
		// flagged; its standard error is still reported.
		if se := w.shiftSE; se > 0 && !math.IsInf(se, 0) {
			dst.ShiftSE = se
		}
		atMax := math.Abs(shift) >= m.opt.MaxShiftNM-ShiftTolNM
		if shift != 0 && (atMax || math.Abs(shift) >= ShiftNoteNM) {
			dst.Flags = append(dst.Flags, FlagShift)
		}
		if shift != 0 && atMax {
			dst.Flags = append(dst.Flags, FlagShiftMax)
		}
	}
	if d.cond > CondLimit {
		dst.Flags = append(dst.Flags, FlagIllCond)
	}
	if noConv {
		dst.Flags = append(dst.Flags, FlagNoConverge)
	}

	if len(dst.Flags) == 0 {
		dst.Flags = nil
	}
	for k := range dst.Amounts {
		if len(dst.Amounts[k].Flags) == 0 {
			dst.Amounts[k].Flags = nil
		}
	}
	if m.opt.KeepCurves {
		m.curves(dst, d)
	} else {
		dst.Grid, dst.Measured, dst.Fitted, dst.Residual = nil, nil, nil, nil
		dst.Contributions, dst.BaselineCurve, dst.Noise, dst.Gaps = nil, nil, nil, nil
	}
}

// predictedMax is the largest raw absorbance the fit predicts anywhere in
// the window (fitted compounds and baseline plus the blank): the height
// the highest band would read at without a ceiling.
func (m *Model) predictedMax() float64 {
	sh, w := m.sh, &m.ws
	off := sh.lo - sh.wlo
	best := 0.0
	for r := range sh.hi - sh.lo {
		v := w.blk[off+r]
		for j, c := range sh.cols {
			v += w.res.Coef[j] * c[r]
		}
		best = math.Max(best, v)
	}
	return best
}

// curves fills the plot curves on the fit rows.
func (m *Model) curves(dst *Result, d *design) {
	sh, w := m.sh, &m.ws
	n := len(d.rows)
	wl := sh.grid[sh.lo:sh.hi]
	dst.Grid = make([]float64, n)
	dst.Measured = make([]float64, n)
	dst.Fitted = make([]float64, n)
	dst.Residual = make([]float64, n)
	dst.Noise = make([]float64, n)
	dst.BaselineCurve = make([]float64, n)
	dst.Contributions = make([][]float64, sh.ncomp)
	for k := range dst.Contributions {
		dst.Contributions[k] = make([]float64, n)
	}
	for i, r := range d.rows {
		dst.Grid[i] = wl[r]
		dst.Measured[i] = w.y[i]
		dst.Residual[i] = w.res.Residual[i]
		dst.Fitted[i] = w.y[i] - w.res.Residual[i]
		dst.Noise[i] = w.sig[r]
		for k := range sh.ncomp {
			dst.Contributions[k][i] = w.res.Coef[k] * sh.cols[k][r]
		}
		for j := sh.ncomp; j < len(sh.cols); j++ {
			dst.BaselineCurve[i] += w.res.Coef[j] * sh.cols[j][r]
		}
	}
	dst.Gaps = gaps(nil, wl, d.rows, sh.rows0)
}

// gaps appends to dst the runs of window points (wavelengths wl) that are
// not among the fitted rows: saturated where they are usable rows
// (rows0) the fit left out, else not calibrated. rows and rows0 are
// ascending and rows is a subset of rows0.
func gaps(dst []Gap, wl []float64, rows, rows0 []int) []Gap {
	i, i0 := 0, 0
	open := false
	for r := range wl {
		used := i < len(rows) && rows[i] == r
		usable := i0 < len(rows0) && rows0[i0] == r
		if used {
			i++
		}
		if usable {
			i0++
		}
		switch {
		case used:
			open = false
		case open && dst[len(dst)-1].Saturated == usable:
			dst[len(dst)-1].HiNM = wl[r]
		default:
			dst = append(dst, Gap{LoNM: wl[r], HiNM: wl[r], Saturated: usable})
			open = true
		}
	}
	return dst
}

// suggestDilution is the dilution to suggest: the nice factor above
// ceilF (the highest predicted absorbance over the ceiling) when the
// sample is flagged dilute, and the nice factor at or above over (the
// largest concentration in the cell over its compound's upper limit),
// whichever is larger; 0 when either is needed but not finite or beyond
// maxNiceFactor (amounts off scale).
func suggestDilution(ceilF, over float64, dilute bool) float64 {
	f := 0.0
	if dilute {
		if f = niceUp(ceilF); f == 0 {
			return 0 // off scale: no dilution can be named
		}
	}
	if over > 1 {
		n := niceAtLeast(over)
		if n == 0 {
			return 0 // off scale: no dilution can be named
		}
		f = math.Max(f, n)
	}
	return f
}

// niceAtLeast is the smallest nice factor (as niceUp) at or above f.
func niceAtLeast(f float64) float64 {
	if v := niceUp(f / (1 + niceSlack)); v >= f {
		return v
	}
	return niceUp(f)
}

// niceSlack is the relative amount by which a ratio may exceed a nice
// factor and still be met by it (rounding of the fitted amounts).
const niceSlack = 1e-9

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

// sumSq returns the sum of squares of x.
func sumSq(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v * v
	}
	return s
}

// sumSqScaled returns Σ (x_i s_i)², in four interleaved sums so that the
// additions do not wait on each other.
func sumSqScaled(x, s []float64) float64 {
	s = s[:len(x)]
	var a0, a1, a2, a3 float64
	i := 0
	for ; i+4 <= len(x); i += 4 {
		v0, v1, v2, v3 := x[i]*s[i], x[i+1]*s[i+1], x[i+2]*s[i+2], x[i+3]*s[i+3]
		a0 += v0 * v0
		a1 += v1 * v1
		a2 += v2 * v2
		a3 += v3 * v3
	}
	for ; i < len(x); i++ {
		v := x[i] * s[i]
		a0 += v * v
	}
	return (a0 + a1) + (a2 + a3)
}

// sampleName is the spectrum's name, else its source.
func sampleName(s *spectrum.Spectrum) string {
	if s.Name != "" {
		return s.Name
	}
	return s.Source.String()
}

// maxFinite is the largest finite value of v (0 if none).
func maxFinite(v []float64) float64 {
	best := 0.0
	for _, x := range v {
		if !math.IsInf(x, 0) && !math.IsNaN(x) && x > best {
			best = x
		}
	}
	return best
}

// maxNiceFactor bounds the dilutions niceUp suggests: no step of 1, 1.5,
// ..., 8 times a power of ten above it is offered (it is MaxDilution, the
// largest factor a sample may be given). A larger need means the amounts
// are off scale, and no dilution is suggested.
const maxNiceFactor = MaxDilution

// niceUp returns the smallest of 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10 times a
// power of ten that is strictly greater than f (at least 1.5): a dilution
// a bench chemist can make that brings absorbance f x ceiling below the
// ceiling. It returns 0 (no suggestion) when f is not a number, infinite,
// or needs more than maxNiceFactor.
func niceUp(f float64) float64 {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return 0
	}
	if f < 1 {
		return 1.5
	}
	steps := []float64{1, 1.5, 2, 2.5, 3, 4, 5, 6, 8}
	for p := 1.0; p <= maxNiceFactor; p *= 10 {
		for _, s := range steps {
			if v := s * p; v > f && v >= 1.5 && v <= maxNiceFactor {
				return v
			}
		}
	}
	return 0
}

// diluteHint is the advice that ends a too-dark error: dilute at least
// niceUp(f) times, or just dilute when no factor can be named.
func diluteHint(f float64) string {
	if v := niceUp(f); v > 0 {
		return fmt.Sprintf("dilute at least %gx and scan again", v)
	}
	return "dilute and scan again"
}
