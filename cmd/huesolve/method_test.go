package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/method"
	"huesolve/reference"
)

// settingLines are the "# key: value" lines of a result CSV from the
// first setting (window) to the last before the inputs: the settings
// in force.
func settingLines(csv string) string {
	var out []string
	in := false
	for _, l := range strings.Split(csv, "\n") {
		if strings.HasPrefix(l, "# window:") {
			in = true
		}
		if !strings.HasPrefix(l, "#") || strings.HasPrefix(l, "# input:") || strings.HasPrefix(l, "# override:") {
			in = false
		}
		if in {
			out = append(out, l)
		}
	}
	return strings.Join(out, "\n")
}

// TestMethodRoundTrip: window --save-method, then solve --method, gives
// the numbers (and the settings) of solve with the same options typed by
// hand; verify --method --save-method adds the acceptance limits; an
// option given over the method is used and recorded as an override.
func TestMethodRoundTrip(t *testing.T) {
	dir, _, _ := valCase(t, 1)
	t.Chdir(dir)
	if err := os.Mkdir("methods", 0o755); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "window", "refs.json", "--step", "20", "--min-width", "100", "--baseline", "linear", "--weighted",
		"--save-method", "methods/assay.json")
	if code != exitOK || !strings.Contains(errOut, "method written to methods/assay.json") {
		t.Fatalf("window: exit %d\n%s", code, errOut)
	}
	m, err := method.Load("methods/assay.json")
	if err != nil {
		t.Fatal(err)
	}
	set, err := reference.Load("refs.json")
	if err != nil {
		t.Fatal(err)
	}
	if m.Reference.Path != "../refs.json" || m.Reference.Checksum != set.Checksum || m.Fit.WindowNM == nil ||
		m.Fit.Baseline != "linear" || !m.Fit.Weighted || m.Acceptance != nil {
		t.Fatalf("method %+v", m)
	}
	window := fmt.Sprintf("%g-%g", m.Fit.WindowNM[0], m.Fit.WindowNM[1])
	scans := []string{"chk-1.csv", "chk-2.csv", "chk-3.csv"}
	solve := func(name string, args ...string) string {
		t.Helper()
		args = append(append([]string{"solve"}, args...), "--blank", "blank1.csv", "--format", "csv", "-o", name)
		if _, errOut, code := run(t, args...); code != exitOK && code != exitFlagged {
			t.Fatalf("%v: exit %d\n%s", args, code, errOut)
		}
		b, err := os.ReadFile(name)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	byMethod := solve("a.csv", append([]string{"--method", "methods/assay.json"}, scans...)...)
	byHand := solve("b.csv", append([]string{"refs.json"}, append(scans, "--window", window, "--baseline", "linear", "--weighted")...)...)
	if dataLines(byMethod) != dataLines(byHand) {
		t.Errorf("solve --method and solve with the options typed differ:\n%s\n%s", dataLines(byMethod), dataLines(byHand))
	}
	if settingLines(byMethod) == "" || settingLines(byMethod) != settingLines(byHand) {
		t.Errorf("settings recorded differ:\n%s\n--\n%s", settingLines(byMethod), settingLines(byHand))
	}
	for _, want := range []string{"# method: methods/assay.json\n", "# method_checksum: " + m.Checksum + "\n", "# reference_set: refs.json\n"} {
		if !strings.Contains(byMethod, want) {
			t.Errorf("solve --method's record lacks %q", want)
		}
	}
	if strings.Contains(byMethod, "# override") {
		t.Error("an override recorded where none was given")
	}

	// verify with the method adds its acceptance limits.
	_, errOut, code = run(t, "verify", "--method", "methods/assay.json", "checks.csv", "--recovery", "95-105",
		"--save-method", "methods/verified.json", "--format", "csv", "-o", "verify.csv")
	if code != exitOK && code != exitFlagged {
		t.Fatalf("verify --method: exit %d\n%s", code, errOut)
	}
	v, err := method.Load("methods/verified.json")
	if err != nil {
		t.Fatal(err)
	}
	if v.Acceptance == nil || v.Acceptance.RecoveryLoPct != 95 || v.Acceptance.RecoveryHiPct != 105 || *v.Fit.WindowNM != *m.Fit.WindowNM ||
		v.Fit.Baseline != "linear" || v.Reference != m.Reference {
		t.Errorf("verified method %+v, acceptance %+v", v, v.Acceptance)
	}
	// The window's method holds no acceptance limits: --recovery is
	// used and is no override.
	rec, _ := os.ReadFile("verify.csv")
	if strings.Contains(string(rec), "# override") || !strings.Contains(string(rec), "# recovery: 95-105\n") {
		t.Errorf("verify's record:\n%s", rec)
	}

	// An option given over the method is used and recorded.
	over := solve("c.csv", append([]string{"--method", "methods/verified.json", "--baseline", "offset"}, scans...)...)
	plain := solve("d.csv", append([]string{"refs.json"}, append(scans, "--window", window, "--baseline", "offset", "--weighted")...)...)
	if dataLines(over) != dataLines(plain) {
		t.Error("solve --method --baseline offset does not fit with an offset")
	}
	if !strings.Contains(over, "# override: baseline offset (method: linear)\n") || !strings.Contains(over, "# baseline: offset\n") {
		t.Errorf("the override is not recorded:\n%s", over)
	}
}

