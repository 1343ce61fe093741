package report

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"huesolve/internal/pkgerr"
	"huesolve/unmix"
)

// Sample figure size and layout: the spectra panel takes three quarters
// of the height, the residual panel below it one quarter.
const (
	samplePlotW   = 18 * vg.Centimeter
	samplePlotH   = 14 * vg.Centimeter
	spectraWeight = 3.0
	residWeight   = 1.0
	// noiseBandK is the half-width of the residual panel's noise band in
	// noise standard deviations: about 95 % of the residuals of a good
	// fit fall inside it.
	noiseBandK = 2.0
)

// Colours of the sample figure besides the compound palette.
var (
	measuredColour = color.RGBA{R: 0x9a, G: 0x9a, B: 0x9a, A: 0xff} // light grey dots under the fit
	fittedColour   = color.RGBA{R: 0x11, G: 0x11, B: 0x11, A: 0xff}
	residColour    = color.RGBA{R: 0x33, G: 0x33, B: 0x33, A: 0xff}
	baselineColour = color.RGBA{R: 0x80, G: 0x80, B: 0x80, A: 0xff}
	noiseColour    = color.RGBA{R: 0xcf, G: 0xe3, B: 0xf0, A: 0xff} // pale sky
	// Shading of the stretches the fit left out: above the ceiling (pale
	// apricot) and where no compound is calibrated (pale grey).
	saturatedColour    = color.RGBA{R: 0xfb, G: 0xe3, B: 0xd0, A: 0xff}
	uncalibratedColour = color.RGBA{R: 0xe8, G: 0xe8, B: 0xe8, A: 0xff}
)

// Legend labels of the shaded stretches.
const (
	saturatedLabel    = "above the ceiling: left out"
	uncalibratedLabel = "not calibrated: left out"
)

// errNoCurves: the result was solved without unmix.Options.KeepCurves.
var errNoCurves = pkgerr.New("report", "result holds no curves (solve with curves kept)")

// samplePlots draws one sample: the measured spectrum (dots), the fitted
// spectrum, each compound's contribution and the baseline in the top
// panel; the residual against a band of +-2 expected noise standard
// deviations in the bottom one. names label the compounds in order.
func samplePlots(r *unmix.Result, names []string) (spectra, resid *plot.Plot, err error) {
	n := len(r.Grid)
	if n == 0 {
		return nil, nil, errNoCurves
	}
	for _, c := range [][]float64{r.Measured, r.Fitted, r.Residual, r.BaselineCurve, r.Noise} {
		if len(c) != n {
			return nil, nil, pkgerr.Errorf("report", "%s: curves of unequal length", r.Sample)
		}
	}
	// Lines break where the fit left points out, rather than run
	// straight across; the stretches are shaded in both panels.
	sp := &samplePlot{r: r, segs: segments(r.Grid, r.Gaps), bands: gapBands(r.Grid, r.Gaps)}
	if spectra, err = sp.spectraPanel(names); err != nil {
		return nil, nil, pkgerr.Errorf("report", "plot of %s: %w", r.Sample, err)
	}
	if resid, err = sp.residualPanel(); err != nil {
		return nil, nil, pkgerr.Errorf("report", "plot of %s: %w", r.Sample, err)
	}
	xmin, xmax := r.Grid[0], r.Grid[n-1]
	for _, b := range sp.bands {
		xmin, xmax = math.Min(xmin, b.lo), math.Max(xmax, b.hi)
	}
	spectra.X.Min, spectra.X.Max = xmin, xmax
	resid.X.Min, resid.X.Max = xmin, xmax
	return spectra, resid, nil
}

// samplePlot is one sample's figure being drawn: the result, the runs of
// fitted points and the shaded stretches between them.
type samplePlot struct {
	r     *unmix.Result
	segs  [][2]int
	bands []*gapBand
}

// lines adds y to p as one line per run of fitted points, styled by
// style, and returns the first for the legend.
func (sp *samplePlot) lines(p *plot.Plot, y []float64, style func(*plotter.Line)) (*plotter.Line, error) {
	var first *plotter.Line
	for _, sg := range sp.segs {
		pts := make(plotter.XYs, 0, sg[1]-sg[0])
		for i := sg[0]; i < sg[1]; i++ {
			pts = append(pts, plotter.XY{X: sp.r.Grid[i], Y: y[i]})
		}
		l, err := plotter.NewLine(pts)
		if err != nil {
			return nil, err
		}
		style(l)
		p.Add(l)
		if first == nil {
			first = l
		}
	}
	return first, nil
}

