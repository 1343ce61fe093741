package unmix

import "math"

// fitFigures are the figures of a fit that every amount uses.
type fitFigures struct {
	chiRed  float64 // reduced chi-square against the noise model (and the calibration's expected share, when the set records it)
	inflate float64 // Birge ratio: sqrt(chiRed) when above 1, else 1
	t       float64 // Student t quantile on the fit's degrees of freedom
	scale   float64 // fitted (reference path, in the cell) -> sample
	cell    float64 // fitted -> concentration in the cell
	// cal: the calibration's variance per compound is in m.buf.cvar
	// (calTerms); residShare is the factor by which taking its share
	// out of the residual variance scales a residual-based variance (1
	// when there is none; see calerr.go).
	cal        bool
	residShare float64
}

// figures computes the reduced chi-square of the scan's fit against the
// noise model on its rows (m.buf.sr), the Birge ratio and the t quantile.
func (m *Model) figures(sc *scan) fitFigures {
	n := len(sc.d.rows)
	m.buf.sr = grow(m.buf.sr, n)
	sr := m.buf.sr
	for i, r := range sc.d.rows {
		sr[i] = sc.sig[r]
	}
	chi := 0.0
	for i, e := range sc.res.Residual[:n] {
		e /= sr[i]
		chi += e * e
	}
	f := fitFigures{chiRed: math.NaN(), inflate: 1, t: math.NaN(),
		scale: sc.dil * m.set.PathCM / sc.path, cell: m.set.PathCM / sc.path, residShare: 1}
	if dof := sc.res.DoF; dof > 0 {
		// A shifted sample's residual is interpolated, hence quieter
		// than its noise by sc.interpVar (1 without a shift).
		f.chiRed = chi / float64(dof) / sc.interpVar
		f.t = m.tQuantile(dof)
	}
	// Birge ratio: scales every noise-model standard error (FreeSE in
	// any fit, SE in a weighted one) when the fit is worse than the noise,
	// once the calibration's share of the residual is taken out (it is
	// added as its own term, calerr.go).
	chiSample := f.chiRed
	var resid, chiCal float64
	if resid, chiCal, f.cal = m.calTerms(sc, sr); f.cal {
		chiSample -= chiCal / sc.interpVar
		if s2 := sc.res.RSS / float64(sc.res.DoF); s2 > 0 {
			f.residShare = math.Max(0, 1-resid/s2)
		}
	}
	if chiSample > 1 {
		f.inflate = math.Sqrt(chiSample)
	}
	if f.cal && !math.IsNaN(f.chiRed) {
		// The reduced chi-square reported and flagged is taken against
		// all the variance expected in the residual: the noise model's
		// (1 per degree of freedom) and the calibration's share (chiCal,
		// carried in the intervals as its own term). Its expected value
		// is 1 for a correct fit either way; a ratio rather than a
		// difference, so that a sample far above the standards, whose
		// calibration share can exceed what its residual shows, reads
		// below 1 and never 0 (before, a near-ceiling sample of a correct
		// fit had a mean of 1.8, TestMeasuredNoiseModelMisfit).
		f.chiRed /= 1 + chiCal/sc.interpVar
	}
	return f
}

