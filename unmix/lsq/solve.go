package lsq

import (
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/internal/pkgerr"
)

// Confidence is the two-sided coverage of the intervals in Result.lo, Hi.
const Confidence = 0.95

// zQuantile is the standard normal quantile for the intervals when the
// noise level is known.
var zQuantile = distuv.UnitNormal.Quantile(0.5 + Confidence/2)

// Width of the worst-residual band (common practice for a local
// lack-of-fit window: a twentieth of a spectrum, at least five points).
const (
	bandMinRows = 5  // fewest rows in the band
	bandDivisor = 20 // the band spans rows/bandDivisor rows when that is more
)

// bandWidth is the number of rows of the sliding window in which
// Result.worstLo..worstHi is the band of largest mean squared weighted
// residual: max(bandMinRows, n/bandDivisor) for n rows, never more than n.
func bandWidth(n int) int {
	return min(n, max(bandMinRows, n/bandDivisor))
}

// size makes the result's slices fit n rows and p columns.
func (r *Result) size(n, p int) {
	r.Coef = grow(r.Coef, p)
	r.SE = grow(r.SE, p)
	r.lo = grow(r.lo, p)
	r.hi = grow(r.hi, p)
	r.Residual = grow(r.Residual, n)
	r.Unconstrained = grow(r.Unconstrained, p)
	r.unconstrainedSE = grow(r.unconstrainedSE, p)
	r.AtBound = grow(r.AtBound, p)
	r.z = grow(r.z, p)
	r.bs = grow(r.bs, p)
}

// CopyTo makes dst a copy of r, reusing dst's storage: a fit known to
// equal one already made (the same design and y) is taken from it
// instead of being solved again.
func (r *Result) CopyTo(dst *Result) {
	keep := *dst
	*dst = *r
	dst.Coef = append(keep.Coef[:0], r.Coef...)
	dst.SE = append(keep.SE[:0], r.SE...)
	dst.lo = append(keep.lo[:0], r.lo...)
	dst.hi = append(keep.hi[:0], r.hi...)
	dst.AtBound = append(keep.AtBound[:0], r.AtBound...)
	dst.Residual = append(keep.Residual[:0], r.Residual...)
	dst.Unconstrained = append(keep.Unconstrained[:0], r.Unconstrained...)
	dst.unconstrainedSE = append(keep.unconstrainedSE[:0], r.unconstrainedSE...)
	dst.z = append(keep.z[:0], r.z...)
	dst.bs = append(keep.bs[:0], r.bs...)
}

// Solve fits y and fills dst. It returns ErrNoConvergence (with dst
// holding the best feasible point and Status IterLimit) if the cap is hit.
//
// It returns ErrInaccurate (with the feasible result in dst and Status
// Inaccurate) when the KKT residual recomputed from the original data
// exceeds KKTTol; an error wrapping errShape when len(y) is not the number
// of rows; and one wrapping errNonFinite, naming the row, when y holds NaN
// or an infinity (dst is then not filled).
//
// With a Result reused from an earlier call, Solve allocates nothing.
// Solve is SolveCoef followed by Finish.
func (s *Solver) Solve(dst *Result, y []float64) error {
	if err := s.SolveCoef(dst, y); err != nil {
		return err
	}
	return s.Finish(dst, y)
}