// spectraPanel is the top panel: measured dots, each compound's part, the
// baseline, the fitted spectrum and the shaded stretches.
func (sp *samplePlot) spectraPanel(names []string) (*plot.Plot, error) {
	r := sp.r
	spectra := plot.New()
	spectra.Title.Text = sampleTitle(r)
	spectra.Y.Label.Text = "Absorbance"
	for _, b := range sp.bands {
		spectra.Add(b)
	}
	spectra.Add(plotter.NewGrid())
	pts := make(plotter.XYs, len(r.Grid))
	for i := range pts {
		pts[i] = plotter.XY{X: r.Grid[i], Y: r.Measured[i]}
	}
	meas, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, err
	}
	meas.GlyphStyle = draw.GlyphStyle{Color: measuredColour, Radius: vg.Points(1.5), Shape: draw.CircleGlyph{}}
	spectra.Add(meas)
	spectra.Legend.Add("measured", meas)
	if err := sp.addContributions(spectra, names); err != nil {
		return nil, err
	}
	if anyNonZero(r.BaselineCurve) {
		b, err := sp.lines(spectra, r.BaselineCurve, func(l *plotter.Line) {
			l.Color = baselineColour
			l.Width = vg.Points(1)
			l.Dashes = []vg.Length{vg.Points(1.5), vg.Points(2)}
		})
		if err != nil {
			return nil, err
		}
		spectra.Legend.Add("baseline", b)
	}
	for i, c := range r.InterferentCurves {
		if len(c) != len(r.Grid) || i >= len(r.Interferents) {
			return nil, errors.New("interferent curve of unequal length")
		}
		l, err := sp.lines(spectra, c, func(l *plotter.Line) {
			l.Color = colour(len(r.Contributions) + i)
			l.Width = vg.Points(1.2)
			l.Dashes = []vg.Length{vg.Points(1), vg.Points(3)}
		})
		if err != nil {
			return nil, err
		}
		it := r.Interferents[i]
		spectra.Legend.Add(fmt.Sprintf("%s (interferent) %s x scan", termText(it.Name), ConcText(it.Amount, it.SE)), l)
	}
	fit, err := sp.lines(spectra, r.Fitted, func(l *plotter.Line) {
		l.Color = fittedColour
		l.Width = vg.Points(1.3)
	})
	if err != nil {
		return nil, err
	}
	spectra.Legend.Add("fitted", fit)
	for _, b := range sp.bands {
		if b.first {
			spectra.Legend.Add(b.label, b)
		}
	}
	spectra.Legend.Top = true
	spectra.Legend.TextStyle.Font.Size = vg.Points(8)
	spectra.X.Tick.Label.Font.Size = 0 // the residual panel carries the wavelength axis
	return spectra, nil
}

// addContributions adds each compound's part of the fit, labelled with
// its name and concentration.
func (sp *samplePlot) addContributions(spectra *plot.Plot, names []string) error {
	r := sp.r
	for k, c := range r.Contributions {
		if len(c) != len(r.Grid) {
			return errors.New("contribution of unequal length")
		}
		l, err := sp.lines(spectra, c, func(l *plotter.Line) {
			l.Color = colour(k)
			l.Width = vg.Points(1.2)
			l.Dashes = []vg.Length{vg.Points(5), vg.Points(2)}
		})
		if err != nil {
			return err
		}
		name := fmt.Sprintf("compound %d", k+1)
		if k < len(names) {
			name = names[k]
		}
		if k < len(r.Amounts) {
			name += " " + ConcText(r.Amounts[k].Conc, r.Amounts[k].SE)
		}
		spectra.Legend.Add(name, l)
	}
	return nil
}

// residualPanel is the bottom panel: the residual against the band of
// expected noise, on an axis symmetric about zero.
func (sp *samplePlot) residualPanel() (*plot.Plot, error) {
	r := sp.r
	n := len(r.Grid)
	resid := plot.New()
	resid.X.Label.Text = "Wavelength (nm)"
	resid.Y.Label.Text = "Residual"
	for _, b := range sp.bands {
		resid.Add(b)
	}
	var noiseBand *plotter.Polygon
	for _, sg := range sp.segs {
		band := make(plotter.XYs, 0, 2*(sg[1]-sg[0]))
		for i := sg[0]; i < sg[1]; i++ {
			band = append(band, plotter.XY{X: r.Grid[i], Y: noiseBandK * r.Noise[i]})
		}
		for i := sg[1] - 1; i >= sg[0]; i-- {
			band = append(band, plotter.XY{X: r.Grid[i], Y: -noiseBandK * r.Noise[i]})
		}
		poly, err := plotter.NewPolygon(band)
		if err != nil {
			return nil, err
		}
		poly.Color = noiseColour
		poly.LineStyle.Width = 0
		resid.Add(poly)
		if noiseBand == nil {
			noiseBand = poly
		}
	}
	resid.Legend.Add(fmt.Sprintf("±%g σ expected noise", noiseBandK), noiseBand)
	zero, err := plotter.NewLine(plotter.XYs{{X: r.Grid[0], Y: 0}, {X: r.Grid[n-1], Y: 0}})
	if err != nil {
		return nil, err
	}
	zero.Color = baselineColour
	zero.Width = vg.Points(0.5)
	resid.Add(zero)
	if _, err := sp.lines(resid, r.Residual, func(l *plotter.Line) {
		l.Color = residColour
		l.Width = vg.Points(0.8)
	}); err != nil {
		return nil, err
	}
	resid.Legend.Top = true
	resid.Legend.TextStyle.Font.Size = vg.Points(8)
	// Keep the axis symmetric about zero.
	lim := 0.0
	for i := range n {
		lim = math.Max(lim, math.Max(math.Abs(r.Residual[i]), noiseBandK*r.Noise[i]))
	}
	if lim > 0 {
		resid.Y.Min, resid.Y.Max = -1.15*lim, 1.15*lim
	}
	return resid, nil
}

