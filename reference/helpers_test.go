package reference

import "math"

// band is an invented Gaussian absorption band.
func band(wl []float64, centre, width, height float64) []float64 {
	v := make([]float64, len(wl))
	for i, w := range wl {
		d := (w - centre) / width
		v[i] = height * math.Exp(-d*d/2)
	}
	return v
}

func linGrid(lo, step float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo + step*float64(i)
	}
	return g
}

func scale(v []float64, f float64) []float64 {
	for i := range v {
		v[i] *= f
	}
	return v
}

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}
