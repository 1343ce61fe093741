package validate_test

import (
	"fmt"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/validate"
)

// Two compounds measured at three wavelengths (invented numbers): the
// figures of merit of each, with no baseline terms and a noise of 0.01 A.
func ExampleFiguresOfMerit() {
	set := &reference.Set{
		Grid:   []float64{500, 510, 520},
		PathCM: 1,
		Noise:  []float64{0.01, 0.01, 0.01},
		Compounds: []reference.Compound{
			{Name: "one", Unit: "mg/L", Absorptivity: []float64{2, 1, 0}},
			{Name: "two", Unit: "mg/L", Absorptivity: []float64{0, 1, 1}},
		},
	}
	m, err := validate.FiguresOfMerit(set, validate.MeritOptions{Baseline: baseline.Model{Degree: -1}, Sigma: 0.01})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, c := range m.Compounds {
		fmt.Printf("%s: SEN %.4f SEL %.4f LOD %.4f %s\n", c.Compound, c.Sensitivity, c.Selectivity, c.LOD, c.Unit)
	}
	// Output:
	// one: SEN 2.1213 SEL 0.9487 LOD 0.0156 mg/L
	// two: SEN 1.3416 SEL 0.9487 LOD 0.0246 mg/L
}

// A compound whose spectrum is a copy of another's is refused.
func ExampleMerits_Err() {
	set := &reference.Set{
		Grid:   []float64{500, 510, 520, 530},
		PathCM: 1,
		Noise:  []float64{0.01, 0.01, 0.01, 0.01},
		Compounds: []reference.Compound{
			{Name: "red", Absorptivity: []float64{1, 2, 1, 0}},
			{Name: "crimson", Absorptivity: []float64{2, 4, 2, 0}},
		},
	}
	m, err := validate.FiguresOfMerit(set, validate.MeritOptions{Baseline: baseline.Model{Degree: -1}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.Compounds[1].Quantifiable, m.Compounds[1].Reason)
	// Output:
	// false its spectrum is a copy of red's (up to scale)
}

// Recovery of three check standards of one compound.
func ExampleAssess() {
	loq := []float64{0.05}
	v, err := validate.Assess([]string{"dye"}, []string{"mg/L"}, []validate.Check{
		{Name: "a", Known: []float64{10}, Found: []float64{9.9}, SE: []float64{0.1}, LOQ: loq},
		{Name: "b", Known: []float64{10}, Found: []float64{10.1}, SE: []float64{0.1}, LOQ: loq},
		{Name: "c", Known: []float64{20}, Found: []float64{20.6}, SE: []float64{0.1}, LOQ: loq},
	}, validate.Limits{})
	if err != nil {
		fmt.Println(err)
		return
	}
	c := v.Compounds[0]
	fmt.Printf("mean recovery %.1f %%, RSD %.2f %%, bias %.2f mg/L, pass %v\n", c.MeanRecovery, c.RSD, c.Bias, c.Pass)
	// Output:
	// mean recovery 101.0 %, RSD 1.98 %, bias 0.20 mg/L, pass true
}
