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
