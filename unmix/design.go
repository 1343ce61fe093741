package unmix

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"

	"huesolve/unmix/lsq"
)

// rankTol bounds the smallest diagonal element of R, relative to the
// largest, below which the design's columns count as linearly dependent
// (a few hundred times the float64 epsilon, so that only columns equal to
// rounding are caught; milder collinearity is reported by the condition
// number and FlagIllCond instead).
const rankTol = 1e-13

// design is the fit for one set of rows (a mask): the solver, the
// pseudo-inverse used for detection limits, the unconstrained estimate and
// the shift step, and the conditioning figures.
type design struct {
	rows   []int // window rows used, increasing
	x      *mat.Dense
	solver *lsq.Solver
	// pinv is the p x n pseudo-inverse of the design (whitened by sigma
	// when the fit is weighted), row-major: pinv[k*n+i].
	pinv []float64
	cond float64
	leak []float64
}

// errRank reports linearly dependent columns.
var errRank = errors.New("the design's columns are linearly dependent")

// buildDesign sets up the fit on the given window rows. sigma, if not nil,
// is the noise of each of these rows and the fit is weighted by 1/sigma^2.
func (sh *shared) buildDesign(rows []int, sigma []float64) (*design, error) {
	n, p := len(rows), len(sh.cols)
	if n < p+minDoF {
		return nil, fmt.Errorf("%d usable points for %d coefficients", n, p)
	}
	x := mat.NewDense(n, p, nil)
	raw := x.RawMatrix()
	for i, r := range rows {
		row := raw.Data[i*raw.Stride : i*raw.Stride+p]
		for j, c := range sh.cols {
			row[j] = c[r]
		}
	}
	opt := lsq.Options{}
	if sigma != nil {
		opt.Sigma = sigma
	}
	solver, err := lsq.NewSolver(x, sh.nonneg, opt)
	if err != nil {
		if errors.Is(err, lsq.ErrRankDeficient) {
			return nil, fmt.Errorf("%w (%s)", errRank, err)
		}
		return nil, err
	}
	d := &design{rows: rows, x: x, solver: solver}
	var xw *mat.Dense = x
	if sigma != nil {
		xw = mat.NewDense(n, p, nil)
		wr := xw.RawMatrix()
		for i := range n {
			for j := range p {
				wr.Data[i*wr.Stride+j] = raw.Data[i*raw.Stride+j] / sigma[i]
			}
		}
	}
	if d.pinv, err = pseudoInverse(xw); err != nil {
		return nil, err
	}
	d.cond = solver.Cond()
	d.leak = solver.Leakage()
	return d, nil
}

// pseudoInverse returns the p x n pseudo-inverse of the full-column-rank
// n x p matrix x, row-major, as R^-1 Q' from a thin Householder QR
// (never through x'x).
func pseudoInverse(x *mat.Dense) ([]float64, error) {
	n, p := x.Dims()
	a := mat.DenseCopyOf(x).RawMatrix()
	tau := make([]float64, p)
	work := make([]float64, 1)
	lapack64.Geqrf(a, tau, work, -1)
	lw := max(int(work[0]), n)
	lapack64.Orgqr(a, tau, work, -1)
	lw = max(lw, int(work[0]))
	work = make([]float64, lw)
	lapack64.Geqrf(a, tau, work, lw)

	r := blas64.Triangular{Uplo: blas.Upper, Diag: blas.NonUnit, N: p, Stride: p, Data: make([]float64, p*p)}
	dmax := 0.0
	for i := range p {
		for j := i; j < p; j++ {
			r.Data[i*p+j] = a.Data[i*a.Stride+j]
		}
		dmax = math.Max(dmax, math.Abs(r.Data[i*p+i]))
	}
	for i := range p {
		if !(math.Abs(r.Data[i*p+i]) > rankTol*dmax) {
			return nil, errRank
		}
	}
	if !lapack64.Trtri(r) {
		return nil, errRank
	}
	lapack64.Orgqr(a, tau, work, lw) // a now holds the thin Q (n x p)
	pinv := make([]float64, p*n)
	for k := range p {
		out := pinv[k*n : (k+1)*n]
		for j := k; j < p; j++ {
			rk := r.Data[k*p+j]
			if rk == 0 {
				continue
			}
			for i := range n {
				out[i] += rk * a.Data[i*a.Stride+j]
			}
		}
	}
	return pinv, nil
}
