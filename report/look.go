package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"huesolve/spectrum"
)

// LookRowsShown is how many spectra of one file WriteLook lists unless
// LookOptions.All.
const LookRowsShown = 40

// LookOptions say how WriteLook prints.
type LookOptions struct {
	All   bool // list every spectrum, not the first LookRowsShown
	Plain bool // tab-separated rows led by the file name, for scripts
	Gap   bool // an empty line before the file (not the first one)
}

// WriteLook prints what the spectra read from file are: per spectrum its
// name, number of points, wavelength range and step, quantity, and
// smallest and largest value; as a table under a line naming the file, or
// as plain rows.
func WriteLook(w io.Writer, file string, ss []*spectrum.Spectrum, o LookOptions) error {
	shown := ss
	if !o.All && len(ss) > LookRowsShown {
		shown = ss[:LookRowsShown]
	}
	rows := make([][]string, 0, len(shown))
	for _, s := range shown {
		lo, hi := lookMinMax(s.Values)
		wl := s.Wavelengths
		rows = append(rows, []string{
			s.Name,
			strconv.Itoa(s.Len()),
			fmt.Sprintf("%s-%s", lookNum(wl[0]), lookNum(wl[len(wl)-1])),
			lookStep(wl),
			s.Quantity.String(),
			lookNum(lo),
			lookNum(hi),
		})
	}
	if o.Plain {
		for _, r := range rows {
			if _, err := fmt.Fprintf(w, "%s\t%s\n", termText(file), strings.Join(termCells(r), "\t")); err != nil {
				return err
			}
		}
		return nil
	}
	if o.Gap {
		fmt.Fprintln(w)
	}
	fmt.Fprintf(w, "%s: %d %s\n", termText(file), len(ss), plural(len(ss), "spectrum", "spectra"))
	t := newTable(w)
	t.Header("Spectrum", "Points", "Range (nm)", "Step (nm)", "Quantity", "Min", "Max")
	for _, r := range rows {
		if err := t.Append(r); err != nil {
			return err
		}
	}
	if err := t.Render(); err != nil {
		return err
	}
	if len(shown) < len(ss) {
		fmt.Fprintf(w, "... and %d more (use --all to list them)\n", len(ss)-len(shown))
	}
	return nil
}

// lookStepTol is the relative spread of wavelength steps still called even.
const lookStepTol = 1e-6

// lookStep describes the wavelength steps: "0.5" when even, else the
// smallest and largest step.
func lookStep(wl []float64) string {
	if len(wl) < 2 {
		return "-"
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 1; i < len(wl); i++ {
		d := wl[i] - wl[i-1]
		lo, hi = min(lo, d), max(hi, d)
	}
	if hi-lo <= lookStepTol*hi {
		return lookNum((wl[len(wl)-1] - wl[0]) / float64(len(wl)-1))
	}
	return fmt.Sprintf("%s-%s uneven", lookNum(lo), lookNum(hi))
}

func lookMinMax(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		lo, hi = min(lo, x), max(hi, x)
	}
	return lo, hi
}

// lookNum formats a number for tables with up to 6 significant digits.
func lookNum(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }
