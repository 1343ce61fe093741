// Package baseline gives the fit its nuisance terms (offset, polynomial in
// wavelength, a scattering power law) and the pre-treatments applied to
// spectra before fitting (zeroing on a reference region, asymmetric least
// squares background, Savitzky-Golay smoothing and derivatives).
//
// Real absorbance scans carry more than the compounds of interest: a
// cuvette or solvent offset, a slope from a turbid sample, slow lamp
// drift. There are two ways to deal with it, and they have different
// costs.
//
// # In-fit terms ([Model])
//
// A [Model] adds columns to the design handed to the least-squares engine,
// so the background is estimated together with the concentrations.
//
//   - Polynomial terms ("offset", "linear", "quadratic", "cubic") are
//     Legendre polynomials P0..P3 of the wavelength mapped onto [-1, 1]
//     (t = (λ - c)/h, c the middle and h the half-width of the grid's
//     range). Legendre polynomials are orthogonal on the interval, so the
//     columns are close to orthogonal on any fairly even grid and the
//     design stays well conditioned (raw powers of wavelength in nm would
//     not be). Their coefficients are free in sign. On an even grid the
//     "offset" coefficient is close to the mean background level over the
//     range, and "slope" is the rise from the middle to the
//     long-wavelength end.
//   - The scattering term is (λ/c)^-P, P = 4 by default (Rayleigh-like
//     scattering by particles much smaller than the wavelength; larger
//     particles give smaller exponents). It equals 1 at the middle c of
//     the grid's range, so its coefficient is the scattering absorbance at
//     that wavelength. It is non-negative, as scattered light only ever
//     adds apparent absorbance.
//
// When to use: whenever the sample may carry a background that the
// references did not, and the compounds' bands are narrower than the
// background's features. Trade-off: each term costs a degree of freedom
// and widens the uncertainty of every concentration; a broad, featureless
// band can be imitated by a quadratic or cubic term (or by the scattering
// curve in the far UV), which then trades off against that compound's
// concentration. Use the lowest degree that leaves a structureless
// residual, and watch the engine's leakage figure for each compound.
//
// # Pre-treatments ([Step])
//
// A [Step] transforms a spectrum before the fit. Steps are saved with a
// reference set so that samples get exactly the treatment their
// references got; a pre-treatment must be applied to both sides or the
// model is wrong.
//
//   - Zeroing ("zero:LO-HI") subtracts the mean absorbance over LO..HI nm.
//     Use it when a region where none of the compounds absorbs is inside
//     the scan (often the long-wavelength end of a visible scan) and the
//     background is a flat offset. Cheap and safe, but it removes only a
//     constant, and if some compound does absorb a little in the region
//     its concentration is biased low.
//
//   - Asymmetric least squares ("als:LAMBDA,P", Eilers & Boelens 2005)
//     estimates a smooth background z by minimising
//
//     Σ w_i (y_i - z_i)² + λ Σ (Δ²z_i)²
//
//     with w_i = P where y_i > z_i and 1 - P elsewhere, and subtracts it.
//     The second difference is taken over the point index, so λ depends on
//     the number of points per band width (typical λ 1e2..1e9, P
//     0.001..0.1). Use it for broad, curved backgrounds under comparatively
//     narrow bands (turbidity, slow lamp drift). Trade-off: a band
//     about as broad as the background is partly taken as background, and
//     the result depends on λ and P, the estimate sits near the lower edge
//     of the noise, and it is least certain at the ends of the range, where
//     the smoother sees one side only; check the treated spectra by eye.
//
//   - Savitzky-Golay ("sg:WINDOW,ORDER[,DERIV]", Savitzky & Golay 1964,
//     with the corrections of Steinier, Termonia & Deltour 1972) fits a
//     polynomial of degree ORDER to each WINDOW points by least squares and
//     returns its value (smoothing) or its first or second derivative per
//     nm at the centre. Derivative spectra remove an offset (first
//     derivative) or an offset and a slope (second derivative) exactly, and
//     sharpen overlapping bands. Trade-off: smoothing with a window wider
//     than about half a band's width flattens and broadens the band, and
//     derivatives amplify noise, more so for the second derivative and
//     small windows. The grid must be even (see gridTolerance). At the
//     ends, where a centred window does not fit, the polynomial fitted to
//     the first (last) WINDOW points is evaluated at the first (last)
//     WINDOW/2 points, so a polynomial of degree <= ORDER passes through
//     unchanged everywhere, edges included.
//
// Zeroing is local and ALS looks at the whole spectrum, so when both are
// used the order of steps matters; ApplyAll applies them as listed.
package baseline
