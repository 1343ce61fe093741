package unmix_test

import (
	"fmt"
	"math"

	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Two invented compounds with Gaussian bands at 450 and 550 nm; a sample
// holding 4 and 0 units of them on a small offset is unmixed.
func ExampleModel_Solve() {
	var grid []float64
	for l := 400.0; l <= 700; l += 2 {
		grid = append(grid, l)
	}
	band := func(peak, l float64) float64 { return 0.05 * math.Exp(-0.5*math.Pow((l-peak)/30, 2)) }
	set := &reference.Set{Grid: grid, PathCM: 1, Ceiling: 2, Noise: make([]float64, len(grid))}
	sample := &spectrum.Spectrum{Name: "S1", Wavelengths: grid, Quantity: spectrum.Absorbance}
	for _, c := range []struct {
		name string
		peak float64
	}{{"gold", 450}, {"violet", 550}} {
		eps := make([]float64, len(grid))
		for i, l := range grid {
			eps[i] = band(c.peak, l)
		}
		set.Compounds = append(set.Compounds, reference.Compound{Name: c.name, Unit: "mg/L", Absorptivity: eps})
	}
	for i, l := range grid {
		set.Noise[i] = 0.001
		// 4 mg/L gold, no violet, an offset of 0.02, a ripple and a
		// slight tilt the offset term cannot follow: unconstrained, it
		// would give violet a negative amount.
		sample.Values = append(sample.Values, 4*band(450, l)+0.02+0.0005*math.Sin(float64(i))+0.00001*(l-550))
	}
	m, err := unmix.NewModel(set, unmix.Options{}) // default baseline: an offset
	if err != nil {
		fmt.Println(err)
		return
	}
	r, err := m.Solve(sample, unmix.Factors{Dilution: 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, a := range r.Amounts {
		fmt.Printf("%s: %.2f %s %v\n", a.Compound, a.Conc, a.Unit, a.Flags)
	}
	fmt.Printf("offset %.3f, points %d\n", r.Baseline["offset"], r.Points)
	// Output:
	// gold: 39.61 mg/L []
	// violet: 0.00 mg/L [zero]
	// offset 0.020, points 151
}
