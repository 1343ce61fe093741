// Package synth makes the invented spectra the unit tests of unmix and
// batch share: four compounds whose absorptivities are Gaussian bands on a
// 400-800 nm grid at 1 nm, their reference set, and mixtures of them with
// a known truth (plus a baseline, a shift, compounds not in the set and
// noise). The data are invented: the tests check that what was put in
// comes back. Only tests import it.
package synth

import (
	"math"
	"math/rand/v2"

	"huesolve/reference"
	"huesolve/spectrum"
)

const (
	// NoiseAU is the noise added to samples and in the set's noise model.
	NoiseAU = 0.002
	// PathCM is the path length of the set and, by default, of samples.
	PathCM = 1.0
)

// Band is one Gaussian absorption band: centre and standard deviation in
// nm, height in absorbance per unit concentration per cm.
type Band struct{ Peak, Width, Height float64 }

// Bands returns the band groups of the four compounds (a new copy).
func Bands() [][]Band {
	return [][]Band{
		{{430, 25, 0.05}, {300, 40, 0.01}}, // "amber"
		{{505, 30, 0.04}},                  // "rose"
		{{560, 35, 0.06}, {420, 30, 0.005}},
		{{630, 30, 0.08}},
	}
}

// Names returns the compounds' names (a new copy).
func Names() []string { return []string{"amber", "rose", "violet", "teal"} }

// Grid returns lo, lo+step, ... up to hi (nm).
func Grid(lo, hi, step float64) []float64 {
	var g []float64
	for x := lo; x <= hi+1e-9; x += step {
		g = append(g, x)
	}
	return g
}

// Absorbance is the sum of the bands bs at wavelength l.
func Absorbance(bs []Band, l float64) float64 {
	v := 0.0
	for _, b := range bs {
		d := (l - b.Peak) / b.Width
		v += b.Height * math.Exp(-0.5*d*d)
	}
	return v
}

// Set builds a reference set from the first n compounds on the 400-800 nm
// grid, with the noise model NoiseAU everywhere and standards from 1 to
// 20 mg/L.
func Set(n int) *reference.Set {
	g := Grid(400, 800, 1)
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: PathCM, Ceiling: 2}
	set.Noise = make([]float64, len(g))
	for i := range g {
		set.Noise[i] = NoiseAU
	}
	bands, names := Bands(), Names()
	for k := range n {
		c := reference.Compound{Name: names[k], Unit: "mg/L", MaxStandard: 20, MinStandard: 1}
		c.Absorptivity = make([]float64, len(g))
		for i, l := range g {
			c.Absorptivity[i] = Absorbance(bands[k], l)
		}
		set.Compounds = append(set.Compounds, c)
	}
	return set
}

// Sample is a synthetic sample: concentrations of the compounds, scanned
// at Path cm (0: PathCM) on Grid (nil: 400-800 nm at 1 nm), with the
// bands moved by Shift nm, plus bands of compounds not in the set (Extra,
// in absorbance), plus Offset + Slope*(l-600), plus Gaussian noise of SD
// Noise drawn from Seed.
type Sample struct {
	Conc          []float64
	Extra         []Band
	Path          float64
	Shift         float64
	Offset, Slope float64
	Noise         float64
	Seed          uint64
	Grid          []float64
}

// Spectrum scans the sample: an absorbance spectrum named "mix".
func (s Sample) Spectrum() *spectrum.Spectrum {
	g := s.Grid
	if g == nil {
		g = Grid(400, 800, 1)
	}
	path := s.Path
	if path == 0 {
		path = PathCM
	}
	bands := Bands()
	rng := rand.New(rand.NewPCG(s.Seed, 7))
	v := make([]float64, len(g))
	for i, l := range g {
		a := s.Offset + s.Slope*(l-600)
		for k, c := range s.Conc {
			a += c * path * Absorbance(bands[k], l-s.Shift)
		}
		a += Absorbance(s.Extra, l-s.Shift)
		a += s.Noise * rng.NormFloat64()
		v[i] = a
	}
	return &spectrum.Spectrum{Name: "mix", Wavelengths: g, Values: v, Quantity: spectrum.Absorbance,
		Source: spectrum.Source{File: "synthetic.csv", Column: 2}}
}
