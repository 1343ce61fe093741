package lsq

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// Tolerances and limits. Each bounds the quantity named in its comment.
const (
	// DefaultTol bounds the gradient component g_j = x_sj' W^(1/2) r of a
	// column held at zero, relative to ||X_s||_2 ||Q' W^(1/2) y|| (the
	// part of the weighted y that the design can reach), at or
	// below which the column is taken as not worth freeing (the
	// Lawson-Hanson stopping test). It is the default of Options.Tol.
	DefaultTol = 1e-13

	// KKTTol bounds the relative KKT residual, recomputed from the
	// original data after each solve, that still certifies the answer;
	// above it the solve ends with Status Inaccurate.
	KKTTol = 1e-8

	// IterPerColumn times the number of columns is the default cap on
	// active-set iterations (additions to and removals from the passive
	// set). Three per column is the default of scipy.optimize.nnls
	// (SciPy 1.10 documentation, maxiter = 3 * columns).
	IterPerColumn = 3

	// minIter is a floor on the default iteration cap so that tiny
	// problems with a degenerate start still have room.
	minIter = 10

	// rankEpsFactor: a design whose smallest singular value (column-scaled
	// and weighted) is at most rankEpsFactor * max(rows, cols) * eps times
	// the largest is rank deficient. This is the usual numerical-rank rule
	// (Golub & Van Loan, Matrix Computations, section 5.4; the default of
	// numpy.linalg.matrix_rank; recalled from memory).
	rankEpsFactor = 1.0

	// nullShare: a column is named in a RankError when its entry in a null
	// vector (unit norm) of the scaled design is at least nullShare times
	// the vector's largest entry.
	nullShare = 1e-3
)

// eps is the float64 machine epsilon (unit roundoff times two).
const eps = 0x1p-52

// factor is the read-only part of a Solver, shared by its clones.
type factor struct {
	n, p   int
	nf, nn int    // numbers of free and non-negative columns
	nonneg []bool // per original column
	perm   []int  // perm[k] = original column at factor position k (free first)

	x        []float64 // original columns, column-major: x[j*n:(j+1)*n]
	qtw      []float64 // p×n: row k = (column k of Q) / sigma, so z = qtw y
	gcol     []float64 // p×n, original order: x_ij / (d_j sigma_i^2), so g = gcol r
	r        []float64 // p×p upper-triangular R, row-major, factor order
	rss      []float64 // nn×nn copy of R_SS
	rinvRow2 []float64 // squared row norms of R^-1, factor order: diag((X_s'X_s)^-1)
	d        []float64 // column scales, original order
	invSigma []float64 // nil when unweighted

	cond   float64   // 2-norm condition number of X_s
	normXs float64   // ||X_s||_2
	vif    []float64 // original order
	leak   []float64 // original order

	tol     float64
	maxIter int
	known   bool // Sigma given and ScaleSE false: the noise variance is known
}

// workspace is the per-Solver scratch.
type workspace struct {
	z, bs, g []float64 // len p
	x, s, w  []float64 // len nn: active-set iterate, trial solution, gradient
	res      []float64 // len nn
	inP, rej []bool    // len nn
	pidx     []int     // passive set (sorted), capacity nn
	aidx     []int     // passive set in factor order for SE, capacity p
	m        []float64 // p×p scratch for the Givens re-triangularisation
	rhs      []float64 // len p
	tinv     []float64 // p×p scratch for T^-1
	d2       []float64 // len p: diag((T'T)^-1) in factor order
	ywss     float64   // ||W^(1/2) y||^2 of the last solve
	bu       []float64 // len p: unconstrained scaled coefficients, factor order
	tq       []float64 // 0.975 quantiles of Student t by degrees of freedom (0: not yet computed)
}

// Solver solves min ||W^(1/2)(y - X b)|| subject to b_j >= 0 for the
// non-negative columns, for many y with one design X. A Solver is not safe
// for concurrent use; Clone gives each worker its own workspace sharing the
// factorisation.
type Solver struct {
	f  *factor
	ws workspace
}

