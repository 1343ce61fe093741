package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// labInputs writes a reference set, two replicate groups of invented
// scans (R: three fills of one sample; X: five, the last far off) and a
// sample sheet with the groups and a preparation of 2.5 g in 50 mL.
func labInputs(t *testing.T, sheetRows string) (dir, refs, scans, sheet string) {
	t.Helper()
	dir = t.TempDir()
	refs = writeSolveSet(t, dir)
	scans = writeScans(t, filepath.Join(dir, "reps.csv"),
		solveScan("R1", []float64{5, 1, 0, 2}, 0, 11),
		solveScan("R2", []float64{5, 1, 0, 2}, 0, 12),
		solveScan("R3", []float64{5, 1, 0, 2}, 0, 13),
		solveScan("X1", []float64{5.00, 1, 0, 2}, 0, 21),
		solveScan("X2", []float64{5.02, 1, 0, 2}, 0, 22),
		solveScan("X3", []float64{4.98, 1, 0, 2}, 0, 23),
		solveScan("X4", []float64{5.01, 1, 0, 2}, 0, 24),
		solveScan("X5", []float64{7.00, 1, 0, 2}, 0, 25),
	)
	sheet = filepath.Join(dir, "sheet.csv")
	if sheetRows == "" {
		prep := ",2.5,g,50,mL\n"
		for _, s := range []string{"R1", "R2", "R3"} {
			sheetRows += s + ",R" + prep
		}
		for _, s := range []string{"X1", "X2", "X3", "X4", "X5"} {
			sheetRows += s + ",X" + prep
		}
	}
	if err := os.WriteFile(sheet, []byte("sample,group,mass,mass_unit,volume,volume_unit\n"+sheetRows), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir, refs, scans, sheet
}

// TestSolveLabJSON runs solve with replicate groups and a mass-fraction
// basis end to end. 5 mg/L in a 50 mL extract of 2.5 g is 100 mg/kg
// (5 × 0.05 / 2.5 mg/g); group X (5.00, 5.02, 4.98, 5.01, 7.00 mg/L, so
// 100.0 ... 140.0 mg/kg) has RSD about 16 % and G = 1.79 > 1.715 (n = 5,
// alpha 0.05; testdata/grubbs), so it is flagged both ways and X5 is the
// outlier; group R is not flagged.
func TestSolveLabJSON(t *testing.T) {
	_, refs, scans, sheet := labInputs(t, "")
	out, errOut, code := run(t, "solve", refs, scans, "--samples", sheet, "--basis", "mg/kg", "--format", "json")
	if code != exitFlagged {
		t.Fatalf("exit code %d, want %d (flagged group); stderr %s", code, exitFlagged, errOut)
	}
	var doc struct {
		Lab struct {
			Basis    string
			Reported []struct {
				Sample, Compound, Unit, Reported string
				Value, U                         float64
			}
			Groups []struct {
				Group, Compound string
				N               int
				Mean            float64
				RSD             float64 `json:"rsd_pct"`
				Flags           []string
				Members         []struct {
					Sample  string
					Outlier bool
				}
			}
		}
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	if doc.Lab.Basis != "mg/kg" || len(doc.Lab.Reported) != 8*4 {
		t.Fatalf("basis %q, %d reported rows; want mg/kg, 32", doc.Lab.Basis, len(doc.Lab.Reported))
	}
	r := doc.Lab.Reported[0]
	if r.Sample != "R1" || r.Compound != "amber" || r.Unit != "mg/kg" || math.Abs(r.Value-100) > 1 || r.Reported == "" {
		t.Errorf("first reported row %+v, want R1 amber about 100 mg/kg", r)
	}
	found, flagged := 0, 0
	for _, g := range doc.Lab.Groups {
		if len(g.Flags) > 0 {
			flagged++
		}
		if g.Compound != "amber" {
			continue
		}
		found++
		switch g.Group {
		case "R":
			if g.N != 3 || len(g.Flags) != 0 || math.Abs(g.Mean-100) > 1 {
				t.Errorf("group R amber: %+v, want n 3, mean about 100, no flags", g)
			}
		case "X":
			if g.N != 5 || strings.Join(g.Flags, " ") != "rep-rsd rep-outlier" || !g.Members[4].Outlier || g.Members[0].Outlier {
				t.Errorf("group X amber: %+v, want n 5, flags rep-rsd rep-outlier, X5 the outlier", g)
			}
		}
	}
	if found != 2 {
		t.Errorf("%d amber groups, want 2", found)
	}
	// The summary counts the flagged group results that the JSON lists.
	if want := fmt.Sprintf("replicate group result(s), %d flagged", flagged); flagged == 0 || !strings.Contains(errOut, want) {
		t.Errorf("summary line does not count the %d flagged groups: %s", flagged, errOut)
	}
}

func TestSolveLabTableAndCSV(t *testing.T) {
	_, refs, scans, sheet := labInputs(t, "")
	out, errOut, _ := run(t, "solve", refs, scans, "--samples", sheet)
	for _, want := range []string{"Reported (basis: the results' unit", "Replicate groups (RSD limit 5 %", "!rep-outlier", "X5*"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s\n%s", want, out, errOut)
		}
	}
	out, _, _ = run(t, "solve", refs, scans, "--samples", sheet, "--basis", "µg/L", "--format", "csv", "--max-rep-rsd", "20")
	for _, want := range []string{"\n\nreported_sample,group,compound,unit,", "\nR1,R,amber,µg/L,", "\n\ngroup,compound,unit,n,mean,sd,rsd_pct,", "\nX,amber,µg/L,5,"} {
		if !strings.Contains(out, want) {
			t.Errorf("CSV lacks %q:\n%s", want, out)
		}
	}
	if _, groups, _ := strings.Cut(out, "\n\ngroup,"); strings.Contains(groups, "rep-rsd") {
		t.Errorf("--max-rep-rsd 20: a group is still flagged rep-rsd:\n%s", out)
	}
	page := filepath.Join(filepath.Dir(sheet), "review.html")
	if _, errOut, _ := run(t, "solve", refs, scans, "--samples", sheet, "--format", "csv", "--report", page); errOut == "" {
		t.Fatal("no summary line")
	}
	html, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`id="reported-table"`, `id="groups-table"`, "Replicate groups: RSD limit 5 %", "!rep-outlier", "X5*"} {
		if !strings.Contains(string(html), want) {
			t.Errorf("review report lacks %q", want)
		}
	}
}

