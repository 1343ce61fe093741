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