// TestMethodRefusesOtherSet: a reference set rebuilt at the method's
// path, and a method edited by hand, are refused with the reason.
func TestMethodRefusesOtherSet(t *testing.T) {
	dir, _, _ := valCase(t, 1)
	t.Chdir(dir)
	if _, errOut, code := run(t, "window", "refs.json", "--step", "20", "--min-width", "100", "--save-method", "assay.json"); code != exitOK {
		t.Fatalf("window: exit %d\n%s", code, errOut)
	}
	raw, err := os.ReadFile("assay.json")
	if err != nil {
		t.Fatal(err)
	}
	edited := strings.Replace(string(raw), `"weighted": false`, `"weighted": true`, 1)
	if err := os.WriteFile("edited.json", []byte(edited), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "solve", "--method", "edited.json", "chk-1.csv")
	if code != exitFailure || !strings.Contains(errOut, "edited.json") || !strings.Contains(errOut, "checksum does not match") {
		t.Errorf("an edited method: exit %d\n%s", code, errOut)
	}
	set, err := reference.Load("refs.json")
	if err != nil {
		t.Fatal(err)
	}
	set.Ceiling = 1.9 // as if calibrated again with another ceiling
	if err := set.Save(filepath.Join(dir, "refs.json")); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"solve", "--method", "assay.json", "chk-1.csv", "-o", "out.csv", "--format", "csv"},
		{"verify", "--method", "assay.json", "checks.csv"},
	} {
		out, errOut, code := run(t, args...)
		if code != exitFailure || out != "" || !strings.Contains(errOut, "not the one the method was made with") ||
			!strings.Contains(errOut, "refs.json") || !strings.Contains(errOut, "--save-method") {
			t.Errorf("%s with a rebuilt set: exit %d\n%s", args[0], code, errOut)
		}
	}
	if _, err := os.Stat("out.csv"); !os.IsNotExist(err) {
		t.Error("solve wrote results with the wrong reference set")
	}
	// verify saves no method when a compound fails acceptance.
	_, errOut, code = run(t, "verify", "refs.json", "checks.csv", "--recovery", "99.999-100.001", "--save-method", "strict.json")
	if code != exitFlagged || !strings.Contains(errOut, "method not saved to strict.json") {
		t.Errorf("verify with failing compounds: exit %d\n%s", code, errOut)
	}
	if _, err := os.Stat("strict.json"); !os.IsNotExist(err) {
		t.Error("a method was saved although compounds failed acceptance")
	}
	if _, errOut, code := run(t, "window", "refs.json", "--save-method", "-"); code != exitUsage || !strings.Contains(errOut, "--save-method -") {
		t.Errorf("--save-method -: exit %d\n%s", code, errOut)
	}
	// Without --method, solve takes two arguments at least, as before.
	if _, errOut, code := run(t, "solve", "refs.json"); code != exitUsage || !strings.Contains(errOut, "or --method FILE") {
		t.Errorf("solve refs.json: exit %d\n%s", code, errOut)
	}
}

