package calibration

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"huesolve/internal/near"
	"huesolve/reference"
)

const (
	// studentTol bounds the relative difference of the externally
	// studentized residuals from statsmodels': worst measured 1.1e-10
	// (Anscombe III's outlier, whose t of 1204 rests on a leave-one-out
	// residual sum of squares that cancels to 1e-8 of the whole, so both
	// programs lose digits there), margin about 10.
	studentTol = 1e-9
	// limitTol bounds the relative difference of the Bonferroni limit
	// from scipy.stats.t.ppf: worst measured 4e-12, margin 25 (gonum's
	// and SciPy's t quantiles are both iterative).
	limitTol = 1e-10
)

// outlierFixture is testdata/outliers/outliers.json (gen_outliers.py).
type outlierFixture struct {
	Alpha float64 `json:"alpha"`
	Cases map[string]struct {
		X, Y    []float64
		Student []float64 `json:"student_resid"`
		BonfP   []float64 `json:"bonf_p"`
		Limit   float64   `json:"limit"`
	} `json:"cases"`
}

// TestStudentizedStatsmodels checks the externally studentized residuals
// and the Bonferroni limit against statsmodels 0.13.5 and SciPy 1.10.1
// (Debian), on Anscombe's (1973) sets I and III as published and an
// invented calibration line with one mistyped concentration; and that
// outliers flags exactly the readings statsmodels' Bonferroni test
// rejects at the same level.
func TestStudentizedStatsmodels(t *testing.T) {
	raw, err := os.ReadFile("../testdata/outliers/outliers.json")
	if err != nil {
		t.Fatal(err)
	}
	var fx outlierFixture
	if err := json.Unmarshal(raw, &fx); err != nil {
		t.Fatal(err)
	}
	if fx.Alpha != OutlierLevel {
		t.Fatalf("fixture made at alpha %g, the test is at %g: regenerate it", fx.Alpha, OutlierLevel)
	}
	if len(fx.Cases) != 3 {
		t.Fatalf("%d cases in the fixture, want 3", len(fx.Cases))
	}
	worstT, worstL := 0.0, 0.0
	for name, c := range fx.Cases {
		got, err := studentized(c.X, c.Y)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for i := range got {
			// statsmodels (source of want): OLSInfluence.resid_studentized_external.
			worstT = max(worstT, near.Rel(t, fmt.Sprintf("%s: studentized residual %d", name, i), got[i], c.Student[i], studentTol))
		}
		// SciPy (source of want): t.ppf(1 - alpha/(2n), n - 3).
		worstL = max(worstL, near.Rel(t, name+": Bonferroni limit", bonferroniLimit(len(c.X), OutlierLevel), c.Limit, limitTol))
		pts := make([]reference.Point, len(c.X))
		rows := make([]int, len(c.X))
		for i := range pts {
			pts[i] = reference.Point{Conc: c.X[i], Absorbance: c.Y[i], Used: true}
			rows[i] = 100 + i
		}
		flagged := map[int]bool{}
		for _, o := range outliers(pts, rows) {
			flagged[o.row-100] = true
		}
		for i, p := range c.BonfP {
			// statsmodels (source of want): outlier_test(method="bonf").
			if want := p < OutlierLevel; flagged[i] != want {
				t.Errorf("%s: reading %d flagged %v, statsmodels' Bonferroni p %.3g at level %g", name, i, flagged[i], p, OutlierLevel)
			}
		}
	}
	if len(fx.Cases["anscombe3"].BonfP) == 0 || !(fx.Cases["anscombe3"].BonfP[2] < OutlierLevel) || !(fx.Cases["calib"].BonfP[8] < OutlierLevel) {
		t.Error("the fixture no longer holds the outliers the test is about (Anscombe III x = 13, calib reading 9)")
	}
	t.Logf("worst relative difference: studentized %.2g, limit %.2g", worstT, worstL)
}

