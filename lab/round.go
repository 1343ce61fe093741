package lab

import (
	"math"
	"strconv"
)

// uncertaintyDigits is the number of significant figures an uncertainty
// is given with: "it is usually sufficient to quote u_c(y) and U to at
// most two significant digits" (GUM, JCGM 100:2008, §7.2.6).
const uncertaintyDigits = 2

// plainDigits is the number of significant figures of a value with no
// usable uncertainty (0 or not finite): common practice.
const plainDigits = 3

// Round returns v and u as text, u rounded to two significant figures
// and v to the same decimal place (GUM, JCGM 100:2008, §7.2.6; the
// decimal place of the value following the uncertainty's is common
// practice). An uncertainty that is 0 or not finite gives v to 3
// significant figures and u "".
//
//	Round(12.3456, 0.0234) = "12.346", "0.023"
//	Round(1234.5, 567)     = "1230", "570"
func Round(v, u float64) (value, unc string) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a", ""
	}
	if !(u > 0) || math.IsInf(u, 0) {
		return SigFig(v, plainDigits), ""
	}
	d := lastPlace(u, uncertaintyDigits)
	ur := roundAt(u, d)
	d = lastPlace(ur, uncertaintyDigits) // 0.0996 -> 0.10, not 0.100
	return fixedAt(v, d), fixedAt(u, d)
}

// lastPlace is the power of ten of the last of n significant figures of
// x > 0.
func lastPlace(x float64, n int) int {
	return int(math.Floor(math.Log10(x))) - (n - 1)
}

// roundAt rounds x to a multiple of 10^d (halves away from zero).
func roundAt(x float64, d int) float64 {
	if d < 0 {
		p := math.Pow(10, float64(-d))
		return math.Round(x*p) / p
	}
	p := math.Pow(10, float64(d))
	return math.Round(x/p) * p
}

// fixedAt writes x rounded to a multiple of 10^d.
func fixedAt(x float64, d int) string {
	r := roundAt(x, d)
	if r == 0 {
		r = 0 // no "-0"
	}
	return strconv.FormatFloat(r, 'f', max(0, -d), 64)
}

// SigFig writes x with n significant figures, in plain (not exponent)
// notation.
func SigFig(x float64, n int) string {
	if x == 0 {
		return "0"
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "n/a"
	}
	return fixedAt(x, lastPlace(math.Abs(x), n))
}

// CertText is the text a certificate shows for value v with standard
// uncertainty u, detection limit lod and quantitation limit loq (all in
// one unit): "n.d. (< LOD x)" when v < lod, "< LOQ (y)" when v < loq, the
// limits with 2 significant figures (common practice); else v as Round
// gives it. A limit that is not a positive finite number is not applied.
func CertText(v, u, lod, loq float64) string {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return "n/a"
	case lod > 0 && !math.IsInf(lod, 0) && v < lod:
		return "n.d. (< LOD " + SigFig(lod, uncertaintyDigits) + ")"
	case loq > 0 && !math.IsInf(loq, 0) && v < loq:
		return "< LOQ (" + SigFig(loq, uncertaintyDigits) + ")"
	}
	s, _ := Round(v, u)
	return s
}
