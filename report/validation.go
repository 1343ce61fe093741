package report

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"huesolve/internal/pkgerr"
	"huesolve/validate"
)

// Sizes of the validation figures.
const (
	valPlotW = 14 * vg.Centimeter
	valPlotH = 16 * vg.Centimeter
	winPlotW = 16 * vg.Centimeter
	winPlotH = 10 * vg.Centimeter
	// winLines is the most window widths drawn as separate lines.
	winLines = 6
)

// verifyPlot draws compound k of a verification: the found concentration
// of each check standard against its known one with ±2 SE bars, the line
// found = known, and the lines of the recovery limits. When cv is not nil
// its cross-validated predictions of the calibration standards are added
// as rings.
func verifyPlot(v *validate.Verification, cv *validate.CrossValidation, k int) (*plot.Plot, error) {
	if k < 0 || k >= len(v.Compounds) {
		return nil, pkgerr.Errorf("report", "verify plot: compound %d of %d", k, len(v.Compounds))
	}
	cmp := v.Compounds[k]
	var pts plotter.XYs
	var errs plotter.YErrors
	for _, r := range v.Rows {
		if r.Compound != cmp.Compound {
			continue
		}
		pts = append(pts, plotter.XY{X: r.Known, Y: r.Found})
		errs = append(errs, struct{ Low, High float64 }{2 * r.SE, 2 * r.SE})
	}
	unit := cmp.Unit
	if unit == "" {
		unit = "as given"
	}
	verdict := "pass"
	if !cmp.Pass {
		verdict = "FAIL"
	}
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s: found vs known (mean recovery %.1f %%, %s)", cmp.Compound, cmp.MeanRecovery, verdict)
	if cmp.Holding == 0 {
		p.Title.Text = fmt.Sprintf("%s: found vs known (no check standard holds it, %s)", cmp.Compound, verdict)
	}
	p.X.Label.Text = fmt.Sprintf("Known (%s)", unit)
	p.Y.Label.Text = fmt.Sprintf("Found (%s)", unit)
	p.Add(plotter.NewGrid())

	hi := 0.0
	for _, q := range pts {
		hi = math.Max(hi, math.Max(q.X, q.Y))
	}
	var cvPts plotter.XYs
	if cv != nil {
		for j, name := range cv.Compounds {
			if name != cmp.Compound {
				continue
			}
			for _, pr := range cv.Predictions {
				cvPts = append(cvPts, plotter.XY{X: pr.Known[j], Y: pr.Found[j]})
				hi = math.Max(hi, math.Max(pr.Known[j], pr.Found[j]))
			}
		}
	}
	if !(hi > 0) {
		hi = 1
	}
	hi *= 1.1
	ident, err := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}, {X: hi, Y: hi}})
	if err != nil {
		return nil, pkgerr.Errorf("report", "verify plot of %s: %w", cmp.Compound, err)
	}
	ident.Color = colour(4)
	p.Add(ident)
	p.Legend.Add("found = known", ident)
	for i, lim := range []float64{v.Limits.RecoveryLo, v.Limits.RecoveryHi} {
		l, err := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}, {X: hi, Y: hi * lim / 100}})
		if err != nil {
			return nil, pkgerr.Errorf("report", "verify plot of %s: %w", cmp.Compound, err)
		}
		l.Color = colour(4)
		l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		p.Add(l)
		if i == 0 {
			p.Legend.Add(fmt.Sprintf("recovery %g-%g %%", v.Limits.RecoveryLo, v.Limits.RecoveryHi), l)
		}
	}
	if len(cvPts) > 0 {
		sc, err := plotter.NewScatter(cvPts)
		if err != nil {
			return nil, pkgerr.Errorf("report", "verify plot of %s: %w", cmp.Compound, err)
		}
		sc.Shape = draw.RingGlyph{}
		sc.Color = colour(1)
		sc.Radius = vg.Points(3)
		p.Add(sc)
		p.Legend.Add("calibration standards, cross-validated", sc)
	}
	if len(pts) > 0 {
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, pkgerr.Errorf("report", "verify plot of %s: %w", cmp.Compound, err)
		}
		sc.Shape = draw.CircleGlyph{}
		sc.Color = colour(0)
		sc.Radius = vg.Points(3)
		bars, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{pts, errs})
		if err != nil {
			return nil, pkgerr.Errorf("report", "verify plot of %s: %w", cmp.Compound, err)
		}
		bars.Color = colour(0)
		p.Add(bars, sc)
		p.Legend.Add("check standards (±2 SE)", sc)
	}
	p.X.Min, p.Y.Min = 0, 0
	p.X.Max, p.Y.Max = hi, hi
	p.Legend.Top = true
	p.Legend.Left = true
	return p, nil
}

