package lsq

import (
	"math"
	"slices"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"huesolve/internal/pkgerr"
)

// Tolerances and limits. Each bounds the quantity named in its comment.
const (
	// defaultTol bounds the gradient component g_j = x_sj' W^(1/2) r of a
	// column held at zero, relative to ||X_s||_2 ||Q' W^(1/2) y|| (the
	// part of the weighted y that the design can reach), at or
	// below which the column is taken as not worth freeing (the
	// Lawson-Hanson stopping test). It is the default of Options.tol.
	defaultTol = 1e-13

	// KKTTol bounds the relative KKT residual, recomputed from the
	// original data after each solve, that still certifies the answer;
	// above it the solve ends with Status Inaccurate.
	KKTTol = 1e-8

	// iterPerColumn times the number of columns is the default cap on
	// active-set iterations (additions to and removals from the passive
	// set). Three per column is the default of scipy.optimize.nnls
	// (SciPy 1.10 documentation, maxiter = 3 * columns).
	iterPerColumn = 3

	// minIter is a floor on the default iteration cap so that tiny
	// problems with a degenerate start still have room.
	minIter = 10

	// rankEpsFactor scales the numerical-rank rule of [RankTol].
	rankEpsFactor = 1.0

	// nullShare: a column is named in a rankError when its entry in a null
	// vector (unit norm) of the scaled design is at least nullShare times
	// the vector's largest entry.
	nullShare = 1e-3
)

// eps is the float64 machine epsilon (unit roundoff times two).
const eps = 0x1p-52

// RankTol is the project's one rank tolerance: a design of rows × cols
// whose columns are scaled to unit norm (and rows weighted) is rank
// deficient when its smallest singular value is at most RankTol(rows,
// cols) times the largest, that is max(rows, cols) * eps. This is the
// usual numerical-rank rule (Golub & Van Loan, Matrix Computations,
// section 5.4; the default of numpy.linalg.matrix_rank; recalled from
// memory): only columns dependent to rounding are caught, milder
// collinearity is graded by the condition number ([CondWarn],
// [CondRefuse]). lsq, unmix, validate and reference all use it.
func RankTol(rows, cols int) float64 {
	return rankEpsFactor * float64(max(rows, cols)) * eps
}

// safeMin and safeMax bound a 2-norm computed as the square root of a
// plain sum of squares: inside them no square underflowed to lose
// accuracy or overflowed (1e-150 and 1e150 squared stay well inside the
// normal float64 range).
const (
	safeMin = 1e-150
	safeMax = 1e150
)

