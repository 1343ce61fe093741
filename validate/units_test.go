package validate

import (
	"context"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"huesolve/baseline"
	"huesolve/calibration"
	"huesolve/reference"
	"huesolve/unmix"
)

// unitSet is a reference set holding P and Q in mg/L (only names and
// units matter to inSetUnits).
func unitSet() *reference.Set {
	return &reference.Set{Compounds: []reference.Compound{{Name: "P", Unit: "mg/L"}, {Name: "q", Unit: "mg/L"}}}
}

// TestInSetUnits: P in µg/L converts by 10^-3 exactly; Q in µmol/L with
// M = 250 g/mol converts as mass concentration = amount concentration ×
// molar mass (common practice): 8 µmol/L × 250 g/mol = 2000 µg/L = 2 mg/L.
func TestInSetUnits(t *testing.T) {
	sh, _, _ := tinySheet()
	sh.Units = []string{"µg/L", "µmol/L"}
	sh.MolarMass = []float64{0, 250}
	sh.Columns = []int{3, 4}
	got, notes, err := inSetUnits(unitSet(), sh)
	if err != nil {
		t.Fatal(err)
	}
	r := got.Standards[3] // 8, 5 in the sheet
	if r.Conc[0] != 0.008 || !scalar.EqualWithinRel(r.Conc[1], 1.25, 1e-15) {
		t.Errorf("converted %v, want exactly 0.008 and 1.25", r.Conc)
	}
	if sh.Standards[3].Conc[0] != 8 || sh.Units[0] != "µg/L" {
		t.Error("the sheet given was changed")
	}
	if strings.Join(got.Units, "|") != "mg/L|mg/L" {
		t.Errorf("units %q", got.Units)
	}
	want := []string{"tiny.csv: P µg/L to mg/L (× 10^-3)", "tiny.csv: Q µmol/L to mg/L (× 250 g/mol × 10^-3)"}
	if strings.Join(notes, "\n") != strings.Join(want, "\n") {
		t.Errorf("notes %q, want %q", notes, want)
	}
	// Units of another spelling only relabel, with a note.
	sh.Units = []string{"ug/mL", "mg/L"}
	got, notes, err = inSetUnits(unitSet(), sh)
	if err != nil || got.Standards[3].Conc[0] != 8 || len(notes) != 1 || notes[0] != "tiny.csv: P ug/mL to mg/L (× 1)" {
		t.Errorf("ug/mL: %v, notes %q, %v", got.Standards[3].Conc, notes, err)
	}
}

func TestInSetUnitsRefusals(t *testing.T) {
	for _, c := range []struct {
		unit string
		m    float64
		says []string
	}{
		{"µmol/L", 0, []string{"tiny.csv, column 4: Q is given in µmol/L but the reference set holds it in mg/L", "needs the compound's molar mass",
			`"Q (µmol/L; M=534.4 g/mol)"`, `"molar mass (g/mol)"`}},
		{"mg/kg", 0, []string{"tiny.csv, column 4: Q is given in mg/kg", `"mg/kg" is not a concentration unit`, "write the column in mg/L"}},
		{"% w/v", 300, []string{"column 4", "write the column in mg/L"}},
	} {
		sh, _, _ := tinySheet()
		sh.Units[1], sh.MolarMass, sh.Columns = c.unit, []float64{0, c.m}, []int{3, 4}
		_, _, err := inSetUnits(unitSet(), sh)
		if err == nil {
			t.Errorf("%s: no error", c.unit)
			continue
		}
		for _, s := range c.says {
			if !strings.Contains(err.Error(), s) {
				t.Errorf("%s: error %q does not say %q", c.unit, err, s)
			}
		}
	}
}

// TestCrossValidateConverted: the calibration sheet in g/L against a set
// in mg/L gives the cross-validation of the sheet in mg/L, and says so.
// Before, the sheet was refused ("gives P in g/L but the reference set in
// mg/L").
func TestCrossValidateConverted(t *testing.T) {
	sh, _, _ := tinySheet()
	opt := CrossValOptions{Build: calibration.Options{ThroughOrigin: true}, Model: unmix.Options{Baseline: baseline.Model{Degree: -1}}}
	set, err := calibration.Build(sh, opt.Build)
	if err != nil {
		t.Fatal(err)
	}
	want, err := CrossValidateContext(context.Background(), set, sh, opt)
	if err != nil {
		t.Fatal(err)
	}
	gl := *sh
	gl.Units = []string{"g/L", "mg/L"}
	gl.Standards = nil
	for _, r := range sh.Standards {
		r.Conc = []float64{r.Conc[0] / 1000, r.Conc[1]}
		gl.Standards = append(gl.Standards, r)
	}
	got, err := CrossValidateContext(context.Background(), set, &gl, opt)
	if err != nil {
		t.Fatal(err)
	}
	for k := range want.RMSECV {
		if !scalar.EqualWithinRel(got.RMSECV[k], want.RMSECV[k], 1e-12) {
			t.Errorf("RMSECV %d: %g, want %g", k, got.RMSECV[k], want.RMSECV[k])
		}
	}
	if len(got.Converted) != 1 || got.Converted[0] != "tiny.csv: P g/L to mg/L (× 10^3)" {
		t.Errorf("converted %q", got.Converted)
	}
}
