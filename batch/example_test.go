package batch_test

import (
	"context"
	"fmt"
	"math"

	"huesolve/batch"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// A batch over two "files" served from memory (a wide table of three
// scans and a file that cannot be read), solved on two workers; outcomes
// come in input order.
func ExampleBatch_Run() {
	var grid []float64
	for l := 400.0; l <= 700; l += 5 {
		grid = append(grid, l)
	}
	eps := make([]float64, len(grid))
	noise := make([]float64, len(grid))
	for i, l := range grid {
		eps[i] = 0.05 * math.Exp(-0.5*math.Pow((l-520)/40, 2))
		noise[i] = 0.001
	}
	set := &reference.Set{Grid: grid, PathCM: 1, Ceiling: 2, Noise: noise,
		Compounds: []reference.Compound{{Name: "dye", Unit: "mg/L", Absorptivity: eps}}}
	m, err := unmix.NewModel(set, unmix.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	read := func(path string, _ spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
		if path == "broken.csv" {
			return nil, fmt.Errorf("%s:2:1: not a number", path)
		}
		var ss []*spectrum.Spectrum
		for j, c := range []float64{2, 4, 8} {
			s := &spectrum.Spectrum{Name: fmt.Sprintf("S%d", j+1), Wavelengths: grid, Quantity: spectrum.Absorbance}
			for i, e := range eps {
				ripple := 0.001 * math.Sin(2.3*float64(i+j)) // stands in for noise
				s.Values = append(s.Values, c*e+0.01+ripple)
			}
			ss = append(ss, s)
		}
		return ss, nil
	}
	b := &batch.Batch{Model: m, Workers: 2, ReadFile: read}
	sum, err := b.Run(context.Background(), batch.ExpandInputs([]string{"wide.csv", "broken.csv"}), func(o batch.Outcome) error {
		if o.Err != nil {
			fmt.Printf("%d %s: %v\n", o.Seq, o.File, o.Err)
			return nil
		}
		fmt.Printf("%d %s: %.2f %s\n", o.Seq, o.Result.Sample, o.Result.Amounts[0].Conc, o.Result.Amounts[0].Unit)
		return nil
	})
	fmt.Printf("%+v %v\n", sum, err)
	// Output:
	// 0 S1: 2.00 mg/L
	// 1 S2: 4.00 mg/L
	// 2 S3: 8.00 mg/L
	// 3 broken.csv: broken.csv:2:1: not a number
	// {Files:2 Unreadable:1 Samples:3 Solved:3 Failed:0 Flagged:0 Emitted:4 Checked:0} <nil>
}
