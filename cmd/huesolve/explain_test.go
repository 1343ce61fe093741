package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"huesolve/spectrum"
)

// TestSolveExplain: --explain ends the table with each candidate's score
// under the sample's chosen model, and is refused where it cannot show
// anything (a fixed model, or CSV/JSON output).
func TestSolveExplain(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	scan := writeScans(t, filepath.Join(dir, "a.csv"), solveScan("A1", []float64{5, 3, 1, 8}, 0.01, 1))
	out, errOut, code := run(t, "solve", ref, scan, "--explain")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	for _, want := range []string{"Model", "A1: offset\n", "(start)  <- chosen", "offset+scatter ", "against offset: F "} {
		if !strings.Contains(out, want) {
			t.Errorf("--explain output lacks %q:\n%s", want, out)
		}
	}
	for _, args := range [][]string{{"--baseline", "offset"}, {"--format", "csv"}} {
		_, errOut, code := run(t, append([]string{"solve", ref, scan, "--explain"}, args...)...)
		if code != exitUsage || !strings.Contains(errOut, "--explain") {
			t.Errorf("--explain %v: exit %d, want %d\n%s", args, code, exitUsage, errOut)
		}
	}
}

// TestSolveInterferent: --interferent FILE fits the scan of a substance
// the reference set lacks with its own amount, reported in the table, CSV
// and JSON; without it the sample is flagged; a scan that does not cover
// the window or copies a compound is refused naming the file.
func TestSolveInterferent(t *testing.T) {
	dir := t.TempDir()
	ref := writeSolveSet(t, dir)
	g := solveGrid()
	band := func(l float64) float64 { d := (l - 590) / 12; return math.Exp(-0.5 * d * d) } // a narrow band between violet and teal
	imp := &spectrum.Spectrum{Name: "impurity", Wavelengths: g, Quantity: spectrum.Absorbance, Values: make([]float64, len(g))}
	for i, l := range g {
		imp.Values[i] = band(l)
	}
	impFile := writeScans(t, filepath.Join(dir, "impurity.csv"), imp)
	s := solveScan("D1", []float64{5, 3, 1, 8}, 0.01, 4)
	for i, l := range g {
		s.Values[i] += 0.3 * band(l)
	}
	scan := writeScans(t, filepath.Join(dir, "d.csv"), s)
	if _, _, code := run(t, "solve", ref, scan, "--baseline", "offset"); code != exitFlagged {
		t.Errorf("without the interferent: exit %d, want %d (flagged)", code, exitFlagged)
	}
	out, errOut, code := run(t, "solve", ref, scan, "--interferent", impFile, "--format", "json")
	if code != exitOK {
		t.Fatalf("with the interferent: exit %d\n%s", code, errOut)
	}
	var doc struct {
		Samples []struct {
			Amounts []struct {
				Conc float64 `json:"conc"`
			} `json:"amounts"`
			Interferents []struct {
				Name   string  `json:"name"`
				Amount float64 `json:"amount"`
			} `json:"interferents"`
		} `json:"samples"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.Samples) != 1 || len(doc.Samples[0].Interferents) != 1 {
		t.Fatalf("JSON %v:\n%s", err, out)
	}
	r := doc.Samples[0]
	if it := r.Interferents[0]; it.Name != "impurity.csv" || math.Abs(it.Amount-0.3) > 0.01 {
		t.Errorf("interferent %+v, put in 0.3 of impurity.csv", it)
	}
	for k, want := range []float64{5, 3, 1, 8} {
		if math.Abs(r.Amounts[k].Conc-want) > 0.1 {
			t.Errorf("compound %d: %g, put in %g", k, r.Amounts[k].Conc, want)
		}
	}
	out, _, _ = run(t, "solve", ref, scan, "--interferent", impFile, "--format", "csv")
	if !strings.Contains(out, ",interferent_impurity.csv,interferent_impurity.csv_se,") {
		t.Errorf("CSV header lacks the interferent's columns:\n%s", out)
	}
	plots := filepath.Join(dir, "plots")
	if _, errOut, code := run(t, "solve", ref, scan, "--interferent", impFile, "--plots", plots); code != exitOK {
		t.Errorf("plots with an interferent: exit %d\n%s", code, errOut)
	}
	if m, _ := filepath.Glob(filepath.Join(plots, "*.png")); len(m) != 1 {
		t.Errorf("plots written: %v", m)
	}
	// Refused: a scan short of the window, a copy of a compound.
	short := &spectrum.Spectrum{Name: "short", Wavelengths: g[20:], Quantity: spectrum.Absorbance, Values: imp.Values[20:]}
	shortFile := writeScans(t, filepath.Join(dir, "short.csv"), short)
	cp := &spectrum.Spectrum{Name: "copy", Wavelengths: g, Quantity: spectrum.Absorbance, Values: make([]float64, len(g))}
	for i, l := range g {
		cp.Values[i] = solveAbs(1, l)
	}
	cpFile := writeScans(t, filepath.Join(dir, "copy.csv"), cp)
	for file, want := range map[string]string{shortFile: "short.csv", cpFile: "near-copy of compound rose"} {
		_, errOut, code := run(t, "solve", ref, scan, "--interferent", file)
		if code == exitOK || !strings.Contains(errOut, want) {
			t.Errorf("--interferent %s: exit %d, stderr lacks %q:\n%s", file, code, want, errOut)
		}
	}
}

// TestWindowRefusesAuto: window predicts the errors of one design, so it
// refuses --baseline auto and says why.
func TestWindowRefusesAuto(t *testing.T) {
	ref := writeSolveSet(t, t.TempDir())
	_, errOut, code := run(t, "window", ref, "--baseline", "auto")
	if code != exitUsage || !strings.Contains(errOut, "auto chooses each sample's model") {
		t.Errorf("exit %d, want %d with the reason:\n%s", code, exitUsage, errOut)
	}
}