// NewSolver factors the design x (rows x columns) once. nonneg[j] says
// whether coefficient j is constrained to be >= 0.
//
// It returns an error wrapping ErrShape if nonneg or opt.Sigma do not
// match x or x has no rows or columns, ErrNonFinite for NaN or infinite
// entries in x or opt.Sigma (or a non-positive sigma), and a *RankError
// (wrapping ErrRankDeficient) naming the columns when a column is zero,
// there are fewer rows than columns, or the column-scaled weighted design
// is numerically rank deficient (smallest singular value at most
// max(rows, cols) * eps times the largest). x is copied; later changes to it
// do not affect the Solver.
//
// The cost is one thin QR, O(n p^2), and an SVD of the p×p factor.
func NewSolver(x *mat.Dense, nonneg []bool, opt Options) (*Solver, error) {
	n, p := x.Dims()
	if n == 0 || p == 0 {
		return nil, fmt.Errorf("lsq: empty design (%d×%d): %w", n, p, ErrShape)
	}
	if len(nonneg) != p {
		return nil, fmt.Errorf("lsq: %d constraint flags for %d columns: %w", len(nonneg), p, ErrShape)
	}
	if opt.Sigma != nil && len(opt.Sigma) != n {
		return nil, fmt.Errorf("lsq: %d sigma values for %d rows: %w", len(opt.Sigma), n, ErrShape)
	}
	if opt.Tol < 0 || math.IsNaN(opt.Tol) || opt.MaxIter < 0 {
		return nil, fmt.Errorf("lsq: negative tolerance or iteration cap: %w", ErrShape)
	}
	f := &factor{n: n, p: p, nonneg: slices.Clone(nonneg)}
	f.x = make([]float64, n*p)
	for i := range n {
		row := x.RawRowView(i)
		for j, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("lsq: design row %d, column %d is %v: %w", i, j, v, ErrNonFinite)
			}
			f.x[j*n+i] = v
		}
	}
	if opt.Sigma != nil {
		f.invSigma = make([]float64, n)
		for i, s := range opt.Sigma {
			if !(s > 0) || math.IsInf(s, 0) {
				return nil, fmt.Errorf("lsq: sigma of row %d is %v, want positive and finite: %w", i, s, ErrNonFinite)
			}
			f.invSigma[i] = 1 / s
		}
		f.known = !opt.ScaleSE
	}
	// Column scales of the weighted design (overflow-safe 2-norms).
	f.d = make([]float64, p)
	invD := make([]float64, p)
	wcol := make([]float64, n)
	for j := range p {
		col := f.x[j*n : (j+1)*n]
		if f.invSigma != nil {
			floats.MulTo(wcol, col, f.invSigma)
			col = wcol
		}
		d := floats.Norm(col, 2)
		if math.IsInf(d, 0) || math.IsNaN(d) {
			return nil, fmt.Errorf("lsq: column %d overflows when weighted by 1/sigma: %w", j, ErrNonFinite)
		}
		if d == 0 {
			return nil, &RankError{Columns: []int{j}, Cond: math.Inf(1), Rows: n, Cols: p}
		}
		f.d[j] = d
		invD[j] = 1 / d
	}
	if n < p {
		all := make([]int, p)
		for j := range all {
			all[j] = j
		}
		return nil, &RankError{Columns: all, Cond: math.Inf(1), Rows: n, Cols: p}
	}
	// Free columns first, then the non-negative ones, each in original order.
	f.perm = make([]int, 0, p)
	for j := range p {
		if !nonneg[j] {
			f.perm = append(f.perm, j)
		}
	}
	f.nf = len(f.perm)
	for j := range p {
		if nonneg[j] {
			f.perm = append(f.perm, j)
		}
	}
	f.nn = p - f.nf

	// Scaled weighted design in factor order, row-major n×p.
	a := make([]float64, n*p)
	for k, j := range f.perm {
		col := f.x[j*n : (j+1)*n]
		for i, v := range col {
			if f.invSigma != nil {
				v *= f.invSigma[i]
			}
			a[i*p+k] = v * invD[j]
		}
	}
	A := blas64.General{Rows: n, Cols: p, Stride: p, Data: a}
	tau := make([]float64, p)
	work := make([]float64, 1)
	lapack64.Geqrf(A, tau, work, -1)
	lwork := max(int(work[0]), n, p)
	work = make([]float64, lwork)
	lapack64.Geqrf(A, tau, work, lwork)
	f.r = make([]float64, p*p)
	for i := range p {
		for j := i; j < p; j++ {
			f.r[i*p+j] = a[i*p+j]
		}
	}
	lapack64.Orgqr(A, tau, work, lwork)
	// Ensure work is large enough was checked by Orgqr (lwork >= p).

	// Singular values of R (those of X_s) and null vectors.
	var svd mat.SVD
	rm := mat.NewDense(p, p, slices.Clone(f.r))
	if !svd.Factorize(rm, mat.SVDThinV) {
		return nil, fmt.Errorf("lsq: singular value decomposition of the design failed: %w", ErrRankDeficient)
	}
	sv := svd.Values(nil)
	f.normXs = sv[0]
	smin := sv[p-1]
	f.cond = sv[0] / smin
	if smin <= rankEpsFactor*float64(max(n, p))*eps*sv[0] {
		var v mat.Dense
		svd.VTo(&v)
		in := make([]bool, p)
		for c := range p {
			if sv[c] > rankEpsFactor*float64(max(n, p))*eps*sv[0] {
				continue
			}
			vmax := 0.0
			for k := range p {
				vmax = math.Max(vmax, math.Abs(v.At(k, c)))
			}
			for k := range p {
				if math.Abs(v.At(k, c)) >= nullShare*vmax {
					in[f.perm[k]] = true
				}
			}
		}
		var cols []int
		for j, ok := range in {
			if ok {
				cols = append(cols, j)
			}
		}
		cond := f.cond
		if smin == 0 {
			cond = math.Inf(1)
		}
		return nil, &RankError{Columns: cols, Cond: cond, Rows: n, Cols: p}
	}

	// Q' W^(1/2), stored by rows of Q'.
	f.qtw = make([]float64, p*n)
	for k := range p {
		row := f.qtw[k*n : (k+1)*n]
		for i := range row {
			row[i] = a[i*p+k]
		}
		if f.invSigma != nil {
			floats.Mul(row, f.invSigma)
		}
	}
	// Gradient rows in original order: g_j = sum_i x_ij r_i / (d_j sigma_i^2).
	f.gcol = make([]float64, p*n)
	for j := range p {
		g := f.gcol[j*n : (j+1)*n]
		floats.ScaleTo(g, invD[j], f.x[j*n:(j+1)*n])
		if f.invSigma != nil {
			floats.Mul(g, f.invSigma)
			floats.Mul(g, f.invSigma)
		}
	}
	// R_SS.
	f.rss = make([]float64, f.nn*f.nn)
	for i := range f.nn {
		for j := range f.nn {
			f.rss[i*f.nn+j] = f.r[(f.nf+i)*p+f.nf+j]
		}
	}
	// diag((X_s'X_s)^-1) = squared row norms of R^-1.
	f.rinvRow2 = make([]float64, p)
	tinv := make([]float64, p*p)
	triInv(tinv, f.r, p, p)
	rowNorms2(f.rinvRow2, tinv, p)
	f.vif = make([]float64, p)
	f.leak = make([]float64, p)
	for k, j := range f.perm {
		f.vif[j] = f.rinvRow2[k]
		if k < f.nf {
			f.leak[j] = 1
			continue
		}
		var all, proj float64
		for i := 0; i <= k; i++ {
			v := f.r[i*p+k]
			all += v * v
			if i >= f.nf {
				proj += v * v
			}
		}
		f.leak[j] = math.Sqrt(proj / all)
	}

	f.tol = opt.Tol
	if f.tol == 0 {
		f.tol = DefaultTol
	}
	f.maxIter = opt.MaxIter
	if f.maxIter == 0 {
		f.maxIter = max(IterPerColumn*p, minIter)
	}
	s := &Solver{f: f}
	s.ws.init(f)
	return s, nil
}

