package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"testing"

	"huesolve/reference"
)

// TestChiSquareAsDocumented recomputes the reduced chi-square of one
// solved sample from the formula README.md states ("Fit figures"), using
// only the files a user has: the reference set, the scan and solve's
// JSON. The sample reads up to about 1.7 AU, so the 10^A growth of the
// noise matters (the check below makes sure it does).
//
//	chi2_red = sum_i (r_i / sigma_i)^2 / (n - p)
//	sigma_i  = noise(l_i) * sqrt(1 + 10^(2 (A_i - 1)))
//
// r_i: measured minus fitted absorbance on the n points used; p: the
// fitted terms not held at zero; noise: the set's "noise"; A_i: the
// sample's absorbance as read (here no blank), within 0..ceiling.
func TestChiSquareAsDocumented(t *testing.T) {
	dir := t.TempDir()
	refPath := writeSolveSet(t, dir)
	scan := solveScan("C1", []float64{3, 2, 0, 20}, 0.01, 11)
	file := writeScans(t, filepath.Join(dir, "c1.csv"), scan)
	// A fixed offset: the check counts the parameters of one model on the whole grid.
	out, errOut, code := run(t, "solve", refPath, file, "--format", "json", "--baseline", "offset")
	if code != exitOK && code != exitFlagged {
		t.Fatalf("exit %d\n%s", code, errOut)
	}
	var doc struct {
		Samples []struct {
			Amounts []struct {
				Conc  float64  `json:"conc"`
				Flags []string `json:"flags"`
			} `json:"amounts"`
			Baseline map[string]float64 `json:"baseline"`
			Chi      float64            `json:"reduced_chi_square"`
			Points   int                `json:"points_used"`
		} `json:"samples"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.Samples) != 1 {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	r := doc.Samples[0]
	set, err := reference.Load(refPath)
	if err != nil {
		t.Fatal(err)
	}
	if r.Points != len(set.Grid) {
		t.Fatalf("%d points used of %d: the check assumes all", r.Points, len(set.Grid))
	}
	p := len(r.Baseline)
	for _, a := range r.Amounts {
		if len(a.Flags) == 0 || a.Flags[0] != "zero" {
			p++
		}
	}
	chi, flat, peak := 0.0, 0.0, 0.0
	for i := range set.Grid {
		fit := r.Baseline["offset"]
		for k, a := range r.Amounts {
			fit += a.Conc * set.Compounds[k].Absorptivity[i] * set.PathCM
		}
		A := scan.Values[i]
		peak = math.Max(peak, A)
		res := A - fit
		noise := math.Max(set.Noise[i], 1e-5)
		sigma := noise * math.Sqrt(1+math.Pow(10, 2*(math.Min(math.Max(A, 0), set.Ceiling)-1)))
		chi += (res / sigma) * (res / sigma)
		flat += (res / noise) * (res / noise)
	}
	n := float64(r.Points - p)
	chi /= n
	flat /= n
	if math.Abs(chi/r.Chi-1) > 1e-3 {
		t.Errorf("reduced chi-square: solve says %g, the documented formula gives %g (peak %.2f AU, p = %d)", r.Chi, chi, peak, p)
	}
	if math.Abs(flat/r.Chi-1) < 0.1 {
		t.Errorf("the case does not exercise the 10^A growth: %g without it, %g with", flat, r.Chi)
	}
}
