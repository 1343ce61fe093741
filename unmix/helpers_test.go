package unmix

import (
	"math"
	"math/rand/v2"
	"testing"

	"huesolve/reference"
	"huesolve/spectrum"
)

// Synthetic test data: Gaussian bands on a 400-800 nm grid at 1 nm. The
// data are invented; the tests check that the model recovers what was put
// in, which is known exactly.

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
// scanned at path cm, with the bands moved by shift nm, plus
// offset + slope*(l-600), plus Gaussian noise of sd noise.
type mixture struct {
	conc          []float64
	extra         []band // bands of compounds not in the set (absorbance)
	path          float64
	shift         float64
	offset, slope float64
	noise         float64
	seed          uint64
	grid          []float64
}

func (mx mixture) spectrum() *spectrum.Spectrum {
	g := mx.grid
	if g == nil {
		g = gridNM(400, 800, 1)
	}
	path := mx.path
	if path == 0 {
		path = testPath
	}
	rng := rand.New(rand.NewPCG(mx.seed, 7))
	v := make([]float64, len(g))
	for i, l := range g {
		a := mx.offset + mx.slope*(l-600)
		for k, c := range mx.conc {
			a += c * path * bandsAt(testBands[k], l-mx.shift)
		}
		a += bandsAt(mx.extra, l-mx.shift)
		a += mx.noise * rng.NormFloat64()
		v[i] = a
	}
	return &spectrum.Spectrum{Name: "mix", Wavelengths: g, Values: v, Quantity: spectrum.Absorbance,
		Source: spectrum.Source{File: "synthetic.csv", Column: 2}}
}

func mustModel(t testing.TB, set *reference.Set, opt Options) *Model {
	t.Helper()
	m, err := NewModel(set, opt)
	if err != nil {
		t.Fatalf("NewModel: %v", err)
	}
	return m
}

func mustSolve(t testing.TB, m *Model, s *spectrum.Spectrum, f Factors) *Result {
	t.Helper()
	r, err := m.Solve(s, f)
	if err != nil {
		t.Fatalf("Solve: %v", err)
	}
	return r
}
