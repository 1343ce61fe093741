package unmix

import (
	"fmt"
	"strings"
)

// Flags on amounts (one compound in one sample).
const (
	// FlagZero: the non-negativity constraint holds the concentration
	// at exactly zero; the unconstrained estimate is reported beside it.
	FlagZero Flag = "zero"
	// FlagBelowLOD: the concentration is above zero but below the
	// detection limit (3.3 sigma / sensitivity).
	FlagBelowLOD Flag = "<lod"
	// FlagBelowLOQ: the concentration is at or above the detection limit
	// but below the quantitation limit (10 sigma / sensitivity).
	FlagBelowLOQ Flag = "<loq"
	// FlagOverRange: the concentration in the cell is above the
	// calibrated range: the top of the compound's stated linear range
	// when that ends below the highest standard, else the highest
	// standard (the result is extrapolated).
	FlagOverRange Flag = "over"
	// FlagMimic: the baseline terms can imitate this compound's spectrum
	// (leakage below leakLimit), so baseline and compound trade off.
	FlagMimic Flag = "mimic"
)

// Flags on samples.
const (
	// FlagSaturated: points above the absorbance ceiling were left out:
	// read above it, or predicted above it by the fit (settleCeiling).
	FlagSaturated Flag = "sat"
	// FlagDilute: so many points were left out (more than dropLimitFrac
	// of the window, or any reading at 0 %T or below) that the sample
	// should be diluted; Result.SuggestDilution gives the factor.
	FlagDilute Flag = "dilute"
	// FlagMisfit: the residual is well above the expected noise (reduced
	// chi-square above poorFitChiSq).
	FlagMisfit Flag = "misfit"
	// FlagPattern: the residual has structure along the wavelength axis
	// (Durbin-Watson below patternDW): a missing compound, a shift or a
	// baseline the model cannot follow. Not raised when the reference
	// set's pre-treatment includes Savitzky-Golay smoothing or a
	// derivative, which correlates neighbouring residuals by itself.
	FlagPattern Flag = "pattern"
	// FlagShift: the estimated wavelength shift is more than shiftSigmas
	// standard errors from zero (so it is applied) and at least
	// shiftNoteNM. A shift within shiftSigmas standard errors of zero is
	// not determined: it is not applied (ShiftNM 0) and never flagged.
	FlagShift Flag = "shift"
	// FlagShiftMax: a determined shift (see FlagShift) reached the
	// allowed limit; the true shift may be larger.
	FlagShiftMax Flag = "shift-max"
	// FlagIllCond: the design is ill-conditioned (condition number above
	// CondLimit): concentrations are sensitive to small errors.
	FlagIllCond Flag = "illcond"
	// FlagNoConverge: the active-set iteration hit its cap, or its
	// optimality (KKT) check failed; the result is the best feasible
	// point found.
	FlagNoConverge Flag = "noconv"
	// FlagNotInSheet: a sample sheet was given but has no row for this
	// sample, so its dilution and path are the values given for every
	// sample (--dilution, --path-cm, or 1 and the reference path): a
	// misspelt name in the sheet or the file would otherwise scale the
	// result wrongly without a word.
	FlagNotInSheet Flag = "nosheet"
)

// legend holds the meaning of every flag, in the order of the legend.
var legend = []struct {
	f    Flag
	warn bool
	text string
}{
	{FlagZero, false, "held at zero by the non-negativity constraint"},
	{FlagBelowLOD, false, "below the detection limit"},
	{FlagBelowLOQ, false, "below the quantitation limit"},
	{FlagOverRange, true, "above the calibrated range (extrapolated)"},
	{FlagMimic, true, "the baseline terms can imitate this compound"},
	{FlagSaturated, false, "points above the absorbance ceiling (read, or predicted by the fit) left out"},
	{FlagDilute, true, "too many points above the ceiling, or too dark to read: dilute and scan again"},
	{FlagMisfit, true, "residual well above the expected noise"},
	{FlagPattern, true, "structured residual (Durbin-Watson)"},
	{FlagShift, false, "significant wavelength shift, estimated and applied"},
	{FlagShiftMax, true, "wavelength shift at the allowed limit"},
	{FlagIllCond, true, "ill-conditioned design"},
	{FlagNoConverge, true, "fit not certified optimal (iteration cap or KKT check)"},
	{FlagNotInSheet, true, "not in the sample sheet: dilution and path are the defaults, not the sample's"},
}

// IsWarning reports whether f calls for a chemist's attention (a sample
// carrying such a flag counts as flagged). Notes such as FlagZero or
// FlagShift describe an ordinary result. A code that is not a sample or
// amount flag counts as a warning.
func IsWarning(f Flag) bool {
	for _, l := range legend {
		if l.f == f {
			return l.warn
		}
	}
	return true
}

// Meaning returns the legend text of the sample or amount flag f.
func Meaning(f Flag) string {
	for _, l := range legend {
		if l.f == f {
			return l.text
		}
	}
	return "unknown flag"
}

// AllFlags returns every flag in legend order.
func AllFlags() []Flag {
	out := make([]Flag, len(legend))
	for i, l := range legend {
		out[i] = l.f
	}
	return out
}

// Legend returns one line per flag in fs (all flags if fs is empty):
// the flag, a mark "!" for warnings, and its meaning.
func Legend(fs ...Flag) string {
	if len(fs) == 0 {
		fs = AllFlags()
	}
	var b strings.Builder
	for _, f := range fs {
		mark := " "
		if IsWarning(f) {
			mark = "!"
		}
		fmt.Fprintf(&b, "  %-9s %s %s\n", f, mark, Meaning(f))
	}
	return b.String()
}

// Flagged reports whether the sample or any of its amounts carries a
// warning flag.
func (r *Result) Flagged() bool {
	for _, f := range r.Flags {
		if IsWarning(f) {
			return true
		}
	}
	for _, a := range r.Amounts {
		for _, f := range a.Flags {
			if IsWarning(f) {
				return true
			}
		}
	}
	return false
}

// HasFlag reports whether the amount carries f.
func (a *Amount) HasFlag(f Flag) bool {
	for _, g := range a.Flags {
		if g == f {
			return true
		}
	}
	return false
}
