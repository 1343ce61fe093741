package unmix

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// Design is the fit design of a reference set on a window of its grid:
// the rows kept, the compound columns b*eps and the nuisance columns of
// the baseline model. It is the one builder of the design: NewModel fits
// samples with it, and package validate computes the figures of merit
// and window advice on it, so that both see the same rows and columns.
// The weights come from the set's noise model (reference.Set.Sigma).
type Design struct {
	// lo and hi are the window [lo, hi) on the set grid; window row r is
	// grid point lo+r.
	lo, hi int
	// Rows are the window rows where every compound's absorptivity is
	// usable (reference.Compound.Usable), increasing.
	Rows []int
	// Cols are the columns on the whole window (hi-lo values each): one
	// per compound, path * absorptivity, then the baseline terms.
	Cols [][]float64
	// nonNeg marks the columns constrained to be >= 0 (the compounds and
	// the scattering term).
	nonNeg []bool
	// NComp is the number of compound columns.
	NComp int
	// Terms are the names of the nuisance columns: the baseline terms,
	// then "interferent:NAME" per interferent.
	Terms []string
	// interf names the interferents, whose columns end Cols.
	interf []string
}

// WindowRange returns the window [lo, hi) of grid holding loNM..hiNM
// (both 0: the whole grid), with a slack of spectrum.GridSlack of the
// grid's span so that wavelengths rounded in files still match.
func WindowRange(grid []float64, loNM, hiNM float64) (lo, hi int) {
	if loNM == 0 && hiNM == 0 || len(grid) == 0 {
		return 0, len(grid)
	}
	slack := spectrum.GridSlack * (grid[len(grid)-1] - grid[0])
	return searchGE(grid, loNM-slack), searchGT(grid, hiNM+slack)
}

// UsableRows returns the rows of the window [lo, hi) of set's grid
// (0 = lo) where every compound's absorptivity is usable
// (reference.Compound.Usable; no marks: everywhere), increasing: the rows
// a design keeps.
func UsableRows(set *reference.Set, lo, hi int) []int {
	g := set.Grid
	var rows []int
	for r := range hi - lo {
		ok := true
		for _, c := range set.Compounds {
			if len(c.Usable) == len(g) && !c.Usable[lo+r] {
				ok = false
			}
		}
		if ok {
			rows = append(rows, r)
		}
	}
	return rows
}

// NewDesign builds the design of set (which must pass Validate) on the
// window [lo, hi) of its grid, for a cell of pathCM and the baseline
// model. Errors, without a package prefix, are those of model.Check on
// the window's wavelengths and a baseline that gives columns of the
// wrong sizes.
//
// Interferents, if any, add a non-negative column each after the baseline
// terms (their scans on the window): first those the set stores
// (reference.Set.Interferents), then those given. A scan that does not
// cover the window, is a near-copy of a compound or a combination of the
// other columns, or shares another's name, is refused naming it.
func NewDesign(set *reference.Set, lo, hi int, model baseline.Model, pathCM float64, interferents ...Interferent) (*Design, error) {
	g := set.Grid
	if lo < 0 || hi > len(g) || hi <= lo {
		return nil, fmt.Errorf("window rows %d-%d of a %d-point grid: %w", lo, hi, len(g), ErrCoverage)
	}
	wl := g[lo:hi]
	d := &Design{lo: lo, hi: hi, NComp: len(set.Compounds), Rows: UsableRows(set, lo, hi)}
	for _, c := range set.Compounds {
		col := make([]float64, len(wl))
		for r := range wl {
			col[r] = c.Absorptivity[lo+r] * pathCM
		}
		d.Cols = append(d.Cols, col)
		d.nonNeg = append(d.nonNeg, true)
	}
	bcols, bnn, bnames, err := model.Columns(wl)
	if err != nil {
		return nil, err
	}
	if len(bcols) != len(bnn) || len(bcols) != len(bnames) {
		return nil, fmt.Errorf("baseline %q gave %d columns, %d signs, %d names", model, len(bcols), len(bnn), len(bnames))
	}
	for j, c := range bcols {
		if len(c) != len(wl) {
			return nil, fmt.Errorf("baseline term %s has %d values for %d wavelengths", bnames[j], len(c), len(wl))
		}
	}
	d.Cols = append(d.Cols, bcols...)
	d.nonNeg = append(d.nonNeg, bnn...)
	d.Terms = bnames
	interferents = append(Stored(set), interferents...)
	if len(interferents) == 0 {
		return d, nil
	}
	names := make([]string, 0, len(set.Compounds))
	for _, c := range set.Compounds {
		names = append(names, c.Name)
	}
	seen := map[string]bool{}
	for _, it := range interferents {
		if seen[it.Name] {
			return nil, fmt.Errorf("interferent %s is given twice (the reference set may store one of that name: see inspect); give each once, or rename the file", it.Name)
		}
		seen[it.Name] = true
		col, err := it.column(set, lo, hi)
		if err != nil {
			return nil, err
		}
		d.Cols = append(d.Cols, col)
		d.nonNeg = append(d.nonNeg, true)
		d.Terms = append(d.Terms, interferentTerm+it.Name)
		d.interf = append(d.interf, it.Name)
	}
	if err := d.checkCopies(names); err != nil {
		return nil, err
	}
	return d, nil
}

// matrix returns the design on the given window rows (nil: d.Rows) as a
// rows × columns matrix.
func (d *Design) matrix(rows []int) *mat.Dense {
	return d.matrixTo(nil, rows)
}

