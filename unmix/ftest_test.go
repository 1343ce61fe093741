package unmix

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

// TestFSurvivalAgainstSciPy checks the p-value of the automatic model's
// F-test (fSurvival, P(F(1, d2) > f)) against SciPy 1.10.1 on Debian
// (python3-scipy): scipy.stats.f.sf and the critical values
// scipy.stats.f.isf at the levels 1e-2, AutoLevel (1e-3) and
// AutoLevelMimic (1e-6), from testdata/ftest/gen_ftest.py.
func TestFSurvivalAgainstSciPy(t *testing.T) {
	data, err := os.ReadFile("../testdata/ftest/ftest_fixture.json")
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		Critical []struct {
			D2    float64 `json:"d2"`
			Alpha float64 `json:"alpha"`
			FCrit float64 `json:"f_crit"`
		} `json:"critical"`
		Survival []struct {
			D2 float64 `json:"d2"`
			F  float64 `json:"f"`
			P  float64 `json:"p"`
		} `json:"survival"`
	}
	if err := json.Unmarshal(data, &fx); err != nil {
		t.Fatal(err)
	}
	if len(fx.Critical) == 0 || len(fx.Survival) == 0 {
		t.Fatal("empty fixture")
	}
	levels := map[float64]bool{}
	for _, c := range fx.Critical {
		levels[c.Alpha] = true
		// SciPy: scipy.stats.f.isf(alpha, 1, d2) (ftest_fixture.json).
		if got := fSurvival(c.FCrit, c.D2); math.Abs(got-c.Alpha) > 1e-8*c.Alpha {
			t.Errorf("P(F(1,%g) > %g) = %.12g, SciPy's level %g", c.D2, c.FCrit, got, c.Alpha)
		}
		// Just above the critical value the test adds the term, just
		// below it does not.
		rss1 := 1.0
		for _, s := range []float64{1 + 1e-6, 1 - 1e-6} {
			f := c.FCrit * s
			_, p := fTest(rss1+f*rss1/c.D2, rss1, int(c.D2))
			if (p < c.Alpha) != (s > 1) {
				t.Errorf("d2 %g, F = %g x critical %g: p = %g against level %g", c.D2, s, c.FCrit, p, c.Alpha)
			}
		}
	}
	if !levels[AutoLevel] || !levels[AutoLevelMimic] {
		t.Errorf("the fixture lacks the levels in use (%g, %g)", AutoLevel, AutoLevelMimic)
	}
	for _, c := range fx.Survival {
		// SciPy: scipy.stats.f.sf(f, 1, d2) (ftest_fixture.json).
		if got := fSurvival(c.F, c.D2); math.Abs(got-c.P) > 1e-9*c.P {
			t.Errorf("P(F(1,%g) > %g) = %.12g, SciPy %.12g", c.D2, c.F, got, c.P)
		}
	}
	// A fit that is not better scores F = 0, p = 1.
	if f, p := fTest(1, 1, 10); f != 0 || p != 1 {
		t.Errorf("equal RSS: F %g, p %g", f, p)
	}
}
