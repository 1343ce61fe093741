package unmix

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"huesolve/unmix/lsq"
)

// The calibration's share of a result's uncertainty.
//
// A sample is fitted as a = S c + e with S the compound columns b*eps
// from the reference set, whose errors dS every sample of the set shares.
// With P the (weighted) pseudo-inverse of the design that the solver
// keeps (lsq.Solver.PseudoInverseRow), c = P a, and to first order an
// error dS moves the estimate by dc = -P dS c. With the absorptivities'
// errors independent across wavelengths and Cov(S row i) = s_i^2 U_i
// (reference.AbsorptivityCov), the error dS_i c at reading i has variance
//
//	v_i = s_i^2 c' U_i c                      (reference.Set.CalVar)
//
// and
//
//	Cov_cal(c) = sum_i p_i p_i' v_i,   Var_cal(c_k) = sum_i P_ki^2 v_i
//
// with p_i the i-th column of P: the first-order error propagation of
// classical least squares with errors in the pure-component spectra, as
// in the CLS error analysis of the chemometrics literature (recalled
// from memory, not quoted from a source: the formula is derived here and
// checked against a Monte Carlo of perturbed designs in
// calerr_test.go). The
// intercept of the calibration adds nothing: solve does not subtract it
// (its offset term takes up a constant). Where c = 0 the term vanishes,
// so a blank's detection limit is the noise's alone.
//
// The same dS_i c also lands in the residual (the part of it outside the
// design's span), so a residual-scaled standard error (unweighted fit) or
// the Birge ratio (weighted) already carries an average of v over the
// window. Before the term is added, that average is taken back out of
// the residual: by the same first-order argument E[r_i^2] grows by
// (1 - h_i) v_i (h the leverage of reading i), so the residual variance
// (unweighted) and the reduced chi-square (weighted) are lowered by
// sum (1 - h_i) v_i (/ sigma_i^2) / DoF before they scale the sample's
// own part. Then the total is right where v is the same at every reading
// (the old rule, TestCalibrationError) and where it is not (readings
// left out under the ceiling change U, the calibration noise differs
// across the window), and the split into the sample's part and the
// calibration's shows which dominates.
//
// Degrees of freedom: the interval keeps the Student t quantile of the
// sample fit's residual degrees of freedom. The calibration variance is a
// sum over many wavelengths of s_i^2, each on the calibration's residual
// degrees of freedom, so its own (Welch-Satterthwaite) degrees of freedom
// are large, as the fit's are; the t quantile hardly differs from the
// normal one on either (a project choice).

// calWindow is the absorptivity covariance on the model's window: nil
// when the set records none.
type calWindow struct {
	noise2 []float64 // per window row: the set's calibration noise squared
	idx    []int     // per window row: matrix of the set's AbsorptivityCov, -1 none
	nmat   int
}

// setCal fills sh.cal from the set (nothing when it records no usable
// covariance, reference.Set.CovUsable).
func (sh *shared) setCal() {
	c := sh.set.AbsorptivityCov
	if !sh.set.CovUsable() {
		return
	}
	n := sh.hi - sh.lo
	cw := &calWindow{noise2: make([]float64, n), idx: make([]int, n), nmat: len(c.Unscaled)}
	for r := range n {
		s := sh.set.Noise[sh.lo+r]
		cw.noise2[r] = s * s
		cw.idx[r] = c.Index[sh.lo+r]
	}
	sh.cal = cw
}

// leverage returns the diagonal of the (weighted) hat matrix of the
// design x as solved by s: h_i = sum_j x_ij P_ji (X P is similar to the
// weighted hat matrix through W^(1/2), so their diagonals agree), into
// dst.
func leverage(dst []float64, x *mat.Dense, s *lsq.Solver) []float64 {
	n, p := x.Dims()
	dst = grow(dst, n)
	clear(dst)
	raw := x.RawMatrix()
	for j := range p {
		pj := s.PseudoInverseRow(j)
		for i := range n {
			dst[i] += raw.Data[i*raw.Stride+j] * pj[i]
		}
	}
	return dst
}

// calTerms computes, from the scan's fitted rows, the
// calibration's variance v_i at each row (see above) for the fitted
// amounts and from it each compound's Var_cal = sum_i P_ki^2 v_i (into
// m.buf.cvar, in the reference cell) and what v adds to the residual:
// sum (1 - h_i) v_i / DoF, and the same with each term over sigma_i^2
// (sr, the noise model on the rows), the share of the reduced
// chi-square. ok is false when the set records no covariance or every
// amount is zero (nothing to propagate).
func (m *Model) calTerms(sc *scan, sr []float64) (resid, chi float64, ok bool) {
	cw := m.sh.cal
	if cw == nil {
		return 0, 0, false
	}
	nc := m.sh.ncomp
	z := sc.res.Coef[:nc]
	for _, v := range z {
		ok = ok || v != 0
	}
	if !ok {
		return 0, 0, false
	}
	b := &m.buf
	b.cq = grow(b.cq, cw.nmat)
	c := m.set.AbsorptivityCov
	for i := range cw.nmat {
		b.cq[i] = c.Quad(i, z)
	}
	// One pass over the rows for v_i and the residual's sums, then one
	// per compound for sum P_ki^2 v_i: each sum adds the same terms in
	// the same order (rows ascending) as a single pass would, so the
	// values are the same bit for bit (a row without a matrix has v_i =
	// +0, and adding P_ki^2 * 0 = +0 to a sum leaves it as it was).
	lev := m.sh.levOf(sc.d)
	b.cv = grow(b.cv, len(sc.d.rows))
	for i, r := range sc.d.rows {
		j := cw.idx[r]
		if j < 0 {
			b.cv[i] = 0
			continue
		}
		v := cw.noise2[r] * b.cq[j]
		b.cv[i] = v
		w := (1 - lev[i]) * v
		resid += w
		chi += w / (sr[i] * sr[i])
	}
	b.cvar = grow(b.cvar, nc)
	for k := range nc {
		p := sc.d.solver.PseudoInverseRow(k)
		p = p[:len(b.cv)]
		var sum float64
		for i, v := range b.cv {
			sum += p[i] * p[i] * v
		}
		b.cvar[k] = sum
	}
	if dof := sc.res.DoF; dof > 0 {
		resid /= float64(dof)
		chi /= float64(dof)
	} else {
		resid, chi = 0, 0
	}
	return resid, chi, true
}

// CalibrationIncluded reports whether the results' standard errors and
// intervals include the calibration's part (Amount.SECal): false for a
// reference set that records no absorptivity covariance (made before
// sets did) or one that lacks the noise model's growth
// (reference.Set.CovUsable), whose results carry only what the residual
// shows of it.
func (m *Model) CalibrationIncluded() bool { return m.set.CovUsable() }

// calSD is sqrt(sum P_ki^2 v_i), the calibration's standard deviation of
// coefficient k (in the reference cell) from calTerms; 0 when there was
// nothing to propagate (have false).
func (m *Model) calSD(k int, have bool) float64 {
	if !have {
		return 0
	}
	return math.Sqrt(m.buf.cvar[k])
}
