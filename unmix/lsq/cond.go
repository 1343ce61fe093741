package lsq

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"huesolve/internal/pkgerr"
)

// Verdict grades a conditioning figure.
type Verdict int

const (
	// Sound: no cause for concern.
	Sound Verdict = iota
	// Warn: the figure is large enough that results must be read with
	// their standard errors, and the design improved if possible.
	Warn
	// Refuse: the design cannot separate the columns usefully; results
	// should not be reported as amounts.
	Refuse
)

// String returns a lower-case name of the verdict.
func (v Verdict) String() string {
	switch v {
	case Sound:
		return "sound"
	case Warn:
		return "warn"
	case Refuse:
		return "refuse"
	}
	return fmt.Sprintf("verdict(%d)", int(v))
}

// Thresholds of the verdicts. The condition number and VIF are those of
// the weighted design with unit-norm columns (see [Solver.Cond],
// [Solver.VIF], [Solver.Leakage]).
const (
	// CondWarn: condition numbers (condition indexes) of a column-scaled
	// design above 30 signal moderate to strong near-dependences
	// (Belsley, Kuh & Welsch, Regression Diagnostics, Wiley 1980; recalled
	// from memory). Two unit columns at condition 30 correlate at 0.998,
	// inflating variances about 250-fold. The project's one warning
	// limit: solve flags a sample's design above it (unmix.CondLimit) and
	// calibrate warns about a concentration design above it.
	CondWarn = 30.0
	// CondRefuse: relative errors in the data can be amplified up to
	// Cond times in the coefficients (first-order perturbation bound);
	// beyond 1e3 an absorbance noise of 0.001 becomes an uncertainty of
	// the order of a whole absorbance unit. The project's one refusal
	// limit (a project choice): calibrate refuses a concentration design
	// above it.
	CondRefuse = 1e3
	// VIFWarn: a variance inflation factor above 10 is the usual rule of
	// thumb for serious collinearity (common practice; Marquardt 1970,
	// recalled from memory).
	VIFWarn = 10.0
	// VIFRefuse: the standard error is inflated more than sqrt(1000),
	// about 32-fold, over that of an orthogonal design (common practice).
	VIFRefuse = 1000.0
	// LeakageWarn: below 0.5 the free (baseline) columns reproduce more
	// than 3/4 of a column's sum of squares (common practice).
	LeakageWarn = 0.5
)

// LeakageRefuse is 1/sqrt(VIFRefuse): a leakage this small alone makes
// the column's VIF against the free block reach VIFRefuse.
var LeakageRefuse = 1 / math.Sqrt(VIFRefuse)

// CondVerdict grades a condition number against CondWarn and CondRefuse.
// NaN and +Inf are refused.
func CondVerdict(c float64) Verdict {
	switch {
	case !(c <= CondRefuse):
		return Refuse
	case c > CondWarn:
		return Warn
	}
	return Sound
}

// VIFVerdict grades a variance inflation factor against VIFWarn and
// VIFRefuse. NaN and +Inf are refused.
func VIFVerdict(v float64) Verdict {
	switch {
	case !(v <= VIFRefuse):
		return Refuse
	case v > VIFWarn:
		return Warn
	}
	return Sound
}

// LeakageVerdict grades a baseline leakage against LeakageWarn and
// LeakageRefuse. NaN is refused.
func LeakageVerdict(l float64) Verdict {
	switch {
	case !(l >= LeakageRefuse):
		return Refuse
	case l < LeakageWarn:
		return Warn
	}
	return Sound
}

// Conditioning gathers the conditioning figures of a Solver's design and
// their verdicts.
type Conditioning struct {
	Cond    float64   // 2-norm condition number of the scaled weighted design
	VIF     []float64 // per column
	Leakage []float64 // per column (1 for free columns)
	Verdict Verdict   // the worst of the verdicts on Cond, each VIF and each Leakage
}

// Conditioning returns the conditioning figures with the worst verdict.
func (s *Solver) Conditioning() Conditioning {
	c := Conditioning{Cond: s.f.cond, VIF: s.VIF(), Leakage: s.Leakage()}
	c.Verdict = CondVerdict(c.Cond)
	for j := range c.VIF {
		c.Verdict = max(c.Verdict, VIFVerdict(c.VIF[j]))
		if s.f.nonneg[j] {
			c.Verdict = max(c.Verdict, LeakageVerdict(c.Leakage[j]))
		}
	}
	return c
}

// Cond2 returns the 2-norm condition number sigma_max / sigma_min of a
// (rows >= columns), without any scaling, computed as the Solver does:
// Householder QR, then the singular values of the triangular factor. It
// returns +Inf for a rank-deficient a and an error wrapping ErrShape or
// ErrNonFinite for a wide or empty a or non-finite entries.
func Cond2(a mat.Matrix) (float64, error) {
	n, p := a.Dims()
	if n == 0 || p == 0 || n < p {
		return 0, pkgerr.Errorf("lsq", "condition number of a %d×%d matrix: %w", n, p, ErrShape)
	}
	data := make([]float64, n*p)
	for i := range n {
		for j := range p {
			v := a.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, pkgerr.Errorf("lsq", "row %d, column %d is %v: %w", i, j, v, ErrNonFinite)
			}
			data[i*p+j] = v
		}
	}
	A := blas64.General{Rows: n, Cols: p, Stride: p, Data: data}
	tau := make([]float64, p)
	work := make([]float64, 1)
	lapack64.Geqrf(A, tau, work, -1)
	lwork := max(int(work[0]), n)
	work = make([]float64, lwork)
	lapack64.Geqrf(A, tau, work, lwork)
	r := mat.NewDense(p, p, nil)
	for i := range p {
		for j := i; j < p; j++ {
			r.Set(i, j, data[i*p+j])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(r, mat.SVDNone) {
		return 0, pkgerr.Errorf("lsq", "singular value decomposition failed: %w", ErrRankDeficient)
	}
	sv := svd.Values(nil)
	if sv[p-1] == 0 {
		return math.Inf(1), nil
	}
	return sv[0] / sv[p-1], nil
}
