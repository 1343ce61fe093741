package unmix

import (
	"fmt"
	"math"
	"slices"

	"huesolve/spectrum"
)

// covers checks that wl spans [lo, hi]; its error is a *CoverageError.
func covers(wl []float64, lo, hi float64) error {
	if len(wl) < 2 {
		return fmt.Errorf("%d points: %w", len(wl), ErrCoverage)
	}
	slack := spectrum.GridSlack * (wl[len(wl)-1] - wl[0] + 1)
	if wl[0] > lo+slack || wl[len(wl)-1] < hi-slack {
		return &CoverageError{ScanLo: wl[0], ScanHi: wl[len(wl)-1], NeedLo: lo, NeedHi: hi}
	}
	return nil
}

// CoverageError is Solve's error for a scan that does not cover the
// wavelengths the model needs (errors.Is ErrCoverage). Hint, when not
// empty, is the --window that would fit the scan (Model.WindowFor).
type CoverageError struct {
	ScanLo, ScanHi float64 // the scan's range, nm
	NeedLo, NeedHi float64 // the range the model needs, nm
	Hint           string
}

func (e *CoverageError) Error() string {
	msg := fmt.Sprintf("the scan covers %g-%g nm but the model needs %g-%g nm: %v", e.ScanLo, e.ScanHi, e.NeedLo, e.NeedHi, ErrCoverage)
	if e.Hint != "" {
		msg += "; " + e.Hint
	}
	return msg
}

// Is makes a CoverageError ErrCoverage for errors.Is.
func (e *CoverageError) Is(target error) bool { return target == ErrCoverage }

// WindowFor returns the largest window within the model's that a scan
// covering lo-hi nm can be solved in: its ends are reference grid points,
// inward of lo and hi by the shift limit when a shift is estimated. ok is
// false when there is none: the reference set's pre-treatment needs the
// whole reference grid whatever the window, or too few grid points are
// left to fit. Give it as --window WLO-WHI.
func (m *Model) WindowFor(lo, hi float64) (wlo, whi float64, ok bool) {
	sh := m.sh
	if len(sh.set.Pretreat) > 0 {
		return 0, 0, false
	}
	g := sh.grid
	margin := 0.0
	if sh.opt.Shift {
		margin = sh.opt.MaxShiftNM
	}
	slack := spectrum.GridSlack * (g[len(g)-1] - g[0] + 1)
	a := searchGE(g, max(lo+margin, g[sh.lo])-slack)
	b := searchGT(g, min(hi-margin, g[sh.hi-1])+slack)
	if b-a < len(sh.cols)+minDoF {
		return 0, 0, false
	}
	return g[a], g[b-1], true
}

// windowHint is the hint of a CoverageError for a scan covering lo-hi.
func (m *Model) windowHint(lo, hi float64) string {
	if len(m.sh.set.Pretreat) > 0 {
		return "the reference set's pre-treatment needs the whole reference grid, so no --window can help: scan the whole range"
	}
	if wlo, whi, ok := m.WindowFor(lo, hi); ok {
		return fmt.Sprintf("--window %g-%g would fit this scan", wlo, whi)
	}
	return "too little of the window is covered for any --window to help"
}

// derivative returns path * d(a)/dl on the set grid rows [lo, hi), by
// central differences (one-sided at the grid's ends).
func derivative(a, g []float64, lo, hi int, path float64) []float64 {
	out := make([]float64, hi-lo)
	n := len(g)
	for i := lo; i < hi; i++ {
		l, r := max(i-1, 0), min(i+1, n-1)
		out[i-lo] = path * (a[r] - a[l]) / (g[r] - g[l])
	}
	return out
}

// searchGE returns the first index with g[i] >= v.
func searchGE(g []float64, v float64) int {
	i, _ := slices.BinarySearch(g, v)
	return i
}

// searchGT returns the first index with g[i] > v.
func searchGT(g []float64, v float64) int {
	i, found := slices.BinarySearch(g, v)
	for found && i < len(g) && g[i] == v {
		i++
	}
	return i
}

// interpShifted writes into dst the linear interpolation of (wl, y) at
// grid[i]+delta, holding the end values beyond wl's range (callers check
// coverage first, so holding only happens in the margin a shift or a
// pre-treatment needs). A non-finite neighbour with non-zero weight gives
// +Inf (a point too dark to read).
func interpShifted(dst, wl, y, grid []float64, delta float64) {
	k := 0
	n := len(wl)
	for i, g0 := range grid {
		x := g0 + delta
		if x <= wl[0] {
			dst[i] = y[0]
			continue
		}
		if x >= wl[n-1] {
			dst[i] = y[n-1]
			continue
		}
		for k < n-2 && wl[k+1] < x {
			k++
		}
		t := (x - wl[k]) / (wl[k+1] - wl[k])
		a, b := y[k], y[k+1]
		switch {
		case t == 0:
			dst[i] = a
		case t == 1:
			dst[i] = b
		case math.IsInf(a, 0) || math.IsInf(b, 0) || math.IsNaN(a) || math.IsNaN(b):
			dst[i] = math.Inf(1)
		default:
			dst[i] = a + t*(b-a)
		}
	}
}

// grow returns s resized to n, reusing its storage.
func grow[T any](s []T, n int) []T {
	if cap(s) >= n {
		return s[:n]
	}
	return make([]T, n)
}

// sumSq returns the sum of squares of x.
func sumSq(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v * v
	}
	return s
}

// sumSqScaled returns Σ (x_i s_i)², in four interleaved sums so that the
// additions do not wait on each other.
func sumSqScaled(x, s []float64) float64 {
	s = s[:len(x)]
	var a0, a1, a2, a3 float64
	i := 0
	for ; i+4 <= len(x); i += 4 {
		v0, v1, v2, v3 := x[i]*s[i], x[i+1]*s[i+1], x[i+2]*s[i+2], x[i+3]*s[i+3]
		a0 += v0 * v0
		a1 += v1 * v1
		a2 += v2 * v2
		a3 += v3 * v3
	}
	for ; i < len(x); i++ {
		v := x[i] * s[i]
		a0 += v * v
	}
	return (a0 + a1) + (a2 + a3)
}

// maxFinite is the largest finite value of v (0 if none).
func maxFinite(v []float64) float64 {
	best := 0.0
	for _, x := range v {
		if !math.IsInf(x, 0) && !math.IsNaN(x) && x > best {
			best = x
		}
	}
	return best
}

// sampleName is the spectrum's name, else its source.
func sampleName(s *spectrum.Spectrum) string {
	if s.Name != "" {
		return s.Name
	}
	return s.Source.String()
}