// segments splits the fitted points grid into runs [from, to) with no
// gap between neighbours.
func segments(grid []float64, gaps []unmix.Gap) [][2]int {
	var out [][2]int
	start, g := 0, 0
	for i := 1; i < len(grid); i++ {
		for g < len(gaps) && gaps[g].HiNM < grid[i-1] {
			g++
		}
		if g < len(gaps) && gaps[g].LoNM > grid[i-1] && gaps[g].HiNM < grid[i] {
			out = append(out, [2]int{start, i})
			start = i
		}
	}
	if len(grid) > 0 {
		out = append(out, [2]int{start, len(grid)})
	}
	return out
}

// gapBand shades one stretch the fit left out, across the whole height of
// a panel.
type gapBand struct {
	lo, hi float64 // nm
	colour color.Color
	label  string
	first  bool // the first band of its kind: it goes in the legend
}

// gapBands returns a band per gap, reaching halfway to the fitted points
// on either side (the whole step when a gap ends the window).
func gapBands(grid []float64, gaps []unmix.Gap) []*gapBand {
	var out []*gapBand
	seen := map[bool]bool{}
	for _, g := range gaps {
		prev, next := math.NaN(), math.NaN()
		for _, x := range grid {
			if x < g.LoNM {
				prev = x
			} else if x > g.HiNM {
				next = x
				break
			}
		}
		hl, hr := (g.LoNM-prev)/2, (next-g.HiNM)/2
		switch {
		case math.IsNaN(hl) && math.IsNaN(hr):
			hl, hr = 0, 0
		case math.IsNaN(hl):
			hl = hr
		case math.IsNaN(hr):
			hr = hl
		}
		b := &gapBand{lo: g.LoNM - hl, hi: g.HiNM + hr, colour: uncalibratedColour, label: uncalibratedLabel, first: !seen[g.Saturated]}
		if g.Saturated {
			b.colour, b.label = saturatedColour, saturatedLabel
		}
		seen[g.Saturated] = true
		out = append(out, b)
	}
	return out
}

// Plot fills the band from the bottom to the top of the panel.
func (b *gapBand) Plot(c draw.Canvas, p *plot.Plot) {
	x, _ := p.Transforms(&c)
	x0, x1 := max(x(b.lo), c.Min.X), min(x(b.hi), c.Max.X)
	if x1 <= x0 {
		return
	}
	c.FillPolygon(b.colour, []vg.Point{{X: x0, Y: c.Min.Y}, {X: x1, Y: c.Min.Y}, {X: x1, Y: c.Max.Y}, {X: x0, Y: c.Max.Y}})
}

// Thumbnail draws the band's legend entry.
func (b *gapBand) Thumbnail(c *draw.Canvas) {
	c.FillPolygon(b.colour, []vg.Point{{X: c.Min.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Max.Y}})
}

// sampleTitle is the figure title: sample, key figures and flags.
func sampleTitle(r *unmix.Result) string {
	t := fmt.Sprintf("%s   χ²/dof %s   DW %s", r.Sample, fixed(r.ChiSqRed, 2), fixed(r.DW, 2))
	if r.ShiftNM != 0 {
		t += fmt.Sprintf("   shift %s nm", fixed(r.ShiftNM, 2))
	}
	if len(r.Flags) > 0 {
		t += "   [" + joinFlags(r.Flags, ", ") + "]"
	}
	return t
}

// SaveSamplePlot writes the figure of one sample to path (format from
// the extension: png or svg), atomically.
func SaveSamplePlot(r *unmix.Result, names []string, path string) error {
	sp, rp, err := samplePlots(r, names)
	if err != nil {
		return err
	}
	return saveStacked(path, samplePlotW, samplePlotH, []*plot.Plot{sp, rp}, []float64{spectraWeight, residWeight})
}

// SamplePlotPath returns the file for sample number seq (from 1) in dir:
// NNNN-NAME.FORMAT, the number keeping files unique and in run order
// when names repeat.
func SamplePlotPath(dir string, seq int, sample, format string) string {
	return filepath.Join(dir, fmt.Sprintf("%04d-%s.%s", seq, fileSafe(sample), strings.ToLower(format)))
}

func anyNonZero(v []float64) bool {
	for _, x := range v {
		if x != 0 {
			return true
		}
	}
	return false
}
