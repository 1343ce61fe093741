package unmix

import (
	"math"

	"gonum.org/v1/gonum/floats"
)

// fitShift estimates the scan's shift, refits at it when it is told
// apart from zero, and else refits unshifted; it sets sc.shift,
// sc.shiftSE, sc.interpVar and sc.pg.
func (m *Model) fitShift(sc *scan) error {
	sh, b := m.sh, &m.buf
	// The scan as read and fitted unshifted, kept for the case in which
	// the shift is not told apart from zero: it is then restored rather
	// than read and fitted again (the same values: reading and fitting
	// are deterministic).
	b.raw0 = append(b.raw0[:0], sc.raw...)
	b.net0 = append(b.net0[:0], sc.net...)
	b.blk0 = append(b.blk0[:0], sc.blk...)
	b.y0 = append(b.y0[:0], sc.y...)
	sc.res.CopyTo(&b.res0)
	if err := m.estimateShift(sc); err != nil {
		return err
	}
	if sc.shift != 0 {
		sc.interpVar = interpNoise(sc.s.Wavelengths, sh.grid[sh.lo:], sc.d.rows, sc.shift)
	}
	sc.shiftSE = m.shiftSE(sc)
	if shiftDetermined(sc.shift, sc.shiftSE) {
		return nil
	}
	// Not told apart from zero: the unshifted fit stands, and the
	// standard error says how little the data could tell.
	sc.shift, sc.interpVar = 0, 1
	copy(sc.raw, b.raw0)
	copy(sc.net, b.net0)
	copy(sc.blk, b.blk0)
	b.y = append(b.y[:0], b.y0...)
	sc.y = b.y
	b.res0.CopyTo(sc.res)
	clear(sc.pg)
	return nil
}

// estimateShift iterates the shift: with the sample read at l + delta and
// fitted, the remaining shift is the coefficient gamma of the derivative
// g = sum_k c_k d(b eps_k)/dl of the fitted compound spectrum, found by
// projecting g and the residual onto the complement of the design,
//
//	gamma = <M g, r> / <M g, M g>,  M = I - X P,
//
// (whitened by the noise when weighted; P the design's pseudo-inverse,
// lsq.Solver.PseudoInverseRow), and the sample is read again at
// delta - gamma (first-order Taylor term; the fixed point is exact up to
// interpolation error). It sets sc.shift in nm, positive when the
// sample's bands lie at longer wavelengths than the references', with
// sc.shiftDen and sc.pg = P g from the last iteration.
func (m *Model) estimateShift(sc *scan) error {
	lim := m.opt.MaxShiftNM
	delta := 0.0
	for range shiftMaxIter {
		num, den := m.shiftStep(sc, m.sh.dcols)
		sc.shiftDen = den
		if !(den > 0) {
			break
		}
		next := math.Max(-lim, math.Min(lim, delta-num/den))
		if math.Abs(next-delta) < shiftTolNM {
			break
		}
		delta = next
		if err := m.resample(sc, delta); err != nil {
			return err
		}
		if err := m.fit(sc); err != nil {
			return err
		}
	}
	sc.shift = delta
	return nil
}

// shiftDetermined reports whether an estimated shift is told apart from
// zero: more than shiftSigmas standard errors from it. A shift whose
// standard error is undefined (no signal to move) is not.
func shiftDetermined(shift, se float64) bool {
	return se > 0 && !math.IsInf(se, 0) && math.Abs(shift) > shiftSigmas*se
}

// shiftSE is the standard error of the shift estimated by estimateShift
// for the fit in sc.res: the residual SD (in noise-model units and at
// least 1 when weighted, as for the compounds) over the norm of the shift
// direction left after projecting out the design. It is NaN when the
// direction vanishes (nothing fitted to move) or no degrees of freedom
// remain.
func (m *Model) shiftSE(sc *scan) float64 {
	n, dof := len(sc.d.rows), sc.res.DoF
	if !(sc.shiftDen > 0) || dof <= 0 {
		return math.NaN()
	}
	s2 := sumSq(sc.res.Residual[:n]) / float64(dof) / sc.interpVar
	if m.opt.Weighted {
		chi := 0.0
		for i, r := range sc.d.rows {
			e := sc.res.Residual[i] / sc.sig[r]
			chi += e * e
		}
		s2 = math.Max(chi/float64(dof)/sc.interpVar, 1)
	}
	return math.Sqrt(s2 / sc.shiftDen)
}

