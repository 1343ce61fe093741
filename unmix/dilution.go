package unmix

import (
	"fmt"
	"math"
)

// suggestDilution is the dilution to suggest: the nice factor above
// ceilF (the highest predicted absorbance over the ceiling) when the
// sample is flagged dilute, and the nice factor at or above over (the
// largest concentration in the cell over its compound's upper limit),
// whichever is larger; 0 when either is needed but not finite or beyond
// maxNiceFactor (amounts off scale).
func suggestDilution(ceilF, over float64, dilute bool) float64 {
	f := 0.0
	if dilute {
		if f = niceUp(ceilF); f == 0 {
			return 0 // off scale: no dilution can be named
		}
	}
	if over > 1 {
		n := niceAtLeast(over)
		if n == 0 {
			return 0 // off scale: no dilution can be named
		}
		f = math.Max(f, n)
	}
	return f
}

// niceAtLeast is the smallest nice factor (as niceUp) at or above f.
func niceAtLeast(f float64) float64 {
	if v := niceUp(f / (1 + niceSlack)); v >= f {
		return v
	}
	return niceUp(f)
}

// niceSlack is the relative amount by which a ratio may exceed a nice
// factor and still be met by it (rounding of the fitted amounts).
const niceSlack = 1e-9

// maxNiceFactor bounds the dilutions niceUp suggests: no step of 1, 1.5,
// ..., 8 times a power of ten above it is offered (it is MaxDilution, the
// largest factor a sample may be given). A larger need means the amounts
// are off scale, and no dilution is suggested.
const maxNiceFactor = MaxDilution

// niceUp returns the smallest of 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10 times a
// power of ten that is strictly greater than f (at least 1.5): a dilution
// a bench chemist can make that brings absorbance f x ceiling below the
// ceiling. It returns 0 (no suggestion) when f is not a number, infinite,
// or needs more than maxNiceFactor.
func niceUp(f float64) float64 {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return 0
	}
	if f < 1 {
		return 1.5
	}
	steps := []float64{1, 1.5, 2, 2.5, 3, 4, 5, 6, 8}
	for p := 1.0; p <= maxNiceFactor; p *= 10 {
		for _, s := range steps {
			if v := s * p; v > f && v >= 1.5 && v <= maxNiceFactor {
				return v
			}
		}
	}
	return 0
}

// diluteHint is the advice that ends a too-dark error: dilute at least
// niceUp(f) times, or just dilute when no factor can be named.
func diluteHint(f float64) string {
	if v := niceUp(f); v > 0 {
		return fmt.Sprintf("dilute at least %gx and scan again", v)
	}
	return "dilute and scan again"
}
