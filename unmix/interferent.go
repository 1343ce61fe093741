package unmix

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
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

// Stored returns the interferents set stores (reference.Set.Interferents,
// from calibrate), which every design of the set fits before those given
// (NewDesign).
func Stored(set *reference.Set) []Interferent {
	var out []Interferent
	for _, it := range set.Interferents {
		out = append(out, Interferent{Name: it.Name, WL: it.Grid, A: it.Absorbance})
	}
	return out
}

// ToStored returns the interferent as a reference set stores it, with its
// scan file and that file's SHA-256.
func (it Interferent) ToStored(file, sha256 string) reference.Interferent {
	return reference.Interferent{Name: it.Name, File: file, SHA256: sha256,
		Grid: append([]float64(nil), it.WL...), Absorbance: append([]float64(nil), it.A...)}
}

// combinedShare is the fraction of an interferent's column that the other
// columns together must explain, at least, for one of them to be named
// as what the interferent duplicates (a project choice: a tenth).
const combinedShare = 0.1

// column returns the interferent's design column on the set's grid rows
// lo to hi (linear interpolation, never extrapolated): an error when its
// scan does not cover them or holds no signal there. With a pre-treated
// set the column is pre-treated as the samples are (on the whole grid,
// which the scan must then cover, as a sample must): the set's
// absorptivities are of pre-treated spectra, and a raw shape beside
// them would fit something else.
func (it Interferent) column(set *reference.Set, lo, hi int) ([]float64, error) {
	g := set.Grid
	wl := g[lo:hi]
	if len(set.Pretreat) == 0 {
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
	steps := make([]string, 0, len(set.Pretreat))
	for _, st := range set.Pretreat {
		steps = append(steps, st.String())
	}
	how := strings.Join(steps, ", ")
	if err := covers(it.WL, g[0], g[len(g)-1]); err != nil {
		return nil, fmt.Errorf("interferent %s: the reference set's pre-treatment (%s) works on its whole grid, which the scan must cover as a sample must: %w", it.Name, how, err)
	}
	full := make([]float64, len(g))
	interpShifted(full, it.WL, it.A, g, 0)
	t, err := baseline.ApplyAll(set.Pretreat, g, full)
	if err != nil {
		return nil, fmt.Errorf("interferent %s: pre-treatment (%s): %w", it.Name, how, err)
	}
	if len(t) != len(g) {
		return nil, fmt.Errorf("interferent %s: pre-treatment gave %d values for %d wavelengths", it.Name, len(t), len(g))
	}
	col := append([]float64(nil), t[lo:hi]...)
	if !(floats.Norm(col, 2) > 0) {
		return nil, fmt.Errorf("interferent %s shows nothing in %g-%g nm after the reference set's pre-treatment (%s)", it.Name, wl[0], wl[len(wl)-1], how)
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
		if err := d.checkCombination(first+i, names); err != nil {
			return err
		}
	}
	return nil
}

// checkCombination refuses the interferent in column j when the columns
// before it (compounds, baseline terms, earlier interferents) together
// reproduce it: the part of its column they leave unexplained (its
// leakage) is below sqrt(1 - nearCopyCos^2), the limit of a near-copy.
// The error names the columns that make up at least combinedShare of it.
func (d *Design) checkCombination(j int, names []string) error {
	rows := d.Rows
	if len(rows) <= j {
		return nil // too few points for the design: the fit says so
	}
	x := mat.NewDense(len(rows), j, nil)
	y := make([]float64, len(rows))
	for i, r := range rows {
		for k := range j {
			x.Set(i, k, d.Cols[k][r])
		}
		y[i] = d.Cols[j][r]
	}
	s, err := lsq.NewSolver(x, make([]bool, j), lsq.Options{})
	if err != nil {
		return nil // the other columns are dependent already: the design's own check says so
	}
	var res lsq.Result
	if err := s.Solve(&res, y); err != nil {
		return nil
	}
	norm := floats.Norm(y, 2)
	leak := floats.Norm(res.Residual[:len(rows)], 2) / norm
	if leak >= math.Sqrt(1-nearCopyCos*nearCopyCos) {
		return nil
	}
	var parts []string
	base := false
	first := len(d.Cols) - len(d.interf)
	for k := range j {
		share := math.Abs(res.Coef[k]) * cosineNorm(d.Cols[k], rows) / norm
		switch {
		case share < combinedShare:
		case k < d.NComp:
			parts = append(parts, "compound "+names[k])
		case k < first:
			base = true
		default:
			parts = append(parts, "interferent "+d.interf[k-first])
		}
	}
	if base {
		parts = append(parts, "the baseline terms")
	}
	what := "the other columns"
	if len(parts) > 0 {
		what = strings.Join(parts, " and ")
	}
	return fmt.Errorf("interferent %s duplicates %s (all but %.2g %% of it is their combination on the points fitted): the design would be singular; leave it out", d.interf[j-first], what, 100*leak)
}

// cosineNorm is the norm of a on rows.
func cosineNorm(a []float64, rows []int) float64 {
	ss := 0.0
	for _, r := range rows {
		ss += a[r] * a[r]
	}
	return math.Sqrt(ss)
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
