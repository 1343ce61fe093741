package lsq

import (
	"math"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"huesolve/internal/pkgerr"
)

// Conditioning limits. The condition number and leakage are those of the
// weighted design with unit-norm columns (see [Solver.Cond],
// [Solver.Leakage]).
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
	// LeakageWarn: below 0.5 the free (baseline) columns reproduce more
	// than 3/4 of a column's sum of squares (common practice).
	LeakageWarn = 0.5
)

// cond2 returns the 2-norm condition number sigma_max / sigma_min of a
// (rows >= columns), without any scaling, computed as the Solver does:
// Householder QR, then the singular values of the triangular factor. It
// returns +Inf for a rank-deficient a and an error wrapping errShape or
// errNonFinite for a wide or empty a or non-finite entries.
func cond2(a mat.Matrix) (float64, error) {
	n, p := a.Dims()
	if n == 0 || p == 0 || n < p {
		return 0, pkgerr.Errorf("lsq", "condition number of a %d×%d matrix: %w", n, p, errShape)
	}
	data := make([]float64, n*p)
	for i := range n {
		for j := range p {
			v := a.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, pkgerr.Errorf("lsq", "row %d, column %d is %v: %w", i, j, v, errNonFinite)
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
