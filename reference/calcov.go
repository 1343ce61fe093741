package reference

// AbsorptivityCov is what the covariance of a set's fitted absorptivities
// needs, wavelength by wavelength. At grid point j the calibration fits
// the standards' absorbances by ordinary least squares on their
// concentrations (and an intercept when the set has one), so the fitted
// slopes b*eps_k(j) (absorbance per unit concentration at the standards'
// path length b) have the covariance
//
//	Cov(b eps(j)) = Noise[j]^2 U_j,   U_j = the compounds' block of (X_j' X_j)^-1
//
// with X_j the concentration design of the standards kept at j (Draper &
// Smith, Applied Regression Analysis, ch. 5: Var(beta) = s^2 (X'X)^-1;
// recalled from memory) and Noise[j] the residual standard deviation the
// set already records there. X_j is the same at every wavelength except
// where readings above the ceiling were left out, so only the distinct
// U_j are stored (Unscaled) with one index per wavelength (Index): a few
// matrices of m(m+1)/2 numbers instead of one per wavelength.
//
// When the set has a NoiseModel, Noise[j] is the base noise and the
// readings' noise grows with absorbance; U_j is then the sandwich
// (X'X)^-1 X' G_j X (X'X)^-1 with G_j the squared growth at each
// standard's fitted absorbance there (H. White, Econometrica 48 (1980)
// 817; recalled from memory), one matrix per wavelength, so that
// Noise[j]^2 U_j is still the slopes' covariance (package calibration).
//
// The intercept's own variance is not stored: solve does not subtract
// the calibration intercept from a sample (its baseline takes up a
// constant), so only its effect on the slopes' covariance (the block of
// the inverse) matters.
type AbsorptivityCov struct {
	// Unscaled are the distinct U_j, each the upper triangle of the
	// compounds' block of (X'X)^-1 packed by rows ((0,0), (0,1), ...,
	// (0,m-1), (1,1), ...), in 1/(concentration unit)^2. A compound with
	// no standard kept at a wavelength has zeros in its row and column
	// there (it is not usable there).
	Unscaled [][]float64 `json:"unscaled"`
	// Index gives for each grid point the entry of Unscaled that holds
	// there, -1 where nothing was fitted.
	Index []int `json:"index"`
	// Growth is true when the matrices fold in the noise model's growth
	// (the sandwich form above). A set with a noise model whose covariance
	// lacks it was made by a build that understated the calibration's
	// error; such a covariance is not used (see [Set.CovUsable]).
	Growth bool `json:"growth,omitempty"`
}

// CovUsable reports whether the set's absorptivity covariance may be
// used: it is recorded, and it folds in the noise model's growth when the
// set has one. Sets calibrated with a noise model by the builds that
// recorded the covariance without the growth (before Growth existed)
// understate the calibration's error of results near the top of the
// standards' range, by a factor of up to hundreds in variance where the
// noise grows steeply; calibrate again to have it.
func (s *Set) CovUsable() bool {
	c := s.AbsorptivityCov
	return c != nil && (s.NoiseModel == nil || c.Growth)
}

// packedLen is the length of a packed upper triangle of an m×m matrix.
func packedLen(m int) int { return m * (m + 1) / 2 }

// Quad returns z' U z for the i-th matrix of Unscaled, with z one value
// per compound (concentrations in the cell at the set's path length).
func (c *AbsorptivityCov) Quad(i int, z []float64) float64 {
	u := c.Unscaled[i]
	m := len(z)
	q, p := 0.0, 0
	for k := range m {
		zk := z[k]
		q += zk * zk * u[p]
		p++
		s := 0.0
		for l := k + 1; l < m; l++ {
			s += u[p] * z[l]
			p++
		}
		q += 2 * zk * s
	}
	return q
}

// At returns the (k, l) entry of the i-th matrix of Unscaled.
func (c *AbsorptivityCov) At(i, k, l, m int) float64 {
	if k > l {
		k, l = l, k
	}
	return c.Unscaled[i][k*m-k*(k-1)/2+l-k]
}

// CalVar is the variance that the calibration's error adds to a sample's
// absorbance at grid point j when it holds z (one amount per compound,
// in the cell at the set's path length): Noise[j]^2 z' U_j z, to first
// order in the absorptivities' errors. 0 when the set records no usable
// covariance (CovUsable) or nothing was fitted at j.
func (s *Set) CalVar(j int, z []float64) float64 {
	c := s.AbsorptivityCov
	if !s.CovUsable() || c.Index[j] < 0 {
		return 0
	}
	return s.Noise[j] * s.Noise[j] * c.Quad(c.Index[j], z)
}

// validateAbsorptivityCov checks absorptivity_cov: one index per grid
// point into the matrices, each of the packed size for the set's
// compounds, finite, with a non-negative diagonal.
func (s *Set) validateAbsorptivityCov() error {
	c := s.AbsorptivityCov
	if c == nil {
		return nil
	}
	m := len(s.Compounds)
	if len(c.Index) != len(s.Grid) {
		return invalid("absorptivity_cov: %d indexes for %d wavelengths", len(c.Index), len(s.Grid))
	}
	if len(c.Unscaled) > len(s.Grid) {
		return invalid("absorptivity_cov: %d matrices for %d wavelengths", len(c.Unscaled), len(s.Grid))
	}
	for j, i := range c.Index {
		if i < -1 || i >= len(c.Unscaled) {
			return invalid("absorptivity_cov: index %d at %g nm is outside -1-%d", i, s.Grid[j], len(c.Unscaled)-1)
		}
	}
	for i, u := range c.Unscaled {
		if len(u) != packedLen(m) {
			return invalid("absorptivity_cov: matrix %d has %d values, want %d for %d compounds", i+1, len(u), packedLen(m), m)
		}
		for _, v := range u {
			if !finite(v) {
				return invalid("absorptivity_cov: matrix %d holds %v", i+1, v)
			}
		}
		for k := range m {
			if c.At(i, k, k, m) < 0 {
				return invalid("absorptivity_cov: matrix %d has a negative variance %g for %s", i+1, c.At(i, k, k, m), s.Compounds[k].Name)
			}
		}
	}
	return nil
}

// newestField names the field that sets the schema s must be written as.
func (s *Set) newestField() string {
	switch {
	case s.AbsorptivityCov != nil:
		return "absorptivity_cov"
	case len(s.Interferents) > 0:
		return "interferents"
	}
	return "noise_model"
}
