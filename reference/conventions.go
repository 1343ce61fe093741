package reference

// The conventions a set's figures are made under, shared by the package
// that builds sets (calibration), the sample model and the commands.
const (
	// DefaultCeiling is the absorbance above which readings are left out
	// when no ceiling is given. Stray light bends readings above about
	// A = 2 on ordinary instruments: common practice, not a property of
	// any one instrument.
	DefaultCeiling = 2.0
	// DefaultPathCM is the path length when none is given: the common
	// 1 cm cuvette.
	DefaultPathCM = 1.0
)

// TestLevel is the confidence level of the linearity tests: Mandel's
// fitting test compares its statistic with the F distribution at 99 %
// (1 and N-3 degrees of freedom), as ISO 8466-1 does (recalled from
// memory); the lack-of-fit test uses the same level.
const TestLevel = 0.99

// BandFraction sets the extent of a compound's band for the linearity
// check over the band: the wavelengths where its absorptivity is at least
// this fraction of its maximum. Half the maximum (the band's full width at
// half maximum) is common practice for where a band ends.
const BandFraction = 0.5

// bandCurvedShare is the share of the band wavelengths above which
// curvature flagged there by Mandel's test marks the compound curved even
// when its band maximum passes. Half is this project's choice: at 99 % a
// straight line is flagged at about 1 % of wavelengths by chance, so a
// majority of the band bending is curvature, not noise, while a short
// stretch (an edge, a neighbouring band) does not condemn the compound.
const bandCurvedShare = 0.5

// Plausible ranges of a reference set's fields, checked by Set.Validate
// (and so by Load, Save and Build). They catch damage, tampering and
// typing slips, not chemistry: every set calibrate can build lies well
// inside them.
const (
	// MaxCeiling bounds the absorbance ceiling, a set's and the one
	// calibrate's and solve's --ceiling give. Absorbance above about 4 to
	// 6 is not measurable on UV-Vis instruments (stray light: less than
	// 1e-4 to 1e-6 of the light reaches the detector), common practice;
	// 10 leaves room for any instrument, and keeps what is sized by the
	// ceiling (unmix's table of the noise growth) small.
	MaxCeiling = 10
	// MaxNoiseAU bounds a set's noise (the residual SD of the calibration
	// per wavelength, absorbance units). Photometric noise of UV-Vis
	// instruments is near 1e-4 AU (common practice); a residual SD of a
	// whole absorbance unit, a tenfold change in the light, already means
	// no calibration at all, while larger values would make every result
	// fall below its detection limit.
	MaxNoiseAU = 1.0
	// MinGridNM and MaxGridNM bound a set's wavelengths (nm): UV-Vis-NIR
	// spectrophotometers read from about 175 to 3300 nm (common
	// practice); 100 and 3500 leave a margin either side. A wavelength
	// outside is a unit slip (Å, µm, cm⁻¹) or damage.
	MinGridNM = 100
	MaxGridNM = 3500
	// MinPathCM and MaxPathCM bound a path length in cm: 1 µm (thinner
	// than any demountable cell) to 1 m (longer than any long-path cell
	// used for liquids). unmix bounds a sample's path by the same limits.
	MinPathCM = 1e-4
	MaxPathCM = 100
	// r2Slack is how far below 0 or above 1 a stored R² may lie: R² is
	// 1 - RSS/TSS of a straight-line fit with intercept, in [0, 1] in
	// exact arithmetic; rounding moves it by a few times machine epsilon
	// times the number of readings (far below this).
	r2Slack = 1e-9
)
