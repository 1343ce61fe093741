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

	"huesolve/internal/atomicfile"
)

// Palette is huesolve's own set of line colours for compounds, chosen to
// stay distinct in print and for common colour-vision deficiencies.
var Palette = []color.Color{
	color.RGBA{R: 0x1b, G: 0x4f, B: 0x72, A: 0xff}, // deep blue
	color.RGBA{R: 0xc0, G: 0x6c, B: 0x00, A: 0xff}, // ochre
	color.RGBA{R: 0x2e, G: 0x8b, B: 0x57, A: 0xff}, // sea green
	color.RGBA{R: 0x8e, G: 0x3b, B: 0x8e, A: 0xff}, // plum
	color.RGBA{R: 0x5f, G: 0x5f, B: 0x5f, A: 0xff}, // graphite
	color.RGBA{R: 0xb0, G: 0x30, B: 0x30, A: 0xff}, // brick
	color.RGBA{R: 0x33, G: 0x99, B: 0xcc, A: 0xff}, // sky
	color.RGBA{R: 0x99, G: 0x88, B: 0x33, A: 0xff}, // olive
}

// Colour returns the palette colour for series i, cycling.
func Colour(i int) color.Color { return Palette[i%len(Palette)] }

// SavePlot writes p to path atomically; the format comes from the
// extension (.png or .svg; .pdf also works).
func SavePlot(p *plot.Plot, path string, w, h vg.Length) error {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	switch ext {
	case "png", "svg", "pdf":
	default:
		return fmt.Errorf("report: plot %s: unknown image format %q (want png or svg)", path, ext)
	}
	wt, err := p.WriterTo(w, h, ext)
	if err != nil {
		return fmt.Errorf("report: plot %s: %w", path, err)
	}
	return atomicfile.Write(path, func(out io.Writer) error {
		_, err := wt.WriteTo(out)
		return err
	})
}