func (ws *workspace) init(f *factor) {
	p, nn := f.p, f.nn
	ws.z = make([]float64, p)
	ws.bs = make([]float64, p)
	ws.g = make([]float64, p)
	ws.x = make([]float64, nn)
	ws.s = make([]float64, nn)
	ws.w = make([]float64, nn)
	ws.res = make([]float64, nn)
	ws.inP = make([]bool, nn)
	ws.rej = make([]bool, nn)
	ws.pidx = make([]int, 0, nn)
	ws.aidx = make([]int, 0, p)
	ws.m = make([]float64, p*p)
	ws.rhs = make([]float64, p)
	ws.tinv = make([]float64, p*p)
	ws.d2 = make([]float64, p)
	ws.bu = make([]float64, p)
	ws.tq = make([]float64, f.n+1)
}

// Clone returns a Solver sharing the factorisation with fresh workspace.
func (s *Solver) Clone() *Solver {
	c := &Solver{f: s.f}
	c.ws.init(s.f)
	return c
}

// Rows returns the number of rows of the design.
func (s *Solver) Rows() int { return s.f.n }

// Cols returns the number of columns of the design.
func (s *Solver) Cols() int { return s.f.p }

// Cond is the 2-norm condition number of the weighted design with each
// column scaled to unit norm.
func (s *Solver) Cond() float64 { return s.f.cond }

