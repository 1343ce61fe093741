package calibration

import (
	"fmt"

	"huesolve/reference"

	"gonum.org/v1/gonum/mat"
)

// The absorptivities' covariance (reference.AbsorptivityCov). Each
// wavelength is an ordinary least-squares fit of the standards'
// absorbances on their concentrations (plus the intercept), so its slopes
// have the covariance s_j^2 (X'X)^-1 with s_j the residual standard
// deviation (set.Noise) and X the concentration design of the readings
// kept there, when every reading has the same noise. X changes only where
// readings above the ceiling are left out, so one (X'X)^-1 is stored per
// distinct mask of readings, as the fits are (one maskFit per mask), and
// an index per wavelength: a set of 4 compounds keeps 10 numbers per mask
// instead of 10 per wavelength.
//
// When calibrate measures a noise model, the readings' noise is not the
// same: reading r at j has SD s_j g(A_rj), with s_j the base noise the
// model leaves in set.Noise and g its growth at the reading's fitted
// absorbance. The fit stays unweighted, and the covariance of its slopes
// is then the sandwich
//
//	Cov = s_j^2 P G_j P',  P = (X'X)^-1 X',  G_j = diag(g(A_rj)^2)
//
// (the covariance of any linear estimator P y under Cov(y) = s^2 G;
// H. White, Econometrica 48 (1980) 817, for its use with ordinary least
// squares; recalled from memory), which depends on the wavelength through
// G_j: one matrix per wavelength is stored then (foldNoiseGrowth). With
// s_j^2 (X'X)^-1 instead, a set whose top standards are many times
// noisier than its base noise understated the calibration's share of
// every high result's error (TestSandwichCovariance).

// unscaledCov returns the compounds' block of (X'X)^-1 for the
// concentration design x, whose columns are the compounds comps (of m in
// the set) and then the intercept if any, packed as
// reference.AbsorptivityCov stores it; compounds not in comps get zeros.
// (X'X)^-1 = R^-1 R^-T from the QR factorisation of x, without forming
// X'X. It also returns the rows of the pseudo-inverse (X'X)^-1 X' of the
// compounds in comps (one row per comps entry, one column per row of x).
func unscaledCov(x *mat.Dense, comps []int, m int) ([]float64, *mat.Dense, error) {
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
		return nil, nil, fmt.Errorf("the concentration design is singular to working precision: %w", err)
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
	var pinv mat.Dense
	pinv.Mul(u.Slice(0, len(comps), 0, c), x.T())
	return out, &pinv, nil
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

// foldNoiseGrowth replaces the set's covariance matrices, after the noise
// model is measured, by the sandwich form (see above) at each wavelength
// j where rebased[j] (set.Noise holds the base noise there): its U_j is
// the compounds' block of P G_j P', with g at the readings' fitted
// absorbances (from the slopes and intercept fitted there). Other
// wavelengths keep their mask's (X'X)^-1, as set.Noise there is still the
// pooled residual SD.
func (ps *pass) foldNoiseGrowth(knee float64, rebased []bool) {
	c := ps.res.set.AbsorptivityCov
	m := len(ps.res.set.Compounds)
	g2 := make([]float64, 0, len(ps.rows))
	for j, mf := range ps.mfAt {
		if mf == nil || !rebased[j] || c.Index[j] < 0 || mf.pinv == nil {
			continue
		}
		g2 = g2[:0]
		for _, i := range mf.rows {
			a := 0.0
			if ps.icpt != nil {
				a = ps.icpt[j]
			}
			for _, k := range mf.comps {
				a += ps.rows[i].Conc[k] * ps.kraw[k][j]
			}
			g := reference.GrowthAt(a, knee)
			g2 = append(g2, g*g)
		}
		u := make([]float64, m*(m+1)/2)
		pos := make([]int, m)
		for k := range pos {
			pos[k] = -1
		}
		for q, k := range mf.comps {
			pos[k] = q
		}
		p := 0
		for k := range m {
			for l := k; l < m; l++ {
				if pos[k] >= 0 && pos[l] >= 0 {
					pk, pl := mf.pinv.RawRowView(pos[k]), mf.pinv.RawRowView(pos[l])
					v := 0.0
					for r, w := range g2 {
						v += pk[r] * pl[r] * w
					}
					u[p] = v
				}
				p++
			}
		}
		c.Index[j] = len(c.Unscaled)
		c.Unscaled = append(c.Unscaled, u)
	}
	// The per-mask matrices no wavelength points to any more are dropped.
	used := make([]bool, len(c.Unscaled))
	for _, i := range c.Index {
		if i >= 0 {
			used[i] = true
		}
	}
	remap := make([]int, len(c.Unscaled))
	kept := c.Unscaled[:0]
	for i, u := range c.Unscaled {
		remap[i] = -1
		if used[i] {
			remap[i] = len(kept)
			kept = append(kept, u)
		}
	}
	c.Unscaled = kept
	for j, i := range c.Index {
		if i >= 0 {
			c.Index[j] = remap[i]
		}
	}
}