// recoveryPlot draws compound k's recovery (percent) against the known
// concentration for the check standards holding it (and, when cv is not
// nil, the cross-validated calibration standards), with the limits.
func recoveryPlot(v *validate.Verification, cv *validate.CrossValidation, k int) (*plot.Plot, error) {
	if k < 0 || k >= len(v.Compounds) {
		return nil, pkgerr.Errorf("report", "recovery plot: compound %d of %d", k, len(v.Compounds))
	}
	cmp := v.Compounds[k]
	var pts, cvPts plotter.XYs
	lo, hi := v.Limits.RecoveryLo, v.Limits.RecoveryHi
	xmax := 0.0
	for _, r := range v.Rows {
		if r.Compound == cmp.Compound && r.Recovery != nil {
			pts = append(pts, plotter.XY{X: r.Known, Y: *r.Recovery})
			lo, hi, xmax = math.Min(lo, *r.Recovery), math.Max(hi, *r.Recovery), math.Max(xmax, r.Known)
		}
	}
	if cv != nil {
		for j, name := range cv.Compounds {
			if name != cmp.Compound {
				continue
			}
			for _, pr := range cv.Predictions {
				if pr.Known[j] > 0 {
					r := 100 * pr.Found[j] / pr.Known[j]
					cvPts = append(cvPts, plotter.XY{X: pr.Known[j], Y: r})
					lo, hi, xmax = math.Min(lo, r), math.Max(hi, r), math.Max(xmax, pr.Known[j])
				}
			}
		}
	}
	if !(xmax > 0) {
		xmax = 1
	}
	xmax *= 1.1
	unit := cmp.Unit
	if unit == "" {
		unit = "as given"
	}
	p := plot.New()
	p.X.Label.Text = fmt.Sprintf("Known (%s)", unit)
	p.Y.Label.Text = "Recovery (%)"
	p.Add(plotter.NewGrid())
	for _, y := range []float64{v.Limits.RecoveryLo, 100, v.Limits.RecoveryHi} {
		l, err := plotter.NewLine(plotter.XYs{{X: 0, Y: y}, {X: xmax, Y: y}})
		if err != nil {
			return nil, pkgerr.Errorf("report", "recovery plot of %s: %w", cmp.Compound, err)
		}
		l.Color = colour(4)
		if y != 100 {
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		}
		p.Add(l)
	}
	for i, set := range []plotter.XYs{cvPts, pts} {
		if len(set) == 0 {
			continue
		}
		sc, err := plotter.NewScatter(set)
		if err != nil {
			return nil, pkgerr.Errorf("report", "recovery plot of %s: %w", cmp.Compound, err)
		}
		sc.Radius = vg.Points(3)
		if i == 0 {
			sc.Shape, sc.Color = draw.RingGlyph{}, colour(1)
		} else {
			sc.Shape, sc.Color = draw.CircleGlyph{}, colour(0)
		}
		p.Add(sc)
	}
	pad := 0.1 * (hi - lo)
	p.Y.Min, p.Y.Max = lo-pad, hi+pad
	p.X.Min, p.X.Max = 0, xmax
	return p, nil
}

// saveVerifyPlot writes compound k's found-vs-known plot with its
// recovery panel below to path (format from the extension), atomically.
func saveVerifyPlot(v *validate.Verification, cv *validate.CrossValidation, k int, path string) error {
	top, err := verifyPlot(v, cv, k)
	if err != nil {
		return err
	}
	bottom, err := recoveryPlot(v, cv, k)
	if err != nil {
		return err
	}
	// The found-vs-known panel gets two thirds of the height.
	return saveStacked(path, valPlotW, valPlotH, []*plot.Plot{top, bottom}, []float64{2, 1})
}

// WriteVerifyPlots writes verify-NAME.FORMAT for each compound into dir;
// format is "png" or "svg"; cv may be nil. It returns the files written.
func WriteVerifyPlots(v *validate.Verification, cv *validate.CrossValidation, dir, format string) ([]string, error) {
	format = strings.ToLower(format)
	if format != "png" && format != "svg" {
		return nil, pkgerr.Errorf("report", "plot format %q: want png or svg", format)
	}
	var files []string
	used := map[string]bool{}
	for k, c := range v.Compounds {
		name := uniqueName(fileSafe(c.Compound), used)
		f := filepath.Join(dir, "verify-"+name+"."+format)
		if err := saveVerifyPlot(v, cv, k, f); err != nil {
			return files, err
		}
		files = append(files, f)
	}
	return files, nil
}

// uniqueName returns base, or base-2, base-3, ... when used (which it
// updates) holds it already, ignoring case: Red and red would be one file
// in a folder that ignores case.
func uniqueName(base string, used map[string]bool) string {
	name := base
	for i := 2; used[strings.ToLower(name)]; i++ {
		name = fmt.Sprintf("%s-%d", base, i)
	}
	used[strings.ToLower(name)] = true
	return name
}

