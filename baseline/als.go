package baseline

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// alsMaxIter caps the reweighting iterations of asymmetric least squares.
// The weights take only the values P and 1-P, so the iteration stops
// exactly when they repeat; on the test spectra this takes 4 to 10
// iterations, and the cap leaves ample room.
const alsMaxIter = 100

// alsTieTol is the margin, relative to max |y|, by which a point must lie
// above the background estimate to get the small weight p. It bounds the
// rounding error of the banded solve, so that points the background passes
// through (a straight stretch, or y = z exactly) do not flip their weight
// on rounding alone and keep the iteration from settling.
const alsTieTol = 1e-9

// alsCondLimit bounds the estimated condition number of W + lambda D'D.
// The worst-case rounding bound, condition times machine epsilon, would
// be 1e-2 there, but the error lies mostly along smooth directions and
// measured differences between this solver and SciPy's sparse LU on the
// synthetic test spectrum stay far smaller: 1e-8 relative at condition
// 8e10, 1e-5 at 8e12, 3e-4 at 2.4e14. So the limit keeps the background's
// relative rounding error near 1e-4. The condition grows about as
// 10 lambda/p on that spectrum (500 points), so lambda up to about 1e10
// passes at p 0.001.
const alsCondLimit = 1e14

// alsInvIter is the number of inverse-iteration passes of the condition
// estimate; the constant start vector is near the dominant direction of
// the inverse, so a few passes settle the estimate to a few per cent.
const alsInvIter = 6

// alsBackground estimates a smooth background z under y by asymmetric least
// squares (P. H. C. Eilers & H. F. M. Boelens, "Baseline correction with
// asymmetric least squares smoothing", 2005): it minimises
//
//	Σ w_i (y_i - z_i)² + lambda Σ (z_i - 2z_(i+1) + z_(i+2))²
//
// with w_i = p where y_i > z_i (by more than a rounding margin) and 1-p
// elsewhere, starting from w = 1 and solving the pentadiagonal system
// (W + lambda D'D) z = W y by a banded Cholesky factorisation (LAPACK
// dpbtrf/dpbtrs through gonum's lapack64, O(n) per pass; mat.BandCholesky
// would add a condition estimate of O(n²)) until the weights no longer
// change (at most 100 passes). The condition number is then estimated by
// inverse iteration. The differences run over the point index, so y
// should be on an even grid, or lambda read as per point.
//
// The background is written to dst (allocated if nil or of the wrong
// length) and returned with the number of iterations. Errors: lambda not
// positive and finite or p outside (0, 1) wrap errStep; fewer than 3
// points or a non-finite y wrap errData; a system too ill-conditioned
// to solve (lambda far too large for the number of points) wraps
// errData; weights still changing at the cap wrap errNoConvergence
// and dst then holds the last estimate.
func alsBackground(dst, y []float64, lambda, p float64) ([]float64, int, error) {
	return alsBaseline(dst, y, lambda, p, alsMaxIter)
}

// alsBaseline is alsBackground with the iteration cap as a parameter.
func alsBaseline(dst, y []float64, lambda, p float64, maxIter int) ([]float64, int, error) {
	if err := (Step{Kind: kindALS, Lambda: lambda, P: p}).check(); err != nil {
		return nil, 0, err
	}
	if len(y) < 3 {
		return nil, 0, fmt.Errorf("%w: asymmetric least squares needs at least 3 points, have %d", errData, len(y))
	}
	if err := checkData(y, y); err != nil {
		return nil, 0, err
	}
	if len(dst) != len(y) {
		dst = make([]float64, len(y))
	}
	n := len(y)
	// penalty holds lambda D'D in upper band storage, 3 values per row:
	// the diagonal and the first and second superdiagonals.
	penalty := make([]float64, 3*n)
	d := [3]float64{1, -2, 1}
	for r := 0; r+2 < n; r++ {
		for a := 0; a < 3; a++ {
			for b := a; b < 3; b++ {
				penalty[3*(r+a)+(b-a)] += lambda * d[a] * d[b]
			}
		}
	}
	w := make([]float64, n)
	for i := range w {
		w[i] = 1
	}
	band := make([]float64, 3*n)
	a := blas64.SymmetricBand{Uplo: blas.Upper, N: n, K: 2, Stride: 3, Data: band}
	z := blas64.General{Rows: n, Cols: 1, Stride: 1, Data: dst}
	tie := alsTieTol * math.Max(floats.Max(y), -floats.Min(y))
	var factor blas64.TriangularBand
	var anorm float64
	it, converged := 1, false
	for ; ; it++ {
		copy(band, penalty)
		for i := range n {
			band[3*i] += w[i]
			dst[i] = w[i] * y[i]
		}
		anorm = bandNorm(band, n)
		var ok bool
		if factor, ok = lapack64.Pbtrf(a); !ok {
			return nil, it, fmt.Errorf("%w: asymmetric least squares system is not positive definite (lambda %g too large?)", errData, lambda)
		}
		lapack64.Pbtrs(factor, z)
		changed := false
		for i := range n {
			nw := 1 - p
			if y[i] > dst[i]+tie {
				nw = p
			}
			if nw != w[i] {
				w[i] = nw
				changed = true
			}
		}
		if !changed {
			converged = true
			break
		}
		if it == maxIter {
			break
		}
	}
	if c := anorm * invNormEstimate(factor); c > alsCondLimit {
		return nil, it, fmt.Errorf("%w: asymmetric least squares system is ill-conditioned (condition about %.2g; lower lambda %g)", errData, c, lambda)
	}
	if !converged {
		// The weights changed on the last pass: no fixed point.
		return dst, it, fmt.Errorf("%w: weights still changing after %d iterations (lambda %g, p %g)", errNoConvergence, maxIter, lambda, p)
	}
	return dst, it, nil
}

// bandNorm is the 1-norm (largest absolute column sum) of the symmetric
// pentadiagonal matrix held in upper band storage with 3 values per row.
func bandNorm(band []float64, n int) float64 {
	var worst float64
	for j := range n {
		var s float64
		for k := 0; k <= 2; k++ {
			if j-k >= 0 {
				s += math.Abs(band[3*(j-k)+k]) // above the diagonal, column j
			}
			if k > 0 && j+k < n {
				s += math.Abs(band[3*j+k]) // below the diagonal, by symmetry
			}
		}
		worst = math.Max(worst, s)
	}
	return worst
}

// invNormEstimate estimates ||A^-1||_2 for the factored symmetric positive
// definite A by inverse iteration from a constant vector, which lies close
// to the smoothest (least penalised, so least damped) direction. It
// underestimates at worst; alsInvIter passes of O(n) work each.
func invNormEstimate(factor blas64.TriangularBand) float64 {
	n := factor.N
	v := make([]float64, n)
	for i := range v {
		v[i] = 1 / math.Sqrt(float64(n))
	}
	g := blas64.General{Rows: n, Cols: 1, Stride: 1, Data: v}
	var est float64
	for range alsInvIter {
		lapack64.Pbtrs(factor, g)
		est = floats.Norm(v, 2)
		floats.Scale(1/est, v)
	}
	return est
}

// alsSubtract returns y minus its ALS background.
func alsSubtract(wl, y []float64, lambda, p float64) ([]float64, error) {
	if err := checkMonotonic(wl); err != nil {
		return nil, err
	}
	z, _, err := alsBackground(nil, y, lambda, p)
	if err != nil {
		return nil, err
	}
	for i := range z {
		z[i] = y[i] - z[i]
	}
	return z, nil
}
