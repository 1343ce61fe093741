package validate

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/calibration"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// tinySheet: two compounds, eight mixed standards (two pairs of
// replicates), six wavelengths, absorbance = C K + noise (invented test
// data, fixed seed).
func tinySheet() (*calibration.Sheet, *mat.Dense, *mat.Dense) {
	wl := []float64{400, 420, 440, 460, 480, 500}
	k := mat.NewDense(2, 6, []float64{
		0.10, 0.08, 0.05, 0.02, 0.01, 0.005,
		0.01, 0.02, 0.04, 0.07, 0.09, 0.06,
	})
	conc := mat.NewDense(8, 2, []float64{
		2, 1,
		4, 3,
		6, 2,
		8, 5,
		3, 6,
		5, 8,
		5, 8,
		7, 4,
	})
	rng := rand.New(rand.NewPCG(1, 1))
	var a mat.Dense
	a.Mul(conc, k)
	sh := &calibration.Sheet{Path: "tiny.csv", Compounds: []string{"P", "Q"}, Units: []string{"mg/L", "mg/L"}}
	for i := range 8 {
		row := a.RawRowView(i)
		for j := range row {
			row[j] += 0.002 * rng.NormFloat64()
		}
		name := "s" + string(rune('1'+i))
		sh.Standards = append(sh.Standards, calibration.Row{
			File: name + ".csv", Line: i + 2, Conc: []float64{conc.At(i, 0), conc.At(i, 1)},
			Scan: &spectrum.Spectrum{Name: name, Wavelengths: wl, Values: append([]float64(nil), row...),
				Quantity: spectrum.Absorbance, Source: spectrum.Source{File: name + ".csv"}},
		})
	}
	return sh, conc, &a
}

// RMSECV on a tiny synthetic set against a direct computation: for each
// fold, K = argmin ||C_keep K - A_keep|| (through the origin), then the
// left-out composition c = argmin ||Kᵀ c - a||, both by gonum's QR
// least-squares solver; RMSECV_k = √(Σ (ĉ - c)² / N).
func TestCrossValidateAgainstDirect(t *testing.T) {
	sh, conc, a := tinySheet()
	set, err := calibration.Build(sh, calibration.Options{ThroughOrigin: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, byLevel := range []bool{false, true} {
		cv, err := CrossValidateContext(context.Background(), set, sh, CrossValOptions{
			Build:   BuildOptionsFor(set),
			Model:   unmix.Options{Baseline: baseline.Model{Degree: -1}},
			ByLevel: byLevel,
		})
		if err != nil {
			t.Fatal(err)
		}
		if len(cv.Failed) > 0 {
			t.Fatalf("failed folds: %v", cv.Failed)
		}
		wantFolds := 8
		if byLevel {
			wantFolds = 7 // rows 6 and 7 are replicates
		}
		if cv.Folds != wantFolds || len(cv.Predictions) != 8 {
			t.Fatalf("by level %v: %d folds, %d predictions; want %d and 8", byLevel, cv.Folds, len(cv.Predictions), wantFolds)
		}
		var ss [2]float64
		for j := range 8 {
			var keep []int
			for i := range 8 {
				if i == j || (byLevel && (j == 5 || j == 6) && (i == 5 || i == 6)) {
					continue
				}
				keep = append(keep, i)
			}
			ck := mat.NewDense(len(keep), 2, nil)
			ak := mat.NewDense(len(keep), 6, nil)
			for r, i := range keep {
				ck.SetRow(r, conc.RawRowView(i))
				ak.SetRow(r, a.RawRowView(i))
			}
			var qr mat.QR
			qr.Factorize(ck)
			var kk mat.Dense
			if err := qr.SolveTo(&kk, false, ak); err != nil {
				t.Fatal(err)
			}
			var qk mat.QR
			qk.Factorize(kk.T())
			var c mat.Dense
			if err := qk.SolveTo(&c, false, mat.NewDense(6, 1, a.RawRowView(j))); err != nil {
				t.Fatal(err)
			}
			p := cv.Predictions[j]
			for q := range 2 {
				if !scalar.EqualWithinRel(p.Found[q], c.At(q, 0), 1e-9) {
					t.Errorf("by level %v, left-out %s: %s = %.12g, direct %.12g", byLevel, p.Standard, cv.Compounds[q], p.Found[q], c.At(q, 0))
				}
				d := c.At(q, 0) - conc.At(j, q)
				ss[q] += d * d
			}
		}
		for q := range 2 {
			want := math.Sqrt(ss[q] / 8)
			if !scalar.EqualWithinRel(cv.RMSECV[q], want, 1e-9) {
				t.Errorf("by level %v: RMSECV(%s) = %.12g, direct %.12g", byLevel, cv.Compounds[q], cv.RMSECV[q], want)
			}
			t.Logf("by level %v: RMSECV(%s) = %.4g mg/L", byLevel, cv.Compounds[q], cv.RMSECV[q])
		}
	}
}

// A fold that cannot be built is reported, not fatal: with Q at 3 mg/L in
// every standard but two (6 and 9 mg/L), leaving either out leaves Q with
// two levels, fewer than calibration needs. A sheet
// whose every fold fails, or that does not name the set's compounds, is an
// error.
func TestCrossValidateFailures(t *testing.T) {
	sh, _, _ := tinySheet()
	odd := *sh
	odd.Standards = nil
	for i, r := range sh.Standards {
		r.Conc = []float64{r.Conc[0], 3}
		switch i {
		case 4:
			r.Conc[1] = 6
		case 7:
			r.Conc[1] = 9
		}
		odd.Standards = append(odd.Standards, r)
	}
	opt := CrossValOptions{Build: calibration.Options{ThroughOrigin: true}, Model: unmix.Options{Baseline: baseline.Model{Degree: -1}}}
	set, err := calibration.Build(&odd, opt.Build)
	if err != nil {
		t.Fatal(err)
	}
	cv, err := CrossValidateContext(context.Background(), set, &odd, opt)
	if err != nil {
		t.Fatal(err)
	}
	if len(cv.Failed) != 2 || len(cv.Predictions) != 6 || !strings.Contains(cv.Failed[0], "line 6") || !strings.Contains(cv.Failed[1], "line 9") {
		t.Errorf("failed %q, %d predictions; want two failed folds naming lines 6 and 9 and 6 predictions", cv.Failed, len(cv.Predictions))
	}
	three := *sh
	three.Standards = sh.Standards[:3]
	set3, err := calibration.Build(&three, opt.Build)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := CrossValidateContext(context.Background(), set3, &three, opt); err == nil || !strings.Contains(err.Error(), "every cross-validation fold failed") {
		t.Errorf("three standards for two compounds: err = %v, want every fold failed", err)
	}
	other := *sh
	other.Compounds = []string{"P", "R"}
	if _, err := CrossValidateContext(context.Background(), set, &other, opt); err == nil {
		t.Error("sheet naming R: no error")
	}
}
