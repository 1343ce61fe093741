package validate

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/unmix"
	"huesolve/unmix/lsq"
)

// maxCond is the largest condition number reported: 1/ε for float64.
var maxCond = 1 / (math.Nextafter(1, 2) - 1)

// Errors.
var (
	// errNoNoise: the reference set carries no usable noise model and no
	// noise level was given.
	errNoNoise = pkgerr.New("validate", "the reference set has no noise model; give a noise level")
	// errWindow: the window keeps too few usable wavelengths.
	errWindow = pkgerr.New("validate", "too few usable wavelengths in the window")
	// errNotSelective: a compound cannot be told apart from the other
	// compounds and baseline terms (see unquantifiableError).
	errNotSelective = pkgerr.New("validate", "compound cannot be told apart")
	// errSVD: a singular value decomposition did not converge or gave
	// a non-finite value, which LAPACK's does not on any finite matrix: a
	// NaN or Inf reached the design.
	errSVD = pkgerr.New("validate", "singular value decomposition did not converge (a value in the design is not finite)")
)

// design is the fit design over one window: compound columns b·ε, the
// nuisance columns of the baseline model and the noise per row.
type design struct {
	idx      []int       // rows: indices into the set's grid
	wl       []float64   // wavelengths of the rows (nm)
	comp     [][]float64 // compound columns, one per compound, length len(idx)
	nuis     [][]float64 // nuisance columns
	nuisName []string
	sigma    []float64 // noise SD per row (absorbance)
}

// usableRows returns the indices of grid points in [lo, hi] nm (lo = hi
// = 0: the whole grid) that a design keeps: those unmix.UsableRows keeps
// in the window unmix.WindowRange gives, as solve does.
func usableRows(set *reference.Set, lo, hi float64) []int {
	i0, i1 := unmix.WindowRange(set.Grid, lo, hi)
	if i1 <= i0 {
		return nil
	}
	rows := unmix.UsableRows(set, i0, i1)
	for r := range rows {
		rows[r] += i0
	}
	return rows
}

// checkSet reports a set that cannot be worked with: nil, or failing the
// one check of a set, reference.Set.Validate.
func checkSet(set *reference.Set) error {
	if set == nil {
		return pkgerr.New("validate", "no reference set")
	}
	if err := set.Validate(); err != nil {
		return pkgerr.Errorf("validate", "%w", err)
	}
	return nil
}

// newDesign builds the design of set on the window loNM..hiNM (both 0:
// the whole grid) with unmix.NewDesign, the builder solve uses, on the
// rows it keeps. path is the path length in cm; sigma > 0 replaces the
// set's noise model by a constant.
func newDesign(set *reference.Set, loNM, hiNM float64, model baseline.Model, path, sigma float64, interf ...unmix.Interferent) (*design, error) {
	lo, hi := unmix.WindowRange(set.Grid, loNM, hiNM)
	if hi <= lo {
		return nil, errWindow
	}
	ud, err := unmix.NewDesign(set, lo, hi, model, path, interf...)
	if err != nil {
		return nil, pkgerr.Errorf("validate", "baseline model on %g-%g nm: %w", set.Grid[lo], set.Grid[hi-1], err)
	}
	if len(ud.Rows) == 0 {
		return nil, errWindow
	}
	d := &design{idx: make([]int, len(ud.Rows)), wl: make([]float64, len(ud.Rows)), nuisName: ud.Terms}
	for r, w := range ud.Rows {
		d.idx[r] = lo + w
		d.wl[r] = set.Grid[lo+w]
	}
	for j, c := range ud.Cols {
		col := make([]float64, len(ud.Rows))
		for r, w := range ud.Rows {
			col[r] = c[w]
		}
		if j < ud.NComp {
			d.comp = append(d.comp, col)
		} else {
			d.nuis = append(d.nuis, col)
		}
	}
	if d.sigma, err = noiseRows(set, d.idx, sigma, nil); err != nil {
		return nil, err
	}
	return d, nil
}

// noiseRows returns the noise SD on the grid points idx: sigma if > 0,
// else the set's noise model as solve uses it, reference.Set.Sigma (floor
// included), at the expected absorbance absorb (nil: zero, a blank). A
// set whose noise is missing or zero at most of the points has no usable
// noise model (errNoNoise).
func noiseRows(set *reference.Set, idx []int, sigma float64, absorb []float64) ([]float64, error) {
	out := make([]float64, len(idx))
	if sigma > 0 {
		for r := range out {
			out[r] = sigma
		}
		return out, nil
	}
	if len(set.Noise) != len(set.Grid) {
		return nil, errNoNoise
	}
	for r, i := range idx {
		out[r] = set.Noise[i]
	}
	if !(median(out) > 0) {
		return nil, errNoNoise
	}
	for r, i := range idx {
		a := 0.0
		if absorb != nil {
			a = absorb[r]
		}
		out[r] = set.Sigma(i, a)
	}
	return out, nil
}

