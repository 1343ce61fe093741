package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/calibration"
	"huesolve/reference"
	"huesolve/spectrum"
)

// valDyes is the invented absorptivity of two test dyes (per mg/L per cm)
// on grid wl.
func valDyes(wl []float64) [2][]float64 {
	var k [2][]float64
	for j, b := range [][3]float64{{470, 25, 0.040}, {540, 30, 0.030}} {
		k[j] = make([]float64, len(wl))
		for i, w := range wl {
			d := (w - b[0]) / b[1]
			k[j][i] = b[2] * math.Exp(-d*d/2)
		}
	}
	return k
}

// valCase writes an invented calibration and check-standard case into a
// temporary folder: scans of a solvent (A = 0.02) with the two dyes and
// noise of SD 0.0005 on 400-700 nm; standards.csv (two blanks and each dye
// alone at five levels), refs.json built from it, and a checks sheet whose
// declared concentrations are those of the scans times declare (1: true).
func valCase(t *testing.T, declare float64) (dir, refs, checks string) {
	t.Helper()
	return valCaseNoise(t, declare, 0.0005)
}

// valCaseNoise is valCase with noise of SD checkSD in the check scans and
// their blank. The blank subtraction doubles the checks' residual
// variance: with the standards' noise (valCase) the reduced chi-square is
// near 2, under the misfit limit of 4; quieter check scans (as from
// averaged scans) come nearer 1, and noisyCheckSD gives near 11 (flagged).
func valCaseNoise(t *testing.T, declare, checkSD float64) (dir, refs, checks string) {
	t.Helper()
	dir = t.TempDir()
	var wl []float64
	for w := 400.0; w <= 700; w += 2 {
		wl = append(wl, w)
	}
	k := valDyes(wl)
	rng := rand.New(rand.NewPCG(3, 5))
	sd := 0.0005 // scan noise
	write := func(name string, c0, c1 float64) {
		v := make([]float64, len(wl))
		for i := range v {
			v[i] = 0.02 + c0*k[0][i] + c1*k[1][i] + sd*rng.NormFloat64()
		}
		f, err := os.Create(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		s := &spectrum.Spectrum{Name: strings.TrimSuffix(name, ".csv"), Wavelengths: wl, Values: v, Quantity: spectrum.Absorbance}
		if err := spectrum.WriteDelimited(f, []*spectrum.Spectrum{s}, spectrum.WriteOptions{Comments: []string{"invented test data"}}); err != nil {
			t.Fatal(err)
		}
	}
	var b strings.Builder
	b.WriteString("scan,red (mg/L),yellow (mg/L)\n")
	for i := 1; i <= 2; i++ {
		name := fmt.Sprintf("blank%d.csv", i)
		write(name, 0, 0)
		fmt.Fprintf(&b, "%s,0,0\n", name)
	}
	for _, lv := range []float64{2, 4, 6, 8, 10} {
		for j := range 2 {
			name := fmt.Sprintf("std-%d-%g.csv", j, lv)
			c := [2]float64{}
			c[j] = lv
			write(name, c[0], c[1])
			fmt.Fprintf(&b, "%s,%g,%g\n", name, c[0], c[1])
		}
	}
	std := filepath.Join(dir, "standards.csv")
	if err := os.WriteFile(std, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	sh, err := calibration.ReadSheet(std, calibration.SheetOptions{})
	if err != nil {
		t.Fatal(err)
	}
	set, err := calibration.Build(sh, calibration.Options{})
	if err != nil {
		t.Fatal(err)
	}
	refs = filepath.Join(dir, "refs.json")
	if err := set.Save(refs); err != nil {
		t.Fatal(err)
	}
	b.Reset()
	b.WriteString("scan,red (mg/L),yellow (mg/L)\n")
	sd = checkSD
	write("chk-blank.csv", 0, 0)
	b.WriteString("chk-blank.csv,0,0\n")
	for i, c := range [][2]float64{{5, 5}, {5, 5}, {8, 2}, {0, 6}} {
		name := fmt.Sprintf("chk-%d.csv", i+1)
		write(name, c[0], c[1])
		fmt.Fprintf(&b, "%s,%g,%g\n", name, c[0]*declare, c[1]*declare)
	}
	checks = filepath.Join(dir, "checks.csv")
	if err := os.WriteFile(checks, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return dir, refs, checks
}

// quietCheckSD is the noise of check scans that come out unflagged.
const quietCheckSD = 0.00025

// noisyCheckSD is the noise of check scans noisier than the standards
// (2.4 times), whose fits come out flagged misfit while their recoveries
// still pass.
const noisyCheckSD = 0.0012

func TestVerifyPasses(t *testing.T) {
	dir, refs, checks := valCaseNoise(t, 1, quietCheckSD)
	plots := filepath.Join(dir, "plots")
	out, errOut, code := run(t, "verify", refs, checks, "--plots", plots)
	if code != exitOK {
		t.Fatalf("exit %d, stderr:\n%s\nstdout:\n%s", code, errOut, out)
	}
	if strings.Contains(out+errOut, "warning flags") || !strings.Contains(errOut, "all 2 compounds passed acceptance\n") {
		t.Errorf("unflagged checks: stdout:\n%s\nstderr:\n%s", out, errOut)
	}
	for _, f := range []string{"verify-red.png", "verify-yellow.png"} {
		if st, err := os.Stat(filepath.Join(plots, f)); err != nil || st.Size() == 0 {
			t.Errorf("plot %s: %v", f, err)
		}
	}
}

// TestVerifyFlaggedExit4: check standards whose fits carry a "!" flag
// (misfit, from the doubled noise of a one-scan blank) still pass on
// recovery, but verify says how many results are flagged, under the
// table and on stderr, and exits with code 4.
func TestVerifyFlaggedExit4(t *testing.T) {
	_, refs, checks := valCaseNoise(t, 1, noisyCheckSD)
	out, errOut, code := run(t, "verify", refs, checks)
	if code != exitFlagged {
		t.Fatalf("exit %d, want %d; stderr:\n%s\nstdout:\n%s", code, exitFlagged, errOut, out)
	}
	n := strings.Count(out, ", flagged ")
	if n == 0 {
		t.Fatalf("no flagged check rows:\n%s", out)
	}
	note := fmt.Sprintf("%d check results carry warning flags: the fit does not describe them well", n)
	if n == 1 {
		note = "1 check result carries warning flags"
	}
	if !strings.Contains(out, note) || !strings.Contains(errOut, note) ||
		!strings.Contains(errOut, fmt.Sprintf("all 2 compounds passed acceptance on recovery, but %d check results are flagged", n)) {
		t.Errorf("want the note %q on stdout and stderr; stdout:\n%s\nstderr:\n%s", note, out, errOut)
	}
	// Checks are named by file stem, as solve names samples.
	if strings.Contains(out, "chk-1.csv") {
		t.Errorf("checks named by file, not by stem as solve does:\n%s", out)
	}
	for _, want := range []string{"chk-1 ", "red", "yellow", "mean recovery", "pass", "figures of merit", "mean of 1 blank row(s)"} {
		if !strings.Contains(strings.ToLower(out), want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	// chk-4 holds no red: judged against the LOQ, and shown as solve
	// shows a result held at zero.
	if !strings.Contains(out, "Standards with/without") || !strings.Contains(out, "Standards with/without: check standards holding the compound") ||
		strings.Contains(out, "│ 0 ± 0") {
		t.Errorf("summary heading, its legend line or a held-at-zero result:\n%s", out)
	}
	for _, l := range strings.Split(out, "\n") {
		if strings.Contains(l, "chk-4 ") && strings.Contains(l, " red ") && !strings.Contains(l, "yes (≤ LOQ 0.") {
			t.Errorf("red in chk-4: %q, want it judged as yes (≤ LOQ 0.0…)", l)
		}
	}
}

// Declared concentrations 5 % below what was put in the scans give
// recoveries near 105 %: acceptance fails, exit code 4.
func TestVerifyFailsExit4(t *testing.T) {
	_, refs, checks := valCaseNoise(t, 0.95, quietCheckSD)
	out, errOut, code := run(t, "verify", refs, checks)
	if code != exitFlagged {
		t.Fatalf("exit %d, want %d; stderr:\n%s", code, exitFlagged, errOut)
	}
	if !strings.Contains(out, "FAIL: mean recovery 10") || !strings.Contains(errOut, "2 of 2 compounds failed acceptance") {
		t.Errorf("stdout:\n%s\nstderr:\n%s", out, errOut)
	}
	// The same with a wide enough recovery range passes.
	_, errOut, code = run(t, "verify", refs, checks, "--recovery", "95-110", "--max-rsd", "5")
	if code != exitOK {
		t.Errorf("with 95-110 %%: exit %d, stderr:\n%s", code, errOut)
	}
}

func TestVerifyJSONAndCSV(t *testing.T) {
	dir, refs, checks := valCaseNoise(t, 1, quietCheckSD)
	outFile := filepath.Join(dir, "v.json")
	_, errOut, code := run(t, "verify", refs, checks, "--format", "json", "-o", outFile, "--crossval", filepath.Join(dir, "standards.csv"))
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	raw, err := os.ReadFile(outFile)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Verification struct {
			Pass      bool
			Compounds []struct {
				Compound        string
				MeanRecoveryPct float64 `json:"mean_recovery_pct"`
			}
			Checks []struct{ Standard string }
			Limits struct {
				RecoveryLo float64 `json:"recovery_lo_pct"`
				RecoveryHi float64 `json:"recovery_hi_pct"`
				MaxRSD     float64 `json:"max_rsd_pct"`
			}
		}
		CrossValidation struct {
			Folds       int
			RMSECV      []float64 `json:"rmsecv"`
			Predictions []struct{ Standard string }
		} `json:"cross_validation"`
	}
	if err := json.Unmarshal(raw, &rep); err != nil {
		t.Fatalf("%v\n%s", err, raw)
	}
	v := rep.Verification
	if l := v.Limits; l.RecoveryLo != 98 || l.RecoveryHi != 102 || l.MaxRSD != 2 {
		t.Errorf("limits %+v, want recovery_lo_pct 98, recovery_hi_pct 102, max_rsd_pct 2 (the defaults)", l)
	}
	if strings.Contains(string(raw), `"RecoveryLo"`) {
		t.Errorf("the JSON uses a Go field name:\n%s", raw)
	}
	if !v.Pass || len(v.Compounds) != 2 || len(v.Checks) != 8 {
		t.Errorf("pass %v, %d compounds, %d check rows; want true, 2, 8 (4 standards × 2)", v.Pass, len(v.Compounds), len(v.Checks))
	}
	for _, c := range v.Compounds {
		if math.Abs(c.MeanRecoveryPct-100) > 2 {
			t.Errorf("%s: mean recovery %g %%", c.Compound, c.MeanRecoveryPct)
		}
	}
	cv := rep.CrossValidation
	if cv.Folds != 10 || len(cv.Predictions) != 10 || len(cv.RMSECV) != 2 {
		t.Errorf("cross-validation: %d folds, %d predictions, %d RMSECV; want 10, 10, 2", cv.Folds, len(cv.Predictions), len(cv.RMSECV))
	}
	for _, r := range cv.RMSECV {
		// Noise 0.0005 A on bands of 0.03-0.04 A per mg/L: errors of a
		// few 0.01 mg/L at most.
		if !(r > 0) || r > 0.1 {
			t.Errorf("RMSECV %g mg/L, want small and positive", r)
		}
	}

	out, errOut, code := run(t, "verify", refs, checks, "--format", "csv")
	if code != exitOK {
		t.Fatalf("csv: exit %d: %s", code, errOut)
	}
	recs, err := commentedCSV(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 1+8+2 || recs[0][0] != "record" || recs[1][0] != "check" || recs[9][0] != "compound" {
		t.Errorf("csv: %d records:\n%s", len(recs), out)
	}
	// A check row held at zero says so in its flags, as solve's CSV does.
	head := recs[0]
	col := func(name string) int {
		for i, h := range head {
			if h == name {
				return i
			}
		}
		t.Fatalf("csv lacks column %s", name)
		return -1
	}
	found, flags := col("found"), col("flags")
	for _, r := range recs[1:] {
		if r[0] != "check" {
			continue
		}
		zero := strings.HasPrefix(r[flags], "zero")
		if zero != (r[found] == "0") {
			t.Errorf("check row %v: found %s, flags %q", r[:3], r[found], r[flags])
		}
	}
}

func TestVerifyRefusesDuplicateCompound(t *testing.T) {
	dir, refs, checks := valCase(t, 1)
	set, err := reference.Load(refs)
	if err != nil {
		t.Fatal(err)
	}
	set.Compounds[1].Absorptivity = append([]float64(nil), set.Compounds[0].Absorptivity...)
	dup := filepath.Join(dir, "dup.json")
	if err := set.Save(dup); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "verify", dup, checks)
	if code != exitFailure || !strings.Contains(errOut, "cannot be quantified") || !strings.Contains(errOut, "copy of") {
		t.Errorf("exit %d, stderr %q; want exit 1 refusing the copied compound", code, errOut)
	}
}

func TestVerifyBadFlags(t *testing.T) {
	_, refs, checks := valCase(t, 1)
	for _, args := range [][]string{
		{"--recovery", "102-98"},
		{"--recovery", "abc"},
		{"--max-rsd", "0"},
		{"--format", "xml"},
		{"--crossval-by", "day"},
		{"--baseline", "wiggly"},
		{"--window", "700-400"},
		{"--plot-format", "gif"},
	} {
		_, errOut, code := run(t, append([]string{"verify", refs, checks}, args...)...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d (stderr %q)", args, code, exitUsage, errOut)
		}
	}
	_, errOut, code := run(t, "verify", refs, filepath.Join(t.TempDir(), "missing.csv"))
	if code != exitFailure || !strings.Contains(errOut, "missing.csv") {
		t.Errorf("missing sheet: exit %d, stderr %q", code, errOut)
	}
}
