package spectrum

import (
	"fmt"
	"sort"
)

// Crop returns the part of s with lo <= wavelength <= hi as a new spectrum.
// It is an error if fewer than two points remain.
func (s *Spectrum) Crop(lo, hi float64) (*Spectrum, error) {
	i := sort.SearchFloat64s(s.Wavelengths, lo)
	j := sort.Search(len(s.Wavelengths), func(k int) bool { return s.Wavelengths[k] > hi })
	if j-i < 2 {
		return nil, fmt.Errorf("spectrum: %s: window %g-%g nm keeps %d points of %g-%g nm: %w",
			s.Source, lo, hi, max(j-i, 0), s.Wavelengths[0], s.Wavelengths[len(s.Wavelengths)-1], ErrOutOfRange)
	}
	c := *s
	c.Wavelengths = append([]float64(nil), s.Wavelengths[i:j]...)
	c.Values = append([]float64(nil), s.Values[i:j]...)
	return &c, nil
}

// Resample returns s linearly interpolated onto grid, which must be
// strictly increasing and lie within the measured range of s (never
// extrapolated: a grid point outside it is an error naming both ranges).
func (s *Spectrum) Resample(grid []float64) (*Spectrum, error) {
	c := *s
	c.Wavelengths = append([]float64(nil), grid...)
	c.Values = make([]float64, len(grid))
	if err := ResampleTo(c.Values, s.Wavelengths, s.Values, grid); err != nil {
		return nil, fmt.Errorf("spectrum: %s: %w", s.Source, err)
	}
	return &c, nil
}

// ResampleTo writes into dst the linear interpolation of (wl, y) at grid.
// wl and grid must be strictly increasing and grid must lie within
// [wl[0], wl[len-1]] (up to a relative slack of 1e-9 of the span, so a
// grid read from a file with rounded wavelengths still matches).
func ResampleTo(dst, wl, y, grid []float64) error {
	if len(dst) != len(grid) || len(wl) != len(y) {
		panic("spectrum: ResampleTo length mismatch")
	}
	if len(wl) < 2 || len(grid) == 0 {
		return fmt.Errorf("resample needs at least two points: %w", ErrEmpty)
	}
	lo, hi := wl[0], wl[len(wl)-1]
	slack := 1e-9 * (hi - lo)
	if grid[0] < lo-slack || grid[len(grid)-1] > hi+slack {
		return fmt.Errorf("requested %g-%g nm but the scan covers %g-%g nm: %w", grid[0], grid[len(grid)-1], lo, hi, ErrOutOfRange)
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

// SameGrid reports whether a and b hold the same wavelengths to within a
// relative 1e-9 of their span.
func SameGrid(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	if len(a) == 0 {
		return true
	}
	tol := 1e-9 * (a[len(a)-1] - a[0] + 1)
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
		return 0, 0, fmt.Errorf("spectrum: common range of no spectra: %w", ErrEmpty)
	}
	lo, hi = ss[0].Wavelengths[0], ss[0].Wavelengths[len(ss[0].Wavelengths)-1]
	for _, s := range ss[1:] {
		lo = max(lo, s.Wavelengths[0])
		hi = min(hi, s.Wavelengths[len(s.Wavelengths)-1])
	}
	if hi <= lo {
		return 0, 0, fmt.Errorf("spectrum: the scans share no wavelength range: %w", ErrOutOfRange)
	}
	return lo, hi, nil
}
