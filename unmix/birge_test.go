package unmix

import (
	"math"
	"testing"
)

// TestBirgeRatio: every standard error taken from the noise model is
// scaled by the Birge ratio sqrt(chi-square) when the fit is worse than
// the noise (chi-square above 1), and only then: in any fit the
// unconstrained standard error (so also the upper bound of a compound
// held at zero), and in a weighted fit the standard errors too. LOD and
// LOQ are never scaled, so FreeSE / (LOD / LODFactor) is the factor
// applied.
func TestBirgeRatio(t *testing.T) {
	const tol = 1e-9 // relative; the two sides differ by rounding only
	for _, weighted := range []bool{false, true} {
		m := mustModel(t, testSet(4), Options{Weighted: weighted})
		for _, noise := range []float64{testNoise / 4, 5 * testNoise} {
			r := mustSolve(t, m, mixture{conc: []float64{5, 3, 2, 8}, noise: noise, seed: 3}.spectrum(), Factors{})
			want := math.Max(1, math.Sqrt(r.ChiSqRed))
			if noise > testNoise && !(want > 2) {
				t.Fatalf("noise %g: chi-square %g, the case does not test the rule", noise, r.ChiSqRed)
			}
			for _, a := range r.Amounts {
				s0 := a.LOD / LODFactor
				if got := a.FreeSE / s0; math.Abs(got-want) > tol*want {
					t.Errorf("weighted %v, noise %g, %s: unconstrained SE / noise-model SE = %g, want %g", weighted, noise, a.Compound, got, want)
				}
				if weighted {
					if got := a.SE / s0; math.Abs(got-want) > tol*want {
						t.Errorf("weighted, noise %g, %s: SE / noise-model SE = %g, want %g", noise, a.Compound, got, want)
					}
				}
			}
		}
	}
}
