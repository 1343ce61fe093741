package calibration_test

import (
	"fmt"
	"time"

	"huesolve/calibration"
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

func ExampleBuild() {
	set, err := calibration.Build(exampleSheet(), calibration.Options{
		PathCM: 1,
		Now:    func() time.Time { return time.Date(2026, 3, 1, 9, 0, 0, 0, time.UTC) },
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range set.Summary() {
		fmt.Printf("%s: band maximum %g nm, absorptivity %.4f per %s per cm, R² %.4f, range %g-%g, flags %v\n",
			r.Compound, r.PeakNM, r.Peak, r.Unit, r.R2, r.RangeLo, r.RangeHi, r.Flags)
	}
	fmt.Println("blank:", set.Provenance.Blank, "created:", set.Provenance.Created)
	// Output:
	// dye: band maximum 500 nm, absorptivity 0.0500 per mg/L per cm, R² 1.0000, range 2-10, flags []
	// blank: sheet rows created: 2026-03-01T09:00:00Z
}
