package validate

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"huesolve/calibration"
	"huesolve/unmix"
)

// Recovery arithmetic worked by hand (definitions as in ICH Q2(R2):
// recovery = 100·found/known; RSD = sample SD / mean).
//
// X: known 10, 10, 20, 0; found 9.9, 10.1, 20.6, 0.03 (LOQ 0.05).
// Recoveries 99, 101, 103 %: mean 101 %, SD √((4+0+4)/2) = 2, RSD
// 2/101 = 1.980198 %; bias mean(-0.1, 0.1, 0.6) = 0.2; RMSEP
// √((0.01+0.01+0.36+0.0009)/4) = √0.095225 = 0.308585; the blank-level
// result 0.03 <= 0.05 passes. Within 98-102 % and RSD <= 2 %: pass.
//
// Y: known 5, 5, 5, 0; found 4.8, 4.9, 5.0, 0.09 (LOQ 0.05). Recoveries
// 96, 98, 100 %: mean 98 %, SD 2, RSD 2.040816 % > 2 %: fail; 0.09 > 0.05
// in the standard without Y: fail.
func TestAssessByHand(t *testing.T) {
	loq := []float64{0.05, 0.05}
	checks := []Check{
		{Name: "c1", Known: []float64{10, 5}, Found: []float64{9.9, 4.8}, SE: []float64{0.1, 0.1}, LOQ: loq},
		{Name: "c2", Known: []float64{10, 5}, Found: []float64{10.1, 4.9}, SE: []float64{0.1, 0.1}, LOQ: loq},
		{Name: "c3", Known: []float64{20, 5}, Found: []float64{20.6, 5.0}, SE: []float64{0.1, 0.1}, LOQ: loq},
		{Name: "c4", Known: []float64{0, 0}, Found: []float64{0.03, 0.09}, SE: []float64{0.01, 0.01}, LOQ: loq},
	}
	v, err := Assess([]string{"X", "Y"}, []string{"mg/L", "mg/L"}, checks, Limits{})
	if err != nil {
		t.Fatal(err)
	}
	x, y := v.Compounds[0], v.Compounds[1]
	near := func(what string, got, want, tol float64) {
		t.Helper()
		if !scalar.EqualWithinAbs(got, want, tol) {
			t.Errorf("%s = %.10g, want %.10g", what, got, want)
		}
	}
	near("X mean recovery", x.MeanRecovery, 101, 1e-12)
	near("X RSD", x.RSD, 100*2.0/101, 1e-12)
	near("X bias", x.Bias, 0.2, 1e-12)
	near("X RMSEP", x.RMSEP, math.Sqrt(0.095225), 1e-12)
	near("Y mean recovery", y.MeanRecovery, 98, 1e-12)
	near("Y RSD", y.RSD, 100*2.0/98, 1e-12)
	near("Y bias", y.Bias, -0.1, 1e-12)
	if x.Holding != 3 || x.Absent != 1 || x.AbsentFail != 0 || !x.RSDJudged {
		t.Errorf("X counts %+v", x)
	}
	if !x.Pass {
		t.Errorf("X fails: %v", x.Why)
	}
	if y.Pass || len(y.Why) != 2 || !strings.Contains(y.Why[0], "RSD") || !strings.Contains(y.Why[1], "LOQ") {
		t.Errorf("Y pass %v why %q, want RSD and LOQ failures", y.Pass, y.Why)
	}
	if v.Pass {
		t.Error("overall pass with Y failing")
	}
	// Per-row recoveries and the absent rule.
	if r := v.Rows[2].Recovery; r == nil || !scalar.EqualWithinAbs(*r, 103, 1e-12) {
		t.Errorf("c3 X recovery %v, want 103", r)
	}
	if v.Rows[2].Pass {
		t.Error("c3 X at 103 % marked inside 98-102 %")
	}
	if r := v.Rows[3]; r.Recovery != nil || !r.Pass {
		t.Errorf("c4 X row %+v, want no recovery and pass", r)
	}
	if r := v.Rows[7]; r.Recovery != nil || r.Pass {
		t.Errorf("c4 Y row %+v, want no recovery and fail", r)
	}
	// Settable limits: a looser RSD limit and a tighter recovery band.
	v, err = Assess([]string{"X", "Y"}, nil, checks, Limits{RecoveryLo: 99, RecoveryHi: 100.5, MaxRSD: 2.5})
	if err != nil {
		t.Fatal(err)
	}
	if v.Compounds[0].Pass || !strings.Contains(v.Compounds[0].Why[0], "mean recovery") {
		t.Errorf("X with 99-100.5 %%: pass %v why %q", v.Compounds[0].Pass, v.Compounds[0].Why)
	}
	if why := v.Compounds[1].Why; len(why) != 2 || strings.Contains(strings.Join(why, " "), "RSD") {
		t.Errorf("Y with RSD limit 2.5 %%: why %q, want mean recovery and LOQ only", why)
	}
}