// fill turns the scan's solve into dst.
func (m *Model) fill(dst *Result, sc *scan) {
	m.finish(sc)
	sh, res := m.sh, sc.res
	f := m.figures(sc)
	*dst = Result{
		Sample:       sc.name,
		Source:       sc.s.Source.String(),
		Amounts:      grow(dst.Amounts, sh.ncomp),
		Baseline:     dst.Baseline,
		Interferents: dst.Interferents,
		Flags:        dst.Flags[:0],
		RMS:          res.RMS,
		ChiSqRed:     f.chiRed,
		DW:           res.DW,
		R2:           res.R2,
		Cond:         sc.d.cond,
		Points:       len(sc.d.rows),
		Dropped:      sc.dropped,
		ShiftNM:      sc.shift,
		Dilution:     sc.dil,
		PathCM:       sc.path,
	}
	if len(sh.names) > 0 {
		if dst.Baseline == nil {
			dst.Baseline = make(map[string]float64, len(sh.names))
		}
		// A reused Result may hold the terms of an earlier sample's
		// larger model (Options.Auto).
		clear(dst.Baseline)
		for j, nm := range sh.names {
			dst.Baseline[nm] = res.Coef[sh.ncomp+j]
		}
	} else {
		dst.Baseline = nil
	}
	for k := range sh.ncomp {
		m.amount(&dst.Amounts[k], k, sc, f)
	}
	dst.Interferents = dst.Interferents[:0]
	first := len(sh.cols) - len(sh.interf)
	for i, nm := range sh.interf {
		se := res.SE[first+i]
		if m.opt.Weighted {
			se *= f.inflate
		}
		dst.Interferents = append(dst.Interferents, InterferentAmount{Name: nm, Amount: res.Coef[first+i], SE: se})
	}
	if len(dst.Interferents) == 0 {
		dst.Interferents = nil
	}
	m.sampleFlags(dst, sc, f)
	if sc.notInSheet {
		dst.Flags = append(dst.Flags, FlagNotInSheet)
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
		m.curves(dst, sc)
	} else {
		dst.Grid, dst.Measured, dst.Fitted, dst.Residual = nil, nil, nil, nil
		dst.Contributions, dst.BaselineCurve, dst.Noise, dst.Gaps = nil, nil, nil, nil
		dst.InterferentCurves = nil
	}
}

// amount fills a with compound k's result. The noise-model standard
// deviation of the unconstrained estimate, s0 = sqrt(sum (P_ki sigma_i)^2)
// with P the design's pseudo-inverse (lsq.Solver.PseudoInverseRow), gives
// the detection limits and FreeSE; the unconstrained estimate is lsq's.
func (m *Model) amount(a *Amount, k int, sc *scan, f fitFigures) {
	sh, res := m.sh, sc.res
	c := &m.set.Compounds[k]
	s0 := math.Sqrt(sumSqScaled(sc.d.solver.PseudoInverseRow(k), m.buf.sr))
	coef := res.Coef[k]
	se := res.SE[k]
	if m.opt.Weighted {
		se *= f.inflate
	} else {
		// Residual-based, see interpNoise; without the calibration's
		// share of the residual, which calSD adds as its own term.
		se *= math.Sqrt(f.residShare / sc.interpVar)
	}
	if sc.shift != 0 && k < len(sc.pg) {
		// The shift is a fitted parameter too: with b = P g the
		// compound's response to it, the partitioned inverse of [X g]
		// adds (b_k SE_shift)^2 to the variance.
		se = math.Hypot(se, sc.pg[k]*sc.shiftSE)
	}
	cal := m.calSD(k, f.cal)
	*a = Amount{
		Compound: c.Name,
		Unit:     c.Unit,
		Conc:     coef * f.scale,
		SE:       math.Hypot(se, cal) * f.scale,
		SECal:    cal * f.scale,
		LOD:      LODFactor * s0 * f.scale,
		LOQ:      LOQFactor * s0 * f.scale,
		Free:     res.Unconstrained[k] * f.scale,
		FreeSE:   s0 * f.inflate * f.scale,
		Flags:    a.Flags[:0],
	}
	switch {
	case res.AtBound[k]:
		a.SE = 0
		a.Lo = 0
		a.Hi = math.Max(0, a.Free+f.t*math.Hypot(a.FreeSE, a.SECal))
		a.Flags = append(a.Flags, FlagZero)
	default:
		a.Lo = math.Max(0, a.Conc-f.t*a.SE)
		a.Hi = a.Conc + f.t*a.SE
		if a.Conc < a.LOD {
			a.Flags = append(a.Flags, FlagBelowLOD)
		} else if a.Conc < a.LOQ {
			a.Flags = append(a.Flags, FlagBelowLOQ)
		}
	}
	if sh.maxStd[k] > 0 && coef*f.cell > sh.maxStd[k] {
		a.Flags = append(a.Flags, FlagOverRange)
	}
	if sc.d.leak != nil && sc.d.leak[k] < leakLimit || sh.interfLeak != nil && sh.interfLeak[k] < leakLimit {
		a.Flags = append(a.Flags, FlagMimic)
	}
}

