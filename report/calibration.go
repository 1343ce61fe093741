package report

import (
	"fmt"
	"image/color"
	"math"
	"path/filepath"
	"strings"
	"unicode"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"huesolve/internal/pkgerr"
	"huesolve/reference"
)

// Sizes of the calibration figures.
const (
	calPlotW = 16 * vg.Centimeter
	calPlotH = 10 * vg.Centimeter
	// calLineH is the height of a calibration-line figure (line above,
	// residuals below).
	calLineH = 14 * vg.Centimeter
)

// absorptivityPlot draws each compound's absorptivity spectrum with a band
// of +-2 standard errors, at the wavelengths where the compound is usable
// (gaps elsewhere).
func absorptivityPlot(set *reference.Set) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = "Absorptivity spectra (band: ±2 SE)"
	p.X.Label.Text = "Wavelength (nm)"
	units := make([]string, len(set.Compounds))
	for k, c := range set.Compounds {
		units[k] = c.Unit
	}
	p.Y.Label.Text = "Absorptivity (" + absorptivityUnit(commonUnit(units)) + ")"
	p.Add(plotter.NewGrid())
	for k, c := range set.Compounds {
		col := colour(k)
		first := true
		for _, run := range usableRuns(c.Usable) {
			lo, hi := run[0], run[1]
			mid := make(plotter.XYs, 0, hi-lo)
			band := make(plotter.XYs, 0, 2*(hi-lo))
			for j := lo; j < hi; j++ {
				mid = append(mid, plotter.XY{X: set.Grid[j], Y: c.Absorptivity[j]})
				band = append(band, plotter.XY{X: set.Grid[j], Y: c.Absorptivity[j] + 2*c.SE[j]})
			}
			for j := hi - 1; j >= lo; j-- {
				band = append(band, plotter.XY{X: set.Grid[j], Y: c.Absorptivity[j] - 2*c.SE[j]})
			}
			poly, err := plotter.NewPolygon(band)
			if err != nil {
				return nil, pkgerr.Errorf("report", "absorptivity band of %s: %w", c.Name, err)
			}
			poly.Color = fade(col)
			poly.LineStyle.Width = 0
			line, err := plotter.NewLine(mid)
			if err != nil {
				return nil, pkgerr.Errorf("report", "absorptivity of %s: %w", c.Name, err)
			}
			line.Color = col
			line.Width = vg.Points(1.2)
			p.Add(poly, line)
			if first {
				p.Legend.Add(c.Name, line)
				first = false
			}
		}
	}
	p.Legend.Top = true
	return p, nil
}

// usableRuns returns [start, end) index pairs of the runs of true in u
// that hold at least two points.
func usableRuns(u []bool) [][2]int {
	var runs [][2]int
	for j := 0; j < len(u); {
		if !u[j] {
			j++
			continue
		}
		k := j
		for k < len(u) && u[k] {
			k++
		}
		if k-j >= 2 {
			runs = append(runs, [2]int{j, k})
		}
		j = k
	}
	return runs
}

// fade gives a translucent version of c for bands.
func fade(c color.Color) color.Color {
	r, g, b, _ := c.RGBA()
	return color.NRGBA{R: uint8(r >> 8), G: uint8(g >> 8), B: uint8(b >> 8), A: 0x40}
}

