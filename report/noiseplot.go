package report

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"huesolve/internal/pkgerr"
	"huesolve/reference"
)

// Size of the noise figure.
const (
	noisePlotW = 14 * vg.Centimeter
	noisePlotH = 10 * vg.Centimeter
	// noiseCurvePoints is the number of points the model curves are
	// drawn with.
	noiseCurvePoints = 200
)

// NoisePlotName is the file name (without extension) of the noise figure
// that WriteNoisePlot writes.
const NoisePlotName = "noise-model"

// noisePlot draws the set's measured noise model: per group of the
// standards' readings by fitted absorbance, the RMS residual over the base
// noise with an error bar of one standard error, the model's growth
// sqrt(1 + 10^(2 (A - knee))) over 0 to the ceiling (or the highest
// reading, if above), the fixed rule of sets without a model for
// comparison, and the knee with its standard error.
func noisePlot(set *reference.Set) (*plot.Plot, error) {
	m := set.NoiseModel
	if m == nil {
		return nil, pkgerr.Errorf("report", "noise plot: the set holds no measured noise model")
	}
	p := plot.New()
	p.Title.Text = "Noise measured from the standards"
	p.X.Label.Text = "Absorbance (fitted)"
	p.Y.Label.Text = "Residual SD / base noise"
	p.Add(plotter.NewGrid())
	top := math.Max(set.Ceiling, m.MaxA)
	ymax := 1.0
	if len(m.Bins) > 0 {
		pts := make(binErrs, len(m.Bins))
		for i, b := range m.Bins {
			pts[i] = binErr{x: b.MeanA, y: b.Ratio, se: binSE(b)}
			top = math.Max(top, b.HiA)
			ymax = math.Max(ymax, b.Ratio+pts[i].se)
		}
		bars, err := plotter.NewYErrorBars(pts)
		if err != nil {
			return nil, pkgerr.Errorf("report", "noise plot: %w", err)
		}
		bars.Color = colour(4)
		s, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, pkgerr.Errorf("report", "noise plot: %w", err)
		}
		s.Color = colour(4)
		s.Shape = draw.CircleGlyph{}
		s.Radius = vg.Points(2.5)
		p.Add(bars, s)
		p.Legend.Add("standards: RMS residual / noise (± 1 SE)", s)
	}
	fitted := make(plotter.XYs, noiseCurvePoints+1)
	fixed := make(plotter.XYs, noiseCurvePoints+1)
	for i := range fitted {
		a := top * float64(i) / noiseCurvePoints
		fitted[i] = plotter.XY{X: a, Y: reference.GrowthAt(a, m.KneeA)}
		fixed[i] = plotter.XY{X: a, Y: reference.NoiseGrowth(a)}
		ymax = math.Max(ymax, math.Max(fitted[i].Y, fixed[i].Y))
	}
	lf, err := plotter.NewLine(fitted)
	if err != nil {
		return nil, pkgerr.Errorf("report", "noise plot: %w", err)
	}
	lf.Color, lf.Width = colour(0), vg.Points(1.5)
	lx, err := plotter.NewLine(fixed)
	if err != nil {
		return nil, pkgerr.Errorf("report", "noise plot: %w", err)
	}
	lx.Color, lx.Dashes = colour(4), []vg.Length{vg.Points(4), vg.Points(3)}
	p.Add(lf, lx)
	p.Legend.Add(fmt.Sprintf("model: sqrt(1 + 10^(2 (A - %.3f)))", m.KneeA), lf)
	p.Legend.Add(fmt.Sprintf("fixed rule (knee A = %g), sets without a model", reference.WeightKneeA), lx)
	knee, err := plotter.NewLine(plotter.XYs{{X: m.KneeA, Y: 0}, {X: m.KneeA, Y: ymax * 1.05}})
	if err != nil {
		return nil, pkgerr.Errorf("report", "noise plot: %w", err)
	}
	knee.Color, knee.Dashes = colour(5), []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(knee)
	p.Legend.Add(fmt.Sprintf("knee A = %.3f ± %.3f", m.KneeA, m.KneeSE), knee)
	p.Legend.Top, p.Legend.Left = true, true
	p.X.Min, p.X.Max = 0, math.Max(top, m.KneeA)*1.02
	p.Y.Min, p.Y.Max = 0, ymax*1.6 // head room for the legend
	return p, nil
}

// binSE is the standard error of a bin's RMS ratio: for n readings of
// normal noise the RMS has a relative SE of about 1/sqrt(2n) (the
// chi-square's variance 2n by the delta method; recalled from memory).
func binSE(b reference.NoiseBin) float64 {
	return b.Ratio / math.Sqrt(2*float64(b.N))
}

// binErr is one bin's point and error bar.
type binErr struct{ x, y, se float64 }

// binErrs gives the bins to plotter as XYer and YErrorer.
type binErrs []binErr

func (b binErrs) Len() int                        { return len(b) }
func (b binErrs) XY(i int) (float64, float64)     { return b[i].x, b[i].y }
func (b binErrs) YError(i int) (float64, float64) { return b[i].se, b[i].se }

// WriteNoisePlot writes the set's measured noise model as
// NoisePlotName.FORMAT into dir (format png or svg) and returns the file
// written; a set without a noise model is an error saying so.
func WriteNoisePlot(set *reference.Set, dir, format string) (string, error) {
	format = strings.ToLower(format)
	if format != "png" && format != "svg" {
		return "", pkgerr.Errorf("report", "plot format %q: want png or svg", format)
	}
	p, err := noisePlot(set)
	if err != nil {
		return "", err
	}
	f := filepath.Join(dir, NoisePlotName+"."+format)
	if err := savePlot(p, f, noisePlotW, noisePlotH); err != nil {
		return "", err
	}
	return f, nil
}
