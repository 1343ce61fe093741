package baseline

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

func benchSpectrum(n int) (wl, y []float64) {
	rng := rand.New(rand.NewPCG(1, 1))
	wl = make([]float64, n)
	y = make([]float64, n)
	for i := range wl {
		wl[i] = 200 + 0.5*float64(i)
		u := (wl[i] - 300) / 20
		y[i] = 0.3 + 0.1*math.Exp(-(wl[i]-200)/300) + math.Exp(-u*u/2) + 0.002*rng.NormFloat64()
	}
	return wl, y
}

func BenchmarkALS(b *testing.B) {
	for _, n := range []int{500, 2000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			_, y := benchSpectrum(n)
			dst := make([]float64, n)
			iters := 0
			for b.Loop() {
				_, it, err := alsBackground(dst, y, 1e5, 0.01)
				if err != nil {
					b.Fatal(err)
				}
				iters = it
			}
			b.ReportMetric(float64(iters), "iterations")
		})
	}
}

func BenchmarkSavitzkyGolay(b *testing.B) {
	for _, w := range []int{11, 51} {
		b.Run(fmt.Sprintf("n=2000/window=%d", w), func(b *testing.B) {
			_, y := benchSpectrum(2000)
			f, err := newSavitzkyGolay(w, 3, 1)
			if err != nil {
				b.Fatal(err)
			}
			dst := make([]float64, len(y))
			for b.Loop() {
				if err := f.FilterTo(dst, y, 0.5); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkStepApplySG(b *testing.B) {
	wl, y := benchSpectrum(2000)
	st := Step{Kind: kindSG, Window: 21, Order: 3, Deriv: 2}
	for b.Loop() {
		if _, err := st.Apply(wl, y); err != nil {
			b.Fatal(err)
		}
	}
}
