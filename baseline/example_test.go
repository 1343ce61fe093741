package baseline_test

import (
	"fmt"
	"log"

	"huesolve/baseline"
)

func ExampleParseModel() {
	m, err := baseline.ParseModel("quadratic+scatter")
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(m)
	// The middle of 300..500 nm is 400 nm: t runs from -1 to 1, and the
	// scattering column is 1 at 400 nm.
	cols, nonneg, names, err := m.Columns([]float64{300, 350, 400, 450, 500})
	if err != nil {
		log.Fatal(err)
	}
	for j, c := range cols {
		fmt.Printf("%-7s non-negative=%-5v %.4f\n", names[j], nonneg[j], c)
	}
	// Output:
	// quadratic+scatter
	// offset  non-negative=false [1.0000 1.0000 1.0000 1.0000 1.0000]
	// slope   non-negative=false [-1.0000 -0.5000 0.0000 0.5000 1.0000]
	// curve2  non-negative=false [1.0000 -0.1250 -0.5000 -0.1250 1.0000]
	// scatter non-negative=true  [3.1605 1.7060 1.0000 0.6243 0.4096]
}

func ExampleSavitzkyGolayWeights() {
	// 5-point quadratic smoothing and first derivative, scaled by the
	// published normalisers 35 and 10 (Savitzky & Golay 1964).
	smooth, err := baseline.SavitzkyGolayWeights(5, 2, 0)
	if err != nil {
		log.Fatal(err)
	}
	deriv, err := baseline.SavitzkyGolayWeights(5, 2, 1)
	if err != nil {
		log.Fatal(err)
	}
	for i := range smooth {
		smooth[i] *= 35
		deriv[i] *= 10
	}
	fmt.Printf("%.0f\n%.0f\n", smooth, deriv)
	// Output:
	// [-3 12 17 12 -3]
	// [-2 -1 0 1 2]
}

func ExampleStep_Apply() {
	// A sloping line: its first derivative is the slope in absorbance per
	// nm, at every point including the edges.
	wl := []float64{400, 402, 404, 406, 408, 410, 412}
	y := make([]float64, len(wl))
	for i, l := range wl {
		y[i] = 0.2 + 0.004*(l-400)
	}
	step, err := baseline.ParseStep("sg:5,2,1")
	if err != nil {
		log.Fatal(err)
	}
	d, err := step.Apply(wl, y)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%s: %.4f\n", step, d)
	// Output:
	// sg:5,2,1: [0.0040 0.0040 0.0040 0.0040 0.0040 0.0040 0.0040]
}

func ExampleApplyAll() {
	steps := []baseline.Step{}
	for _, s := range []string{"zero:410-412", "sg:5,2"} {
		st, err := baseline.ParseStep(s)
		if err != nil {
			log.Fatal(err)
		}
		steps = append(steps, st)
	}
	wl := []float64{400, 402, 404, 406, 408, 410, 412}
	y := []float64{0.15, 0.35, 0.55, 0.45, 0.25, 0.10, 0.10}
	out, err := baseline.ApplyAll(steps, wl, y)
	if err != nil {
		log.Fatal(err)
	}
	// Zeroing subtracts 0.10, the mean over 410..412 nm; smoothing then
	// fits a quadratic to each 5 points (the edges use the first and last
	// five). SciPy's savgol_filter(mode="interp") gives the same values.
	fmt.Printf("%.3f\n", out)
	// Output:
	// [0.033 0.299 0.407 0.354 0.154 0.047 -0.024]
}
