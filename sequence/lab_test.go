package sequence

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"huesolve/calibration"
	"huesolve/internal/synth"
	"huesolve/lab"
	"huesolve/unmix"
)

// labRun writes a run of two compounds from rows "order,role,conc0,
// extra cells" (the extra cells are those of header's lab columns; a
// check holds 5 and 8 mg/L scaled by its conc0 field, a sample conc0
// and 4 mg/L) and processes it with opt. Scans are synthetic and
// noiseless (invented data), so a sample's result is its conc0.
func labRun(t *testing.T, labHeader string, rows []string, opt lab.Options) (*Run, error) {
	t.Helper()
	dir := t.TempDir()
	names := synth.Names()
	var sheet strings.Builder
	fmt.Fprintf(&sheet, "order,role,scan,%s (mg/L),%s (mg/L),%s\n", names[0], names[1], labHeader)
	for _, r := range rows {
		f := strings.SplitN(r, ",", 4)
		var x float64
		fmt.Sscan(f[2], &x)
		conc, cells := []float64{x, 4 * x / 3}, ","
		if f[1] == "check" {
			conc, cells = []float64{5 * x, 8 * x}, "5,8"
		}
		if f[3] == "" {
			f[3] = strings.Repeat(",", strings.Count(labHeader, ","))
		}
		scan := "r" + f[0] + ".csv"
		writeScan(t, dir, scan, synth.Sample{Conc: conc}.Spectrum())
		fmt.Fprintf(&sheet, "%s,%s,%s,%s,%s\n", f[0], f[1], scan, cells, f[3])
	}
	p := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(p, []byte(sheet.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	sh, err := ReadSheet(p, calibration.SheetOptions{})
	if err != nil {
		return nil, err
	}
	return Process(context.Background(), synth.Set(2), sh, Options{Model: unmix.Options{}, Lab: opt})
}

// Hand-worked example (invented numbers): three fills of one product,
// each 2.5 g made up to 50 mL, read 3.0, 3.1 and 2.9 mg/L. On the
// product basis w = c V / m = c × 0.050 L / 2.5 g, so 3.0 mg/L =
// 0.0030 g/L gives 6.0e-5 g/g = 60 mg/kg, and the members are 60, 62
// and 58 mg/kg: mean 60, SD = √((0² + 2² + 2²)/2) = 2, RSD = 3.33 %,
// within the default 5 % and above a 3 % limit.
func TestRunReplicatesOnBasis(t *testing.T) {
	basis, err := lab.ParseBasis("mg/kg")
	if err != nil {
		t.Fatal(err)
	}
	prep := func(g string) string { return "P1," + g + ",2.5,g,50,mL" }
	rows := []string{
		"1,check,1,", "2,sample,3.0," + strings.Replace(prep("A"), "P1", "P1-a", 1),
		"3,sample,3.1," + strings.Replace(prep("A"), "P1", "P1-b", 1),
		"4,sample,2.9," + strings.Replace(prep("A"), "P1", "P1-c", 1), "5,check,1,",
	}
	for _, c := range []struct {
		maxRSD float64
		flag   bool
	}{{0, false}, {3, true}} {
		run, err := labRun(t, "sample,group,mass,mass_unit,volume,volume_unit", rows, lab.Options{Basis: &basis, MaxRSD: c.maxRSD})
		if err != nil {
			t.Fatal(err)
		}
		if run.Lab == nil || len(run.Lab.Groups) != 2 {
			t.Fatalf("lab section %+v", run.Lab)
		}
		g := run.Lab.Groups[0]
		if g.Name != "A" || g.N != 3 || g.Unit != "mg/kg" || math.Abs(g.Mean-60) > 1e-6 || math.Abs(g.SD-2) > 1e-6 ||
			math.Abs(g.RSD-100.0/30) > 1e-6 {
			t.Errorf("group %+v, want n 3, mean 60, SD 2, RSD 3.33 %% mg/kg", g)
		}
		if want := []string{"P1-a", "P1-b", "P1-c"}; !slices.Equal([]string{g.Members[0].Sample, g.Members[1].Sample, g.Members[2].Sample}, want) {
			t.Errorf("members %+v", g.Members)
		}
		if got := slices.Contains(g.Flags, lab.FlagRepRSD); got != c.flag {
			t.Errorf("max RSD %g: flags %v", c.maxRSD, g.Flags)
		}
		if len(run.Groups) != 1 || run.Groups[0].Status != Valid || !slices.Equal(run.Groups[0].Members, []int{2, 3, 4}) ||
			run.GroupsFlagged != btoi(c.flag) {
			t.Errorf("verdicts %+v", run.Groups)
		}
		if r := run.Lab.Reported[0]; r.Sample != "P1-a" || r.Group != "A" || math.Abs(r.V-60) > 1e-6 {
			t.Errorf("first reported %+v", r)
		}
		if run.Entries[1].Name != "P1-a" || run.Entries[1].Group != "A" {
			t.Errorf("entry %+v", run.Entries[1])
		}
	}
}

// A run whose middle check fails invalidates exactly the samples between
// its neighbouring checks (orders 6, 7, 9 and 10) and the groups holding
// any of them: group A (between the first two checks) stays valid; B
// (one member before check 5, one after it) and C (one member on each
// side of the failed check 8) are invalid; D (one member between check 8
// and 11, one after the last check) is invalid, and so is E (after the
// last check, unbracketed).
func TestMiddleCheckFailsGroups(t *testing.T) {
	rows := []string{
		"1,check,1,", "2,sample,3,A", "3,sample,3,A", "4,sample,3,B",
		"5,check,1,", "6,sample,3,B", "7,sample,3,C",
		"8,check,0.9,", "9,sample,3,C", "10,sample,3,D",
		"11,check,1,", "12,sample,3,D", "13,sample,3,E", "14,sample,3,E",
	}
	run, err := labRun(t, "group", rows, lab.Options{})
	if err != nil {
		t.Fatal(err)
	}
	status := map[int]string{}
	for _, e := range run.Entries {
		if e.Role == RoleSample {
			status[e.Order] = e.Status
		}
	}
	want := map[int]string{2: Valid, 3: Valid, 4: Valid, 6: Invalid, 7: Invalid, 9: Invalid, 10: Invalid, 12: Unbracketed, 13: Unbracketed, 14: Unbracketed}
	for o, s := range want {
		if status[o] != s {
			t.Errorf("sample %d: %s, want %s", o, status[o], s)
		}
	}
	wantG := map[string]string{"A": Valid, "B": Invalid, "C": Invalid, "D": Invalid, "E": Invalid}
	var order []string
	for _, g := range run.Groups {
		order = append(order, g.Group)
		if g.Status != wantG[g.Group] {
			t.Errorf("group %s: %s (not valid %v), want %s", g.Group, g.Status, g.NotValid, wantG[g.Group])
		}
	}
	if !slices.Equal(order, []string{"A", "B", "C", "D", "E"}) || run.GroupsValid != 1 || run.GroupsInvalid != 4 {
		t.Errorf("groups %v: %d valid, %d invalid", order, run.GroupsValid, run.GroupsInvalid)
	}
	if b := run.Groups[1]; !slices.Equal(b.Members, []int{4, 6}) || !slices.Equal(b.NotValid, []int{6}) {
		t.Errorf("group B %+v", b)
	}
}

// A dilution column multiplies a sample's result; without a basis or a
// group the run has no lab section.
func TestRunDilution(t *testing.T) {
	run, err := labRun(t, "dilution", []string{"1,check,1,", "2,sample,3,5", "3,check,1,"}, lab.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if a := run.Entries[1].Amounts[0]; math.Abs(a.Conc-15) > 1e-6 {
		t.Errorf("diluted 5-fold: %g, want 15", a.Conc)
	}
	if run.Lab != nil || run.Groups != nil {
		t.Errorf("lab section without a basis or group: %+v", run.Lab)
	}
}

// Bad lab input in a run sheet: errors name the sheet, line and column.
func TestRunLabBadInput(t *testing.T) {
	basis, _ := lab.ParseBasis("mg/kg")
	for _, c := range []struct {
		name, header string
		rows         []string
		basis        *lab.Basis
		want         string
	}{
		{"group on a check", "group", []string{"1,check,1,A", "2,sample,3,A"}, nil, "run.csv:2:6: a check row takes no group"},
		{"unknown replicate_of", "sample,replicate_of", []string{"1,check,1,,", "2,sample,3,s1,s9"}, nil, `run.csv:3:7: sample "s1": replicate_of "s9" is not a sample`},
		{"mass of 0", "mass,mass_unit,volume,volume_unit", []string{"1,check,1,,,,", "2,sample,3,0,g,50,mL"}, &basis, `run.csv:3:6: sample "r2.csv": mass "0" is not a positive number`},
		{"unit that cannot convert", "mass,mass_unit,volume,volume_unit", []string{"1,check,1,,,,", "2,sample,3,2.5,mL,50,mL"}, &basis, `run.csv:3:7: sample "r2.csv": mass unit "mL" cannot be converted`},
		{"basis without preparation", "group", []string{"1,check,1,", "2,sample,3,A"}, &basis, `run.csv:3: sample "r2.csv": basis mg/kg needs its mass`},
		{"same name twice", "sample,group", []string{"1,check,1,,", "2,sample,3,s1,A", "3,sample,3,s1,A"}, nil, `run.csv:4:6: sample "s1" is named twice (lines 3 and 4)`},
		{"dilution 0", "dilution", []string{"1,check,1,", "2,sample,3,0"}, nil, `run.csv:3:6: dilution "0"`},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := labRun(t, c.header, c.rows, lab.Options{Basis: c.basis})
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want one containing %q", err, c.want)
			}
		})
	}
}
