package sequence

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/calibration"
	"huesolve/internal/synth"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// writeScan writes s as a delimited scan file in dir (invented data).
func writeScan(t *testing.T, dir, name string, s *spectrum.Spectrum) {
	t.Helper()
	f, err := os.Create(filepath.Join(dir, name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if err := spectrum.WriteDelimited(f, []*spectrum.Spectrum{s}, spectrum.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
}

// runDir writes a run of two compounds: rows "order,role,scan,conc" with
// the check's found concentration scaled by scale (a check with scale
// 0.9 recovers 90 %). It returns the sheet's path.
func runDir(t *testing.T, rows []string, scale map[string]float64) string {
	t.Helper()
	dir := t.TempDir()
	names := synth.Names()
	var sheet strings.Builder
	sheet.WriteString("order,role,scan," + names[0] + " (mg/L)," + names[1] + " (mg/L)\n")
	for _, r := range rows {
		f := strings.Split(r, ",")
		scan := f[2]
		conc := []float64{0, 0}
		if f[1] == "check" {
			conc = []float64{5, 8}
		} else if f[1] == "sample" {
			conc = []float64{3, 4}
		}
		k := 1.0
		if v, ok := scale[scan]; ok {
			k = v
		}
		s := synth.Sample{Conc: []float64{conc[0] * k, conc[1] * k}}.Spectrum()
		writeScan(t, dir, scan, s)
		cells := ","
		if f[1] == "check" {
			cells = "5,8"
		}
		fmt.Fprintf(&sheet, "%s,%s,%s,%s\n", f[0], f[1], scan, cells)
	}
	p := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(p, []byte(sheet.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func process(t *testing.T, path string) *Run {
	t.Helper()
	sh, err := ReadSheet(path, calibration.SheetOptions{})
	if err != nil {
		t.Fatal(err)
	}
	run, err := Process(context.Background(), synth.Set(2), sh, Options{Model: unmix.Options{}})
	if err != nil {
		t.Fatal(err)
	}
	return run
}

// A run whose middle check fails invalidates exactly the samples between
// its neighbouring checks; the samples after the last check are
// unbracketed.
func TestMiddleCheckFails(t *testing.T) {
	p := runDir(t, []string{
		"1,blank,b1.csv", "2,check,c1.csv", "3,sample,s1.csv", "4,sample,s2.csv",
		"5,check,c2.csv", "6,sample,s3.csv", "7,sample,s4.csv", "8,check,c3.csv",
		"9,sample,s5.csv", "10,check,c4.csv", "11,sample,s6.csv",
	}, map[string]float64{"c3.csv": 0.9})
	run := process(t, p)
	want := map[string]string{"s1.csv": Valid, "s2.csv": Valid, "s3.csv": Invalid, "s4.csv": Invalid,
		"s5.csv": Invalid, "s6.csv": Unbracketed}
	for _, e := range run.Entries {
		switch e.Role {
		case RoleSample:
			if e.Status != want[e.Name] {
				t.Errorf("%s: %s, want %s", e.Name, e.Status, want[e.Name])
			}
		case RoleCheck:
			if *e.Pass != (e.Name != "c3.csv") {
				t.Errorf("check %s pass %v (why %v)", e.Name, *e.Pass, e.Why)
			}
		}
	}
	if run.Pass || run.ChecksFailed != 1 || run.Valid != 2 || run.Invalid != 3 || run.Unbracketed != 1 {
		t.Errorf("summary %+v", run)
	}
}

// Every check passing and every sample bracketed: the run passes.
func TestRunPasses(t *testing.T) {
	p := runDir(t, []string{"3,check,c2.csv", "1,blank,b.csv", "2,sample,s0.csv", "4,sample,s1.csv", "5,check,c3.csv"}, nil)
	run := process(t, p)
	if run.Entries[0].Name != "b.csv" || run.Entries[1].Status != Unbracketed {
		t.Errorf("run order or status wrong: %+v", run.Entries[:2])
	}
	p = runDir(t, []string{"1,blank,b.csv", "2,check,c1.csv", "3,sample,s1.csv", "4,check,c2.csv"}, nil)
	run = process(t, p)
	if !run.Pass || run.Valid != 1 {
		t.Errorf("run should pass: %+v", run)
	}
}

// Drift slope and its standard error worked by hand (ordinary least
// squares, textbook formulas): x = 1, 2, 3, 4; y = 100, 99, 99, 97.
// mean x 2.5, mean y 98.75, Sxx = 5, Sxy = -4.5: slope -0.9, intercept
// 98.75 + 0.9·2.5 = 101; fitted 100.1, 99.2, 98.3, 97.4; residuals
// -0.1, -0.2, 0.7, -0.4; SSR 0.70, s² = 0.70/2 = 0.35; SE(slope) =
// √(0.35/5) = √0.07 = 0.2645751.
func TestLineByHand(t *testing.T) {
	d, ok := Line([]float64{1, 2, 3, 4}, []float64{100, 99, 99, 97})
	if !ok || !d.HasSE {
		t.Fatal("no line")
	}
	for _, c := range []struct {
		what      string
		got, want float64
	}{{"slope", d.Slope, -0.9}, {"intercept", d.Intercept, 101}, {"SE", d.SE, 0.26457513110645906}} {
		if diff := c.got - c.want; diff > 1e-12 || diff < -1e-12 {
			t.Errorf("%s = %.15g, want %.15g", c.what, c.got, c.want)
		}
	}
	if d, ok := Line([]float64{1, 2}, []float64{1, 3}); !ok || d.HasSE || d.Slope != 2 {
		t.Errorf("two points: %+v %v", d, ok)
	}
	if _, ok := Line([]float64{2, 2, 2}, []float64{1, 2, 3}); ok {
		t.Error("equal x gave a line")
	}
}

// Check recoveries falling along the run show as a negative drift per
// position in the run.
func TestRecoveryDrift(t *testing.T) {
	p := runDir(t, []string{"1,check,c1.csv", "2,check,c2.csv", "3,check,c3.csv"},
		map[string]float64{"c1.csv": 1.0, "c2.csv": 0.99, "c3.csv": 0.98})
	run := process(t, p)
	found := false
	for _, d := range run.Drift {
		if d.What == "recovery" && d.Compound == synth.Names()[0] {
			found = true
			if d.Per != "position" || d.N != 3 || d.Slope > -0.9 || d.Slope < -1.1 {
				t.Errorf("drift %+v, want about -1 %% per position", d)
			}
		}
	}
	if !found {
		t.Errorf("no recovery drift in %+v", run.Drift)
	}
}

func TestBadRunSheets(t *testing.T) {
	for _, c := range []struct {
		name, sheet, want string
	}{
		{"no check", "order,role,scan,amber,rose\n1,blank,x.csv,,\n2,sample,x.csv,,\n", "no check standard"},
		{"unknown role", "order,role,scan,amber,rose\n1,blank,x.csv,,\n2,standard,x.csv,5,8\n", `run.csv:3:2: unknown role "standard"`},
		{"duplicate order", "order,role,scan,amber,rose\n1,check,x.csv,5,8\n1,sample,x.csv,,\n", "run.csv:3:1: order 1 is given twice (lines 2 and 3)"},
		{"no role", "order,scan,amber,rose\n1,x.csv,5,8\n", "needs the columns order and role"},
		{"check without known", "order,role,scan,amber,rose\n1,check,x.csv,5,\n", "run.csv:2:2: a check row gives every compound"},
		{"sample with conc", "order,role,scan,amber,rose\n1,check,x.csv,5,8\n2,sample,x.csv,1,0\n", "run.csv:3:2: a sample row gives concentrations"},
		{"bad order", "order,role,scan,amber,rose\nfirst,check,x.csv,5,8\n", `run.csv:2:1: order "first"`},
		{"time goes back", "order,role,time,scan,amber,rose\n1,check,09:10,x.csv,5,8\n2,sample,09:00,x.csv,,\n", "run.csv:3:3: time 09:00 at order 2 is earlier"},
		{"time on some rows", "order,role,time,scan,amber,rose\n1,check,09:10,x.csv,5,8\n2,sample,,x.csv,,\n", "run.csv:3:3: give a time on every row or on none"},
		{"bad time", "order,role,time,scan,amber,rose\n1,check,9h10,x.csv,5,8\n", `run.csv:2:3: time "9h10"`},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			writeScan(t, dir, "x.csv", synth.Sample{Conc: []float64{1, 1}}.Spectrum())
			p := filepath.Join(dir, "run.csv")
			if err := os.WriteFile(p, []byte(c.sheet), 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := ReadSheet(p, calibration.SheetOptions{})
			var pe *spectrum.ParseError
			if err == nil || !strings.Contains(err.Error(), c.want) || !errors.As(err, &pe) {
				t.Errorf("error %v, want one containing %q", err, c.want)
			}
		})
	}
}

// Times give drift per hour, from the first row's time.
func TestTimedRun(t *testing.T) {
	dir := t.TempDir()
	s := synth.Sample{Conc: []float64{5, 8}}.Spectrum()
	writeScan(t, dir, "c.csv", s)
	p := filepath.Join(dir, "run.csv")
	text := "order,role,time,scan,amber (mg/L),rose (mg/L)\n1,check,23:30,c.csv,5,8\n2,check,24:00,c.csv,5,8\n3,check,25:30:00,c.csv,5,8\n"
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	run := process(t, p)
	if !run.Timed || run.Entries[2].Hours != 2 || run.Drift[0].Per != "hour" {
		t.Errorf("timed run %+v", run)
	}
}

// A blank that rises across the run shows its whole drift. Worked by
// hand (invented, noiseless scans): blank rows at positions 1, 3 and 5
// hold 0, 0.1 and 0.2 mg/L of the first compound, so the line through
// (1, 0), (3, 0.1), (5, 0.2) has slope 0.1/2 = 0.05 mg/L per position,
// intercept -0.05 and no scatter (SE 0). Solved against the blanks' mean
// (0.1) the first two would read -0.1 and 0, floored at 0 by the
// non-negative fit, and the slope would read 0.025: half the drift.
func TestBlankDrift(t *testing.T) {
	dir := t.TempDir()
	for i, c := range []float64{0, 0.1, 0.2} {
		writeScan(t, dir, fmt.Sprintf("b%d.csv", i+1), synth.Sample{Conc: []float64{c, 0}}.Spectrum())
	}
	writeScan(t, dir, "c.csv", synth.Sample{Conc: []float64{5, 8}}.Spectrum())
	n := synth.Names()
	sheet := "order,role,scan," + n[0] + " (mg/L)," + n[1] + " (mg/L)\n" +
		"1,blank,b1.csv,,\n2,check,c.csv,5,8\n3,blank,b2.csv,,\n4,check,c.csv,5,8\n5,blank,b3.csv,,\n"
	p := filepath.Join(dir, "run.csv")
	if err := os.WriteFile(p, []byte(sheet), 0o644); err != nil {
		t.Fatal(err)
	}
	run := process(t, p)
	var got *Drift
	for i, d := range run.Drift {
		if d.What == "blank" && d.Compound == n[0] {
			got = &run.Drift[i]
		}
	}
	if got == nil {
		t.Fatalf("no blank drift for %s in %+v", n[0], run.Drift)
	}
	if got.Per != "position" || got.N != 3 || !got.HasSE || math.Abs(got.Slope-0.05) > 1e-6 ||
		math.Abs(got.Intercept+0.05) > 1e-6 || got.SE > 1e-6 {
		t.Errorf("blank drift %+v, want slope 0.05 mg/L per position, intercept -0.05, SE 0, n 3", *got)
	}
	// The checks are corrected with the blanks' mean, 0.1 mg/L of the
	// first compound: 4.9 of 5 found, 98 %.
	if r := run.Entries[1].Checks[0].Recovery; r == nil || math.Abs(*r-98) > 1e-6 {
		t.Errorf("check recovery %v, want 98 %%", r)
	}
}
