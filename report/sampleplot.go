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
)

// ErrNoCurves: the result was solved without unmix.Options.KeepCurves.
var ErrNoCurves = errors.New("report: result holds no curves (solve with curves kept)")

// SamplePlots draws one sample: the measured spectrum (dots), the fitted
// spectrum, each compound's contribution and the baseline in the top
// panel; the residual against a band of +-2 expected noise standard
// deviations in the bottom one. names label the compounds in order.
func SamplePlots(r *unmix.Result, names []string) (spectra, resid *plot.Plot, err error) {
	n := len(r.Grid)
	if n == 0 {
		return nil, nil, ErrNoCurves
	}
	for _, c := range [][]float64{r.Measured, r.Fitted, r.Residual, r.BaselineCurve, r.Noise} {
		if len(c) != n {
			return nil, nil, fmt.Errorf("report: %s: curves of unequal length", r.Sample)
		}
	}
	xy := func(y []float64) plotter.XYs {
		out := make(plotter.XYs, n)
		for i := range n {
			out[i] = plotter.XY{X: r.Grid[i], Y: y[i]}
		}
		return out
	}
	fail := func(err error) (*plot.Plot, *plot.Plot, error) {
		return nil, nil, fmt.Errorf("report: plot of %s: %w", r.Sample, err)
	}

	spectra = plot.New()
	spectra.Title.Text = sampleTitle(r)
	spectra.Y.Label.Text = "Absorbance"
	spectra.Add(plotter.NewGrid())
	meas, err := plotter.NewScatter(xy(r.Measured))
	if err != nil {
		return fail(err)
	}
	meas.GlyphStyle = draw.GlyphStyle{Color: measuredColour, Radius: vg.Points(1.5), Shape: draw.CircleGlyph{}}
	spectra.Add(meas)
	spectra.Legend.Add("measured", meas)
	for k, c := range r.Contributions {
		if len(c) != n {
			return fail(errors.New("contribution of unequal length"))
		}
		l, err := plotter.NewLine(xy(c))
		if err != nil {
			return fail(err)
		}
		l.Color = Colour(k)
		l.Width = vg.Points(1.2)
		l.Dashes = []vg.Length{vg.Points(5), vg.Points(2)}
		spectra.Add(l)
		name := fmt.Sprintf("compound %d", k+1)
		if k < len(names) {
			name = names[k]
		}
		if k < len(r.Amounts) {
			name += " " + ConcText(r.Amounts[k].Conc, r.Amounts[k].SE)
		}
		spectra.Legend.Add(name, l)
	}
	if anyNonZero(r.BaselineCurve) {
		b, err := plotter.NewLine(xy(r.BaselineCurve))
		if err != nil {
			return fail(err)
		}
		b.Color = baselineColour
		b.Width = vg.Points(1)
		b.Dashes = []vg.Length{vg.Points(1.5), vg.Points(2)}
		spectra.Add(b)
		spectra.Legend.Add("baseline", b)
	}
	fit, err := plotter.NewLine(xy(r.Fitted))
	if err != nil {
		return fail(err)
	}
	fit.Color = fittedColour
	fit.Width = vg.Points(1.3)
	spectra.Add(fit)
	spectra.Legend.Add("fitted", fit)
	spectra.Legend.Top = true
	spectra.Legend.TextStyle.Font.Size = vg.Points(8)
	spectra.X.Tick.Label.Font.Size = 0 // the residual panel carries the wavelength axis

	resid = plot.New()
	resid.X.Label.Text = "Wavelength (nm)"
	resid.Y.Label.Text = "Residual"
	band := make(plotter.XYs, 0, 2*n)
	for i := range n {
		band = append(band, plotter.XY{X: r.Grid[i], Y: noiseBandK * r.Noise[i]})
	}
	for i := n - 1; i >= 0; i-- {
		band = append(band, plotter.XY{X: r.Grid[i], Y: -noiseBandK * r.Noise[i]})
	}
	poly, err := plotter.NewPolygon(band)
	if err != nil {
		return fail(err)
	}
	poly.Color = noiseColour
	poly.LineStyle.Width = 0
	resid.Add(poly)
	resid.Legend.Add(fmt.Sprintf("±%g σ expected noise", noiseBandK), poly)
	zero, err := plotter.NewLine(plotter.XYs{{X: r.Grid[0], Y: 0}, {X: r.Grid[n-1], Y: 0}})
	if err != nil {
		return fail(err)
	}
	zero.Color = baselineColour
	zero.Width = vg.Points(0.5)
	rl, err := plotter.NewLine(xy(r.Residual))
	if err != nil {
		return fail(err)
	}
	rl.Color = residColour
	rl.Width = vg.Points(0.8)
	resid.Add(zero, rl)
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
	spectra.X.Min, spectra.X.Max = r.Grid[0], r.Grid[n-1]
	resid.X.Min, resid.X.Max = r.Grid[0], r.Grid[n-1]
	return spectra, resid, nil
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
	sp, rp, err := SamplePlots(r, names)
	if err != nil {
		return err
	}
	return SaveStacked(path, samplePlotW, samplePlotH, []*plot.Plot{sp, rp}, []float64{spectraWeight, residWeight})
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
