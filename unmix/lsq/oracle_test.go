package lsq

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// oracleRSS solves the mixed problem by enumerating every passive set of
// the non-negative columns (free columns always passive), solving each
// unconstrained least-squares problem by QR (gonum mat.QR) and keeping the
// feasible one with the least residual sum of squares.
func oracleRSS(x *mat.Dense, nonneg []bool, y []float64) (best float64, coef []float64) {
	n, p := x.Dims()
	var nn []int
	for j, c := range nonneg {
		if c {
			nn = append(nn, j)
		}
	}
	best = math.Inf(1)
	yv := mat.NewVecDense(n, y)
	for mask := 0; mask < 1<<len(nn); mask++ {
		var cols []int
		in := make([]bool, p)
		for j := range p {
			if !nonneg[j] {
				in[j] = true
			}
		}
		for b, j := range nn {
			if mask&(1<<b) != 0 {
				in[j] = true
			}
		}
		for j := range p {
			if in[j] {
				cols = append(cols, j)
			}
		}
		b := make([]float64, p)
		if len(cols) > 0 {
			sub := mat.NewDense(n, len(cols), nil)
			for c, j := range cols {
				for i := range n {
					sub.Set(i, c, x.At(i, j))
				}
			}
			var qr mat.QR
			qr.Factorize(sub)
			var sol mat.VecDense
			if err := qr.SolveVecTo(&sol, false, yv); err != nil {
				continue
			}
			feasible := true
			for c, j := range cols {
				b[j] = sol.AtVec(c)
				if nonneg[j] && b[j] < 0 {
					feasible = false
				}
			}
			if !feasible {
				continue
			}
		}
		var rss float64
		for i := range n {
			r := y[i]
			for j := range p {
				r -= x.At(i, j) * b[j]
			}
			rss += r * r
		}
		if rss < best {
			best, coef = rss, b
		}
	}
	return best, coef
}

// randomProblem makes a design with 1..maxP columns, a random mix of free
// and non-negative columns, some near-duplicate, some with offsets, and a
// y from coefficients of both signs plus noise.
func randomProblem(rng *rand.Rand, maxP int) (*mat.Dense, []bool, []float64) {
	p := 1 + rng.IntN(maxP)
	n := p + rng.IntN(30)
	x := mat.NewDense(n, p, nil)
	nonneg := make([]bool, p)
	for j := range p {
		nonneg[j] = rng.Float64() < 0.7
		kind := rng.IntN(4)
		for i := range n {
			var v float64
			switch kind {
			case 0: // plain Gaussian
				v = rng.NormFloat64()
			case 1: // positive band with offset
				c := float64(rng.IntN(n))
				v = 0.1 + math.Exp(-0.5*math.Pow((float64(i)-c)/(2+float64(n)/6), 2))
			case 2: // near-duplicate of column 0 (relative perturbation 1e-3)
				if j > 0 {
					v = x.At(i, 0) * (1 + 1e-3*rng.NormFloat64())
				} else {
					v = rng.NormFloat64()
				}
			case 3: // scaled by a unit factor
				v = 1e4 * rng.Float64()
			}
			x.Set(i, j, v)
		}
	}
	y := make([]float64, n)
	for i := range n {
		for j := range p {
			y[i] += x.At(i, j) * rng.NormFloat64()
		}
		y[i] += 0.1 * rng.NormFloat64()
	}
	return x, nonneg, y
}

// TestOracle compares the solver with brute-force enumeration of passive
// sets on thousands of random mixed problems of up to 10 columns: the
// residual sums of squares must agree to 1e-10 relative (source: the
// definition of the problem; the oracle uses gonum's QR least squares).
func TestOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	const trials = 3000
	const relTol = 1e-10 // bounds | ||r|| - ||r_oracle|| | / max(||r_oracle||, 1e-4 (||y|| + sum |b_j| ||x_j||))
	checked, refused := 0, 0
	var maxKKT float64
	var res Result
	for trial := range trials {
		x, nonneg, y := randomProblem(rng, 10)
		s, err := NewSolver(x, nonneg, Options{})
		if errors.Is(err, ErrRankDeficient) {
			t.Logf("trial %d: %v", trial, err)
			refused++
			continue
		}
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		if err := s.Solve(&res, y); err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		want, wcoef := oracleRSS(x, nonneg, y)
		got := floats.Dot(res.Residual, res.Residual)
		if math.Abs(got-res.RSS) > 1e-12*got {
			t.Fatalf("trial %d: RSS field %g, residual %g", trial, res.RSS, got)
		}
		// The floor scales with the terms that cancel in y - X b.
		floor := floats.Norm(y, 2)
		for j := range len(nonneg) {
			floor += math.Abs(wcoef[j]) * mat.Norm(x.ColView(j), 2)
		}
		floor *= 1e-4
		if d := math.Abs(math.Sqrt(got)-math.Sqrt(want)) / math.Max(math.Sqrt(want), floor); d > relTol {
			t.Errorf("trial %d (%d×%d): ||r|| = %.15g, oracle %.15g (rel %.2g); coef %v, oracle %v",
				trial, len(y), len(nonneg), math.Sqrt(got), math.Sqrt(want), d, res.Coef, wcoef)
		}
		for j, c := range nonneg {
			if c && res.Coef[j] < 0 {
				t.Errorf("trial %d: coefficient %d = %g < 0", trial, j, res.Coef[j])
			}
			if c && res.AtBound[j] != (res.Coef[j] == 0) {
				t.Errorf("trial %d: AtBound[%d] = %v with coefficient %g", trial, j, res.AtBound[j], res.Coef[j])
			}
		}
		maxKKT = math.Max(maxKKT, res.KKT)
		if res.KKT > KKTTol || res.Status != Converged {
			t.Errorf("trial %d: status %v KKT %g", trial, res.Status, res.KKT)
		}
		checked++
	}
	t.Logf("%d problems checked, %d refused as rank deficient; largest relative KKT residual %.2g", checked, refused, maxKKT)
	if checked < trials*9/10 {
		t.Errorf("only %d of %d problems checked", checked, trials)
	}
}