func TestSolveLabBadInput(t *testing.T) {
	for _, c := range []struct {
		name, rows string
		args       []string
		code       int
		want       string
	}{
		{"mass 0", "R1,R,0,g,50,mL\n", []string{"--basis", "mg/kg"}, exitFailure, `sheet.csv:2:3: sample "R1": mass "0" is not a positive number`},
		{"volume in grams", "R1,R,2.5,g,50,g\n", nil, exitFailure, `sheet.csv:2:6: sample "R1": volume unit "g" cannot be converted`},
		{"no preparation", "R1,R,,,,\n", []string{"--basis", "mg/kg"}, exitFailure, `sheet.csv:2: sample "R1": basis mg/kg needs its mass`},
		{"not a basis", "R1,R,,,,\n", []string{"--basis", "furlongs"}, exitUsage, `basis "furlongs"`},
		{"molar basis", "R1,R,,,,\n", []string{"--basis", "µM"}, exitFailure, `compound "amber" in "mg/L" cannot be reported as µM`},
		{"bad limit", "R1,R,,,,\n", []string{"--max-rep-rsd", "0"}, exitUsage, "--max-rep-rsd 0"},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir, refs, _, sheet := labInputs(t, c.rows)
			scan := writeScans(t, filepath.Join(dir, "one.csv"), solveScan("R1", []float64{5, 1, 0, 2}, 0, 11))
			o := filepath.Join(dir, "out.json")
			_, errOut, code := run(t, append([]string{"solve", refs, scan, "--samples", sheet, "-o", o}, c.args...)...)
			if code != c.code || !strings.Contains(errOut, c.want) {
				t.Errorf("exit code %d, stderr %q; want %d and %q", code, errOut, c.code, c.want)
			}
			if _, err := os.Stat(o); err == nil {
				t.Errorf("%s written after a failed run", o)
			}
		})
	}
	_, refs, scans, _ := labInputs(t, "R1,R,,,,\n")
	if _, errOut, code := run(t, "solve", refs, scans, "--basis", "% w/w"); code != exitUsage || !strings.Contains(errOut, "--samples") {
		t.Errorf("mass fraction without a sheet: code %d, stderr %q", code, errOut)
	}
}
