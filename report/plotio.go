// Package report turns results into what a chemist files: tables for the
// terminal, CSV and JSON files, and plots (gonum/plot).
package report

import (
	"fmt"
	"image/color"
	"io"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"huesolve/internal/atomicfile"
	"huesolve/internal/pkgerr"
)

// palette is huesolve's own set of line colours for compounds, chosen to
// stay distinct in print and for common colour-vision deficiencies.
var palette = []color.Color{
	color.RGBA{R: 0x1b, G: 0x4f, B: 0x72, A: 0xff}, // deep blue
	color.RGBA{R: 0xc0, G: 0x6c, B: 0x00, A: 0xff}, // ochre
	color.RGBA{R: 0x2e, G: 0x8b, B: 0x57, A: 0xff}, // sea green
	color.RGBA{R: 0x8e, G: 0x3b, B: 0x8e, A: 0xff}, // plum
	color.RGBA{R: 0x5f, G: 0x5f, B: 0x5f, A: 0xff}, // graphite
	color.RGBA{R: 0xb0, G: 0x30, B: 0x30, A: 0xff}, // brick
	color.RGBA{R: 0x33, G: 0x99, B: 0xcc, A: 0xff}, // sky
	color.RGBA{R: 0x99, G: 0x88, B: 0x33, A: 0xff}, // olive
}

// colour returns the palette colour for series i, cycling.
func colour(i int) color.Color { return palette[i%len(palette)] }

// savePlot writes p to path atomically; the format comes from the
// extension (.png or .svg; .pdf also works).
func savePlot(p *plot.Plot, path string, w, h vg.Length) error {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	switch ext {
	case "png", "svg", "pdf":
	default:
		return pkgerr.Errorf("report", "plot %s: unknown image format %q (want png or svg)", path, ext)
	}
	wt, err := p.WriterTo(w, h, ext)
	if err != nil {
		return pkgerr.Errorf("report", "plot %s: %w", path, err)
	}
	return atomicfile.Write(path, func(out io.Writer) error {
		_, err := wt.WriteTo(out)
		return err
	})
}

// saveStacked draws plots one above the other on a w x h figure (see
// drawStacked) and writes the figure to path atomically (format from the
// extension: png, svg or pdf).
func saveStacked(path string, w, h vg.Length, plots []*plot.Plot, weights []float64) error {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	switch ext {
	case "png", "svg", "pdf":
	default:
		return pkgerr.Errorf("report", "plot %s: unknown image format %q (want png or svg)", path, ext)
	}
	cw, err := drawStacked(ext, w, h, plots, weights)
	if err != nil {
		return pkgerr.Errorf("report", "plot %s: %w", path, err)
	}
	return atomicfile.Write(path, func(out io.Writer) error {
		_, err := cw.WriteTo(out)
		return err
	})
}

// drawStacked draws plots one above the other on a w x h canvas of the
// format ext (png, svg or pdf), each taking a share of the height
// proportional to its weight, with their data areas aligned left and
// right so the x axes line up.
func drawStacked(ext string, w, h vg.Length, plots []*plot.Plot, weights []float64) (vg.CanvasWriterTo, error) {
	if len(plots) == 0 || len(plots) != len(weights) {
		return nil, fmt.Errorf("%d panels with %d weights", len(plots), len(weights))
	}
	cw, err := draw.NewFormattedCanvas(w, h, ext)
	if err != nil {
		return nil, err
	}
	dc := draw.New(cw)
	pad := 2 * vg.Millimeter
	total := 0.0
	for _, wt := range weights {
		total += wt
	}
	area := dc.Rectangle
	area.Min.X += pad
	area.Max.X -= pad
	area.Min.Y += pad
	area.Max.Y -= pad
	height := area.Max.Y - area.Min.Y
	canvases := make([]draw.Canvas, len(plots))
	top := area.Max.Y
	var left, right vg.Length
	for i, p := range plots {
		hi := vg.Length(weights[i] / total * float64(height))
		c := draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: area.Min.X, Y: top - hi},
			Max: vg.Point{X: area.Max.X, Y: top},
		}}
		top -= hi
		canvases[i] = c
		da := p.DataCanvas(c)
		left = max(left, da.Min.X-c.Min.X)
		right = max(right, c.Max.X-da.Max.X)
	}
	for i, p := range plots {
		c := canvases[i]
		da := p.DataCanvas(c)
		c.Min.X += left - (da.Min.X - c.Min.X)
		c.Max.X -= right - (c.Max.X - da.Max.X)
		p.Draw(c)
	}
	return cw, nil
}
