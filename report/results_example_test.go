package report_test

import (
	"fmt"
	"os"

	"huesolve/report"
	"huesolve/unmix"
)

func ExampleConcText() {
	fmt.Println(report.ConcText(4.98820789, 0.0073392))
	fmt.Println(report.ConcText(123.456, 12.3))
	// Output:
	// 4.9882 ± 0.0073
	// 123 ± 12
}

// One result written as CSV: numbers with 6 significant digits, "n/a"
// where a figure is not defined.
func ExampleCSVWriter() {
	l := report.Layout{Compounds: []string{"dye"}, Units: []string{"mg/L"}, Baseline: []string{"offset"}}
	w := report.NewCSVWriter(os.Stdout, l)
	r := &unmix.Result{Sample: "S1", Source: "s1.csv",
		Amounts:  []unmix.Amount{{Compound: "dye", Unit: "mg/L", Conc: 4.0012345, SE: 0.0021, Lo: 3.997, Hi: 4.0054, LOD: 0.01, LOQ: 0.03}},
		Baseline: map[string]float64{"offset": 0.0101}, RMS: 0.0011, ChiSqRed: 1.02, DW: 1.96, R2: 0.99991, Cond: 1.4,
		Points: 61, Dilution: 1, PathCM: 1}
	if err := w.Write(r); err != nil {
		fmt.Println(err)
	}
	if err := w.Close(); err != nil {
		fmt.Println(err)
	}
	// Output:
	// # format: huesolve-results
	// # schema: 3
	// sample,source,dye_conc,dye_se,dye_ci95_lo,dye_ci95_hi,dye_lod,dye_loq,dye_unconstrained,dye_unconstrained_se,dye_unit,dye_flags,rms_residual,reduced_chi_square,durbin_watson,r2,condition_number,points_used,points_dropped,shift_nm,shift_se_nm,dilution,path_cm,suggest_dilution,baseline_offset,flags
	// S1,s1.csv,4.00123,0.0021,3.997,4.0054,0.01,0.03,,,mg/L,,0.0011,1.02,1.96,0.99991,1.4,61,0,0,,1,1,,0.0101,
}
