package validate

import (
	"math"

	"huesolve/reference"
)

// gauss is a synthetic absorption band (invented test data).
func gauss(wl []float64, centre, width, height float64) []float64 {
	out := make([]float64, len(wl))
	for i, w := range wl {
		d := (w - centre) / width
		out[i] = height * math.Exp(-0.5*d*d)
	}
	return out
}

// grid returns lo, lo+step, ..., hi.
func grid(lo, hi, step float64) []float64 {
	var g []float64
	for i := 0; ; i++ {
		w := lo + float64(i)*step
		if w > hi+1e-9 {
			break
		}
		g = append(g, w)
	}
	return g
}

// memSet builds an in-memory reference set from absorptivity spectra on
// grid g with a constant noise model (invented test data).
func memSet(g []float64, names []string, spectra [][]float64, noise float64) *reference.Set {
	s := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: 1, Ceiling: 2}
	for i, sp := range spectra {
		s.Compounds = append(s.Compounds, reference.Compound{Name: names[i], Unit: "mg/L", Absorptivity: sp})
	}
	s.Noise = make([]float64, len(g))
	for i := range s.Noise {
		s.Noise[i] = noise
	}
	return s
}

// add returns a + k b elementwise.
func add(a []float64, k float64, b []float64) []float64 {
	out := make([]float64, len(a))
	for i := range a {
		out[i] = a[i] + k*b[i]
	}
	return out
}
