package batch

import (
	"math"
	"math/rand/v2"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Synthetic test data, as in package unmix's tests: invented Gaussian
// bands on a 400-800 nm grid at 1 nm.

const (
	testNoise = 0.002 // AU, the noise added to synthetic samples and in the set's noise model
	testPath  = 1.0   // cm
)

type band struct{ peak, width, height float64 }

var testBands = [][]band{
	{{430, 25, 0.05}, {300, 40, 0.01}}, // "amber"
	{{505, 30, 0.04}},                  // "rose"
	{{560, 35, 0.06}, {420, 30, 0.005}},
	{{630, 30, 0.08}},
}

var testNames = []string{"amber", "rose", "violet", "teal"}

func gridNM(lo, hi, step float64) []float64 {
	var g []float64
	for x := lo; x <= hi+1e-9; x += step {
		g = append(g, x)
	}
	return g
}

func bandsAt(bs []band, l float64) float64 {
	v := 0.0
	for _, b := range bs {
		d := (l - b.peak) / b.width
		v += b.height * math.Exp(-0.5*d*d)
	}
	return v
}

// testSet builds a reference set from the first n band groups.
func testSet(n int) *reference.Set {
	g := gridNM(400, 800, 1)
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: testPath, Ceiling: 2}
	set.Noise = make([]float64, len(g))
	for i := range g {
		set.Noise[i] = testNoise
	}
	for k := range n {
		c := reference.Compound{Name: testNames[k], Unit: "mg/L", MaxStandard: 20, MinStandard: 1}
		c.Absorptivity = make([]float64, len(g))
		for i, l := range g {
			c.Absorptivity[i] = bandsAt(testBands[k], l)
		}
		set.Compounds = append(set.Compounds, c)
	}
	return set
}

// mixture is a synthetic sample: concentrations of the band groups,
// scanned at testPath, plus Gaussian noise of sd noise.
type mixture struct {
	conc  []float64
	noise float64
	seed  uint64
}

func (mx mixture) spectrum() *spectrum.Spectrum {
	g := gridNM(400, 800, 1)
	rng := rand.New(rand.NewPCG(mx.seed, 7))
	v := make([]float64, len(g))
	for i, l := range g {
		a := 0.0
		for k, c := range mx.conc {
			a += c * testPath * bandsAt(testBands[k], l)
		}
		a += mx.noise * rng.NormFloat64()
		v[i] = a
	}
	return &spectrum.Spectrum{Name: "mix", Wavelengths: g, Values: v, Quantity: spectrum.Absorbance,
		Source: spectrum.Source{File: "synthetic.csv", Column: 2}}
}

func mustModel(t testing.TB, set *reference.Set, opt unmix.Options) *unmix.Model {
	t.Helper()
	m, err := unmix.NewModel(set, opt)
	if err != nil {
		t.Fatalf("NewModel: %v", err)
	}
	return m
}
