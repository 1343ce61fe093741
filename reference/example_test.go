package reference_test

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"time"

	"huesolve/calibration"
	"huesolve/reference"
	"huesolve/spectrum"
)

// exampleSheet is an invented one-dye calibration: a blank and five
// standards whose band peaks at 500 nm with 0.05 absorbance per mg/L.
func exampleSheet() *calibration.Sheet {
	grid := []float64{480, 490, 500, 510, 520}
	shape := []float64{0.4, 0.8, 1, 0.8, 0.4}
	sh := &calibration.Sheet{Path: "standards.csv", Compounds: []string{"dye"}, Units: []string{"mg/L"}}
	for i, c := range []float64{0, 2, 4, 6, 8, 10} {
		v := make([]float64, len(grid))
		for j := range v {
			v[j] = 0.01 + 0.05*c*shape[j] // 0.01 from solvent and cell
		}
		r := calibration.Row{File: fmt.Sprintf("s%d.csv", i), Line: i + 2, Conc: []float64{c},
			Scan: &spectrum.Spectrum{Wavelengths: grid, Values: v, Quantity: spectrum.Absorbance}}
		if c == 0 {
			sh.Blanks = append(sh.Blanks, r)
		} else {
			sh.Standards = append(sh.Standards, r)
		}
	}
	return sh
}

func ExampleLoad() {
	set, err := calibration.Build(exampleSheet(), calibration.Options{
		Now: func() time.Time { return time.Date(2026, 3, 1, 9, 0, 0, 0, time.UTC) },
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	dir, err := os.MkdirTemp("", "refs")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "refs.json")
	if err := set.Save(path); err != nil {
		fmt.Println(err)
		return
	}
	back, err := reference.Load(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	same := back.Checksum == set.Checksum
	for j := range set.Grid {
		same = same && back.Compounds[0].Absorptivity[j] == set.Compounds[0].Absorptivity[j]
	}
	fmt.Println("schema", back.Schema, "read back exactly:", same)
	fmt.Println("lack-of-fit test without replicates is NaN:", math.IsNaN(back.Compounds[0].Linearity.LackOfFitP))
	// Output:
	// schema 3 read back exactly: true
	// lack-of-fit test without replicates is NaN: true
}
