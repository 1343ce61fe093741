package calibration

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestAbsorptivityCov: the covariance Build records is s_j^2 (X'X)^-1
// (Draper & Smith, Applied Regression Analysis, ch. 5; recalled from
// memory): its unscaled part equals the inverse of X'X formed and
// inverted here by gonum (mat.Dense.Inverse, an independent route from
// Build's QR), and with the recorded noise it gives back each
// absorptivity's recorded SE (from the solver's own factorisation).
func TestAbsorptivityCov(t *testing.T) {
	grid := linGrid(400, 2, 101)
	k := trueK(grid)
	conc := mixedDesign()
	rng := rand.New(rand.NewPCG(11, 12))
	for _, through := range []bool{false, true} {
		set, err := Build(memSheet(mixNames, grid, conc, synth(conc, k, 0.02, 0.002, rng)), Options{ThroughOrigin: through, Now: fixedNow})
		if err != nil {
			t.Fatal(err)
		}
		cv := set.AbsorptivityCov
		if cv == nil || len(cv.Unscaled) != 1 {
			t.Fatalf("through origin %v: covariance %+v, want one matrix (no reading above the ceiling)", through, cv)
		}
		// X: the standards (the blank rows are the blank, not fitted).
		m := len(mixNames)
		nc := m
		if !through {
			nc++
		}
		var rows [][]float64
		for _, c := range conc[2:] {
			r := append([]float64(nil), c...)
			if !through {
				r = append(r, 1)
			}
			rows = append(rows, r)
		}
		x := mat.NewDense(len(rows), nc, nil)
		for i, r := range rows {
			x.SetRow(i, r)
		}
		var xtx, inv mat.Dense
		xtx.Mul(x.T(), x)
		if err := inv.Inverse(&xtx); err != nil {
			t.Fatal(err)
		}
		for a := range m {
			for b := range m {
				got, want := cv.At(0, a, b, m), inv.At(a, b)
				if math.Abs(got-want) > 1e-10*math.Abs(inv.At(a, a)) {
					t.Errorf("through origin %v: U(%d,%d) = %.12g, want %.12g", through, a, b, got, want)
				}
			}
		}
		for q, c := range set.Compounds {
			for j := range grid {
				if cv.Index[j] != 0 {
					t.Fatalf("index at %g nm = %d, want 0", grid[j], cv.Index[j])
				}
				se := set.Noise[j] * math.Sqrt(cv.At(0, q, q, m)) / set.PathCM
				if math.Abs(se-c.SE[j]) > 1e-9*c.SE[j] {
					t.Fatalf("through origin %v: %s at %g nm: SE from the covariance %g, recorded %g", through, c.Name, grid[j], se, c.SE[j])
				}
			}
		}
	}
}

// TestAbsorptivityCovCeiling: readings left out above the ceiling change
// the design, so the wavelengths where they are left out get their own
// matrix, with larger variances (one standard fewer). Two invented bands
// at 480 and 520 nm; the mixture of 5 and 5 reads above the ceiling of
// 0.6 between them (0.61 at 500 nm) but not at either band maximum
// (0.57), so it stays in the fit elsewhere.
func TestAbsorptivityCovCeiling(t *testing.T) {
	grid := linGrid(440, 5, 17)
	k := [][]float64{band(grid, 480, 20, 0.1), band(grid, 520, 20, 0.1)}
	conc := [][]float64{{1, 0}, {2, 0}, {3, 0}, {4, 0}, {5, 0}, {0, 1}, {0, 2}, {0, 3}, {0, 4}, {0, 5}, {2, 2}, {5, 5}}
	rng := rand.New(rand.NewPCG(1, 1))
	set, err := Build(memSheet([]string{"dye A", "dye B"}, grid, conc, synth(conc, k, 0, 0.001, rng)), Options{Ceiling: 0.6, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	cv := set.AbsorptivityCov
	if len(cv.Unscaled) != 2 {
		t.Fatalf("%d matrices (index %v), want 2: all standards, and without the 5+5 mixture", len(cv.Unscaled), cv.Index)
	}
	all, cut := cv.Index[0], cv.Index[12] // 440 nm, 500 nm
	if all == cut || cv.Index[len(grid)-1] != all {
		t.Fatalf("index %v: want 500 nm on its own matrix", cv.Index)
	}
	for q := range 2 {
		if !(cv.At(cut, q, q, 2) > cv.At(all, q, q, 2)) {
			t.Errorf("compound %d: variance without the mixture %g, not above %g with it", q, cv.At(cut, q, q, 2), cv.At(all, q, q, 2))
		}
	}
}

// TestSandwichCovariance: when the noise grows with absorbance (an
// invented instrument: SD 0.0005 sqrt(1 + 10^(2 (A - 0.3))), 40 times the
// base at A = 1.9) and calibrate measures that growth, the covariance it
// records must hold the slopes' real scatter, which the top standards
// dominate. Checked by Monte Carlo over independent calibrations (the
// variance of the fitted slope at the band maximum across draws against
// the mean recorded Noise^2 U), not by the formula itself; the form it
// replaced, base noise^2 (X'X)^-1 (computed here from the same sets), is
// shown to fall far short, so the test can fail.
func TestSandwichCovariance(t *testing.T) {
	const (
		base  = 0.0005
		knee  = 0.3
		draws = 300
	)
	grid := linGrid(350, 10, 41)
	shape := band(grid, 500, 40, 10)
	jmax := 0
	for j := range grid {
		if shape[j] > shape[jmax] {
			jmax = j
		}
	}
	var conc [][]float64
	for range 3 {
		conc = append(conc, []float64{0})
	}
	for _, c := range []float64{0.03, 0.06, 0.09, 0.12, 0.15, 0.17, 0.19} {
		for range 3 {
			conc = append(conc, []float64{c})
		}
	}
	rng := rand.New(rand.NewPCG(21, 22))
	var sum, sum2, rec, old float64
	n := 0
	for range draws {
		scans := make([][]float64, len(conc))
		for i, c := range conc {
			row := make([]float64, len(grid))
			for j := range row {
				a := c[0] * shape[j]
				row[j] = a + base*math.Sqrt(1+math.Pow(10, 2*(a-knee)))*rng.NormFloat64()
			}
			scans[i] = row
		}
		set, err := Build(memSheet([]string{"dye"}, grid, conc, scans), Options{MinR2: -1, MaxRelSD: -1, Now: fixedNow})
		if err != nil {
			t.Fatal(err)
		}
		if set.NoiseModel == nil {
			continue
		}
		cv := set.AbsorptivityCov
		i := cv.Index[jmax]
		if i < 0 {
			t.Fatalf("no covariance at %g nm", grid[jmax])
		}
		s := set.Compounds[0].Absorptivity[jmax] * set.PathCM
		sum += s
		sum2 += s * s
		rec += set.Noise[jmax] * set.Noise[jmax] * cv.At(i, 0, 0, 1)
		// The form before: base noise^2 times (X'X)^-1 of the standards
		// with an intercept (the blanks are the blank, not fitted).
		var sx, sxx float64
		for _, c := range conc[3:] {
			sx += c[0]
			sxx += c[0] * c[0]
		}
		m := float64(len(conc) - 3)
		old += set.Noise[jmax] * set.Noise[jmax] / (sxx - sx*sx/m)
		n++
	}
	if n < draws*9/10 {
		t.Fatalf("a noise model was measured in only %d of %d draws", n, draws)
	}
	fn := float64(n)
	mean := sum / fn
	emp := (sum2 - fn*mean*mean) / (fn - 1)
	rec /= fn
	old /= fn
	t.Logf("%d draws: slope variance %.4g across draws, recorded %.4g (ratio %.3f); base noise^2 (X'X)^-1 %.4g (ratio %.3f)", n, emp, rec, rec/emp, old, old/emp)
	// The variance of a variance estimated from n draws has a relative
	// SD of sqrt(2/(n-1)), 8 % at 300: the bound is 3 of those.
	if r := rec / emp; r < 0.75 || r > 1.33 {
		t.Errorf("recorded / Monte Carlo slope variance %.3f, want 0.75-1.33", r)
	}
	if r := old / emp; r > 0.5 {
		t.Errorf("base noise^2 (X'X)^-1 / Monte Carlo %.3f: the test does not exercise the growth", r)
	}
}