// windowPlots draws the window advice: the worst compound's predicted
// relative standard error (percent of its level) and the condition number
// against the window's start, one line per window width (at most six
// widths, spread over those tried, always including the recommended
// one's), both on log scales, with the recommended window marked.
func windowPlots(adv *validate.WindowAdvice) (errPlot, condPlot *plot.Plot, err error) {
	if adv.Best < 0 || adv.Best >= len(adv.Candidates) {
		return nil, nil, pkgerr.Errorf("report", "window plot: no recommended window")
	}
	best := adv.Candidates[adv.Best]
	widthOf := func(c validate.Candidate) float64 { return math.Round((c.Hi-c.Lo)*1e6) / 1e6 }
	byWidth := map[float64][]validate.Candidate{}
	for _, c := range adv.Candidates {
		byWidth[widthOf(c)] = append(byWidth[widthOf(c)], c)
	}
	var widths []float64
	for w := range byWidth {
		widths = append(widths, w)
	}
	sort.Float64s(widths)
	chosen := pickWidths(widths, widthOf(best), winLines)

	mk := func(title, ylabel string, f func(validate.Candidate) float64) (*plot.Plot, error) {
		p := plot.New()
		p.Title.Text = title
		p.X.Label.Text = "Window start (nm)"
		p.Y.Label.Text = ylabel
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = plot.LogTicks{Prec: -1}
		p.Add(plotter.NewGrid())
		ymin, ymax := math.Inf(1), math.Inf(-1)
		for i, w := range chosen {
			var runs []plotter.XYs
			var cur plotter.XYs
			for _, c := range byWidth[w] {
				y := f(c)
				if c.Singular || !(y > 0) || math.IsInf(y, 0) {
					if len(cur) > 0 {
						runs = append(runs, cur)
						cur = nil
					}
					continue
				}
				cur = append(cur, plotter.XY{X: c.Lo, Y: y})
				ymin, ymax = math.Min(ymin, y), math.Max(ymax, y)
			}
			if len(cur) > 0 {
				runs = append(runs, cur)
			}
			first := true
			for _, run := range runs {
				l, s, err := plotter.NewLinePoints(run)
				if err != nil {
					return nil, pkgerr.Errorf("report", "window plot: %w", err)
				}
				l.Color, s.Color = colour(i), colour(i)
				s.Radius = vg.Points(1.5)
				p.Add(l, s)
				if first {
					p.Legend.Add(fmt.Sprintf("%g nm wide", w), l)
					first = false
				}
			}
		}
		mark, err := plotter.NewScatter(plotter.XYs{{X: best.Lo, Y: f(best)}})
		if err != nil {
			return nil, pkgerr.Errorf("report", "window plot: %w", err)
		}
		mark.Shape = draw.RingGlyph{}
		mark.Radius = vg.Points(6)
		mark.Color = colour(5)
		p.Add(mark)
		p.Legend.Add(fmt.Sprintf("recommended %g-%g nm", best.Lo, best.Hi), mark)
		p.Legend.Top = true
		// Head room on the log axis for the legend above the lines.
		if ymax > ymin && ymin > 0 {
			dec := math.Log10(ymax / ymin)
			p.Y.Min = ymin / math.Pow(10, 0.05*dec+0.1)
			p.Y.Max = ymax * math.Pow(10, 0.6*dec+0.3)
		}
		return p, nil
	}
	errPlot, err = mk("Worst compound's predicted error by window", "Predicted relative SE (% of level)",
		func(c validate.Candidate) float64 { return 100 * c.Worst })
	if err != nil {
		return nil, nil, err
	}
	condPlot, err = mk("Condition number of the design by window", "Condition number",
		func(c validate.Candidate) float64 { return c.Cond })
	if err != nil {
		return nil, nil, err
	}
	return errPlot, condPlot, nil
}

// pickWidths chooses at most n widths spread evenly over ws (sorted),
// always including must.
func pickWidths(ws []float64, must float64, n int) []float64 {
	if len(ws) <= n {
		return ws
	}
	set := map[float64]bool{must: true}
	for i := 0; i < n-1; i++ {
		set[ws[i*(len(ws)-1)/(n-2)]] = true
	}
	var out []float64
	for w := range set {
		out = append(out, w)
	}
	sort.Float64s(out)
	return out
}

// WriteWindowPlots writes window-error.FORMAT and window-cond.FORMAT into
// dir; format is "png" or "svg". It returns the files written.
func WriteWindowPlots(adv *validate.WindowAdvice, dir, format string) ([]string, error) {
	format = strings.ToLower(format)
	if format != "png" && format != "svg" {
		return nil, pkgerr.Errorf("report", "plot format %q: want png or svg", format)
	}
	ep, cp, err := windowPlots(adv)
	if err != nil {
		return nil, err
	}
	var files []string
	for _, x := range []struct {
		p    *plot.Plot
		name string
	}{{ep, "window-error"}, {cp, "window-cond"}} {
		f := filepath.Join(dir, x.name+"."+format)
		if err := savePlot(x.p, f, winPlotW, winPlotH); err != nil {
			return files, err
		}
		files = append(files, f)
	}
	return files, nil
}
