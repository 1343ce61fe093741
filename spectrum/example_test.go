package spectrum_test

import (
	"fmt"

	"huesolve/spectrum"
)

func ExampleReadFile() {
	// A wide table: one wavelength column and three spectra.
	ss, err := spectrum.ReadFile("../testdata/spectra/same-wide.tsv", spectrum.ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range ss {
		fmt.Printf("%s: %d points, %g-%g nm, %v\n", s.Name, s.Len(), s.Wavelengths[0], s.Wavelengths[s.Len()-1], s.Quantity)
	}
	// Output:
	// mix A: 41 points, 400-600 nm, absorbance
	// mix B: 41 points, 400-600 nm, absorbance
	// blank: 41 points, 400-600 nm, absorbance
}

func ExampleToAbsorbance() {
	for _, pct := range []float64{100, 10, 1, 0} {
		a, err := spectrum.ToAbsorbance(spectrum.PercentT, pct)
		if err != nil {
			fmt.Printf("%g %%T: %v\n", pct, err)
			continue
		}
		fmt.Printf("%g %%T = %g A\n", pct, a)
	}
	// Output:
	// 100 %T = 0 A
	// 10 %T = 1 A
	// 1 %T = 2 A
	// 0 %T: transmittance is zero or negative: the sample is too concentrated to read, dilute it and scan again
}
