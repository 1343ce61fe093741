package unmix

import (
	"huesolve/reference"
	"testing"

	"huesolve/spectrum"
)

// BenchmarkModelSolve solves one 401-point scan against 4 compounds with
// an offset baseline, reusing the Result as the batch runner does.
func BenchmarkModelSolve(b *testing.B) {
	for _, c := range []struct {
		name  string
		opt   Options
		conc  []float64
		clean bool // no shift in the mixtures
		cov   bool // the set records the absorptivities' covariance
		perWL bool // one covariance matrix per wavelength (a set with a noise model)
	}{
		{"plain", Options{}, []float64{5, 3, 2, 8}, false, false, false},
		{"saturated", Options{}, []float64{5, 3, 2, 32}, false, false, false},
		{"weighted", Options{Weighted: true}, []float64{5, 3, 2, 8}, false, false, false},
		{"shift", Options{Shift: true}, []float64{5, 3, 2, 8}, false, false, false},
		{"auto", Options{Auto: true}, []float64{5, 3, 2, 8}, false, false, false},
		{"plain-unshifted", Options{}, []float64{5, 3, 2, 8}, true, false, false},
		{"auto-unshifted", Options{Auto: true}, []float64{5, 3, 2, 8}, true, false, false},
		{"plain-cov", Options{}, []float64{5, 3, 2, 8}, false, true, false},
		{"weighted-cov", Options{Weighted: true}, []float64{5, 3, 2, 8}, false, true, false},
		{"auto-unshifted-cov", Options{Auto: true}, []float64{5, 3, 2, 8}, true, true, false},
		{"plain-cov-perwl", Options{}, []float64{5, 3, 2, 8}, false, true, true},
		{"auto-unshifted-cov-perwl", Options{Auto: true}, []float64{5, 3, 2, 8}, true, true, true},
		// The command's default with --weighted and with --shift on
		// samples with no shift (as the benchmark's wide table).
		{"auto-weighted-unshifted", Options{Auto: true, Weighted: true}, []float64{5, 3, 2, 8}, true, false, false},
		{"auto-shift-unshifted", Options{Auto: true, Shift: true}, []float64{5, 3, 2, 8}, true, false, false},
		// --weighted with a set that records the covariance (as
		// calibrate writes it): the leverage of the chosen fit only.
		{"auto-weighted-unshifted-cov", Options{Auto: true, Weighted: true}, []float64{5, 3, 2, 8}, true, true, false},
	} {
		b.Run(c.name, func(b *testing.B) {
			set := testSet(4)
			if c.cov {
				set.AbsorptivityCov = benchCov(len(set.Grid))
				if c.perWL {
					perWL(set.AbsorptivityCov)
				}
			}
			m := mustModel(b, set, c.opt)
			ss := make([]*spectrum.Spectrum, 64)
			for i := range ss {
				shift := 0.5
				if c.clean {
					shift = 0
				}
				ss[i] = mixture{conc: c.conc, offset: 0.01, shift: shift, noise: testNoise, seed: uint64(i)}.spectrum()
			}
			var r Result
			i := 0
			b.ReportAllocs()
			for b.Loop() {
				if err := m.SolveTo(&r, ss[i%len(ss)], Factors{}); err != nil {
					b.Fatal(err)
				}
				i++
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1e3, "µs/scan")
		})
	}
}

// benchCov is an invented absorptivity covariance for a 4-compound set
// on n grid points: two matrices, as a ceiling that leaves readings out
// makes.
// perWL gives c one matrix per wavelength, as calibrate records it for a
// set with a noise model (the sandwich form).
func perWL(c *reference.AbsorptivityCov) {
	var u [][]float64
	for j, i := range c.Index {
		m := append([]float64(nil), c.Unscaled[i]...)
		for k := range m {
			m[k] *= 1 + float64(j)/float64(len(c.Index))
		}
		c.Index[j] = len(u)
		u = append(u, m)
	}
	c.Unscaled, c.Growth = u, true
}

func benchCov(n int) *reference.AbsorptivityCov {
	c := &reference.AbsorptivityCov{
		Unscaled: [][]float64{
			{0.01, -0.001, 0, 0, 0.01, -0.001, 0, 0.01, -0.001, 0.01},
			{0.02, -0.002, 0, 0, 0.02, -0.002, 0, 0.02, -0.002, 0.02},
		},
		Index: make([]int, n),
	}
	for i := n / 2; i < n; i++ {
		c.Index[i] = 1
	}
	return c
}
