package report

import (
	"encoding/csv"
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"huesolve/history"
	"huesolve/internal/pkgerr"
)

// HistoryReport is what history shows: the file, its runs and the
// control charts of its check standards.
type HistoryReport struct {
	File     string
	Runs     []history.Run
	Charts   []history.Chart
	Baseline int // points asked for the baseline
}

// WriteHistoryTable writes the runs, a line per chart (centre line, SD,
// baseline, rules broken) and the violations, one per line.
func WriteHistoryTable(w io.Writer, h *HistoryReport) error {
	fmt.Fprintf(w, "QC history %s: %d run(s)\n\n", h.File, len(h.Runs))
	t := newTable(w)
	t.Header("run", "time (UTC)", "kind", "reference set", "check results", "sample results", "verdict")
	for _, r := range h.Runs {
		verdict := ""
		if r.Pass != nil {
			verdict = map[bool]string{true: "pass", false: "FAIL"}[*r.Pass]
		}
		if err := t.Append([]string{strconv.FormatInt(r.ID, 10), r.Time.UTC().Format("2006-01-02 15:04"), r.Kind, r.Reference,
			strconv.Itoa(r.NChecks), strconv.Itoa(r.NSamples), verdict}); err != nil {
			return err
		}
	}
	if err := t.Render(); err != nil {
		return err
	}
	if len(h.Charts) == 0 {
		_, err := fmt.Fprintln(w, "\nno check-standard recoveries recorded (record verify runs with --record)")
		return err
	}
	fmt.Fprintf(w, "\nControl charts of recovery (%%): centre line and SD from the first %d points of each series\n", h.Baseline)
	t = newTable(w)
	t.Header("compound", "check standard", "points", "baseline", "centre %", "SD %", "rules broken (warnings)")
	for _, c := range h.Charts {
		base := strconv.Itoa(c.Baseline)
		if c.Provisional {
			base += " (provisional)"
		}
		centre, sd := "n/a", "n/a"
		if !math.IsNaN(c.SD) {
			centre, sd = fixed(c.Mean, 2), sig(c.SD, 3)
		}
		if err := t.Append([]string{c.Compound, c.Standard, strconv.Itoa(len(c.Points)), base, centre, sd, ruleCounts(c)}); err != nil {
			return err
		}
	}
	if err := t.Render(); err != nil {
		return err
	}
	return writeViolations(w, h.Charts)
}

// ruleCounts is "2-2s ×1, 1-2s ×3 (warning)" for a chart, "none" when
// clean and "no limits" without an SD.
func ruleCounts(c history.Chart) string {
	if math.IsNaN(c.SD) {
		return fmt.Sprintf("no limits (fewer than %d points or no spread)", history.MinBaseline)
	}
	n := map[string]int{}
	for _, v := range c.Violations {
		n[v.Rule]++
	}
	var parts []string
	for _, r := range history.Rules {
		if n[r] > 0 {
			p := fmt.Sprintf("%s ×%d", r, n[r])
			if r == history.Rule12s {
				p += " (warning)"
			}
			parts = append(parts, p)
		}
	}
	if len(parts) == 0 {
		return "none"
	}
	return strings.Join(parts, ", ")
}

// writeViolations lists every rule broken, rejections before warnings.
func writeViolations(w io.Writer, charts []history.Chart) error {
	var lines []string
	for _, warn := range []bool{false, true} {
		for _, c := range charts {
			for _, v := range c.Violations {
				if v.Warning != warn {
					continue
				}
				p := c.Points[v.Point]
				what := "out of control"
				if warn {
					what = "warning"
				}
				lines = append(lines, termText(fmt.Sprintf("  run %d (%s) %s in %s: %s, %s (recovery %s %%, %s s)", v.RunID,
					p.Time.UTC().Format("2006-01-02 15:04"), v.Compound, v.Standard, v.Rule, what, fixed(p.Recovery, 2), zText(c.Z[v.Point]))))
			}
		}
	}
	if len(lines) == 0 {
		_, err := fmt.Fprintln(w, "\nNo control rule broken.")
		return err
	}
	fmt.Fprintf(w, "\nControl rules broken (Westgard multi-rule scheme, Clin. Chem. 27 (1981) 493):\n%s\n", strings.Join(lines, "\n"))
	return nil
}

func zText(z float64) string {
	if math.IsNaN(z) {
		return "n/a"
	}
	return strconv.FormatFloat(z, 'f', 2, 64)
}

