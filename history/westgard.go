package history

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat"
)

// The control rules of the Westgard multi-rule scheme: J. O. Westgard,
// P. L. Barry, M. R. Hunt, T. Groth, "A multi-rule Shewhart chart for
// quality control in clinical chemistry", Clin. Chem. 27 (1981) 493-501.
// s is the standard deviation and the centre line the mean of the
// baseline period.
const (
	Rule12s = "1-2s" // one point beyond 2s: a warning
	Rule13s = "1-3s" // one point beyond 3s: random error
	Rule22s = "2-2s" // two consecutive points beyond 2s on the same side
	RuleR4s = "R-4s" // in one run, one check beyond +2s and another beyond -2s
	Rule41s = "4-1s" // four consecutive points beyond 1s on the same side
	Rule10x = "10-x" // ten consecutive points on the same side of the centre line
)

// Rules lists the rules in the order violations are listed.
var Rules = []string{Rule12s, Rule13s, Rule22s, RuleR4s, Rule41s, Rule10x}

// DefaultBaseline is the number of points from which a chart's centre
// line and limits are set when none is given: at least 20 control results
// is common practice for setting control limits.
const DefaultBaseline = 20

// MinBaseline is the fewest baseline points that give a standard
// deviation to chart against.
const MinBaseline = 2

// Chart is one series with its control limits and what the rules found.
type Chart struct {
	Series
	// Mean and SD are the centre line and the standard deviation (sample
	// SD, n-1) of the first Baseline points; NaN when fewer than
	// MinBaseline points or no spread.
	Mean, SD float64
	Baseline int
	// Provisional: the series has fewer points than the baseline asked
	// for, so all of them set the limits.
	Provisional bool
	// Z holds (x - Mean) / SD per point (NaN without limits).
	Z          []float64
	Violations []Violation
}

// Violation is one rule broken at one point of a chart.
type Violation struct {
	Rule string
	// Point is the index in the chart's points of the point at which the
	// rule fired (the last of the points it looks at).
	Point    int
	RunID    int64
	Compound string
	// Standard is the check standard; for R-4s, the two standards.
	Standard string
	// Warning: the 1-2s rule, which calls for inspection, not rejection.
	Warning bool
}

// Evaluate sets each series' limits from its first baseline points and
// applies every rule at every point. The 1981 scheme applies the other
// rules only after a 1-2s warning; here each rule is checked at every
// point, so a shift or trend that stays inside 2s (4-1s, 10-x) is shown
// as soon as it is there. 2-2s, 4-1s and 10-x look at consecutive points
// of one series (one compound in one check standard, across runs); R-4s
// looks across the check standards of one compound within one run.
func Evaluate(series []Series, baseline int) []Chart {
	if baseline < MinBaseline {
		baseline = MinBaseline
	}
	charts := make([]Chart, len(series))
	for i, s := range series {
		charts[i] = limits(s, baseline)
		charts[i].Violations = seriesRules(&charts[i])
	}
	withinRun(charts)
	for i := range charts {
		v := charts[i].Violations
		sort.SliceStable(v, func(a, b int) bool {
			if v[a].Point != v[b].Point {
				return v[a].Point < v[b].Point
			}
			return ruleOrder(v[a].Rule) < ruleOrder(v[b].Rule)
		})
	}
	return charts
}

func ruleOrder(r string) int {
	for i, x := range Rules {
		if x == r {
			return i
		}
	}
	return len(Rules)
}

// limits computes the centre line, SD and z-scores of s.
func limits(s Series, baseline int) Chart {
	c := Chart{Series: s, Mean: math.NaN(), SD: math.NaN(), Baseline: baseline}
	if len(s.Points) < baseline {
		c.Baseline, c.Provisional = len(s.Points), true
	}
	x := make([]float64, c.Baseline)
	for i := range x {
		x[i] = s.Points[i].Recovery
	}
	if len(x) >= MinBaseline {
		m, sd := stat.MeanStdDev(x, nil)
		if sd > 0 && !math.IsNaN(sd) {
			c.Mean, c.SD = m, sd
		}
	}
	c.Z = make([]float64, len(s.Points))
	for i, p := range s.Points {
		c.Z[i] = (p.Recovery - c.Mean) / c.SD
	}
	return c
}

// seriesRules applies the rules on consecutive points of one chart.
func seriesRules(c *Chart) []Violation {
	var out []Violation
	add := func(rule string, i int) {
		out = append(out, Violation{Rule: rule, Point: i, RunID: c.Points[i].RunID, Compound: c.Compound, Standard: c.Standard, Warning: rule == Rule12s})
	}
	z := c.Z
	for i := range z {
		if math.IsNaN(z[i]) {
			continue
		}
		if math.Abs(z[i]) > 2 {
			add(Rule12s, i)
		}
		if math.Abs(z[i]) > 3 {
			add(Rule13s, i)
		}
		if sameSide(z, i, 2, 2) {
			add(Rule22s, i)
		}
		if sameSide(z, i, 4, 1) {
			add(Rule41s, i)
		}
		if sameSide(z, i, 10, 0) {
			add(Rule10x, i)
		}
	}
	return out
}

// sameSide reports whether the n points ending at i all lie beyond +k or
// all beyond -k.
func sameSide(z []float64, i, n int, k float64) bool {
	if i+1 < n {
		return false
	}
	above, below := true, true
	for _, v := range z[i+1-n : i+1] {
		above = above && v > k
		below = below && v < -k
	}
	return above || below
}

// withinRun applies R-4s: within one run, one compound's check standards
// with one result beyond +2s and another beyond -2s. The violation goes to
// the chart of the standard above +2s.
func withinRun(charts []Chart) {
	type at struct {
		chart, point int
	}
	byRun := map[string]map[int64][]at{}
	for ci, c := range charts {
		for pi, p := range c.Points {
			if math.IsNaN(c.Z[pi]) {
				continue
			}
			if byRun[c.Compound] == nil {
				byRun[c.Compound] = map[int64][]at{}
			}
			byRun[c.Compound][p.RunID] = append(byRun[c.Compound][p.RunID], at{ci, pi})
		}
	}
	for _, runs := range byRun {
		for run, pts := range runs {
			hi, lo := -1, -1
			for k, a := range pts {
				z := charts[a.chart].Z[a.point]
				if z > 2 && (hi < 0 || z > charts[pts[hi].chart].Z[pts[hi].point]) {
					hi = k
				}
				if z < -2 && (lo < 0 || z < charts[pts[lo].chart].Z[pts[lo].point]) {
					lo = k
				}
			}
			if hi < 0 || lo < 0 {
				continue
			}
			h, l := pts[hi], pts[lo]
			c := &charts[h.chart]
			c.Violations = append(c.Violations, Violation{Rule: RuleR4s, Point: h.point, RunID: run, Compound: c.Compound,
				Standard: c.Standard + ", " + charts[l.chart].Standard})
		}
	}
}
