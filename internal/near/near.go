// Package near compares numbers computed by the project with values from
// an outside source (NIST StRD certified values, SciPy and mpmath
// fixtures, published tables) in tests. Only tests import it.
//
// Every check fails when got is NaN or ±Inf, and when want is, unless
// want is explicitly NaN or ±Inf and got is the same: a comparison written
// as math.Abs(got-want) > tol is false for NaN and so passes silently,
// which these functions never do. Each check reports through t.Errorf with
// the description what, so the failure names what was compared, and
// returns the measured difference (+Inf when a value is not finite) so a
// test can log its worst agreement.
package near

import (
	"math"
	"testing"
)

// MaxLRE is the log relative error given to exact agreement, the cap NIST
// StRD scoring uses (about the digits a float64 carries).
const MaxLRE = 15

// nonFinite handles the cases where got or want is NaN or ±Inf: it
// reports whether one was (done) and whether the pair still agrees (only
// an explicitly non-finite want matched exactly by got).
func nonFinite(got, want float64) (done, ok bool) {
	gf, wf := isFinite(got), isFinite(want)
	if gf && wf {
		return false, false
	}
	if math.IsNaN(want) {
		return true, math.IsNaN(got)
	}
	return true, got == want
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// RelDiff is |got - want| / |want|: 0 for exact agreement (non-finite
// wants included), +Inf when got or want is not finite and they differ or
// when want is 0 and got is not.
func RelDiff(got, want float64) float64 {
	if done, ok := nonFinite(got, want); done {
		if ok {
			return 0
		}
		return math.Inf(1)
	}
	if got == want {
		return 0
	}
	return math.Abs(got-want) / math.Abs(want)
}

// AbsDiff is |got - want|: 0 for exact agreement (non-finite wants
// included), +Inf when got or want is not finite and they differ.
func AbsDiff(got, want float64) float64 {
	if done, ok := nonFinite(got, want); done {
		if ok {
			return 0
		}
		return math.Inf(1)
	}
	return math.Abs(got - want)
}

// LRE is the log relative error -log10(|got - want| / |want|), the number
// of agreeing significant digits (NIST StRD scoring): MaxLRE for exact
// agreement, capped there, 0 when got or want is not finite and they
// differ, and -log10|got| when want is 0.
func LRE(got, want float64) float64 {
	if done, ok := nonFinite(got, want); done {
		if ok {
			return MaxLRE
		}
		return 0
	}
	if got == want {
		return MaxLRE
	}
	d := math.Abs(got - want)
	if want != 0 {
		d /= math.Abs(want)
	}
	return math.Max(0, math.Min(MaxLRE, -math.Log10(d)))
}

// Rel fails t unless |got - want| <= tol |want| with both finite (or want
// explicitly non-finite and got the same). It returns RelDiff.
func Rel(t testing.TB, what string, got, want, tol float64) float64 {
	t.Helper()
	d := RelDiff(got, want)
	if !(d <= tol) || math.IsInf(d, 1) {
		t.Errorf("%s = %.17g, want %.17g: relative difference %.3g above %.3g", what, got, want, d, tol)
	}
	return d
}

// Abs fails t unless |got - want| <= tol with both finite (or want
// explicitly non-finite and got the same). It returns AbsDiff.
func Abs(t testing.TB, what string, got, want, tol float64) float64 {
	t.Helper()
	d := AbsDiff(got, want)
	if !(d <= tol) || math.IsInf(d, 1) {
		t.Errorf("%s = %.17g, want %.17g: difference %.3g above %.3g", what, got, want, d, tol)
	}
	return d
}

// MinLRE fails t unless got agrees with want to at least min significant
// digits (LRE), a non-finite got counting as none. It returns the LRE.
func MinLRE(t testing.TB, what string, got, want, min float64) float64 {
	t.Helper()
	l := LRE(got, want)
	if !(l >= min) {
		t.Errorf("%s = %.17g, want %.17g: %.1f correct digits (LRE), want at least %.1f", what, got, want, l, min)
	}
	return l
}

// RelSlice fails t unless the slices have the same length and every
// |got[i] - want[i]| <= tol max_j |want[j]| (a difference relative to the
// largest wanted value, for vectors with entries near or at zero), every
// value finite (or want[i] explicitly non-finite and got[i] the same). It
// reports the worst element and returns the largest relative difference.
func RelSlice(t testing.TB, what string, got, want []float64, tol float64) float64 {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: %d values, want %d", what, len(got), len(want))
		return math.Inf(1)
	}
	scale := 0.0
	for _, w := range want {
		if isFinite(w) {
			scale = math.Max(scale, math.Abs(w))
		}
	}
	worst, at := 0.0, -1
	for i := range got {
		d := AbsDiff(got[i], want[i])
		if d > 0 {
			d /= scale // scale is 0 only when every finite want is 0: +Inf
		}
		if !(d <= worst) {
			worst, at = d, i
		}
	}
	if !(worst <= tol) || math.IsInf(worst, 1) {
		t.Errorf("%s[%d] = %.17g, want %.17g: difference %.3g of the largest |want| %.3g, above %.3g",
			what, at, got[at], want[at], worst, scale, tol)
	}
	return worst
}
