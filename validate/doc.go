// Package validate tells a chemist how far a reference set can be trusted
// before samples are solved with it: figures of merit per compound from
// the net analyte signal, the assessment of check standards (recovery,
// bias, RMSEP, precision, pass or fail), cross-validation of the
// calibration (RMSECV), and advice on the wavelength window.
//
// # Net analyte signal
//
// The design of a fit holds one column per compound, b·ε_n(λ) over the
// window (b the path length, ε the absorptivity), and the nuisance columns
// of the baseline model. The net analyte signal of compound n is the part
// of its column that no combination of the other columns, baseline terms
// included, can imitate (Lorber, Anal. Chem. 58 (1986) 1167; Lorber, Faber
// and Kowalski, Anal. Chem. 69 (1997) 1620):
//
//	s*_n = (I - P_others) s_n
//
// with P_others the orthogonal projector onto the span of the other
// columns. From it, as in the IUPAC technical report on figures of merit
// for multivariate calibration (Olivieri et al., Pure Appl. Chem. 78 (2006)
// 633):
//
//	sensitivity  SEN_n = ||s*_n||            absorbance per unit concentration
//	selectivity  SEL_n = ||s*_n|| / ||s_n||   0 (imitable) .. 1 (unique)
//	LOD_n = 3.3 σ / SEN_n,  LOQ_n = 10 σ / SEN_n  (ICH Q2 constants)
//
// The projector is formed from a thin singular value decomposition of the
// other columns (scaled to unit norm, tiny singular values dropped), never
// by inverting SᵀS. When the noise σ_i differs between wavelengths, the
// predicted standard error of a blank-level result is
// sqrt(Σ g_i² σ_i²) with g = s*_n/||s*_n||², the row of the pseudo-inverse
// that gives c_n (an unweighted fit), or 1/||s*_n|| computed on the
// whitened design (a weighted fit); the limits are 3.3 and 10 times that
// standard error, which is 3.3 σ/SEN and 10 σ/SEN when σ is constant.
//
// # Rows used
//
// A wavelength enters the design when it lies in the window, every
// compound's absorptivity is marked usable there (enough calibration levels
// stayed under the ceiling) and the noise model is finite there.
package validate