// SolveCoef is the first part of Solve: it fills the coefficients, which
// are at the bound, the residual, RSS and DoF of dst, and nothing else
// yet, for a caller that compares many fits of one y by their residual
// sums and keeps only some (Finish completes the ones kept, bit for bit
// as Solve would have filled them). Its errors are Solve's for the input
// (errShape, errNonFinite); the iteration cap and the KKT certificate
// are reported by Finish.
func (s *Solver) SolveCoef(dst *Result, y []float64) error {
	f, ws := s.f, &s.ws
	if f == nil {
		return pkgerr.Errorf("lsq", "solver has no design (failed Reset): %w", errShape)
	}
	n, p, nf := f.n, f.p, f.nf
	if len(y) != n {
		return pkgerr.Errorf("lsq", "y has %d rows, the design has %d: %w", len(y), n, errShape)
	}
	sumY := floats.Sum(y)
	if math.IsNaN(sumY) || math.IsInf(sumY, 0) {
		for i, v := range y {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return pkgerr.Errorf("lsq", "row %d of y is %v: %w", i, v, errNonFinite)
			}
		}
		return pkgerr.Errorf("lsq", "sum of y overflows: %w", errNonFinite)
	}
	dst.size(n, p)

	// z = Q' W^(1/2) y.
	z := dst.z
	for k := range p {
		z[k] = floats.Dot(f.qtw[k*n:(k+1)*n], y)
	}
	// The active-set threshold is relative to ||X_s|| ||z||, ||z|| being
	// the norm of the part of W^(1/2) y the design can reach.
	znorm := floats.Norm(z, 2)
	iter, capped := s.nnls(z[nf:], f.tol*f.normXs*znorm)

	// Scaled coefficients in factor order: c from the active set, beta by
	// back-substitution R_BB beta = z_B - R_BS c.
	bs := dst.bs
	copy(bs[nf:], ws.x)
	for i := nf - 1; i >= 0; i-- {
		sum := z[i]
		for j := i + 1; j < p; j++ {
			sum -= f.r[i*p+j] * bs[j]
		}
		bs[i] = sum / f.r[i*p+i]
	}
	free := 0
	for k, j := range f.perm {
		dst.Coef[j] = bs[k] / f.d[j]
		at := k >= nf && bs[k] == 0
		dst.AtBound[j] = at
		if !at {
			free++
		}
	}

	// Residual from the original data.
	r := dst.Residual
	first := true
	for j := range p {
		if b := dst.Coef[j]; b != 0 {
			if first {
				floats.AddScaledTo(r, y, -b, f.x[j*n:(j+1)*n])
				first = false
			} else {
				floats.AddScaled(r, -b, f.x[j*n:(j+1)*n])
			}
		}
	}
	if first {
		copy(r, y)
	}
	// The sums of squares as stats makes them (the same order).
	var rss, yw float64
	if f.invSigma == nil {
		for i, e := range r {
			rss += e * e
			yw += y[i] * y[i]
		}
	} else {
		is := f.invSigma[:n]
		for i, e := range r {
			rss += e * e
			v := y[i] * is[i]
			yw += v * v
		}
	}
	if math.IsInf(yw, 0) {
		return pkgerr.Errorf("lsq", "sum of squares of y overflows: %w", errNonFinite)
	}
	dst.RSS = rss
	dst.DoF = n - free
	dst.iterations = iter
	dst.capped = capped
	dst.partial = true
	return nil
}

// Finish completes a Result that SolveCoef filled for the same y with this
// Solver's design (or a Solver factored from the same design and
// weights, as a copy made by Result.CopyTo may come from): the residual
// statistics, the KKT certificate, the standard errors and intervals and
// the unconstrained estimate, and the error Solve returns for the
// iteration cap or the certificate. A Result that is already complete is
// left as it is (nil error).
func (s *Solver) Finish(dst *Result, y []float64) error {
	if !dst.partial {
		return nil
	}
	dst.partial = false
	f, ws := s.f, &s.ws
	n, p := f.n, f.p
	copy(ws.z, dst.z)
	copy(ws.bs, dst.bs)
	passive := ws.aidx[:0]
	for k, j := range f.perm {
		if !dst.AtBound[j] {
			passive = append(passive, k)
		}
	}
	ws.aidx = passive
	r := dst.Residual

	// Residual statistics.
	s.stats(dst, y, floats.Sum(y)/float64(n))

	// KKT certificate: g = X_s' W^(1/2) (W^(1/2) r), from the original columns.
	f.gradRows()
	var viol float64
	for j := range p {
		g := floats.Dot(f.gcol[j*n:(j+1)*n], r)
		ws.g[j] = g
		if dst.AtBound[j] {
			viol = math.Max(viol, g)
		} else {
			viol = math.Max(viol, math.Abs(g))
		}
	}
	dst.KKT = 0
	if den := f.normXs * math.Sqrt(ws.ywss); den > 0 {
		dst.KKT = viol / den
	}

	s.uncertainty(dst)
	s.unconstrained(dst)

	switch {
	case dst.capped:
		dst.Status = IterLimit
		return pkgerr.Errorf("lsq", "%d iterations: %w", dst.iterations, ErrNoConvergence)
	case !(dst.KKT <= KKTTol):
		dst.Status = Inaccurate
		return pkgerr.Errorf("lsq", "relative KKT residual %.3g exceeds %.3g: %w", dst.KKT, KKTTol, ErrInaccurate)
	}
	dst.Status = Converged
	return nil
}