// matrixTo is matrix, reusing the storage of dst (nil: a new matrix) when
// it is large enough.
func (d *Design) matrixTo(dst *mat.Dense, rows []int) *mat.Dense {
	if rows == nil {
		rows = d.Rows
	}
	p := len(d.Cols)
	var x *mat.Dense
	if dst != nil && cap(dst.RawMatrix().Data) >= len(rows)*p {
		x = mat.NewDense(len(rows), p, dst.RawMatrix().Data[:len(rows)*p])
	} else {
		x = mat.NewDense(len(rows), p, nil)
	}
	raw := x.RawMatrix()
	for i, r := range rows {
		row := raw.Data[i*raw.Stride : i*raw.Stride+p]
		for j, c := range d.Cols {
			row[j] = c[r]
		}
	}
	return x
}

// design is the fit for one set of rows (a mask): the solver, which
// keeps the pseudo-inverse for detection limits and the shift, and the
// conditioning figures.
type design struct {
	rows   []int // window rows used, increasing
	x      *mat.Dense
	solver *lsq.Solver
	cond   float64
	leak   []float64
	// ready: the solver holds the design on rows (setDesign succeeded
	// and nothing failed since), so new weights need only Reweight.
	ready bool
	// lev is the leverage of each row (leverage), when the set records
	// the absorptivities' covariance (else nil). A design shared by a
	// model's clones (one per mask, unweighted) has it from the start; a
	// weighted fit's own design (refactored for every sample, one per
	// clone) makes it on first use (levOf), so that a candidate model
	// whose fit is not kept never pays for it.
	lev   []float64
	levOK bool
}

// levOf returns d's leverage (nil when the set records no covariance),
// making it first if d is a weighted fit's own design that has not.
func (sh *shared) levOf(d *design) []float64 {
	if sh.cal != nil && !d.levOK {
		d.lev = leverage(d.lev, d.x, d.solver)
		d.levOK = true
	}
	return d.lev
}

// visible returns errRank when a compound's column in x holds, to
// rounding (lsq.RankTol), none of its spectrum: its norm is at most
// RankTol times the norm of its column over the whole grid. The solver
// scales columns to unit norm, so it would fit such a column; but what is
// left of the compound is rounding, not signal (a scan so dark that only
// the far tails of its band are read).
func (sh *shared) visible(x *mat.Dense) error {
	n, p := x.Dims()
	tol := lsq.RankTol(n, p)
	raw := x.RawMatrix()
	for k := range sh.ncomp {
		ss := 0.0
		for i := range n {
			v := raw.Data[i*raw.Stride+k]
			ss += v * v
		}
		if math.Sqrt(ss) <= tol*sh.fullNorm[k] {
			return fmt.Errorf("%w (%s absorbs nowhere on the points used)", errRank, sh.set.Compounds[k].Name)
		}
	}
	return nil
}

// errRank reports linearly dependent columns.
var errRank = errors.New("the design's columns are linearly dependent")

// buildDesign sets up the fit on the given window rows. sigma, if not nil,
// is the noise of each of these rows and the fit is weighted by 1/sigma^2.
func (sh *shared) buildDesign(rows []int, sigma []float64) (*design, error) {
	d := &design{rows: rows}
	if err := sh.setDesign(d, sigma); err != nil {
		return nil, err
	}
	return d, nil
}

// setDesign factors the design on the rows d.rows into d, reusing the
// storage d holds from an earlier call (its matrix and solver), as a
// weighted fit does for every sample (Model.weightedDesign). sigma is as
// for buildDesign. On error d is not usable until the next success.
func (sh *shared) setDesign(d *design, sigma []float64) error {
	d.ready = false
	n, p := len(d.rows), len(sh.cols)
	if n < p+minDoF {
		return fmt.Errorf("%d usable points for %d coefficients", n, p)
	}
	d.x = sh.design.matrixTo(d.x, d.rows)
	if err := sh.visible(d.x); err != nil {
		return err
	}
	opt := lsq.Options{Sigma: sigma, PseudoInverse: true}
	var err error
	if d.solver == nil {
		d.solver, err = lsq.NewSolver(d.x, sh.nonneg, opt)
	} else {
		err = d.solver.Reset(d.x, sh.nonneg, opt)
	}
	if err != nil {
		d.solver = nil
		if errors.Is(err, lsq.ErrRankDeficient) {
			return fmt.Errorf("%w (%s)", errRank, err)
		}
		return err
	}
	d.cond, d.leak = d.solver.Cond(), d.solver.Leakage()
	d.levOK = false
	if sigma == nil {
		sh.levOf(d) // shared by clones: made now, never written again
	}
	d.ready = true
	return nil
}

// reweight factors d, which holds the design on its rows (d.ready), again
// with new noise levels sigma: setDesign on the same rows, without
// building and checking the matrix again (lsq.Solver.Reweight). src, if
// not nil, is a solver that may hold the same design with a column more,
// factored with sigma: its QR is then taken (lsq.Solver.ReweightFrom).
func (sh *shared) reweight(d *design, sigma []float64, src *lsq.Solver) error {
	d.ready = false
	if _, err := d.solver.ReweightFrom(src, sigma); err != nil {
		d.solver = nil
		if errors.Is(err, lsq.ErrRankDeficient) {
			return fmt.Errorf("%w (%s)", errRank, err)
		}
		return err
	}
	d.cond, d.leak = d.solver.Cond(), d.solver.Leakage()
	d.levOK = false // made on first use (levOf)
	d.ready = true
	return nil
}
