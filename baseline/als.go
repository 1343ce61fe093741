package baseline

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// alsMaxIter caps the reweighting iterations of asymmetric least squares.
// The weights take only the values P and 1-P, so the iteration stops
// exactly when they repeat; on smooth backgrounds this takes about 5 to 20
// iterations (measured in the tests), and the cap leaves ample room.
const alsMaxIter = 100

// alsTieTol is the margin, relative to max |y|, by which a point must lie
// above the background estimate to get the small weight p. It bounds the
// rounding error of the banded solve, so that points the background passes
// through (a straight stretch, or y = z exactly) do not flip their weight
// on rounding alone and keep the iteration from settling.
const alsTieTol = 1e-9

// ALSBaseline estimates a smooth background z under y by asymmetric least
// squares (P. H. C. Eilers & H. F. M. Boelens, "Baseline correction with
// asymmetric least squares smoothing", 2005): it minimises
//
//	Σ w_i (y_i - z_i)² + lambda Σ (z_i - 2z_(i+1) + z_(i+2))²
//
// with w_i = p where y_i > z_i (by more than a rounding margin) and 1-p
// elsewhere, starting from w = 1 and
// solving the pentadiagonal system (W + lambda D'D) z = W y by a banded
// Cholesky factorisation until the weights no longer change (at most
// alsMaxIter times). The differences run over the point index, so y
// should be on an even grid, or lambda read as per point.
//
// The background is written to dst (allocated if nil or of the wrong
// length) and returned with the number of iterations. Errors: lambda not
// positive and finite or p outside (0, 1) wrap [ErrStep]; fewer than 3
// points or a non-finite y wrap [ErrData]; a system too ill-conditioned
// to solve (lambda far too large for the number of points) wraps
// [ErrData]; weights still changing at the cap wrap [ErrNoConvergence]
// and dst then holds the last estimate.
func ALSBaseline(dst, y []float64, lambda, p float64) ([]float64, int, error) {
	if err := (Step{Kind: KindALS, Lambda: lambda, P: p}).Check(); err != nil {
		return nil, 0, err
	}
	if len(y) < 3 {
		return nil, 0, fmt.Errorf("%w: asymmetric least squares needs at least 3 points, have %d", ErrData, len(y))
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
	a := mat.NewSymBandDense(n, 2, band)
	rhs := mat.NewVecDense(n, nil)
	z := mat.NewVecDense(n, dst)
	var chol mat.BandCholesky
	tie := alsTieTol * math.Max(floats.Max(y), -floats.Min(y))
	for it := 1; it <= alsMaxIter; it++ {
		copy(band, penalty)
		for i := range n {
			band[3*i] += w[i]
			rhs.SetVec(i, w[i]*y[i])
		}
		if !chol.Factorize(a) {
			return nil, it, fmt.Errorf("%w: asymmetric least squares system is not positive definite (lambda %g too large?)", ErrData, lambda)
		}
		if err := chol.SolveVecTo(z, rhs); err != nil {
			var c mat.Condition
			if errors.As(err, &c) {
				return nil, it, fmt.Errorf("%w: asymmetric least squares system is ill-conditioned (condition %.3g; lower lambda %g)", ErrData, float64(c), lambda)
			}
			return nil, it, fmt.Errorf("baseline: asymmetric least squares: %w", err)
		}
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
			return dst, it, nil
		}
	}
	return dst, alsMaxIter, fmt.Errorf("%w: weights still changing after %d iterations (lambda %g, p %g)", ErrNoConvergence, alsMaxIter, lambda, p)
}

// alsSubtract returns y minus its ALS background.
func alsSubtract(wl, y []float64, lambda, p float64) ([]float64, error) {
	if err := checkMonotonic(wl); err != nil {
		return nil, err
	}
	z, _, err := ALSBaseline(nil, y, lambda, p)
	if err != nil {
		return nil, err
	}
	for i := range z {
		z[i] = y[i] - z[i]
	}
	return z, nil
}