// interpNoise is the mean, over the rows of grid listed in rows, of the
// variance factor (1-t)^2 + t^2 that linear interpolation at grid + delta
// between readings of wl applies to independent noise. Interpolated
// residuals look quieter than the readings by this factor; the noise
// itself and the parameters' scatter are not reduced, so residual-based
// standard errors are divided by its square root. wl, grid and rows are
// increasing, so the reading at or after each point is found by one walk
// along wl (the index a binary search would give).
func interpNoise(wl, grid []float64, rows []int, delta float64) float64 {
	n := len(wl)
	sum := 0.0
	k := 0
	for _, r := range rows {
		x := grid[r] + delta
		for k < n && wl[k] < x {
			k++
		}
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

// shiftStep computes, for the scan's current fit, the shift direction
// g = sum_k c_k dcols_k on the fit rows, sc.pg = P g, and the products
// <M g, r> and <M g, M g> with M = I - X P (whitened by the noise when
// weighted): the shift's next step is -num/den, and num^2/den is the drop
// in the residual sum of squares that adding g as a column would give.
func (m *Model) shiftStep(sc *scan, dcols [][]float64) (num, den float64) {
	sh, b := m.sh, &m.buf
	d := sc.d
	n, p := len(d.rows), len(sh.cols)
	b.g = grow(b.g, n)
	g := b.g
	b.pg = grow(b.pg, p)
	sc.pg = b.pg
	if n > 0 && d.rows[n-1]-d.rows[0] == n-1 {
		return m.shiftStepRun(sc, dcols)
	}
	xr := d.x.RawMatrix()
	// g accumulated column by column: the same sums, in the same order
	// (compound 0 first), as row by row.
	clear(g)
	for k, col := range dcols[:sh.ncomp] {
		c := sc.res.Coef[k]
		for i, r := range d.rows {
			g[i] += c * col[r]
		}
	}
	pg := sc.pg[:p]
	for k := range pg {
		pg[k] = floats.Dot(d.solver.PseudoInverseRow(k), g)
	}
	resid, sig, weighted := sc.res.Residual[:n], sc.sig, m.opt.Weighted
	for i, r := range d.rows {
		fit := 0.0
		for k, v := range xr.Data[i*xr.Stride : i*xr.Stride+p] {
			fit += v * pg[k]
		}
		mg, res := g[i]-fit, resid[i]
		if weighted {
			mg /= sig[r]
			res /= sig[r]
		}
		num += mg * res
		den += mg * mg
	}
	return num, den
}

// shiftStepRun is shiftStep for fit rows that are one run of window rows
// (no point left out inside the window, the common case): the columns'
// rows are then slices, so g and the design's prediction X P g are
// accumulated a column at a time by gonum's vector kernels, each element
// with the same products added in the same order as shiftStep's loops,
// hence the same sums bit for bit.
func (m *Model) shiftStepRun(sc *scan, dcols [][]float64) (num, den float64) {
	sh, b := m.sh, &m.buf
	d := sc.d
	n := len(d.rows)
	lo := d.rows[0]
	g, pg := b.g[:n], sc.pg
	clear(g)
	for k, col := range dcols[:sh.ncomp] {
		floats.AddScaled(g, sc.res.Coef[k], col[lo:lo+n])
	}
	for k := range pg {
		pg[k] = floats.Dot(d.solver.PseudoInverseRow(k), g)
	}
	b.xg = grow(b.xg, n)
	fit := b.xg
	clear(fit)
	for k, col := range sh.cols {
		floats.AddScaled(fit, pg[k], col[lo:lo+n])
	}
	resid := sc.res.Residual[:n]
	if m.opt.Weighted {
		sig := sc.sig[lo : lo+n]
		for i, f := range fit {
			mg, res := (g[i]-f)/sig[i], resid[i]/sig[i]
			num += mg * res
			den += mg * mg
		}
		return num, den
	}
	for i, f := range fit {
		mg := g[i] - f
		num += mg * resid[i]
		den += mg * mg
	}
	return num, den
}