// factor is the read-only part of a Solver, shared by its clones.
type factor struct {
	n, p   int
	nf, nn int    // numbers of free and non-negative columns
	nonneg []bool // per original column
	perm   []int  // perm[k] = original column at factor position k (free first)

	x        []float64 // original columns, column-major: x[j*n:(j+1)*n]
	qtw      []float64 // p×n: row k = (column k of Q) / sigma, so z = qtw y
	gcol     []float64 // p×n, original order: x_ij / (d_j sigma_i^2), so g = gcol r; made on first use
	r        []float64 // p×p upper-triangular R, row-major, factor order
	rss      []float64 // nn×nn copy of R_SS
	rinvRow2 []float64 // squared row norms of R^-1, factor order: diag((X_s'X_s)^-1)
	rinv     []float64 // p×p R^-1, row-major, factor order
	pinv     []float64 // p×n pseudo-inverse D^-1 R^-1 Q' W^(1/2), original order; made on first use
	// wantPinv: the pseudo-inverse was asked for (Options.PseudoInverse);
	// pinvDone: it is made. It is made on the first PseudoInverseRow,
	// under pinvMu, as clones on other goroutines may ask at once.
	wantPinv bool
	pinvDone atomic.Bool
	pinvMu   sync.Mutex
	gradDone atomic.Bool // gcol is made (gradRows)
	gradMu   sync.Mutex
	d        []float64 // column scales, original order
	invSigma []float64 // nil when unweighted

	cond   float64   // 2-norm condition number of X_s
	normXs float64   // ||X_s||_2
	leak   []float64 // original order

	tol     float64
	maxIter int
	known   bool        // Sigma given and scaleSE false: the noise variance is known
	opt     Options     // the options of the last set-up, Sigma left out (Reweight)
	shared  atomic.Bool // cloned: Reset must not reuse this storage

	// Set-up scratch, kept for Reset.
	invD, wcol, qa, tau, work, sv, svA []float64
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
	e2       []float64 // len n: squared weighted residuals
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
// It returns an error wrapping errShape if nonneg or opt.Sigma do not
// match x or x has no rows or columns, errNonFinite for NaN or infinite
// entries in x or opt.Sigma (or a non-positive sigma), and a *rankError
// (wrapping ErrRankDeficient) naming the columns when a column is zero,
// there are fewer rows than columns, or the column-scaled weighted design
// is numerically rank deficient (smallest singular value at most
// max(rows, cols) * eps times the largest). x is copied; later changes to it
// do not affect the Solver.
//
// The cost is one thin QR, O(n p^2), and an SVD of the p×p factor.
func NewSolver(x *mat.Dense, nonneg []bool, opt Options) (*Solver, error) {
	s := &Solver{}
	if err := s.Reset(x, nonneg, opt); err != nil {
		return nil, err
	}
	return s, nil
}

// Reset factors a new design into s, as NewSolver does, for the case in
// which the design or the weights change from one y to the next (the
// accurate path: O(n p^2) per y). It reuses the storage of s when s has
// not been cloned and the sizes allow, so that a loop of Reset and Solve
// allocates almost nothing in steady state (two small objects inside
// gonum's SVD); clones made earlier keep the old factorisation. On error s has no design and Solve fails until a
// successful Reset.
func (s *Solver) Reset(x *mat.Dense, nonneg []bool, opt Options) error {
	f := s.f
	if f == nil || f.shared.Load() {
		f = &factor{}
	}
	s.f = nil
	if err := f.setup(x, nonneg, opt); err != nil {
		return err
	}
	s.f = f
	s.ws.init(f)
	return nil
}

// Reweight factors the design of the last successful NewSolver or Reset
// again with new noise levels sigma (nil: unweighted), the other options
// kept: what Reset with the same design does, bit for bit, without
// copying and checking the design again. A weighted fit whose rows do
// not change from one y to the next (only the weights do) calls it for
// each y. Errors are Reset's for sigma; on error s has no design.
func (s *Solver) Reweight(sigma []float64) error {
	f := s.f
	if f == nil {
		return pkgerr.Errorf("lsq", "solver has no design (failed Reset): %w", errShape)
	}
	opt := f.opt
	opt.Sigma = sigma
	if f.shared.Load() {
		g := &factor{}
		g.n, g.p = f.n, f.p
		g.nonneg = slices.Clone(f.nonneg)
		g.x = slices.Clone(f.x)
		f = g
	}
	s.f = nil
	if sigma != nil && len(sigma) != f.n {
		return pkgerr.Errorf("lsq", "%d sigma values for %d rows: %w", len(sigma), f.n, errShape)
	}
	if err := f.loadSigma(opt); err != nil {
		return err
	}
	if err := f.factorise(opt); err != nil {
		return err
	}
	s.f = f
	s.ws.init(f)
	return nil
}

// ReweightFrom is Reweight(sigma), taking the QR factorisation from src
// when src holds the same design with more columns after these in factor
// order (free columns first, then the non-negative ones, each in original
// order): the same rows, the same first columns in original order, with
// the same signs, and the same noise levels sigma, factored last. The
// Householder QR treats the columns one after another, so the first
// columns' factors, R's leading block and Q's leading columns, are those
// of the QR of the first columns alone (the reflectors of the later
// columns never touch them, and each column's products are summed in the
// same order whatever columns follow it); what follows, as in Reweight.
// It reports whether src was used: when it does not match, s is
// factored as Reweight does. Callers that fit nested models to one y (a
// model and the same model with one more non-negative term) factor the
// larger one and take the smaller one from it.
func (s *Solver) ReweightFrom(src *Solver, sigma []float64) (bool, error) {
	f := s.f
	if src == nil || src.f == nil || f == nil || f.shared.Load() || !f.prefixOf(src.f, sigma) {
		return false, s.Reweight(sigma)
	}
	opt := f.opt
	opt.Sigma = sigma
	s.f = nil
	if err := f.loadSigma(opt); err != nil {
		return true, err
	}
	if err := f.factoriseFrom(opt, src.f); err != nil {
		return true, err
	}
	s.f = f
	s.ws.init(f)
	return true, nil
}

// prefixOf reports whether f's design (n×p) is the first p columns of
// g's with the same signs, the same position in factor order, and g was
// factored with noise levels sigma.
func (f *factor) prefixOf(g *factor, sigma []float64) bool {
	n, p := f.n, f.p
	if g.n != n || g.p <= p || len(sigma) != n || len(g.invSigma) != n {
		return false
	}
	for i, v := range sigma {
		if g.invSigma[i] != 1/v {
			return false
		}
	}
	if !slices.Equal(f.x[:n*p], g.x[:n*p]) || !slices.Equal(f.nonneg, g.nonneg[:p]) {
		return false
	}
	// Factor order: g's first p positions must hold columns 0..p-1 in
	// the order f's own would (free first, then non-negative).
	k := 0
	for pass := range 2 {
		for j := range p {
			if f.nonneg[j] != (pass == 1) {
				continue
			}
			if g.perm[k] != j {
				return false
			}
			k++
		}
	}
	return true
}

// prefixQR takes f's thin QR from src's (prefixOf): R's leading p×p
// block into f.r and Q's leading p columns into f.qa, which it returns.
func (f *factor) prefixQR(src *factor) []float64 {
	n, p, q := f.n, f.p, src.p
	f.r = grow(f.r, p*p)
	for i := range p {
		copy(f.r[i*p:(i+1)*p], src.r[i*q:i*q+p])
	}
	a := grow(f.qa, n*p)
	f.qa = a
	for i := range n {
		copy(a[i*p:(i+1)*p], src.qa[i*q:i*q+p])
	}
	return a
}

// grow returns buf resized to n, reusing its storage if it can.
func grow[T any](buf []T, n int) []T {
	if cap(buf) >= n {
		return buf[:n]
	}
	return make([]T, n)
}

// setup fills f for the design x; see NewSolver. Each step is one
// method, in order: check and copy the input, scale the columns, order
// them free first, factor (QR, singular values, rank), and derive the
// products each solve uses and the conditioning figures.
func (f *factor) setup(x *mat.Dense, nonneg []bool, opt Options) error {
	if err := f.load(x, nonneg, opt); err != nil {
		return err
	}
	return f.factorise(opt)
}

// factorise is setup after the design and the noise levels are loaded.
func (f *factor) factorise(opt Options) error {
	return f.factoriseFrom(opt, nil)
}

// factoriseFrom is factorise, taking the QR factorisation from src when
// src is not nil (see ReweightFrom) instead of computing it.
func (f *factor) factoriseFrom(opt Options, src *factor) error {
	f.opt = opt
	f.opt.Sigma = nil
	if err := f.scaleColumns(); err != nil {
		return err
	}
	if f.n < f.p {
		all := make([]int, f.p)
		for j := range all {
			all[j] = j
		}
		return &rankError{Columns: all, Cond: math.Inf(1), Rows: f.n, Cols: f.p}
	}
	f.order()
	var a []float64
	if src != nil {
		a = f.prefixQR(src)
	} else {
		a = f.factorQR()
	}
	if err := f.singularValues(); err != nil {
		return err
	}
	f.products(a)
	f.diagnostics()
	f.wantPinv = opt.PseudoInverse
	f.pinvDone.Store(false)

	f.tol = opt.tol
	if f.tol == 0 {
		f.tol = defaultTol
	}
	f.maxIter = opt.maxIter
	if f.maxIter == 0 {
		f.maxIter = max(iterPerColumn*f.p, minIter)
	}
	return nil
}

// load checks the sizes and values of the input and copies the design
// (column-major) and the inverse noise levels into f.
func (f *factor) load(x *mat.Dense, nonneg []bool, opt Options) error {
	n, p := x.Dims()
	if n == 0 || p == 0 {
		return pkgerr.Errorf("lsq", "empty design (%d×%d): %w", n, p, errShape)
	}
	if len(nonneg) != p {
		return pkgerr.Errorf("lsq", "%d constraint flags for %d columns: %w", len(nonneg), p, errShape)
	}
	if opt.Sigma != nil && len(opt.Sigma) != n {
		return pkgerr.Errorf("lsq", "%d sigma values for %d rows: %w", len(opt.Sigma), n, errShape)
	}
	if opt.tol < 0 || math.IsNaN(opt.tol) || opt.maxIter < 0 {
		return pkgerr.Errorf("lsq", "negative tolerance or iteration cap: %w", errShape)
	}
	f.n, f.p = n, p
	f.nonneg = grow(f.nonneg, p)
	copy(f.nonneg, nonneg)
	f.x = grow(f.x, n*p)
	for i := range n {
		row := x.RawRowView(i)
		for j, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return pkgerr.Errorf("lsq", "design row %d, column %d is %v: %w", i, j, v, errNonFinite)
			}
			f.x[j*n+i] = v
		}
	}
	return f.loadSigma(opt)
}

