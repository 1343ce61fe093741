package baseline_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/unmix/lsq"
)

// Synthetic three-compound mixture on 400..700 nm (invented test data):
// Gaussian absorptivity bands, known concentrations, white noise.
var (
	bandCentre = []float64{450, 520, 600}
	bandWidth  = []float64{25, 30, 35} // standard deviation, nm
	trueConc   = []float64{0.6, 0.3, 0.8}
)

// noiseSD is the absorbance noise of the synthetic scans.
const noiseSD = 0.003

// invarianceTol bounds the relative change of the concentrations when an
// offset lying in the span of the free baseline columns is added: by the
// algebra of least squares with free columns (Lawson & Hanson, Solving
// Least Squares Problems, 1974, ch. 23: the free block is projected out,
// so anything in its span moves only its own coefficients) the change is
// rounding only.
const invarianceTol = 1e-9

// fitMixture fits y with the compound columns plus the model's columns
// and returns the result and the column names.
func fitMixture(t *testing.T, wl, y []float64, m baseline.Model) (*lsq.Result, []string) {
	t.Helper()
	cols, nonneg, names, err := m.Columns(wl)
	if err != nil {
		t.Fatal(err)
	}
	p := len(bandCentre) + len(cols)
	x := mat.NewDense(len(wl), p, nil)
	nn := make([]bool, p)
	var all []string
	for k := range bandCentre {
		nn[k] = true
		all = append(all, fmt.Sprintf("compound%d", k+1))
		for i, l := range wl {
			u := (l - bandCentre[k]) / bandWidth[k]
			x.Set(i, k, math.Exp(-u*u/2))
		}
	}
	for j, c := range cols {
		nn[len(bandCentre)+j] = nonneg[j]
		x.SetCol(len(bandCentre)+j, c)
	}
	all = append(all, names...)
	s, err := lsq.NewSolver(x, nn, lsq.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var r lsq.Result
	if err := s.Solve(&r, y); err != nil {
		t.Fatal(err)
	}
	return &r, all
}

// TestInFitOffsetRemoved: a constant or linear offset added to a mixture
// is taken up by the in-fit baseline columns; the concentrations stay
// those of the offset-free scan (to rounding) and within 3 standard
// errors of the truth, and the baseline coefficients recover the offset
// (and a scattering term, when the model has one).
// Without the baseline columns the same data give biased concentrations,
// so the test can fail.
func TestInFitOffsetRemoved(t *testing.T) {
	wl := make([]float64, 301)
	clean := make([]float64, len(wl))
	rng := rand.New(rand.NewPCG(1, 1))
	for i := range wl {
		wl[i] = 400 + float64(i)
		for k := range bandCentre {
			u := (wl[i] - bandCentre[k]) / bandWidth[k]
			clean[i] += trueConc[k] * math.Exp(-u*u/2)
		}
		clean[i] += noiseSD * rng.NormFloat64()
	}
	// On 400..700 nm, t = (λ - 550)/150. The linear offset
	// 0.02 + 0.0002 (λ - 400) = 0.05 + 0.03 t.
	for _, tc := range []struct {
		name       string
		model      baseline.Model
		offset     func(l float64) float64
		wantOffset float64 // expected "offset" coefficient
		wantSlope  float64 // expected "slope" coefficient (linear model)
	}{
		{"constant", baseline.Model{Degree: 0}, func(float64) float64 { return 0.05 }, 0.05, 0},
		{"linear", baseline.Model{Degree: 1}, func(l float64) float64 { return 0.02 + 0.0002*(l-400) }, 0.05, 0.03},
		{"constant, quadratic model", baseline.Model{Degree: 2}, func(float64) float64 { return 0.05 }, 0.05, 0},
		// Scattering (λ/550)^-4 times 0.02 on top of a constant 0.05.
		{"scatter", baseline.Model{Degree: 0, Scatter: true}, func(l float64) float64 { return 0.05 + 0.02*math.Pow(l/550, -4) }, 0.05, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			y := make([]float64, len(wl))
			for i, l := range wl {
				y[i] = clean[i] + tc.offset(l)
			}
			ref, _ := fitMixture(t, wl, clean, tc.model)
			got, names := fitMixture(t, wl, y, tc.model)
			// Invariance holds while the fit does not change which
			// non-negative coefficients sit at the bound.
			sameSet := true
			for j := range ref.AtBound {
				sameSet = sameSet && (ref.AtBound[j] == got.AtBound[j])
			}
			for k := range trueConc {
				if d := math.Abs(got.Coef[k] - ref.Coef[k]); sameSet && d > invarianceTol*math.Abs(ref.Coef[k]) {
					t.Errorf("%s = %.12g with offset, %.12g without", names[k], got.Coef[k], ref.Coef[k])
				}
				if d := math.Abs(got.Coef[k] - trueConc[k]); d > 3*got.SE[k] {
					t.Errorf("%s = %.5f ± %.5f, true %g", names[k], got.Coef[k], got.SE[k], trueConc[k])
				}
			}
			nc := len(trueConc)
			if d := math.Abs(got.Coef[nc] - tc.wantOffset); d > 3*got.SE[nc] {
				t.Errorf("offset = %.5f ± %.5f, want %g", got.Coef[nc], got.SE[nc], tc.wantOffset)
			}
			if tc.model.Degree >= 1 {
				if d := math.Abs(got.Coef[nc+1] - tc.wantSlope); d > 3*got.SE[nc+1] {
					t.Errorf("slope = %.5f ± %.5f, want %g", got.Coef[nc+1], got.SE[nc+1], tc.wantSlope)
				}
			}
			if tc.model.Scatter {
				j := len(got.Coef) - 1
				if d := math.Abs(got.Coef[j] - 0.02); d > 3*got.SE[j] {
					t.Errorf("scatter = %.5f ± %.5f, want 0.02", got.Coef[j], got.SE[j])
				}
			}
			// The same data without baseline columns: the offset leaks into
			// the concentrations.
			bare, _ := fitMixture(t, wl, y, baseline.Model{Degree: -1})
			worst := 0.0
			for k := range trueConc {
				worst = math.Max(worst, math.Abs(bare.Coef[k]-trueConc[k])/got.SE[k])
			}
			t.Logf("concentrations %.4f ± %.4f; without baseline terms off by up to %.0f SE", got.Coef[:nc], got.SE[:nc], worst)
			if worst < 10 {
				t.Errorf("without baseline terms the largest bias is only %.1f standard errors", worst)
			}
		})
	}
}
