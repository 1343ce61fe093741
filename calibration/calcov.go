package calibration

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// The absorptivities' covariance (reference.AbsorptivityCov). Each
// wavelength is an ordinary least-squares fit of the standards'
// absorbances on their concentrations (plus the intercept), so its slopes
// have the covariance s_j^2 (X'X)^-1 with s_j the residual standard
// deviation (set.Noise) and X the concentration design of the readings
// kept there. X changes only where readings above the ceiling are left
// out, so one (X'X)^-1 is stored per distinct mask of readings, as the
// fits are (one maskFit per mask), and an index per wavelength: a set of
// 4 compounds keeps 10 numbers per mask instead of 10 per wavelength. The
// fit is unweighted, so the unweighted form is the right one; the growth
// of the noise with absorbance (the noise model) is not folded in: s_j is
// the residual SD pooled over the standards at j, as absorptivity_se is.

// unscaledCov returns the compounds' block of (X'X)^-1 for the
// concentration design x, whose columns are the compounds comps (of m in
// the set) and then the intercept if any, packed as
// reference.AbsorptivityCov stores it; compounds not in comps get zeros.
// (X'X)^-1 = R^-1 R^-T from the QR factorisation of x, without forming
// X'X.
func unscaledCov(x *mat.Dense, comps []int, m int) ([]float64, error) {
	_, c := x.Dims()
	var qr mat.QR
	qr.Factorize(x)
	var rf mat.Dense
	qr.RTo(&rf)
	tri := mat.NewTriDense(c, mat.Upper, nil)
	for i := range c {
		for k := i; k < c; k++ {
			tri.SetTri(i, k, rf.At(i, k))
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(tri); err != nil {
		return nil, fmt.Errorf("the concentration design is singular to working precision: %w", err)
	}
	var u mat.Dense
	u.Mul(&rinv, rinv.T())
	out := make([]float64, m*(m+1)/2)
	pos := make([]int, m) // column of compound k in x, -1 if none
	for k := range pos {
		pos[k] = -1
	}
	for q, k := range comps {
		pos[k] = q
	}
	p := 0
	for k := range m {
		for l := k; l < m; l++ {
			if pos[k] >= 0 && pos[l] >= 0 {
				out[p] = u.At(pos[k], pos[l])
			}
			p++
		}
	}
	return out, nil
}

// keepCov gives mf's (X'X)^-1 block its place in the set's list (none
// when nothing can be fitted on its rows).
func (ps *pass) keepCov(mf *maskFit) {
	mf.covIdx = -1
	if mf.solver == nil {
		return
	}
	c := ps.res.set.AbsorptivityCov
	mf.covIdx = len(c.Unscaled)
	c.Unscaled = append(c.Unscaled, mf.unscaled)
}