// VIF is the variance inflation factor of each column: for the weighted
// design with unit-norm columns X_s,
//
//	VIF_j = [(X_s'X_s)^-1]_jj = 1 / (1 - R_j^2),
//
// with R_j^2 the uncentred fraction of ||x_sj||^2 explained by the other
// columns (free ones included). It is computed from the row norms of R^-1.
// The slice is a fresh copy.
func (s *Solver) VIF() []float64 { return slices.Clone(s.f.vif) }

// Leakage is, for each non-negative column k, ||P s_k|| / ||s_k|| with P
// the projector onto the complement of the free columns (1 for free
// columns). Small values mean the free terms can imitate column k.
// Columns are weighted as in the fit. The slice is a fresh copy.
func (s *Solver) Leakage() []float64 { return slices.Clone(s.f.leak) }

// Scales returns the column scales d_j = ||W^(1/2) x_j||, the norms the
// columns were divided by before factorising. The slice is a fresh copy.
func (s *Solver) Scales() []float64 { return slices.Clone(s.f.d) }

// triInv writes the inverse of the m×m upper-triangular t (row-major,
// stride ldt) into dst (row-major, stride m).
func triInv(dst, t []float64, m, ldt int) {
	clear(dst[:m*m])
	for c := range m {
		// Solve T x = e_c; x_i = 0 for i > c.
		dst[c*m+c] = 1 / t[c*ldt+c]
		for i := c - 1; i >= 0; i-- {
			var sum float64
			for k := i + 1; k <= c; k++ {
				sum += t[i*ldt+k] * dst[k*m+c]
			}
			dst[i*m+c] = -sum / t[i*ldt+i]
		}
	}
}

// rowNorms2 writes the squared row norms of the m×m upper-triangular u
// (row-major, stride m) into dst.
func rowNorms2(dst, u []float64, m int) {
	for i := range m {
		var s float64
		for _, v := range u[i*m+i : i*m+m] {
			s += v * v
		}
		dst[i] = s
	}
}
