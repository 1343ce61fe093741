package lsq

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// benchDesign is a synthetic spectral design (invented data): n rows, four
// overlapping Gaussian bands (non-negative) and an offset and a slope
// (free), with nSpectra mixtures plus noise of SD 1e-3, a quarter of them
// lacking one component.
func benchDesign(n, nSpectra int) (*mat.Dense, []bool, [][]float64, []float64) {
	rng := rand.New(rand.NewPCG(1, 1))
	x := mat.NewDense(n, 6, nil)
	centres := []float64{0.3, 0.45, 0.55, 0.7}
	widths := []float64{0.08, 0.1, 0.07, 0.12}
	for i := range n {
		l := float64(i) / float64(n-1)
		for k := range 4 {
			x.Set(i, k, math.Exp(-0.5*math.Pow((l-centres[k])/widths[k], 2)))
		}
		x.Set(i, 4, 1)
		x.Set(i, 5, l-0.5)
	}
	ys := make([][]float64, nSpectra)
	for s := range ys {
		b := []float64{rng.Float64(), rng.Float64(), rng.Float64(), rng.Float64(), 0.02 * rng.NormFloat64(), 0.02 * rng.NormFloat64()}
		if s%4 == 0 {
			b[s/4%4] = 0
		}
		y := make([]float64, n)
		for i := range n {
			for j, bj := range b {
				y[i] += x.At(i, j) * bj
			}
			y[i] += 1e-3 * rng.NormFloat64()
		}
		ys[s] = y
	}
	sigma := make([]float64, n)
	for i := range sigma {
		sigma[i] = 1e-3 * (1 + 0.5*math.Sin(float64(i)/20))
	}
	return x, []bool{true, true, true, true, false, false}, ys, sigma
}

// BenchmarkSolve: fixed design (factor once), 401 rows, 4 non-negative +
// 2 free columns; each op is one spectrum including residual, KKT,
// diagnostics and standard errors.
func BenchmarkSolve(b *testing.B) {
	for _, weighted := range []bool{false, true} {
		name := "unweighted"
		if weighted {
			name = "weighted"
		}
		b.Run("n=401/p=6/"+name, func(b *testing.B) {
			x, nonneg, ys, sigma := benchDesign(401, 256)
			opt := Options{}
			if weighted {
				opt.Sigma = sigma
			}
			s, err := NewSolver(x, nonneg, opt)
			if err != nil {
				b.Fatal(err)
			}
			var res Result
			if err := s.Solve(&res, ys[0]); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				if err := s.Solve(&res, ys[i%len(ys)]); err != nil {
					b.Fatal(err)
				}
				i++
			}
			b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "spectra/s")
		})
	}
}

// BenchmarkSolveAccurate: the accurate path, a new factorisation for each
// spectrum (as needed when the weights change from spectrum to spectrum),
// with a new Solver each time or with Reset reusing one.
func BenchmarkSolveAccurate(b *testing.B) {
	x, nonneg, ys, sigma := benchDesign(401, 256)
	// Per-spectrum weights: the noise level scaled differently each time.
	sigmas := make([][]float64, 16)
	for k := range sigmas {
		sigmas[k] = make([]float64, len(sigma))
		for i, v := range sigma {
			sigmas[k][i] = v * (1 + 0.1*float64(k)*float64(i)/float64(len(sigma)))
		}
	}
	b.Run("n=401/p=6/NewSolver", func(b *testing.B) {
		var res Result
		b.ReportAllocs()
		i := 0
		for b.Loop() {
			s, err := NewSolver(x, nonneg, Options{Sigma: sigmas[i%len(sigmas)]})
			if err != nil {
				b.Fatal(err)
			}
			if err := s.Solve(&res, ys[i%len(ys)]); err != nil {
				b.Fatal(err)
			}
			i++
		}
		b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "spectra/s")
	})
	b.Run("n=401/p=6/Reset", func(b *testing.B) {
		var res Result
		s := &Solver{}
		b.ReportAllocs()
		i := 0
		for b.Loop() {
			if err := s.Reset(x, nonneg, Options{Sigma: sigmas[i%len(sigmas)]}); err != nil {
				b.Fatal(err)
			}
			if err := s.Solve(&res, ys[i%len(ys)]); err != nil {
				b.Fatal(err)
			}
			i++
		}
		b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "spectra/s")
	})
}