// loadSigma checks opt.Sigma (sized by load) and stores its inverse.
func (f *factor) loadSigma(opt Options) error {
	n := f.n
	f.invSigma = f.invSigma[:0]
	f.known = false
	if opt.Sigma != nil {
		f.invSigma = grow(f.invSigma, n)
		for i, s := range opt.Sigma {
			if !(s > 0) || math.IsInf(s, 0) {
				return pkgerr.Errorf("lsq", "sigma of row %d is %v, want positive and finite: %w", i, s, errNonFinite)
			}
			f.invSigma[i] = 1 / s
		}
		f.known = !opt.scaleSE
	}
	if len(f.invSigma) == 0 {
		f.invSigma = nil
	}
	return nil
}

// scaleColumns sets the column scales of the weighted design
// (overflow-safe 2-norms); a zero column is a rankError.
func (f *factor) scaleColumns() error {
	n, p := f.n, f.p
	f.d = grow(f.d, p)
	f.invD = grow(f.invD, p)
	f.wcol = grow(f.wcol, n)
	for j := range p {
		col := f.x[j*n : (j+1)*n]
		if f.invSigma != nil {
			floats.MulTo(f.wcol, col, f.invSigma)
			col = f.wcol
		}
		// Plain sum of squares when it is safely inside the range of
		// float64; the overflow-safe scaled norm otherwise.
		d := math.Sqrt(floats.Dot(col, col))
		if !(d > safeMin && d < safeMax) {
			d = floats.Norm(col, 2)
		}
		if math.IsInf(d, 0) || math.IsNaN(d) {
			return pkgerr.Errorf("lsq", "column %d overflows when weighted by 1/sigma: %w", j, errNonFinite)
		}
		if d == 0 {
			return &rankError{Columns: []int{j}, Cond: math.Inf(1), Rows: n, Cols: p}
		}
		f.d[j] = d
		f.invD[j] = 1 / d
	}
	return nil
}

