package unmix

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"

	"huesolve/spectrum"
)

// Interferent is a coloured substance present in samples but not
// quantified, given by a scan of it (alone, at any concentration): the
// fit gives it a free non-negative amount in units of that scan
// (Result.Interferents). It enters the design as a nuisance column, after
// the baseline terms, so that the figures of merit (validate) project it
// out like a baseline term: a compound it overlaps loses selectivity.
type Interferent struct {
	// Name names it in results and messages (the scan's file, say).
	Name string
	// WL and A are the scan in absorbance on its own increasing grid.
	WL, A []float64
}

// interferentTerm is the prefix of an interferent's name among a
// design's nuisance terms (Design.Terms).
const interferentTerm = "interferent:"

// nearCopyCos is the cosine between an interferent's column and a
// compound's, on the points fitted, above which the interferent is
// refused as a near-copy of the compound: the compound then keeps less
// than sqrt(1 - 0.999^2) = 4.5 % of its norm once the interferent is
// projected out, far below the mimic limit (a project choice).
const nearCopyCos = 0.999

// NewInterferent returns the interferent of scan s, converted to
// absorbance; name names it (the scan's name if empty). Errors name it.
func NewInterferent(s *spectrum.Spectrum, name string) (Interferent, error) {
	if name == "" {
		name = sampleName(s)
	}
	if err := s.Check(); err != nil {
		return Interferent{}, fmt.Errorf("interferent %s: %w", name, err)
	}
	a := make([]float64, s.Len())
	for i, v := range s.Values {
		x, err := spectrum.ToAbsorbance(s.Quantity, v)
		if err != nil {
			return Interferent{}, fmt.Errorf("interferent %s at %g nm: %w", name, s.Wavelengths[i], err)
		}
		a[i] = x
	}
	wl := append([]float64(nil), s.Wavelengths...)
	if len(wl) > 1 && wl[0] > wl[len(wl)-1] {
		for i, j := 0, len(wl)-1; i < j; i, j = i+1, j-1 {
			wl[i], wl[j] = wl[j], wl[i]
			a[i], a[j] = a[j], a[i]
		}
	}
	return Interferent{Name: name, WL: wl, A: a}, nil
}

// column returns the interferent on the wavelengths wl (linear
// interpolation, never extrapolated): an error when its scan does not
// cover them or holds no signal there.
func (it Interferent) column(wl []float64) ([]float64, error) {
	if err := covers(it.WL, wl[0], wl[len(wl)-1]); err != nil {
		return nil, fmt.Errorf("interferent %s: %w", it.Name, err)
	}
	col := make([]float64, len(wl))
	interpShifted(col, it.WL, it.A, wl, 0)
	if !(floats.Norm(col, 2) > 0) {
		return nil, fmt.Errorf("interferent %s absorbs nowhere in %g-%g nm", it.Name, wl[0], wl[len(wl)-1])
	}
	return col, nil
}

// checkCopies refuses an interferent that is a near-copy of a compound
// (or of another interferent) on the design's rows, naming both.
func (d *Design) checkCopies(names []string) error {
	ni := len(d.interf)
	first := len(d.Cols) - ni
	for i := range ni {
		ci := d.Cols[first+i]
		for j := range first + i {
			if j >= d.NComp && j < first {
				continue // baseline terms: the leakage check's business
			}
			if c := cosine(ci, d.Cols[j], d.Rows); c > nearCopyCos {
				other := "compound " + names[j]
				if j >= first {
					other = "interferent " + d.interf[j-first]
				}
				return fmt.Errorf("interferent %s is a near-copy of %s (cosine %.4f on the points fitted): it cannot be told apart; leave it out", d.interf[i], other, c)
			}
		}
	}
	return nil
}

// cosine is the cosine of the angle between a and b on rows.
func cosine(a, b []float64, rows []int) float64 {
	var ab, aa, bb float64
	for _, r := range rows {
		ab += a[r] * b[r]
		aa += a[r] * a[r]
		bb += b[r] * b[r]
	}
	return math.Abs(ab) / math.Sqrt(aa*bb)
}