func median(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// rms is the root mean square of x.
func rms(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	return floats.Norm(x, 2) / math.Sqrt(float64(len(x)))
}

// projector removes from vectors their component in the span of a set of
// columns. The zero value removes nothing; set it up with reset.
type projector struct {
	u    *mat.Dense // orthonormal basis of the kept span (rows x rank)
	rank int
	svd  mat.SVD
	buf  []float64
	tmp  []float64
}

// reset factors the columns cols (each of length rows), scaled to unit
// norm (all-zero columns are dropped), weighted row-wise by w when w is not
// nil. It returns errSVD when the factorization fails.
func (p *projector) reset(rows int, cols [][]float64, w []float64) error {
	p.rank = 0
	k := len(cols)
	if k == 0 || rows == 0 {
		return nil
	}
	need := rows * k
	if cap(p.buf) < need {
		p.buf = make([]float64, need)
	}
	a := mat.NewDense(rows, k, p.buf[:need])
	nz := 0
	for _, c := range cols {
		ss := weightedSumSq(c[:rows], w)
		if !(ss > 0) {
			continue
		}
		inv := 1 / math.Sqrt(ss)
		for r := 0; r < rows; r++ {
			v := c[r]
			if w != nil {
				v *= w[r]
			}
			a.Set(r, nz, v*inv)
		}
		nz++
	}
	if nz == 0 {
		return nil
	}
	a = a.Slice(0, rows, 0, nz).(*mat.Dense)
	if !p.svd.Factorize(a, mat.SVDThinU) {
		// LAPACK's SVD converges on any finite matrix; reaching here
		// means NaN or Inf slipped past the checks.
		return errSVD
	}
	sv := p.svd.Values(nil)
	if !finiteSV(sv) {
		return errSVD
	}
	tol := lsq.RankTol(rows, nz)
	for _, s := range sv {
		if s > tol*sv[0] {
			p.rank++
		}
	}
	if p.u == nil {
		p.u = &mat.Dense{}
	}
	p.u.Reset()
	p.svd.UTo(p.u)
	return nil
}

// residual writes into dst the part of v orthogonal to the kept span (v
// weighted by w first when w is not nil) and returns dst.
func (p *projector) residual(dst, v, w []float64) []float64 {
	n := len(v)
	if dst == nil {
		dst = make([]float64, n)
	}
	for r := range v {
		dst[r] = v[r]
		if w != nil {
			dst[r] *= w[r]
		}
	}
	if p.rank == 0 {
		return dst
	}
	if cap(p.tmp) < p.rank {
		p.tmp = make([]float64, p.rank)
	}
	coef := p.tmp[:p.rank]
	for j := 0; j < p.rank; j++ {
		var s float64
		for r := 0; r < n; r++ {
			s += p.u.At(r, j) * dst[r]
		}
		coef[j] = s
	}
	for r := 0; r < n; r++ {
		row := p.u.RawRowView(r)[:p.rank]
		dst[r] -= floats.Dot(row, coef)
	}
	return dst
}

// condScaled returns the 2-norm condition number of the columns cols
// (weighted row-wise by w when not nil), each scaled to unit norm, and
// whether they are singular (see clampCond); errSVD when the
// factorization fails.
func condScaled(rows int, cols [][]float64, w []float64) (float64, bool, error) {
	k := len(cols)
	if k == 0 || rows == 0 {
		return 1, false, nil
	}
	a := mat.NewDense(rows, k, nil)
	for j, c := range cols {
		ss := weightedSumSq(c[:rows], w)
		if !(ss > 0) {
			return maxCond, true, nil
		}
		inv := 1 / math.Sqrt(ss)
		for r := 0; r < rows; r++ {
			v := c[r]
			if w != nil {
				v *= w[r]
			}
			a.Set(r, j, v*inv)
		}
	}
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDNone) {
		return 0, false, errSVD
	}
	sv := svd.Values(nil)
	if !finiteSV(sv) {
		return 0, false, errSVD
	}
	c, singular := clampCond(sv[0], sv[len(sv)-1], lsq.RankTol(rows, k))
	return c, singular, nil
}

// finiteSV reports whether the largest singular value sv[0] (and so
// every one) is finite: a NaN or Inf in the factored matrix shows there.
func finiteSV(sv []float64) bool {
	return len(sv) > 0 && !math.IsNaN(sv[0]) && !math.IsInf(sv[0], 0)
}

// clampCond turns extreme singular values into a condition number capped
// at maxCond, and reports a singular design: smallest singular value at or
// below tol (lsq.RankTol of the design's size) times the largest (columns
// scaled to unit norm).
func clampCond(smax, smin, tol float64) (float64, bool) {
	singular := !(smin > tol*smax)
	if !(smin > 0) || smax/smin >= maxCond {
		return maxCond, singular
	}
	return smax / smin, singular
}

// weightedSumSq returns sum((c_r w_r)^2), or sum(c_r^2) when w is nil.
func weightedSumSq(c, w []float64) float64 {
	var ss float64
	for r, v := range c {
		if w != nil {
			v *= w[r]
		}
		ss += v * v
	}
	return ss
}
