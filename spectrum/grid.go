package spectrum

import (
	"fmt"

	"gonum.org/v1/gonum/interp"

	"huesolve/internal/pkgerr"
)

// GridSlack is the relative slack, as a fraction of the measured span, by
// which a requested grid may reach past the measured range and still count
// as inside it: wavelengths read from files are rounded, so a grid from
// one file may overshoot another's end by a rounding error. Such points
// take the end value; nothing is extrapolated.
const GridSlack = 1e-9

// Interpolation selects how resampling fills values between measured
// wavelengths.
//
// Linear is the default and the safe choice: it never overshoots and is
// exact where the new grid hits measured points. A cubic pays where a
// coarse scan (steps of 2 nm or more) is resampled onto a finer grid
// across bands only a few steps wide: linear interpolation then cuts the
// tops off peaks and fills valleys. NaturalCubic is the smoothest (C2)
// curve through the points but may ring (overshoot, even below zero) next
// to sharp steps; MonotoneCubic (Fritsch-Butland piecewise cubic Hermite)
// is C1 and never leaves the range of neighbouring points, so it cannot
// invent negative absorbance or ringing.
type Interpolation int

const (
	// Linear interpolates linearly between neighbouring points.
	Linear Interpolation = iota
	// NaturalCubic is the cubic spline with zero second derivative at both
	// ends.
	NaturalCubic
	// MonotoneCubic is the monotone piecewise cubic of F. N. Fritsch and
	// J. Butland, SIAM J. Sci. Stat. Comput. 5 (1984) 300-304.
	MonotoneCubic
)

// String returns the interpolation's name: "linear", "spline" or
// "monotone".
func (m Interpolation) String() string {
	switch m {
	case Linear:
		return "linear"
	case NaturalCubic:
		return "spline"
	case MonotoneCubic:
		return "monotone"
	}
	return fmt.Sprintf("Interpolation(%d)", int(m))
}

// Resample returns s linearly interpolated onto grid, which must be
// strictly increasing and lie within the measured range of s (never
// extrapolated: a grid point outside it is an error naming both ranges).
func (s *Spectrum) Resample(grid []float64) (*Spectrum, error) {
	return s.ResampleWith(grid, Linear)
}

// ResampleWith is Resample with a choice of interpolation.
func (s *Spectrum) ResampleWith(grid []float64, m Interpolation) (*Spectrum, error) {
	if err := checkGrid(grid); err != nil {
		return nil, pkgerr.Errorf("spectrum", "%s: target grid: %w", s.Source, err)
	}
	c := *s
	c.Wavelengths = append([]float64(nil), grid...)
	c.Values = make([]float64, len(grid))
	if err := resampleToWith(c.Values, s.Wavelengths, s.Values, grid, m); err != nil {
		return nil, pkgerr.Errorf("spectrum", "%s: %w", s.Source, err)
	}
	return &c, nil
}

// resampleToWith is ResampleTo with a choice of interpolation. It panics
// if len(dst) != len(grid) or len(wl) != len(y).
func resampleToWith(dst, wl, y, grid []float64, m Interpolation) error {
	if m == Linear {
		return ResampleTo(dst, wl, y, grid)
	}
	if len(dst) != len(grid) || len(wl) != len(y) {
		panic("spectrum: resampleToWith length mismatch")
	}
	if err := checkInside(wl, grid); err != nil {
		return err
	}
	var p interface {
		Fit(x, y []float64) error
		Predict(x float64) float64
	}
	switch m {
	case NaturalCubic:
		if len(wl) < 3 {
			return ResampleTo(dst, wl, y, grid) // the natural spline of two points is the line
		}
		p = &interp.NaturalCubic{}
	case MonotoneCubic:
		p = &interp.FritschButland{}
	default:
		return pkgerr.Errorf("spectrum", "unknown interpolation %v", m)
	}
	if err := checkGrid(wl); err != nil {
		return err
	}
	if err := p.Fit(wl, y); err != nil {
		return pkgerr.Errorf("spectrum", "%v interpolation: %w", m, err)
	}
	lo, hi := wl[0], wl[len(wl)-1]
	for i, g := range grid {
		dst[i] = p.Predict(min(max(g, lo), hi))
	}
	return nil
}

// checkInside reports an error wrapping errOutOfRange, naming both ranges,
// unless grid lies within wl (up to GridSlack).
func checkInside(wl, grid []float64) error {
	if len(wl) < 2 || len(grid) == 0 {
		return fmt.Errorf("resample needs at least two points: %w", ErrEmpty)
	}
	if err := checkGrid(grid); err != nil {
		return fmt.Errorf("target grid: %w", err)
	}
	lo, hi := wl[0], wl[len(wl)-1]
	slack := GridSlack * (hi - lo)
	if grid[0] < lo-slack || grid[len(grid)-1] > hi+slack {
		return fmt.Errorf("requested %g-%g nm but the scan covers %g-%g nm: %w", grid[0], grid[len(grid)-1], lo, hi, errOutOfRange)
	}
	return nil
}

// ResampleTo writes into dst the linear interpolation of (wl, y) at grid.
// wl and grid must be strictly increasing and grid must lie within
// [wl[0], wl[len-1]] (up to GridSlack of the span, so a grid read from a
// file with rounded wavelengths still matches); otherwise the error wraps
// errOutOfRange and names both ranges. It panics if len(dst) != len(grid)
// or len(wl) != len(y): the caller sizes dst and pairs wl with y, so a
// mismatch is a programming error, never a property of the input.
func ResampleTo(dst, wl, y, grid []float64) error {
	if len(dst) != len(grid) || len(wl) != len(y) {
		panic("spectrum: ResampleTo length mismatch")
	}
	if err := checkInside(wl, grid); err != nil {
		return err
	}
	k := 0
	for i, g := range grid {
		for k < len(wl)-2 && wl[k+1] < g {
			k++
		}
		x0, x1 := wl[k], wl[k+1]
		t := (g - x0) / (x1 - x0)
		if t < 0 {
			t = 0
		} else if t > 1 {
			t = 1
		}
		dst[i] = y[k] + t*(y[k+1]-y[k])
	}
	return nil
}

// SameGrid reports whether a and b hold the same wavelengths to within
// GridSlack of their span (plus 1 nm, so that a single-point grid has a
// slack too).
func SameGrid(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	if len(a) == 0 {
		return true
	}
	tol := GridSlack * (a[len(a)-1] - a[0] + 1)
	for i := range a {
		d := a[i] - b[i]
		if d > tol || d < -tol {
			return false
		}
	}
	return true
}

// CommonRange returns the wavelength range covered by every spectrum.
func CommonRange(ss []*Spectrum) (lo, hi float64, err error) {
	if len(ss) == 0 {
		return 0, 0, pkgerr.Errorf("spectrum", "common range of no spectra: %w", ErrEmpty)
	}
	for _, s := range ss {
		if len(s.Wavelengths) == 0 {
			return 0, 0, pkgerr.Errorf("spectrum", "%s: %w", s.Source, ErrEmpty)
		}
	}
	lo, hi = ss[0].Wavelengths[0], ss[0].Wavelengths[len(ss[0].Wavelengths)-1]
	for _, s := range ss[1:] {
		lo = max(lo, s.Wavelengths[0])
		hi = min(hi, s.Wavelengths[len(s.Wavelengths)-1])
	}
	if hi <= lo {
		return 0, 0, pkgerr.Errorf("spectrum", "the scans share no wavelength range: %w", errOutOfRange)
	}
	return lo, hi, nil
}
