package lsq

import (
	"fmt"
	"strconv"
	"strings"

	"huesolve/internal/pkgerr"
)

// Status tells how a solve ended.
type Status int

const (
	// Converged: the KKT conditions hold to the stated tolerance.
	Converged Status = iota
	// IterLimit: the iteration cap was reached; the result is the best
	// feasible point found and must not be trusted as optimal.
	IterLimit
	// Inaccurate: the active-set iteration finished, but the KKT residual
	// recomputed from the original data exceeds [KKTTol], so the answer
	// cannot be certified (the design is too ill-conditioned for the data,
	// or the data are extreme). The result is feasible but must not be
	// trusted as optimal.
	Inaccurate
)

// String returns a lower-case name of the status.
func (s Status) String() string {
	switch s {
	case Converged:
		return "converged"
	case IterLimit:
		return "iteration limit"
	case Inaccurate:
		return "inaccurate"
	}
	return "status(" + strconv.Itoa(int(s)) + ")"
}

// Options set up a Solver.
type Options struct {
	// Sigma, if not nil, is the standard deviation of each row's noise;
	// rows are weighted by 1/Sigma^2 and the reduced chi-square is
	// reported against it. Nil means unweighted with unknown noise.
	// Every entry must be positive and finite.
	//
	// Weights are part of the factorisation: weights that change from one
	// y to the next need a new Solver for each y, which costs a QR
	// factorisation, O(n p^2) flops for n rows and p columns, plus an SVD
	// of the p×p triangular factor, instead of the O(n p) of a solve with
	// a fixed design.
	Sigma []float64
	// scaleSE scales standard errors by the fitted residual variance
	// even when Sigma is given (the usual choice when Sigma is only
	// known up to a factor).
	scaleSE bool
	// tol is the relative tolerance of the active-set tests; 0 means
	// the package default [defaultTol].
	tol float64
	// maxIter caps active-set iterations; 0 means the package default,
	// which scales with the number of columns ([iterPerColumn] per column).
	maxIter int
	// PseudoInverse keeps the pseudo-inverse of the design for
	// [Solver.PseudoInverseRow] (p n numbers, O(n p^2) flops at set-up).
	PseudoInverse bool
}

// Result holds one solve. Slices are reused when the same Result is
// passed to Solve again.
//
// Statistics that are not defined for a fit are NaN, as documented per
// field; callers must check them with math.IsNaN before printing.
type Result struct {
	Coef     []float64 // coefficients, one per column
	SE       []float64 // standard errors (0 for coefficients held at the bound; NaN if DoF == 0 and the noise is estimated)
	lo, hi   []float64 // 95 % confidence interval (Student t on DoF; normal quantile when Sigma is known and scaleSE is false); lo = hi = 0 at the bound
	AtBound  []bool    // true where a non-negative coefficient is held at zero
	Residual []float64 // y - X b, recomputed from the original data

	DoF        int     // rows minus coefficients not at the bound
	RSS        float64 // residual sum of squares (unweighted)
	RMS        float64 // sqrt(RSS / rows)
	chiSqRed   float64 // sum((r/sigma)^2)/DoF when Sigma is known, else NaN (NaN also when DoF == 0)
	R2         float64 // 1 - RSS/TSS with TSS about the mean of y (NaN if y is constant)
	DW         float64 // Durbin-Watson statistic of the weighted residual r/sigma over row order (NaN if the residual is zero)
	worstLo    int     // first row of the band with the largest mean squared (weighted) residual
	worstHi    int     // last row of that band (inclusive); see [bandWidth]
	KKT        float64 // relative KKT residual
	Status     Status
	iterations int

	// wrss is the weighted residual sum of squares sum((r/sigma)^2)
	// (equal to RSS when Sigma is nil).
	wrss float64
	// scale is the residual variance s^2 the standard errors were scaled
	// by: wrss/DoF, or 1 when Sigma is known and scaleSE is false.
	scale float64

	// Unconstrained holds the ordinary (weighted) least-squares
	// coefficients with every constraint dropped, and unconstrainedSE
	// their standard errors (s^2 from that fit's residual on n - p
	// degrees of freedom, or 1 when Sigma is known and scaleSE is false;
	// NaN when n == p and the noise is estimated). For a coefficient held
	// at zero they say how far below zero the data would put it. They
	// equal Coef and SE when nothing is at the bound.
	Unconstrained, unconstrainedSE []float64

	// What Finish needs from SolveCoef: z = Q' W^(1/2) y and the scaled
	// coefficients in factor order, whether the iteration cap was hit,
	// and whether the Result still waits for Finish.
	z, bs   []float64
	capped  bool
	partial bool
}

// Errors.
var (
	// ErrRankDeficient: two or more columns are (nearly) linearly
	// dependent, so the coefficients are not determined. NewSolver returns
	// it wrapped in a *rankError that names the columns.
	ErrRankDeficient = pkgerr.New("lsq", "columns are linearly dependent")
	// ErrNoConvergence: the active-set iteration hit its cap.
	ErrNoConvergence = pkgerr.New("lsq", "active-set iteration did not converge")
	// ErrInaccurate: the KKT residual recomputed from the original data
	// exceeds KKTTol (Status Inaccurate).
	ErrInaccurate = pkgerr.New("lsq", "KKT certificate failed")
	// errNonFinite: an input holds NaN or an infinity.
	errNonFinite = pkgerr.New("lsq", "non-finite value")
	// errShape: slice or matrix sizes do not agree, or the design is empty.
	errShape = pkgerr.New("lsq", "sizes do not agree")
)

// rankError reports a design whose columns are (nearly) linearly
// dependent. It unwraps to ErrRankDeficient.
type rankError struct {
	// Columns are the (0-based) indices of the columns taking part in the
	// dependence, in increasing order.
	Columns []int
	// Cond is the 2-norm condition number of the column-scaled, weighted
	// design (+Inf for a zero column or fewer rows than columns).
	Cond float64
	// Rows and Cols are the design's size.
	Rows, Cols int
}

func (e *rankError) Error() string { return "lsq: " + e.Unprefixed() }

// Unprefixed is the error's text without the package prefix.
func (e *rankError) Unprefixed() string {
	var b strings.Builder
	switch {
	case e.Rows < e.Cols:
		fmt.Fprintf(&b, "%d rows cannot determine %d coefficients", e.Rows, e.Cols)
	case len(e.Columns) == 1:
		fmt.Fprintf(&b, "column %d is zero", e.Columns[0])
	default:
		b.WriteString("columns ")
		for i, c := range e.Columns {
			if i > 0 {
				b.WriteString(", ")
			}
			b.WriteString(strconv.Itoa(c))
		}
		fmt.Fprintf(&b, " are linearly dependent (condition number %.3g of the column-scaled design)", e.Cond)
	}
	return b.String()
}

// Unwrap returns ErrRankDeficient.
func (e *rankError) Unwrap() error { return ErrRankDeficient }
