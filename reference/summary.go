package reference

import "slices"

// Flag is a quality code, written as a short word: on a compound of a
// reference set (the codes below), on a sample or one compound's amount
// in it (package unmix, which names the same type), or on a check result
// (package validate).
type Flag string

// Flag codes of a compound, in the order they are listed.
const (
	// FlagCurved: Mandel's test prefers a quadratic to the line at the
	// band maximum (TestLevel) over all standards, confirmed at a
	// neighbouring band wavelength or by the band share
	// (BandLinearity.ConfirmsPeak), or at more than bandCurvedShare of the
	// band's wavelengths; when it does at the maximum, calibration.Build
	// refits on the standards within the linear range. A hit at the
	// maximum alone is noted (Linearity.CurvedUnconfirmed) but neither
	// flags nor refits.
	FlagCurved Flag = "curved"
	// FlagLackOfFit: the lack-of-fit test against replicates fails at
	// TestLevel.
	FlagLackOfFit Flag = "lack-of-fit"
	// FlagFewLevels: fewer than five levels in the line (five or more is
	// common practice).
	FlagFewLevels Flag = "few-levels"
	// FlagAboveCeiling: some standards read above the ceiling at the band
	// maximum; calibration.Build leaves them out of the whole fit.
	FlagAboveCeiling Flag = "above-ceiling"
	// FlagBelowFloor: the lowest standards read below the detector floor
	// at the band maximum; the range starts higher.
	FlagBelowFloor Flag = "below-floor"
	// FlagOutlier: some standard lies off the calibration line at the
	// band maximum (externally studentized residual beyond the
	// Bonferroni limit; see calibration.OutlierLevel).
	FlagOutlier Flag = "outlier"
	// FlagPoorFit: the calibration line at the band maximum has R² below
	// the minimum or a relative residual SD above the maximum calibrate
	// was given (calibration.DefaultMinR2, DefaultMaxRelSD).
	FlagPoorFit Flag = "poor-fit"
)

// FlagMeaning is a compound flag code with its meaning.
type FlagMeaning struct {
	Code    Flag
	Meaning string
}

// Flags returns every compound flag code with its meaning, in display
// order (a new slice on each call).
func Flags() []FlagMeaning { return slices.Clone(flagMeanings) }

// flagMeanings is the table Flags returns.
var flagMeanings = []FlagMeaning{
	{FlagCurved, "Mandel's test (ISO 8466-1, F at 99 %) prefers a quadratic at the band maximum and at a neighbouring wavelength, or at more than half the band's wavelengths: the line bends at high concentration; when it bends at the maximum, the absorptivities rest on the standards within the stated linear range only (a hit at the maximum alone is likely chance and only noted)"},
	{FlagLackOfFit, "replicates show the line misses the level means (lack-of-fit F test at 99 %)"},
	{FlagFewLevels, "fewer than 5 concentration levels (5 or more spanning the range is common practice)"},
	{FlagAboveCeiling, "some standards read above the absorbance ceiling at the band maximum and were left out of the whole fit"},
	{FlagBelowFloor, "the lowest standards read below the detector floor at the band maximum"},
	{FlagOutlier, "a standard lies off the calibration line at the band maximum (externally studentized residual beyond the Bonferroni limit at 1 %); calibrate names it"},
	{FlagPoorFit, "the calibration line at the band maximum has R² below the minimum (0.995 by default) or a relative residual SD above the maximum (5 % by default)"},
}

// summaryRow is one compound's line of the summary table.
type summaryRow struct {
	Compound string
	Unit     string
	PeakNM   float64 // band maximum
	// Peak absorptivity (per unit concentration per cm) and its SE at the
	// band maximum.
	Peak, PeakSE float64
	R2           float64
	// Linear range in the compound's unit.
	RangeLo, RangeHi float64
	Levels           int
	Flags            []Flag
}

// Summary returns one row per compound: band maximum, peak absorptivity
// with its standard error, R² of the line, linear range and flags.
func (s *Set) Summary() []summaryRow {
	rows := make([]summaryRow, len(s.Compounds))
	for k, c := range s.Compounds {
		r := summaryRow{
			Compound: c.Name, Unit: c.Unit, PeakNM: c.PeakNM,
			R2: c.Linearity.R2, RangeLo: c.Linearity.RangeLo, RangeHi: c.Linearity.RangeHi,
			Levels: c.Linearity.Levels, Flags: c.Flags,
		}
		for j, w := range s.Grid {
			if w == c.PeakNM {
				r.Peak, r.PeakSE = c.Absorptivity[j], c.SE[j]
				break
			}
		}
		rows[k] = r
	}
	return rows
}
