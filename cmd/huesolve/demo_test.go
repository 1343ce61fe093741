package main

import (
	"encoding/json"
	"fmt"
	"maps"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"huesolve/internal/demo"
)

func TestDemoFilesOnly(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "case")
	out, errOut, code := run(t, "demo", "--files-only", dir)
	if code != exitOK {
		t.Fatalf("exit code %d, stderr %q", code, errOut)
	}
	if !strings.Contains(out, dir) {
		t.Errorf("output does not name the folder %s:\n%s", dir, out)
	}
	for _, f := range []string{demo.StandardsSheet, demo.ChecksSheet, demo.SampleSheet, demo.TruthFile} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Error(err)
		}
	}
	// A second run into the same folder is allowed: it holds a demo.
	if _, errOut, code := run(t, "demo", "--files-only", dir); code != exitOK {
		t.Fatalf("second run: exit code %d, stderr %q", code, errOut)
	}
}

func TestDemoRefusesForeignFolder(t *testing.T) {
	dir := t.TempDir()
	keep := filepath.Join(dir, "notes.txt")
	if err := os.WriteFile(keep, []byte("mine"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errOut, code := run(t, "demo", "--files-only", dir)
	if code != exitUsage {
		t.Fatalf("exit code %d, want %d (stderr %q)", code, exitUsage, errOut)
	}
	if !strings.Contains(errOut, "not empty") {
		t.Errorf("stderr %q does not say why", errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, demo.StandardsSheet)); err == nil {
		t.Error("files were written into a folder holding other files")
	}
}

// Tolerances of the demo check.
const (
	// demoSEs bounds |found - put in| in standard errors of the result.
	demoSEs = 4
	// demoRel adds a share of the true value for calibration error, which
	// the per-sample standard error leaves out.
	demoRel = 0.005
)

// TestDemoRecoversTruth runs the whole demo and compares solve's results
// with the concentrations the scenario put in (the invented truth), and
// checks that each troubled sample carries the flags it should.
func TestDemoRecoversTruth(t *testing.T) {
	longEndToEnd(t)
	dir := filepath.Join(t.TempDir(), "case")
	out, errOut, code := run(t, "demo", dir)
	if code != exitOK {
		t.Fatalf("demo: exit code %d\nstderr:\n%s\nstdout:\n%s", code, errOut, out)
	}
	for _, f := range []string{
		"results/refs.json", "results/verify.json", "results/samples.csv", "results/samples.json",
		"results/plots/calibration/absorptivity.png", "results/plots/window/window-error.png",
		"results/plots/verify/verify-Scarlane.png", "results/plots/samples/0001-lot-101.png",
	} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("demo did not write %s: %v", f, err)
		}
	}
	sc := demo.New()
	res, err := readDemoResults(filepath.Join(dir, "results", "samples.json"))
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Samples) != len(sc.Samples) {
		t.Fatalf("samples.json holds %d samples, the demo made %d", len(res.Samples), len(sc.Samples))
	}
	sampleFlags := map[string][]string{}
	amountFlags := map[string][]string{} // "sample/compound"
	models := map[string]string{}
	for _, r := range res.Samples {
		s := sc.Sample(r.Sample)
		if s == nil {
			t.Fatalf("samples.json: unknown sample %q", r.Sample)
		}
		sampleFlags[r.Sample] = r.Flags
		models[r.Sample] = r.Model
		if len(r.Amounts) != len(sc.Dyes) {
			t.Fatalf("%s: %d amounts, want %d", r.Sample, len(r.Amounts), len(sc.Dyes))
		}
		for k, a := range r.Amounts {
			if a.Compound != sc.Dyes[k].Name {
				t.Fatalf("%s: amount %d is %s, want %s", r.Sample, k, a.Compound, sc.Dyes[k].Name)
			}
			amountFlags[r.Sample+"/"+a.Compound] = a.Flags
			if s.Trouble != demo.Normal && s.Trouble != demo.DilutedAgain && s.Trouble != demo.NearLimit {
				continue
			}
			want := s.Conc[k]
			if tol := demoSEs*a.SE + demoRel*want; math.Abs(a.Conc-want) > tol {
				t.Errorf("%s %s = %.4f ± %.4f mg/L, put in %g (tolerance %.4f)", r.Sample, a.Compound, a.Conc, a.SE, want, tol)
			}
		}
	}
	warning := map[string]bool{"over": true, "mimic": true, "dilute": true, "misfit": true,
		"pattern": true, "shift-max": true, "illcond": true, "noconv": true}
	for _, s := range sc.Samples {
		fl := sampleFlags[s.Name]
		has := func(f string) bool { return slices.Contains(fl, f) }
		switch s.Trouble {
		case demo.Normal, demo.DilutedAgain:
			for _, f := range fl {
				if warning[f] {
					t.Errorf("%s (a normal sample) is flagged %s", s.Name, f)
				}
			}
		case demo.NearLimit:
			f := amountFlags[s.Name+"/"+sc.Dyes[0].Name]
			if !slices.Contains(f, "<loq") && !slices.Contains(f, "<lod") {
				t.Errorf("%s: %s flags %v, want <loq or <lod", s.Name, sc.Dyes[0].Name, f)
			}
		case demo.TooStrong:
			if !has("sat") || !has("dilute") {
				t.Errorf("%s: flags %v, want sat and dilute", s.Name, fl)
			}
		case demo.Turbid:
			// The automatic model adds the scattering term (checked
			// below against the truth), so nothing is left to flag.
			for _, f := range fl {
				if warning[f] {
					t.Errorf("%s (turbid, fitted with a scattering term) is flagged %s", s.Name, f)
				}
			}
			if m := models[s.Name]; !strings.Contains(m, "scatter") {
				t.Errorf("%s: model %q, want the scattering term", s.Name, m)
			}
		case demo.UnlistedDye:
			if !has("misfit") && !has("pattern") {
				t.Errorf("%s: flags %v, want misfit or pattern", s.Name, fl)
			}
		}
	}

	// The narrative after step 6 lists exactly the samples that carry a
	// "!" flag, and says how many, as solve's summary counts them.
	flagged := map[string]bool{}
	for key, fl := range amountFlags {
		for _, f := range fl {
			if warning[f] {
				flagged[strings.Split(key, "/")[0]] = true
			}
		}
	}
	for name, fl := range sampleFlags {
		for _, f := range fl {
			if warning[f] {
				flagged[name] = true
			}
		}
	}
	start := strings.Index(out, "Exit code 4:")
	end := strings.Index(out, "Plots of every fit")
	if start < 0 || end < start {
		t.Fatalf("demo output lacks the exit-code-4 paragraph:\n%s", out)
	}
	para := out[start:end]
	listed := map[string]bool{}
	for _, m := range regexp.MustCompile(`(?m)^  (lot-\S+) `).FindAllStringSubmatch(para, -1) {
		listed[m[1]] = true
	}
	if !maps.Equal(listed, flagged) {
		t.Errorf("step 6 lists %v as flagged, samples.json flags %v:\n%s", slices.Sorted(maps.Keys(listed)), slices.Sorted(maps.Keys(flagged)), para)
	}
	words := []string{"no", "one", "two", "three", "four", "five", "six"}
	if n := len(flagged); n >= len(words) || !strings.Contains(para, words[n]+" samples carry") && !strings.Contains(para, words[n]+" sample carries") ||
		!strings.Contains(errOut, fmt.Sprintf(": %d flagged,", n)) {
		t.Errorf("step 6 does not say %d samples are flagged as the summary does:\n%s\nstderr:\n%s", n, para, errOut)
	}

	// The turbid sample: the default (automatic) model gets its dyes
	// right; a fixed offset, as step 7 shows, is flagged.
	s := sc.Sample("lot-107")
	for _, r := range res.Samples {
		if r.Sample != s.Name {
			continue
		}
		for k, a := range r.Amounts {
			if tol := demoSEs*a.SE + demoRel*s.Conc[k]; math.Abs(a.Conc-s.Conc[k]) > tol {
				t.Errorf("lot-107 (automatic model %s): %s = %.4f ± %.4f, put in %g", r.Model, a.Compound, a.Conc, a.SE, s.Conc[k])
			}
		}
	}
	_, errOut, code = run(t, "solve", filepath.Join(dir, "results", "refs.json"),
		filepath.Join(dir, "samples", "lot-107.csv"), "--blank", filepath.Join(dir, demo.BlankFile), "--baseline", "offset")
	if code != exitFlagged {
		t.Errorf("turbid sample with a fixed offset: exit code %d, want %d; stderr %q", code, exitFlagged, errOut)
	}
	checkDemoRun(t, dir, sc)
	checkDemoHistory(t, dir)
}

