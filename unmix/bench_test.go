package unmix

import (
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
	}{
		{"plain", Options{}, []float64{5, 3, 2, 8}, false},
		{"saturated", Options{}, []float64{5, 3, 2, 32}, false},
		{"weighted", Options{Weighted: true}, []float64{5, 3, 2, 8}, false},
		{"shift", Options{Shift: true}, []float64{5, 3, 2, 8}, false},
		{"auto", Options{Auto: true}, []float64{5, 3, 2, 8}, false},
		{"plain-unshifted", Options{}, []float64{5, 3, 2, 8}, true},
		{"auto-unshifted", Options{Auto: true}, []float64{5, 3, 2, 8}, true},
		// The command's default with --weighted and with --shift on
		// samples with no shift (as the benchmark's wide table).
		{"auto-weighted-unshifted", Options{Auto: true, Weighted: true}, []float64{5, 3, 2, 8}, true},
		{"auto-shift-unshifted", Options{Auto: true, Shift: true}, []float64{5, 3, 2, 8}, true},
	} {
		b.Run(c.name, func(b *testing.B) {
			m := mustModel(b, testSet(4), c.opt)
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