// sampleFlags sets the sample's flags, dark readings and suggested
// dilution. A reading at 0 %T or below in the window forces sat and
// dilute: the sample is too dark to read there, however few such points
// there are.
func (m *Model) sampleFlags(dst *Result, sc *scan, f fitFigures) {
	sh, res := m.sh, sc.res
	dst.DarkNM, dst.DarkPoints = sc.darkNM, sc.darkPts
	dilute := false
	if sc.dropped > 0 {
		dst.Flags = append(dst.Flags, FlagSaturated)
		if float64(sc.dropped) > dropLimitFrac*float64(len(sh.rows0)) || sc.darkPts > 0 {
			dst.Flags = append(dst.Flags, FlagDilute)
			dilute = true
		}
	}
	over := 0.0 // largest concentration in the cell over its upper limit
	for k := range sh.ncomp {
		if sh.maxStd[k] > 0 {
			over = math.Max(over, res.Coef[k]*f.cell/sh.maxStd[k])
		}
	}
	if dilute || over > 1 {
		dst.SuggestDilution = suggestDilution(m.predictedMax(sc)/sh.ceiling, over, dilute)
	}
	if f.chiRed > poorFitChiSq {
		dst.Flags = append(dst.Flags, FlagMisfit)
	}
	if res.DW < patternDW && !sh.smooth {
		dst.Flags = append(dst.Flags, FlagPattern)
	}
	if m.opt.Shift {
		m.shiftFlags(dst, sc)
	}
	if sc.d.cond > CondLimit {
		dst.Flags = append(dst.Flags, FlagIllCond)
	}
	if sc.noConv {
		dst.Flags = append(dst.Flags, FlagNoConverge)
	}
}

// shiftFlags reports the shift's standard error and flags a shift that
// is large or at the limit. An undetermined shift was set to 0 in
// fitShift and is never flagged; its standard error is still reported.
func (m *Model) shiftFlags(dst *Result, sc *scan) {
	if se := sc.shiftSE; se > 0 && !math.IsInf(se, 0) {
		dst.ShiftSE = se
	}
	shift := sc.shift
	atMax := math.Abs(shift) >= m.opt.MaxShiftNM-shiftTolNM
	if shift != 0 && (atMax || math.Abs(shift) >= shiftNoteNM) {
		dst.Flags = append(dst.Flags, FlagShift)
	}
	if shift != 0 && atMax {
		dst.Flags = append(dst.Flags, FlagShiftMax)
	}
}

// predictedMax is the largest raw absorbance the fit predicts anywhere in
// the window (fitted compounds and baseline plus the blank): the height
// the highest band would read at without a ceiling.
func (m *Model) predictedMax(sc *scan) float64 {
	sh := m.sh
	off := sh.lo - sh.wlo
	best := 0.0
	for r := range sh.hi - sh.lo {
		v := sc.blk[off+r]
		for j, c := range sh.cols {
			v += sc.res.Coef[j] * c[r]
		}
		best = math.Max(best, v)
	}
	return best
}

// curves fills the plot curves on the fit rows.
func (m *Model) curves(dst *Result, sc *scan) {
	sh, d := m.sh, sc.d
	n := len(d.rows)
	wl := sh.grid[sh.lo:sh.hi]
	dst.Grid = make([]float64, n)
	dst.Measured = make([]float64, n)
	dst.Fitted = make([]float64, n)
	dst.Residual = make([]float64, n)
	dst.Noise = make([]float64, n)
	dst.BaselineCurve = make([]float64, n)
	first := len(sh.cols) - len(sh.interf)
	dst.InterferentCurves = nil
	for range sh.interf {
		dst.InterferentCurves = append(dst.InterferentCurves, make([]float64, n))
	}
	dst.Contributions = make([][]float64, sh.ncomp)
	for k := range dst.Contributions {
		dst.Contributions[k] = make([]float64, n)
	}
	for i, r := range d.rows {
		dst.Grid[i] = wl[r]
		dst.Measured[i] = sc.y[i]
		dst.Residual[i] = sc.res.Residual[i]
		dst.Fitted[i] = sc.y[i] - sc.res.Residual[i]
		dst.Noise[i] = sc.sig[r]
		for k := range sh.ncomp {
			dst.Contributions[k][i] = sc.res.Coef[k] * sh.cols[k][r]
		}
		for j := sh.ncomp; j < first; j++ {
			dst.BaselineCurve[i] += sc.res.Coef[j] * sh.cols[j][r]
		}
		for j := range sh.interf {
			dst.InterferentCurves[j][i] = sc.res.Coef[first+j] * sh.cols[first+j][r]
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
