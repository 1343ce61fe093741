package calibration

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/reference"
)

// exactFitTol bounds the residual sum of squares of a straight line,
// relative to the total sum of squares, below which the line counts as an
// exact fit (rounding error only) and the tests report no curvature: the
// ratio of two rounding-level sums would be noise.
const exactFitTol = 1e-24

// lineFit is a polynomial least-squares fit of y on x.
type lineFit struct {
	coef []float64 // constant first
	se   []float64
	rss  float64
	dof  int
}

// fitPoly fits y = sum_q b_q x^q, q = 0..degree, by QR of the Vandermonde
// matrix (never forming X'X). The columns are built on x/scale, with scale
// the largest |x|, and the coefficients and their standard errors mapped
// back; for degree 1 with scale a power of two this is exact.
func fitPoly(x, y []float64, degree int) (lineFit, error) {
	n, nc := len(x), degree+1
	if n <= nc {
		return lineFit{}, fmt.Errorf("%d points for a degree-%d fit", n, degree)
	}
	scale := 0.0
	for _, v := range x {
		scale = max(scale, math.Abs(v))
	}
	if scale == 0 {
		return lineFit{}, fmt.Errorf("%w: every concentration is zero", errNoVariation)
	}
	// A power of two keeps the scaling exact.
	_, e := math.Frexp(scale)
	scale = math.Ldexp(1, e)
	a := mat.NewDense(n, nc, nil)
	for i, v := range x {
		t := 1.0
		for q := range nc {
			a.Set(i, q, t)
			t *= v / scale
		}
	}
	var qr mat.QR
	qr.Factorize(a)
	var b mat.Dense
	if err := qr.SolveTo(&b, false, mat.NewVecDense(n, append([]float64(nil), y...))); err != nil {
		return lineFit{}, fmt.Errorf("%w: %w", errDesign, err)
	}
	f := lineFit{coef: make([]float64, nc), se: make([]float64, nc), dof: n - nc}
	for i := range n {
		r := y[i]
		t := 1.0
		for q := range nc {
			r -= b.At(q, 0) * t
			t *= x[i] / scale
		}
		f.rss += r * r
	}
	// Covariance s^2 (R'R)^-1 = s^2 R^-1 R^-T: the variance of b_q is s^2
	// times the squared norm of row q of R^-1.
	var rd mat.Dense
	qr.RTo(&rd)
	r := mat.NewTriDense(nc, mat.Upper, nil)
	for q := range nc {
		for c := q; c < nc; c++ {
			r.SetTri(q, c, rd.At(q, c))
		}
	}
	var ri mat.TriDense
	if err := ri.InverseTri(r); err != nil {
		return lineFit{}, fmt.Errorf("%w: %w", errDesign, err)
	}
	s2 := f.rss / float64(f.dof)
	for q := range nc {
		sum := 0.0
		for c := q; c < nc; c++ {
			v := ri.At(q, c)
			sum += v * v
		}
		p := math.Pow(scale, float64(q))
		f.coef[q] = b.At(q, 0) / p
		f.se[q] = math.Sqrt(s2*sum) / p
	}
	return f, nil
}

// mandel performs Mandel's fitting test on (x, y): with s1 and s2 the
// residual standard deviations of the straight line (N-2 degrees of
// freedom) and of the quadratic (N-3),
//
//	DS^2 = (N-2) s1^2 - (N-3) s2^2,   PG = DS^2 / s2^2,
//
// and PG is compared with F(1, N-3). It returns NaN for F and p when there
// are fewer than 4 points or 3 distinct concentrations.
func mandel(x, y []float64) (f, p float64, curved bool) {
	if len(x) < 4 || distinct(x) < 3 {
		return math.NaN(), math.NaN(), false
	}
	l1, err1 := fitPoly(x, y, 1)
	l2, err2 := fitPoly(x, y, 2)
	if err1 != nil || err2 != nil {
		return math.NaN(), math.NaN(), false
	}
	if l1.rss <= exactFitTol*tss(y) {
		return 0, 1, false
	}
	ds2 := l1.rss - l2.rss
	s22 := l2.rss / float64(l2.dof)
	if ds2 <= 0 {
		return 0, 1, false
	}
	if s22 <= 0 {
		// The quadratic fits exactly and the line does not.
		return math.NaN(), 0, true
	}
	f = ds2 / s22
	p = distuv.F{D1: 1, D2: float64(l2.dof)}.Survival(f)
	return f, p, p < 1-reference.TestLevel
}

// lackOfFit tests the straight line against pure error from replicates:
//
//	F = (SS_lof / (m-2)) / (SS_pe / (N-m)),  SS_lof = RSS - SS_pe,
//
// with m distinct concentrations. NaN when there are no replicates or
// fewer than 3 levels.
func lackOfFit(x, y []float64, rss float64) (f, p float64) {
	groups := map[float64][]float64{}
	for i, v := range x {
		groups[v] = append(groups[v], y[i])
	}
	m, n := len(groups), len(x)
	if m < 3 || n-m < 1 {
		return math.NaN(), math.NaN()
	}
	// The groups are summed in order of concentration: a map's order
	// changes from run to run, and with it the last bits of the sum.
	levels := make([]float64, 0, m)
	for v := range groups {
		levels = append(levels, v)
	}
	sort.Float64s(levels)
	pe := 0.0
	for _, v := range levels {
		g := groups[v]
		mean := 0.0
		for _, v := range g {
			mean += v
		}
		mean /= float64(len(g))
		for _, v := range g {
			pe += (v - mean) * (v - mean)
		}
	}
	if rss <= exactFitTol*tss(y) {
		return 0, 1
	}
	lof := max(rss-pe, 0)
	if pe == 0 {
		if lof == 0 {
			return 0, 1
		}
		return math.NaN(), 0
	}
	f = (lof / float64(m-2)) / (pe / float64(n-m))
	return f, distuv.F{D1: float64(m - 2), D2: float64(n - m)}.Survival(f)
}