// TestStudentizedEdges: too few readings is an error; a reading the
// others fit exactly is an infinite residual; a reading of leverage one
// is NaN and never flagged.
func TestStudentizedEdges(t *testing.T) {
	if _, err := studentized([]float64{1, 2, 3}, []float64{1, 2, 3}); err == nil {
		t.Error("3 readings: no error")
	}
	got, err := studentized([]float64{0, 1, 2, 3, 4}, []float64{0, 1, 2, 3, 9})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(got[4], 1) {
		t.Errorf("a reading off a line the others fit exactly: t = %g, want +Inf", got[4])
	}
	got, err = studentized([]float64{1, 1, 1, 1, 5}, []float64{1, 1.1, 0.9, 1, 7})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(got[4]) {
		t.Errorf("a reading of leverage 1: t = %g, want NaN", got[4])
	}
}

// TestBuildFallingTopStandard: a standard labelled with a new top level
// (24) whose scan is that of a low level (it reads like 2) makes Mandel's
// test bend the line, and the range cut then leaves it out. Absorbance
// does not fall as concentration rises (common practice), so this is not
// a bend: the compound must be flagged outlier (the set is refused by
// calibrate unless --drop-outliers or --accept-outliers), not curved, and
// the standard named; with DropOutliers it is left out from the start.
// Invented line: 0.12 per unit at the band maximum, noise SD 0.001.
func TestBuildFallingTopStandard(t *testing.T) {
	grid := linGrid(450, 5, 21)
	shape := band(grid, 500, 20, 1)
	rng := rand.New(rand.NewPCG(5, 5))
	var conc, scan [][]float64
	conc = append(conc, []float64{0}, []float64{0})
	scan = append(scan, make([]float64, len(grid)), make([]float64, len(grid)))
	reading := func(c float64) []float64 {
		row := make([]float64, len(grid))
		for j := range row {
			row[j] = shape[j]*0.12*c + 0.001*rng.NormFloat64()
		}
		return row
	}
	for _, c := range []float64{1, 2, 4, 6, 8, 10, 12} {
		for range 2 {
			conc = append(conc, []float64{c})
			scan = append(scan, reading(c))
		}
	}
	conc = append(conc, []float64{24})
	scan = append(scan, reading(2))
	for _, drop := range []bool{false, true} {
		var notes []string
		set, err := Build(memSheet([]string{"dye"}, grid, conc, scan), Options{Ceiling: 3, Now: fixedNow, DropOutliers: drop,
			Warn: func(s string) { notes = append(notes, s) }})
		if err != nil {
			t.Fatal(err)
		}
		c := set.Compounds[0]
		all := strings.Join(notes, "\n")
		if hasFlag(c.Flags, reference.FlagCurved) || strings.Contains(all, "bends") {
			t.Errorf("drop %v: flags %v, notes:\n%s\nwant no curvature: the top standard is wrong, the line is straight", drop, c.Flags, all)
		}
		if got := hasFlag(c.Flags, reference.FlagOutlier); got == drop {
			t.Errorf("drop %v: flags %v, want outlier %v", drop, c.Flags, !drop)
		}
		if !drop && !strings.Contains(all, "at level 24 reads A") {
			t.Errorf("notes do not name the falling standard:\n%s", all)
		}
		if drop && !strings.Contains(all, "reading below the lower standards") {
			t.Errorf("drop: notes do not say why the standard was left out:\n%s", all)
		}
		if len(c.StandardsLeftOut) != 1 || c.StandardsLeftOut[0].Conc[0] != 24 {
			t.Errorf("drop %v: standards left out %+v, want the one at 24", drop, c.StandardsLeftOut)
		}
		if l := c.Linearity; l.RangeHi != 12 || math.Abs(l.Slope-0.12) > 0.002 {
			t.Errorf("drop %v: range up to %g, slope %g; want 12 and 0.12", drop, l.RangeHi, l.Slope)
		}
	}
}