// order puts the free columns first, then the non-negative ones, each in
// original order (f.perm, f.nf, f.nn).
func (f *factor) order() {
	p := f.p
	f.perm = grow(f.perm, p)[:0]
	for j := range p {
		if !f.nonneg[j] {
			f.perm = append(f.perm, j)
		}
	}
	f.nf = len(f.perm)
	for j := range p {
		if f.nonneg[j] {
			f.perm = append(f.perm, j)
		}
	}
	f.nn = p - f.nf
}

// factorQR takes the thin QR of the scaled weighted design in factor
// order: R into f.r, and the thin Q (row-major n×p) in the returned
// slice, which is f.qa.
func (f *factor) factorQR() []float64 {
	n, p := f.n, f.p
	a := grow(f.qa, n*p)
	f.qa = a
	for k, j := range f.perm {
		col := f.x[j*n : (j+1)*n]
		dj := f.invD[j]
		if is := f.invSigma; is != nil {
			is = is[:len(col)]
			for i, v := range col {
				a[i*p+k] = v * is[i] * dj
			}
		} else {
			for i, v := range col {
				a[i*p+k] = v * dj
			}
		}
	}
	A := blas64.General{Rows: n, Cols: p, Stride: p, Data: a}
	f.tau = grow(f.tau, p)
	if len(f.work) == 0 {
		f.work = make([]float64, 1)
	}
	lapack64.Geqrf(A, f.tau, f.work, -1)
	lwork := max(int(f.work[0]), n, p)
	lapack64.Orgqr(A, f.tau, f.work, -1)
	lwork = max(lwork, int(f.work[0]))
	f.work = grow(f.work, lwork)
	lapack64.Geqrf(A, f.tau, f.work, lwork)
	f.r = grow(f.r, p*p)
	clear(f.r)
	for i := range p {
		for j := i; j < p; j++ {
			f.r[i*p+j] = a[i*p+j]
		}
	}
	lapack64.Orgqr(A, f.tau, f.work, lwork)
	return a
}