func TestAssessSingleStandardAndErrors(t *testing.T) {
	one := []Check{{Name: "c", Known: []float64{4}, Found: []float64{4.04}, SE: []float64{0.01}, LOQ: []float64{0.1}}}
	v, err := Assess([]string{"X"}, nil, one, Limits{})
	if err != nil {
		t.Fatal(err)
	}
	if c := v.Compounds[0]; c.RSDJudged || !c.Pass || !scalar.EqualWithinAbs(c.MeanRecovery, 101, 1e-12) {
		t.Errorf("one standard: %+v, want recovery 101 %%, RSD not judged, pass", c)
	}
	bad := []struct {
		name   string
		checks []Check
		lim    Limits
	}{
		{"none", nil, Limits{}},
		{"short", []Check{{Name: "c", Known: []float64{1}}}, Limits{}},
		{"negative known", []Check{{Name: "c", Known: []float64{-1}, Found: []float64{1}, SE: []float64{0}, LOQ: []float64{0}}}, Limits{}},
		{"NaN found", []Check{{Name: "c", Known: []float64{1}, Found: []float64{math.NaN()}, SE: []float64{0}, LOQ: []float64{0}}}, Limits{}},
		{"empty band", one, Limits{RecoveryLo: 102, RecoveryHi: 98}},
		{"negative RSD", one, Limits{MaxRSD: -1}},
	}
	for _, tc := range bad {
		if _, err := Assess([]string{"X"}, nil, tc.checks, tc.lim); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

// A result the non-negativity constraint holds at zero is marked on its
// check row (from unmix's zero flag), so that reports can show it as solve
// does; other rows are not.
func TestCheckRowHeldAtZero(t *testing.T) {
	res := &unmix.Result{Amounts: []unmix.Amount{{Conc: 0, Flags: []unmix.Flag{unmix.FlagZero}}, {Conc: 2, SE: 0.1}}}
	c := checkFrom("c1", []float64{0, 2}, []int{0, 1}, res)
	v, err := Assess([]string{"X", "Y"}, []string{"mg/L", "mg/L"}, []Check{c}, Limits{})
	if err != nil {
		t.Fatal(err)
	}
	if len(v.Rows) != 2 || !v.Rows[0].HeldAtZero || v.Rows[1].HeldAtZero {
		t.Errorf("rows %+v, want X held at zero and Y not", v.Rows)
	}
}

// TestFlaggedRows: flags counted per result (standard and compound),
// leaving the verdict on recovery alone.
func TestFlaggedRows(t *testing.T) {
	loq := []float64{0.05, 0.05}
	checks := []Check{
		{Name: "c1", Known: []float64{10, 5}, Found: []float64{10, 5}, SE: []float64{0.1, 0.1}, LOQ: loq,
			Flags: [][]unmix.Flag{{"misfit"}, {"misfit", "illcond"}}},
		{Name: "c2", Known: []float64{10, 5}, Found: []float64{10, 5}, SE: []float64{0.1, 0.1}, LOQ: loq,
			Flags: [][]unmix.Flag{nil, {"illcond"}}},
		{Name: "c3", Known: []float64{10, 5}, Found: []float64{10, 5}, SE: []float64{0.1, 0.1}, LOQ: loq},
	}
	v, err := Assess([]string{"X", "Y"}, nil, checks, Limits{})
	if err != nil {
		t.Fatal(err)
	}
	if n := v.FlaggedRows(); n != 3 || !v.Pass {
		t.Errorf("flagged rows %d, pass %v; want 3 of 6 flagged, pass", n, v.Pass)
	}
}

// TestStandardNameIsStem: a check standard is named as solve names a
// sample, by its file's stem; a column of a wide table by the column; a
// stem that two files of the sheet share keeps the file as written.
func TestStandardNameIsStem(t *testing.T) {
	sh := &calibration.Sheet{Standards: []calibration.Row{
		{File: "checks/chk-1.csv"}, {File: "run-2.csv", Column: "chk-2"},
		{File: "a/chk-3.csv"}, {File: "b/chk-3.jdx"},
	}}
	for i, want := range []string{"chk-1", "chk-2", "a/chk-3.csv", "b/chk-3.jdx"} {
		if got := standardName(sh, sh.Standards[i]); got != want {
			t.Errorf("row %d: %q, want %q", i, got, want)
		}
	}
}
