// Package lsq is the numerical core of huesolve: least squares with a mix
// of non-negative and free coefficients (an active-set method after Lawson
// and Hanson), its KKT certificate, standard errors and confidence
// intervals, conditioning, and residual statistics. It knows nothing of
// spectra: rows are observations, columns are regressors.
package lsq

import (
	"errors"

	"gonum.org/v1/gonum/mat"
)

// Status tells how a solve ended.
type Status int

const (
	// Converged: the KKT conditions hold to the stated tolerance.
	Converged Status = iota
	// IterLimit: the iteration cap was reached; the result is the best
	// feasible point found and must not be trusted as optimal.
	IterLimit
)

// Options set up a Solver.
type Options struct {
	// Sigma, if not nil, is the standard deviation of each row's noise;
	// rows are weighted by 1/Sigma^2 and the reduced chi-square is
	// reported against it. Nil means unweighted with unknown noise.
	Sigma []float64
	// ScaleSE scales standard errors by the fitted residual variance
	// even when Sigma is given (the usual choice when Sigma is only
	// known up to a factor).
	ScaleSE bool
	// Tol is the relative tolerance of the active-set tests; 0 means
	// the package default.
	Tol float64
	// MaxIter caps active-set iterations; 0 means the package default,
	// which scales with the number of columns.
	MaxIter int
}

// Result holds one solve. Slices are reused when the same Result is
// passed to Solve again.
type Result struct {
	Coef     []float64 // coefficients, one per column
	SE       []float64 // standard errors (0 for coefficients held at the bound)
	Lo, Hi   []float64 // 95 % confidence interval (Student t on DoF)
	AtBound  []bool    // true where a non-negative coefficient is held at zero
	Residual []float64 // y - X b, recomputed from the original data

	DoF        int     // rows minus coefficients not at the bound
	RSS        float64 // residual sum of squares (unweighted)
	RMS        float64 // sqrt(RSS / rows)
	ChiSqRed   float64 // sum((r/sigma)^2)/DoF when Sigma is known, else NaN
	R2         float64 // 1 - RSS/TSS with TSS about the mean of y
	DW         float64 // Durbin-Watson statistic over row order
	WorstLo    int     // first row of the band with the largest mean squared residual
	WorstHi    int     // last row of that band (inclusive)
	KKT        float64 // relative KKT residual
	Status     Status
	Iterations int
}

// Errors.
var (
	// ErrRankDeficient: two or more columns are (nearly) linearly
	// dependent, so the coefficients are not determined.
	ErrRankDeficient = errors.New("lsq: columns are linearly dependent")
	// ErrNoConvergence: the active-set iteration hit its cap.
	ErrNoConvergence = errors.New("lsq: active-set iteration did not converge")
)

var errTODO = errors.New("lsq: not yet written")

// Solver solves min ||W^(1/2)(y - X b)|| subject to b_j >= 0 for the
// non-negative columns, for many y with one design X. A Solver is not safe
// for concurrent use; Clone gives each worker its own workspace sharing the
// factorisation.
type Solver struct {
	x      *mat.Dense
	nonneg []bool
}

// NewSolver factors the design x (rows x columns) once. nonneg[j] says
// whether coefficient j is constrained to be >= 0.
func NewSolver(x *mat.Dense, nonneg []bool, opt Options) (*Solver, error) {
	return nil, errTODO
}

// Solve fits y and fills dst. It returns ErrNoConvergence (with dst
// holding the best feasible point and Status IterLimit) if the cap is hit.
func (s *Solver) Solve(dst *Result, y []float64) error { return errTODO }

// Clone returns a Solver sharing the factorisation with fresh workspace.
func (s *Solver) Clone() *Solver { return s }

// Cond is the 2-norm condition number of the weighted design with each
// column scaled to unit norm.
func (s *Solver) Cond() float64 { return 0 }

// VIF is the variance inflation factor of each column.
func (s *Solver) VIF() []float64 { return nil }

// Leakage is, for each non-negative column k, ||P s_k|| / ||s_k|| with P
// the projector onto the complement of the free columns (1 for free
// columns). Small values mean the free terms can imitate column k.
func (s *Solver) Leakage() []float64 { return nil }