// singularValues computes the singular values of R (those of X_s),
// without vectors, sets the norm and condition number, and returns a
// rankError when the design is numerically rank deficient (see RankTol);
// the null vectors are computed only for that error.
func (f *factor) singularValues() error {
	n, p := f.n, f.p
	f.sv = grow(f.sv, p)
	f.svA = grow(f.svA, p*p)
	copy(f.svA, f.r)
	none := blas64.General{Stride: 1}
	lapack64.Gesvd(lapack.SVDNone, lapack.SVDNone, blas64.General{Rows: p, Cols: p, Stride: p, Data: f.svA}, none, none, f.sv, f.work, -1)
	if lw := int(f.work[0]); lw > len(f.work) {
		f.work = grow(f.work, lw)
	}
	copy(f.svA, f.r)
	if !lapack64.Gesvd(lapack.SVDNone, lapack.SVDNone, blas64.General{Rows: p, Cols: p, Stride: p, Data: f.svA}, none, none, f.sv, f.work, len(f.work)) {
		return pkgerr.Errorf("lsq", "singular value decomposition of the design failed: %w", ErrRankDeficient)
	}
	sv := f.sv
	f.normXs = sv[0]
	smin := sv[p-1]
	f.cond = sv[0] / smin
	if smin <= RankTol(n, p)*sv[0] {
		return f.rankError()
	}
	return nil
}

// products stores what each solve uses: Q' W^(1/2) by rows of Q' (from
// the thin Q in a) and R_SS. The gradient rows of the KKT certificate
// (gradRows) are made on first use.
func (f *factor) products(a []float64) {
	n, p := f.n, f.p
	f.qtw = grow(f.qtw, p*n)
	for k := range p {
		row := f.qtw[k*n : (k+1)*n]
		for i := range row {
			row[i] = a[i*p+k]
		}
		if f.invSigma != nil {
			floats.Mul(row, f.invSigma)
		}
	}
	f.gradDone.Store(false)
	f.rss = grow(f.rss, f.nn*f.nn)
	for i := range f.nn {
		for j := range f.nn {
			f.rss[i*f.nn+j] = f.r[(f.nf+i)*p+f.nf+j]
		}
	}
}

// gradRows sets f.gcol, the gradient rows in original order,
// g_j = sum_i x_ij r_i / (d_j sigma_i^2), which only Finish's KKT
// certificate reads: made on first use, so that a design factored for
// one sample whose fit is not kept (a candidate model not chosen) never
// pays for it. Clones on other goroutines may ask at once (gradMu).
func (f *factor) gradRows() {
	if f.gradDone.Load() {
		return
	}
	f.gradMu.Lock()
	defer f.gradMu.Unlock()
	if f.gradDone.Load() {
		return
	}
	n, p := f.n, f.p
	f.gcol = grow(f.gcol, p*n)
	if f.invSigma != nil {
		floats.MulTo(f.wcol, f.invSigma, f.invSigma)
	}
	for j := range p {
		g := f.gcol[j*n : (j+1)*n]
		if f.invSigma != nil {
			floats.MulTo(g, f.x[j*n:(j+1)*n], f.wcol)
			floats.Scale(f.invD[j], g)
		} else {
			floats.ScaleTo(g, f.invD[j], f.x[j*n:(j+1)*n])
		}
	}
	f.gradDone.Store(true)
}

