package history

import (
	"fmt"
	"math"
	"reflect"
	"testing"
)

// baselineSeries is 20 invented recoveries alternating 101, 99 (mean
// 100, sample SD sqrt(20/19)), then the tail given in units of that SD
// above the mean, so each test states its points as z-scores.
func baselineSeries(compound, standard string, tail ...float64) Series {
	s := Series{Compound: compound, Standard: standard}
	sd := math.Sqrt(20.0 / 19.0)
	for i := 0; i < 20; i++ {
		x := 101.0
		if i%2 == 1 {
			x = 99
		}
		s.Points = append(s.Points, Point{RunID: int64(i + 1), Recovery: x})
	}
	for k, z := range tail {
		s.Points = append(s.Points, Point{RunID: int64(21 + k), Recovery: 100 + z*sd})
	}
	return s
}

// fired lists "rule@point" for a chart's violations, in order.
func fired(c Chart) []string {
	var out []string
	for _, v := range c.Violations {
		out = append(out, fmt.Sprintf("%s@%d", v.Rule, v.Point))
	}
	return out
}

// TestRulesOnKnownSeries: synthetic series with a known outlier, shift or
// trend break exactly the rules expected, worked by hand from the points'
// z-scores with the rules as Westgard, Barry, Hunt and Groth define them
// (Clin. Chem. 27 (1981) 493-501), each checked at every point.
func TestRulesOnKnownSeries(t *testing.T) {
	cases := []struct {
		name string
		tail []float64
		want []string
	}{
		// The baseline alone (|z| = 0.97, alternating) breaks no rule.
		{"in control", nil, nil},
		// One point at +3.5 s: a warning and random error, nothing else
		// (the point before is at -0.97 s).
		{"outlier", []float64{3.5, 0.5}, []string{"1-2s@20", "1-3s@20"}},
		// Two at +2.5 s: each warns, the second breaks 2-2s.
		{"two beyond 2s", []float64{2.5, 2.5}, []string{"1-2s@20", "1-2s@21", "2-2s@21"}},
		// A shift of +1.5 s for ten runs: 4-1s from the fourth point on,
		// 10-x at the tenth; no point beyond 2s.
		{"shift 1.5s", []float64{1.5, 1.5, 1.5, 1.5, 1.5, 1.5, 1.5, 1.5, 1.5, 1.5},
			[]string{"4-1s@23", "4-1s@24", "4-1s@25", "4-1s@26", "4-1s@27", "4-1s@28", "4-1s@29", "10-x@29"}},
		// A trend of about +0.55 s per run.
		{"trend", []float64{0.5, 1.1, 1.6, 2.2, 2.7, 3.3},
			[]string{"1-2s@23", "1-2s@24", "2-2s@24", "4-1s@24", "1-2s@25", "1-3s@25", "2-2s@25", "4-1s@25"}},
		// Ten runs just below the centre line: 10-x alone, already at the
		// ninth, as the baseline's last point (99) is below it too.
		{"small shift", []float64{-0.2, -0.2, -0.2, -0.2, -0.2, -0.2, -0.2, -0.2, -0.2, -0.2}, []string{"10-x@28", "10-x@29"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			charts := Evaluate([]Series{baselineSeries("Ambrelin", "QC-1", tc.tail...)}, DefaultBaseline)
			c := charts[0]
			if c.Provisional || c.Baseline != 20 {
				t.Fatalf("baseline %d provisional %v, want 20 points", c.Baseline, c.Provisional)
			}
			// Hand-worked: the mean of 10 x 101 and 10 x 99 is 100, the
			// sample SD sqrt(20 x 1 / 19).
			if math.Abs(c.Mean-100) > 1e-12 || math.Abs(c.SD-math.Sqrt(20.0/19.0)) > 1e-12 {
				t.Fatalf("centre %g SD %g, want 100 and %g", c.Mean, c.SD, math.Sqrt(20.0/19.0))
			}
			if got := fired(c); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("rules fired %v, want %v", got, tc.want)
			}
		})
	}
}

// TestR4sWithinRun: two check standards of one compound, in run 21 one at
// +2.5 s and the other at -2.5 s: both warn, and R-4s fires once, on the
// chart of the high one; a run with +2.5 s and -1.5 s does not.
func TestR4sWithinRun(t *testing.T) {
	a := baselineSeries("Ambrelin", "QC-high", 2.5, 2.5)
	b := baselineSeries("Ambrelin", "QC-low", -2.5, -1.5)
	other := baselineSeries("Corvane", "QC-low", -2.5, 0)
	charts := Evaluate([]Series{a, b, other}, DefaultBaseline)
	want := [][]string{
		{"1-2s@20", "R-4s@20", "1-2s@21", "2-2s@21"},
		{"1-2s@20"},
		{"1-2s@20"},
	}
	for i, c := range charts {
		if got := fired(c); !reflect.DeepEqual(got, want[i]) {
			t.Errorf("%s %s: rules fired %v, want %v", c.Compound, c.Standard, got, want[i])
		}
	}
	if v := charts[0].Violations[1]; v.Standard != "QC-high, QC-low" || v.RunID != 21 || v.Warning {
		t.Errorf("R-4s violation %+v, want standards QC-high, QC-low in run 21, not a warning", v)
	}
	if !charts[1].Violations[0].Warning {
		t.Error("1-2s is not marked a warning")
	}
}

// TestShortBaseline: fewer points than the baseline asks for set the
// limits from all of them (provisional); one point gives none.
func TestShortBaseline(t *testing.T) {
	s := Series{Compound: "X", Standard: "Q", Points: []Point{{RunID: 1, Recovery: 99}, {RunID: 2, Recovery: 101}, {RunID: 3, Recovery: 100}}}
	c := Evaluate([]Series{s}, 20)[0]
	if !c.Provisional || c.Baseline != 3 || math.Abs(c.Mean-100) > 1e-12 || math.Abs(c.SD-1) > 1e-12 {
		t.Errorf("got baseline %d provisional %v centre %g SD %g, want 3, true, 100, 1", c.Baseline, c.Provisional, c.Mean, c.SD)
	}
	s.Points = s.Points[:1]
	c = Evaluate([]Series{s}, 20)[0]
	if !math.IsNaN(c.SD) || len(c.Violations) != 0 {
		t.Errorf("one point: SD %g, %d violations; want no limits and none", c.SD, len(c.Violations))
	}
}