// demoBasisRel bounds |reported - put in| on the product basis beyond
// demoSEs standard uncertainties: the calibration's share, as demoRel.
const demoBasisRel = 0.005

// checkDemoRun runs step 8's sequence as JSON and compares each
// preparation's reported mg/kg with the content the scenario put in
// (less what the planted slip lost), and the lots' flags: lot-114 clean,
// lot-115 flagged for its RSD, both valid.
func checkDemoRun(t *testing.T, dir string, sc *demo.Scenario) {
	t.Helper()
	js := filepath.Join(dir, "results", "run.json")
	_, errOut, code := run(t, "sequence", filepath.Join(dir, "results", "refs.json"), filepath.Join(dir, demo.RunSheet),
		"--basis", "mg/kg", "-o", js)
	if code != exitFlagged || !strings.Contains(errOut, "2 replicate groups: 2 valid, 0 invalid, 1 flagged") {
		t.Fatalf("sequence: exit %d\n%s", code, errOut)
	}
	b, err := os.ReadFile(js)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Lab struct {
			Reported []struct {
				Sample, Compound, Unit, Status string
				Value, U                       float64
			}
			Groups []struct {
				Group, Compound, Status string
				Flags                   []string
			}
		}
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	preps := map[string]demo.Prep{}
	for _, l := range sc.Lots {
		for _, p := range l.Preps {
			preps[p.Name] = p
		}
	}
	dye := map[string]int{}
	for k, d := range sc.Dyes {
		dye[d.Name] = k
	}
	if len(doc.Lab.Reported) != len(preps)*len(sc.Dyes) {
		t.Fatalf("%d reported values, want %d", len(doc.Lab.Reported), len(preps)*len(sc.Dyes))
	}
	for _, r := range doc.Lab.Reported {
		p := preps[r.Sample]
		want := p.Content[dye[r.Compound]] * (1 - p.Loss)
		if tol := demoSEs*r.U + demoBasisRel*want; r.Unit != "mg/kg" || r.Status != "valid" || math.Abs(r.Value-want) > tol {
			t.Errorf("%s %s = %g ± %g %s (%s), put in %g mg/kg (tolerance %g)", r.Sample, r.Compound, r.Value, r.U, r.Unit, r.Status, want, tol)
		}
	}
	for _, g := range doc.Lab.Groups {
		flagged := len(g.Flags) > 0
		wantFlag := g.Group == "lot-115" && sc.Lots[1].Content[dye[g.Compound]] > 0
		if g.Status != "valid" || flagged != wantFlag || wantFlag && !slices.Contains(g.Flags, "rep-rsd") {
			t.Errorf("group %s %s: %s, flags %v", g.Group, g.Compound, g.Status, g.Flags)
		}
	}
}