// diagnostics leaves R^-1 in f.rinv and sets diag((X_s'X_s)^-1) (the
// squared row norms of R^-1) and the leakage of each column.
func (f *factor) diagnostics() {
	p := f.p
	f.rinvRow2 = grow(f.rinvRow2, p)
	f.rinv = grow(f.rinv, p*p)
	triInv(f.rinv, f.r, p, p)
	rowNorms2(f.rinvRow2, f.rinv, p)
	f.leak = grow(f.leak, p)
	for k, j := range f.perm {
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
}

// pseudoInverse sets f.pinv to the p×n matrix P = D^-1 R^-1 Q' W^(1/2)
// in original column order, row-major: the unconstrained (weighted)
// least-squares estimate is b_u = P y, so row j gives coefficient j's
// response to each reading. It needs R^-1 in f.rinv (diagnostics). It is
// made on first use (PseudoInverseRow): a design factored for one sample
// and left unused (a candidate model not chosen) never pays for it.
func (f *factor) pseudoInverse() {
	if f.pinvDone.Load() {
		return
	}
	f.pinvMu.Lock()
	defer f.pinvMu.Unlock()
	if f.pinvDone.Load() {
		return
	}
	n, p := f.n, f.p
	f.pinv = grow(f.pinv, p*n)
	clear(f.pinv)
	for k, j := range f.perm {
		out := f.pinv[j*n : (j+1)*n]
		for m := k; m < p; m++ {
			if v := f.rinv[k*p+m]; v != 0 {
				floats.AddScaled(out, v, f.qtw[m*n:(m+1)*n])
			}
		}
		floats.Scale(f.invD[j], out)
	}
	f.pinvDone.Store(true)
}

// rankError builds the rankError of a numerically rank-deficient design
// from the right singular vectors of R belonging to singular values below
// the rank threshold: the columns with a share of such a null vector.
func (f *factor) rankError() error {
	n, p := f.n, f.p
	var svd mat.SVD
	if !svd.Factorize(mat.NewDense(p, p, slices.Clone(f.r)), mat.SVDThinV) {
		return pkgerr.Errorf("lsq", "singular value decomposition of the design failed: %w", ErrRankDeficient)
	}
	sv := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	in := make([]bool, p)
	for c := range p {
		if sv[c] > RankTol(n, p)*sv[0] {
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
	if sv[p-1] == 0 {
		cond = math.Inf(1)
	}
	return &rankError{Columns: cols, Cond: cond, Rows: n, Cols: p}
}

// init sizes the workspace for f, reusing storage where it can. The
// quantile cache is kept when the number of rows is unchanged.
func (ws *workspace) init(f *factor) {
	p, nn := f.p, f.nn
	ws.z = grow(ws.z, p)
	ws.bs = grow(ws.bs, p)
	ws.g = grow(ws.g, p)
	ws.x = grow(ws.x, nn)
	ws.s = grow(ws.s, nn)
	ws.w = grow(ws.w, nn)
	ws.res = grow(ws.res, nn)
	ws.inP = grow(ws.inP, nn)
	ws.rej = grow(ws.rej, nn)
	ws.pidx = grow(ws.pidx, nn)[:0]
	ws.aidx = grow(ws.aidx, p)[:0]
	ws.m = grow(ws.m, p*p)
	ws.rhs = grow(ws.rhs, p)
	ws.tinv = grow(ws.tinv, p*p)
	ws.d2 = grow(ws.d2, p)
	ws.bu = grow(ws.bu, p)
	ws.e2 = grow(ws.e2, f.n)
	if len(ws.tq) != f.n+1 {
		ws.tq = make([]float64, f.n+1)
	}
}

// Clone returns a Solver sharing the factorisation with fresh workspace.
//
// Clone panics if s has no design (after a failed Reset).
func (s *Solver) Clone() *Solver {
	s.f.shared.Store(true)
	c := &Solver{f: s.f}
	c.ws.init(s.f)
	return c
}

// Cond is the 2-norm condition number of the weighted design with each
// column scaled to unit norm.
func (s *Solver) Cond() float64 { return s.f.cond }

// Leakage is, for each non-negative column k, ||P s_k|| / ||s_k|| with P
// the projector onto the complement of the free columns (1 for free
// columns). Small values mean the free terms can imitate column k.
// Columns are weighted as in the fit. The slice is a fresh copy.
func (s *Solver) Leakage() []float64 { return slices.Clone(s.f.leak) }

// PseudoInverseRow returns row j of the pseudo-inverse P = (W^(1/2) X)^+
// W^(1/2) of the design, whose product with y is the unconstrained
// (weighted) least-squares estimate of coefficient j: the coefficient's
// response to each reading, so that its standard deviation under
// independent noise sigma_i is sqrt(sum (P_ji sigma_i)^2) (a detection
// limit). It is nil unless the Solver was made with
// Options.PseudoInverse. The slice is a view: do not modify it.
func (s *Solver) PseudoInverseRow(j int) []float64 {
	if !s.f.wantPinv {
		return nil
	}
	s.f.pseudoInverse()
	n := s.f.n
	return s.f.pinv[j*n : (j+1)*n : (j+1)*n]
}

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