// calibrationLinePlots draws compound k's calibration line at its band
// maximum (readings, fitted line, readings left out) and, below it, the
// residuals of the readings from the line.
func calibrationLinePlots(set *reference.Set, k int) (line, resid *plot.Plot, err error) {
	if k < 0 || k >= len(set.Compounds) {
		return nil, nil, pkgerr.Errorf("report", "compound %d of %d", k, len(set.Compounds))
	}
	c := set.Compounds[k]
	l := c.Linearity
	unit := c.Unit
	if unit == "" {
		unit = "as given"
	}
	var used, dropped, res plotter.XYs
	maxX := 0.0
	for _, pt := range l.Data {
		maxX = max(maxX, pt.Conc)
		if pt.Used {
			used = append(used, plotter.XY{X: pt.Conc, Y: pt.Absorbance})
			res = append(res, plotter.XY{X: pt.Conc, Y: pt.Absorbance - (l.Intercept + l.Slope*pt.Conc)})
		} else {
			dropped = append(dropped, plotter.XY{X: pt.Conc, Y: pt.Absorbance})
		}
	}
	if len(used) == 0 {
		return nil, nil, pkgerr.Errorf("report", "%s has no calibration readings to plot", c.Name)
	}
	col := colour(k)

	line = plot.New()
	sign := "+"
	if l.Intercept < 0 {
		sign = "−"
	}
	line.Title.Text = fmt.Sprintf("%s at %g nm: A = %.4g·c %s %.2g, R² = %.5f", c.Name, c.PeakNM, l.Slope, sign, math.Abs(l.Intercept), l.R2)
	if l.Curved {
		line.Title.Text += " (curved)"
	}
	line.X.Label.Text = fmt.Sprintf("Concentration (%s)", unit)
	line.Y.Label.Text = fmt.Sprintf("Absorbance at %g nm", c.PeakNM)
	line.Add(plotter.NewGrid())
	fit := plotter.NewFunction(func(x float64) float64 { return l.Intercept + l.Slope*x })
	fit.XMin, fit.XMax = 0, maxX
	fit.Color = col
	fit.Width = vg.Points(1)
	line.Add(fit)
	line.Legend.Add("fitted line", fit)
	sc, err := plotter.NewScatter(used)
	if err != nil {
		return nil, nil, pkgerr.Errorf("report", "%s: %w", c.Name, err)
	}
	sc.Color = col
	line.Add(sc)
	line.Legend.Add("standards", sc)
	if len(dropped) > 0 {
		ds, err := plotter.NewScatter(dropped)
		if err != nil {
			return nil, nil, pkgerr.Errorf("report", "%s: %w", c.Name, err)
		}
		ds.Color = color.Gray{Y: 0x80}
		ds.Shape = draw.CrossGlyph{}
		line.Add(ds)
		line.Legend.Add("above the ceiling (left out)", ds)
	}
	line.Legend.Top = true
	line.Legend.Left = true
	// Show the origin: the line's intercept is read there.
	line.X.Min = 0
	line.Y.Min = min(line.Y.Min, 0, l.Intercept)

	resid = plot.New()
	resid.X.Label.Text = line.X.Label.Text
	resid.Y.Label.Text = "Residual (absorbance)"
	resid.Add(plotter.NewGrid())
	zero := plotter.NewFunction(func(float64) float64 { return 0 })
	zero.XMin, zero.XMax = 0, maxX
	zero.Color = color.Gray{Y: 0x60}
	rs, err := plotter.NewScatter(res)
	if err != nil {
		return nil, nil, pkgerr.Errorf("report", "%s: %w", c.Name, err)
	}
	rs.Color = col
	resid.Add(zero, rs)
	resid.X.Min = 0
	return line, resid, nil
}

// saveCalibrationLinePlot writes compound k's calibration line with its
// residual panel to path (format from the extension: png, svg or pdf),
// atomically.
func saveCalibrationLinePlot(set *reference.Set, k int, path string) error {
	line, resid, err := calibrationLinePlots(set, k)
	if err != nil {
		return err
	}
	return saveStacked(path, calPlotW, calLineH, []*plot.Plot{line, resid}, []float64{1, 1})
}

// WriteCalibrationPlots writes, into dir, absorptivity.FORMAT and one
// line-NAME.FORMAT per compound; format is "png" or "svg". It returns the
// files written.
func WriteCalibrationPlots(set *reference.Set, dir, format string) ([]string, error) {
	format = strings.ToLower(format)
	if format != "png" && format != "svg" {
		return nil, pkgerr.Errorf("report", "plot format %q: want png or svg", format)
	}
	var files []string
	p, err := absorptivityPlot(set)
	if err != nil {
		return nil, err
	}
	f := filepath.Join(dir, "absorptivity."+format)
	if err := savePlot(p, f, calPlotW, calPlotH); err != nil {
		return files, err
	}
	files = append(files, f)
	used := map[string]bool{}
	for k, c := range set.Compounds {
		name := uniqueName(fileSafe(c.Name), used)
		f := filepath.Join(dir, "line-"+name+"."+format)
		if err := saveCalibrationLinePlot(set, k, f); err != nil {
			return files, err
		}
		files = append(files, f)
	}
	return files, nil
}

// fileSafe turns a name into a file-name part: letters (in their case),
// digits, '-' and '_' kept, anything else a '-'. Names that differ only
// in case are kept apart by uniqueName, for folders that ignore case.
func fileSafe(s string) string {
	b := []rune(s)
	for i, r := range b {
		if !unicode.IsLetter(r) && !unicode.IsDigit(r) && r != '-' && r != '_' {
			b[i] = '-'
		}
	}
	out := strings.Trim(string(b), "-")
	if out == "" {
		out = "compound"
	}
	return out
}