// TestReviewShowsMethod: the review report of solve --method names the
// method and its checksum, an option given over it, and each input's
// SHA-256, as the result files do.
func TestReviewShowsMethod(t *testing.T) {
	dir, _, _ := valCase(t, 1)
	t.Chdir(dir)
	if _, errOut, code := run(t, "window", "refs.json", "--step", "20", "--min-width", "100", "--save-method", "assay.json"); code != exitOK {
		t.Fatalf("window: exit %d\n%s", code, errOut)
	}
	m, err := method.Load("assay.json")
	if err != nil {
		t.Fatal(err)
	}
	if _, errOut, code := run(t, "solve", "--method", "assay.json", "chk-1.csv", "--baseline", "linear", "--report", "run.html"); code != exitOK && code != exitFlagged {
		t.Fatalf("solve: exit %d\n%s", code, errOut)
	}
	page, err := os.ReadFile("run.html")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"assay.json", m.Checksum, "baseline linear (method: offset)", sha256Hex(t, "chk-1.csv") + "  chk-1.csv"} {
		if !strings.Contains(string(page), want) {
			t.Errorf("the review report lacks %q", want)
		}
	}
}

// TestMethodReportSettings: sequence --save-method keeps --basis,
// --max-rep-rsd and --record in the method (the history file relative to
// the method's folder); sequence, solve and verify --method use them, a
// value given on the command line overrides the method's and is
// recorded, and verify --save-method carries the section over.
func TestMethodReportSettings(t *testing.T) {
	dir, _, checks := valCaseNoise(t, 1, quietCheckSD)
	t.Chdir(dir)
	sheet := filepath.Base(seqLabSheet(t, dir, "5"))
	checks = filepath.Base(checks)
	_, errOut, code := run(t, "sequence", "refs.json", sheet, "--basis", "mg/kg", "--max-rep-rsd", "4", "--record", "qc.db",
		"--save-method", "m/assay.json")
	if code != exitOK || !strings.Contains(errOut, "method written to m/assay.json") {
		t.Fatalf("sequence --save-method: exit %d\n%s", code, errOut)
	}
	m, err := method.Load("m/assay.json")
	if err != nil {
		t.Fatal(err)
	}
	if m.Schema != 2 || m.Report == nil || *m.Report != (method.Report{Basis: "mg/kg", MaxRepRSDPct: 4, Record: "../qc.db"}) ||
		m.Acceptance == nil || m.Acceptance.RecoveryLoPct != 98 {
		t.Fatalf("method %+v, report %+v", m, m.Report)
	}
	out, errOut, code := run(t, "sequence", "--method", "m/assay.json", sheet, "--format", "csv")
	if code != exitOK || !strings.Contains(out, "\n# basis: mg/kg\n") || !strings.Contains(out, "\n# max-rep-rsd: 4\n") ||
		!strings.Contains(out, "\nA-1,A,red,mg/kg,") || !strings.Contains(errOut, "recorded in "+filepath.Join("m", "..", "qc.db")) {
		t.Fatalf("sequence --method: exit %d\n%s\n%s", code, out, errOut)
	}
	out, _, code = run(t, "sequence", "--method", "m/assay.json", sheet, "--format", "csv", "--basis", "% w/w", "--record", "")
	if code != exitOK || !strings.Contains(out, "\n# override: basis % w/w (method: mg/kg)\n") || !strings.Contains(out, "\nA-1,A,red,% w/w,") {
		t.Errorf("override: exit %d\n%s", code, out)
	}
	if err := os.WriteFile("samples.csv", []byte("sample,group,mass,mass_unit,volume,volume_unit\nchk-3,A,2.5,g,50,mL\nchk-4,A,2.5,g,50,mL\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errOut, code = run(t, "solve", "--method", "m/assay.json", "chk-3.csv", "chk-4.csv", "--blank", "blank1.csv", "--samples", "samples.csv")
	if code != exitFlagged || !strings.Contains(out, "Reported (basis: mg/kg") || !strings.Contains(out, "RSD limit 4 %") ||
		!strings.Contains(errOut, "recorded in") {
		t.Errorf("solve --method: exit %d\n%s\n%s", code, out, errOut)
	}
	_, errOut, code = run(t, "verify", "--method", "m/assay.json", checks, "--save-method", "v.json")
	if code != exitOK || !strings.Contains(errOut, "recorded in") {
		t.Fatalf("verify --method: exit %d\n%s", code, errOut)
	}
	v, err := method.Load("v.json")
	if err != nil || v.Report == nil || *v.Report != (method.Report{Basis: "mg/kg", MaxRepRSDPct: 4, Record: "qc.db"}) {
		t.Errorf("verify --save-method: %v, report %+v", err, v.Report)
	}
	out, errOut, code = run(t, "history", "qc.db", "--format", "csv")
	if code != exitOK || strings.Count(out, "\nred,") < 3 {
		t.Errorf("history: exit %d\n%s\n%s", code, out, errOut)
	}
}