// stats fills RSS, wrss, RMS, chiSqRed, R2, DW and the worst band, and
// leaves ||W^(1/2) y||^2 in ws.ywss.
func (s *Solver) stats(dst *Result, y []float64, mean float64) {
	f := s.f
	n := f.n
	r := dst.Residual
	e2 := s.ws.e2
	var rss, wrss, tss, dw, yw float64
	if f.invSigma == nil {
		prev := r[0]
		for i, e := range r {
			q := e * e
			e2[i] = q
			rss += q
			d := y[i] - mean
			tss += d * d
			yw += y[i] * y[i]
			de := e - prev
			dw += de * de
			prev = e
		}
		wrss = rss
	} else {
		is := f.invSigma[:n]
		prev := r[0] * is[0]
		for i, e := range r {
			rss += e * e
			d := y[i] - mean
			tss += d * d
			v := y[i] * is[i]
			yw += v * v
			e *= is[i]
			q := e * e
			e2[i] = q
			wrss += q
			de := e - prev
			dw += de * de
			prev = e
		}
	}
	dst.worstLo, dst.worstHi = worstBand(e2, bandWidth(n))
	s.ws.ywss = yw
	dst.RSS = rss
	dst.wrss = wrss
	dst.RMS = math.Sqrt(rss / float64(n))
	dst.R2 = math.NaN()
	if tss > 0 {
		dst.R2 = 1 - rss/tss
	}
	dst.DW = math.NaN()
	if wrss > 0 {
		dst.DW = dw / wrss
	}
}

// worstBand returns the first and last row of the window of bw rows with
// the largest sum of e2 (the squared weighted residuals; the first such
// window on ties).
func worstBand(e2 []float64, bw int) (lo, hi int) {
	var win float64
	for _, v := range e2[:bw] {
		win += v
	}
	best, bestLo := win, 0
	for i := bw; i < len(e2); i++ {
		win += e2[i] - e2[i-bw]
		if win > best {
			best, bestLo = win, i-bw+1
		}
	}
	return bestLo, bestLo + bw - 1
}

// uncertainty fills Scale, chiSqRed, SE, Lo and Hi from the passive set in
// ws.aidx (factor order) and dst.DoF.
func (s *Solver) uncertainty(dst *Result) {
	f, ws := s.f, &s.ws
	p := f.p
	dof := dst.DoF
	dst.chiSqRed = math.NaN()
	if f.invSigma != nil && dof > 0 {
		dst.chiSqRed = dst.wrss / float64(dof)
	}
	var s2, q float64
	switch {
	case f.known:
		s2, q = 1, zQuantile
	case dof > 0:
		s2 = dst.wrss / float64(dof)
		q = ws.tq[dof]
		if q == 0 {
			q = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile(0.5 + Confidence/2)
			ws.tq[dof] = q
		}
	default:
		s2, q = math.NaN(), math.NaN()
	}
	dst.scale = s2

	// diag((X_sA' X_sA)^-1) for the passive set A.
	A := ws.aidx
	m := len(A)
	d2 := ws.d2
	if m == p {
		copy(d2, f.rinvRow2)
	} else if m > 0 {
		givensSubset(ws.m, ws.rhs, f.r, p, p, A, ws.z)
		triInv(ws.tinv, ws.m, m, m)
		rowNorms2(d2[:m], ws.tinv, m)
	}
	c := 0
	for _, j := range f.perm {
		if dst.AtBound[j] {
			dst.SE[j], dst.lo[j], dst.hi[j] = 0, 0, 0
			continue
		}
		se := math.Sqrt(s2*d2[c]) / f.d[j]
		c++
		dst.SE[j] = se
		dst.lo[j] = dst.Coef[j] - q*se
		dst.hi[j] = dst.Coef[j] + q*se
	}
}

// unconstrained fills Unconstrained and unconstrainedSE: R b_u = z, and
// the residual sum of squares of that fit, ||(I - QQ') W^(1/2) y||^2,
// obtained as wrss - ||z - R b_s||^2 (the part of the constrained fit's
// residual that lies in the column space).
func (s *Solver) unconstrained(dst *Result) {
	f, ws := s.f, &s.ws
	p, n := f.p, f.n
	if len(ws.aidx) == p {
		copy(dst.Unconstrained, dst.Coef)
		copy(dst.unconstrainedSE, dst.SE)
		return
	}
	backSub(ws.bu, f.r, p, ws.z, p)
	var inCol float64
	for i := range p {
		sum := ws.z[i]
		for j := i; j < p; j++ {
			sum -= f.r[i*p+j] * ws.bs[j]
		}
		inCol += sum * sum
	}
	var s2 float64
	switch {
	case f.known:
		s2 = 1
	case n > p:
		s2 = math.Max(0, dst.wrss-inCol) / float64(n-p)
	default:
		s2 = math.NaN()
	}
	for k, j := range f.perm {
		dst.Unconstrained[j] = ws.bu[k] / f.d[j]
		dst.unconstrainedSE[j] = math.Sqrt(s2*f.rinvRow2[k]) / f.d[j]
	}
}