func distinct(x []float64) int {
	s := map[float64]bool{}
	for _, v := range x {
		s[v] = true
	}
	return len(s)
}

// lineTest fits the calibration line to the used points and tests it. The
// usable range runs from the lowest non-zero level whose reading reaches
// floor to the highest level that still passes Mandel's test when the
// levels above it are dropped one at a time (down to 3 levels).
func lineTest(pts []reference.Point, floor float64) (reference.Linearity, error) {
	return lineTestAt(pts, floor, true)
}

// lineTestAt is lineTest with confirmed telling whether curvature found
// by Mandel's test is to be believed: when it is false and the test
// prefers a quadratic, the line is reported with CurvedUnconfirmed set,
// Curved cleared and the range search skipped (every level stays in the
// range). Build passes whether the band's neighbouring wavelengths bear
// the band maximum out (see [reference.BandLinearity.ConfirmsPeak]).
func lineTestAt(pts []reference.Point, floor float64, confirmed bool) (reference.Linearity, error) {
	var x, y []float64
	for _, p := range pts {
		if p.Used {
			x = append(x, p.Conc)
			y = append(y, p.Absorbance)
		}
	}
	lin := reference.Linearity{Data: pts, Points: len(x)}
	var levels []float64
	for v := range levelSet(x) {
		levels = append(levels, v)
	}
	sort.Float64s(levels)
	lin.Levels = len(levels)
	if len(levels) < 2 || len(x) < 3 {
		return lin, fmt.Errorf("%w: %d readings at %d levels under the ceiling; a calibration line needs at least 3 readings at 2 levels", errTooFewStandards, len(x), len(levels))
	}
	f, err := fitPoly(x, y, 1)
	if err != nil {
		return lin, err
	}
	lin.Intercept, lin.Slope = f.coef[0], f.coef[1]
	lin.InterceptSE, lin.SlopeSE = f.se[0], f.se[1]
	lin.ResidualSD = math.Sqrt(f.rss / float64(f.dof))
	if t := tss(y); t > 0 {
		lin.R2 = 1 - f.rss/t
	}
	lin.LackOfFitF, lin.LackOfFitP = lackOfFit(x, y, f.rss)
	lin.MandelF, lin.MandelP, lin.Curved = mandel(x, y)
	if lin.Curved && !confirmed {
		lin.Curved, lin.CurvedUnconfirmed = false, true
	}

	// Usable range.
	lin.RangeLo = levels[0]
	if floor > 0 {
		for _, v := range levels {
			if lin.Slope*v >= floor {
				lin.RangeLo = v
				break
			}
		}
	}
	top := len(levels) - 1
	for curved := lin.Curved; curved && top+1 > minLevels; {
		top--
		var xs, ys []float64
		for i, v := range x {
			if v <= levels[top] {
				xs = append(xs, v)
				ys = append(ys, y[i])
			}
		}
		_, _, curved = mandel(xs, ys)
	}
	lin.RangeHi = levels[top]
	if lin.RangeLo > lin.RangeHi {
		lin.RangeLo = lin.RangeHi
	}
	return lin, nil
}

// levelSet is the set of distinct non-zero values of x.
func levelSet(x []float64) map[float64]bool {
	s := map[float64]bool{}
	for _, v := range x {
		if v != 0 {
			s[v] = true
		}
	}
	return s
}

// tss is the total sum of squares of y about its mean.
func tss(y []float64) float64 {
	mean := 0.0
	for _, v := range y {
		mean += v
	}
	mean /= float64(len(y))
	t := 0.0
	for _, v := range y {
		t += (v - mean) * (v - mean)
	}
	return t
}

// bandLine fits and tests the calibration line at each band wavelength:
// js are the band's grid indices in increasing order and pointsAt returns
// the readings at grid index j as lineTest takes them. R² and Mandel's
// test are those lineTest gives (same fits, without the lack-of-fit test
// and the range search, which only the band maximum needs). Wavelengths
// where too few readings stay under the ceiling for a line are skipped.
// It returns nil when no band wavelength could be fitted.
//
// jp is the grid index of the band maximum: the band wavelengths one grid
// step either side of it are counted in PeakNeighboursTested and
// PeakNeighboursCurved.
func bandLine(grid []float64, js []int, jp int, pointsAt func(j int) []reference.Point) *reference.BandLinearity {
	var b *reference.BandLinearity
	var x, y []float64
	for _, j := range js {
		x, y = x[:0], y[:0]
		for _, p := range pointsAt(j) {
			if p.Used {
				x = append(x, p.Conc)
				y = append(y, p.Absorbance)
			}
		}
		if len(x) < 3 || len(levelSet(x)) < 2 {
			continue
		}
		f, err := fitPoly(x, y, 1)
		if err != nil {
			continue
		}
		r2 := 0.0
		if t := tss(y); t > 0 {
			r2 = 1 - f.rss/t
		}
		if b == nil {
			b = &reference.BandLinearity{LoNM: grid[j], MinR2: r2, MinR2NM: grid[j]}
		}
		b.HiNM = grid[j]
		b.Wavelengths++
		if r2 < b.MinR2 {
			b.MinR2, b.MinR2NM = r2, grid[j]
		}
		if _, p, curved := mandel(x, y); !math.IsNaN(p) {
			b.Tested++
			if curved {
				b.Curved++
			}
			if j == jp-1 || j == jp+1 {
				b.PeakNeighboursTested++
				if curved {
					b.PeakNeighboursCurved++
				}
			}
		}
	}
	return b
}