// checkDemoHistory checks step 9's charts: only the shifted dye's series
// break a rejection rule, each of them does, and none before the shift.
func checkDemoHistory(t *testing.T, dir string) {
	t.Helper()
	out, errOut, code := run(t, "history", filepath.Join(dir, demo.HistoryFile), "--baseline-runs", strconv.Itoa(demo.HistoryBaseline), "--format", "csv")
	if code != exitFlagged {
		t.Fatalf("history: exit %d\n%s", code, errOut)
	}
	broken := map[string]bool{}
	for _, line := range strings.Split(strings.TrimSpace(out), "\n")[1:] {
		f := strings.Split(line, ",")
		rules := strings.Fields(strings.ReplaceAll(f[len(f)-1], ";", " "))
		reject := slices.ContainsFunc(rules, func(r string) bool { return r != "1-2s" })
		if !reject {
			continue
		}
		runID, _ := strconv.Atoi(f[2])
		if f[0] != demo.ShiftedDye || runID < demo.HistoryShiftDay {
			t.Errorf("rule broken outside the planted shift: %s", line)
		}
		broken[f[1]] = true
	}
	if len(broken) != 3 {
		t.Errorf("check standards whose %s series break a rule: %v, want all three", demo.ShiftedDye, broken)
	}
}

// TestDemoDefaultFolder checks that without DIR the demo makes a fresh
// temporary folder and names it.
func TestDemoDefaultFolder(t *testing.T) {
	tmp := t.TempDir()
	t.Setenv("TMPDIR", tmp)
	out, errOut, code := run(t, "demo", "--files-only")
	if code != exitOK {
		t.Fatalf("exit code %d, stderr %q", code, errOut)
	}
	made, err := filepath.Glob(filepath.Join(tmp, "huesolve-demo-*"))
	if err != nil || len(made) != 1 {
		t.Fatalf("folders made in TMPDIR: %v (%v)", made, err)
	}
	if !strings.Contains(out, made[0]) {
		t.Errorf("output does not name %s:\n%s", made[0], out)
	}
	if _, err := os.Stat(filepath.Join(made[0], demo.StandardsSheet)); err != nil {
		t.Error(err)
	}
}