// WriteHistoryCSV writes one row per point of every chart: the series,
// run, time, recovery, z-score, the chart's centre line and SD, and the
// rules broken at the point (space-separated).
func WriteHistoryCSV(w io.Writer, charts []history.Chart) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"compound", "standard", "run", "time_utc", "recovery_pct", "z", "centre_pct", "sd_pct", "baseline_points", "rules"}); err != nil {
		return err
	}
	num := func(x float64) string {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return ""
		}
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	for _, c := range charts {
		rules := make([][]string, len(c.Points))
		for _, v := range c.Violations {
			rules[v.Point] = append(rules[v.Point], v.Rule)
		}
		for i, p := range c.Points {
			rec := []string{csvText(c.Compound), csvText(c.Standard), strconv.FormatInt(p.RunID, 10), p.Time.UTC().Format("2006-01-02T15:04:05Z"),
				num(p.Recovery), num(c.Z[i]), num(c.Mean), num(c.SD), strconv.Itoa(c.Baseline), strings.Join(rules[i], " ")}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// Chart size.
const (
	chartW = 16 * vg.Centimeter
	chartH = 9 * vg.Centimeter
)

// WriteControlCharts writes control-NAME-STANDARD.FORMAT for each chart
// into dir (format png or svg) and returns the files written.
func WriteControlCharts(charts []history.Chart, dir, format string) ([]string, error) {
	format = strings.ToLower(format)
	if format != "png" && format != "svg" {
		return nil, pkgerr.Errorf("report", "plot format %q: want png or svg", format)
	}
	var files []string
	used := map[string]bool{}
	for _, c := range charts {
		name := uniqueName(fileSafe(c.Compound)+"-"+fileSafe(c.Standard), used)
		f := filepath.Join(dir, "control-"+name+"."+format)
		p, err := controlChart(c)
		if err != nil {
			return files, err
		}
		if err := savePlot(p, f, chartW, chartH); err != nil {
			return files, err
		}
		files = append(files, f)
	}
	return files, nil
}

// controlChart draws one chart: recovery against the point's number, the
// centre line, ±2 SD (dashed) and ±3 SD limits, the end of the baseline,
// and the points at which a rule was broken in red (warnings in ochre).
func controlChart(c history.Chart) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s in %s", c.Compound, c.Standard)
	p.X.Label.Text = "point (runs in order)"
	p.Y.Label.Text = "recovery (%)"
	pts := make(plotter.XYs, len(c.Points))
	for i, q := range c.Points {
		pts[i] = plotter.XY{X: float64(i + 1), Y: q.Recovery}
	}
	n := float64(len(c.Points))
	if !math.IsNaN(c.SD) {
		limits := []struct {
			k      float64
			dashes []vg.Length
			col    color.Color
		}{{0, nil, colour(2)}, {2, []vg.Length{vg.Points(4), vg.Points(3)}, colour(1)}, {3, nil, colour(5)}}
		for _, l := range limits {
			for _, sgn := range []float64{-1, 1} {
				if l.k == 0 && sgn < 0 {
					continue
				}
				y := c.Mean + sgn*l.k*c.SD
				line, err := plotter.NewLine(plotter.XYs{{X: 0.5, Y: y}, {X: n + 0.5, Y: y}})
				if err != nil {
					return nil, pkgerr.Errorf("report", "control chart %s: %w", p.Title.Text, err)
				}
				line.Color, line.Dashes = l.col, l.dashes
				p.Add(line)
			}
		}
		if c.Baseline < len(c.Points) {
			x := float64(c.Baseline) + 0.5
			line, err := plotter.NewLine(plotter.XYs{{X: x, Y: c.Mean - 3.5*c.SD}, {X: x, Y: c.Mean + 3.5*c.SD}})
			if err != nil {
				return nil, pkgerr.Errorf("report", "control chart %s: %w", p.Title.Text, err)
			}
			line.Color, line.Dashes = colour(4), []vg.Length{vg.Points(1), vg.Points(3)}
			p.Add(line)
		}
		p.Legend.Add(fmt.Sprintf("centre %.2f %%, SD %.3g %% (first %d points)", c.Mean, c.SD, c.Baseline))
	}
	lp, sc, err := plotter.NewLinePoints(pts)
	if err != nil {
		return nil, pkgerr.Errorf("report", "control chart %s: %w", p.Title.Text, err)
	}
	lp.Color, sc.Color, sc.Shape = colour(0), colour(0), draw.CircleGlyph{}
	p.Add(lp, sc)
	var bad, warn plotter.XYs
	state := map[int]bool{} // point -> rejection (true) or warning only
	for _, v := range c.Violations {
		state[v.Point] = state[v.Point] || !v.Warning
	}
	for i := range pts {
		rej, ok := state[i]
		switch {
		case !ok:
		case rej:
			bad = append(bad, pts[i])
		default:
			warn = append(warn, pts[i])
		}
	}
	for _, m := range []struct {
		xy  plotter.XYs
		col color.Color
	}{{warn, colour(1)}, {bad, colour(5)}} {
		if len(m.xy) == 0 {
			continue
		}
		s, err := plotter.NewScatter(m.xy)
		if err != nil {
			return nil, pkgerr.Errorf("report", "control chart %s: %w", p.Title.Text, err)
		}
		s.Color, s.Shape, s.Radius = m.col, draw.CircleGlyph{}, vg.Points(4)
		p.Add(s)
	}
	p.X.Min, p.X.Max = 0.5, n+0.5
	return p, nil
}
