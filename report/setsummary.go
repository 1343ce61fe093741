package report

import (
	"fmt"
	"io"
	"math"
	"strings"

	"huesolve/reference"
)

// WriteSetSummary prints the conditions a reference set was built under,
// one table row per compound, the calibration line over each band and
// the legend of the flags that occur. calibrate and inspect print the
// same.
func WriteSetSummary(w io.Writer, set *reference.Set) error {
	writeSetConditions(w, set)
	sum := set.Summary()
	units := make([]string, len(sum))
	for i, r := range sum {
		units[i] = r.Unit
	}
	t := newTable(w)
	t.Header("Compound", "Band max (nm)", "Absorptivity ± SE ("+absorptivityUnit(commonUnit(units))+")",
		"R²", "Levels", "Linear range", "Flags")
	seen := map[reference.Flag]bool{}
	for _, r := range sum {
		unit := r.Unit
		if unit == "" {
			unit = "(no unit)"
		}
		flags := "-"
		if len(r.Flags) > 0 {
			flags = joinFlags(r.Flags, " ")
			for _, f := range r.Flags {
				seen[f] = true
			}
		}
		if err := t.Append([]string{
			r.Compound,
			fmt.Sprintf("%g", r.PeakNM),
			plusMinus(r.Peak, r.PeakSE),
			fmt.Sprintf("%.5f", r.R2),
			fmt.Sprintf("%d", r.Levels),
			fmt.Sprintf("%g-%g %s", r.RangeLo, r.RangeHi, unit),
			flags,
		}); err != nil {
			return fmt.Errorf("summary table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("summary table: %w", err)
	}
	writeBandLines(w, set)
	if err := writeNoiseModel(w, set); err != nil {
		return err
	}
	writeInterferents(w, set)
	if len(seen) > 0 {
		fmt.Fprintln(w, "\nFlags:")
		for _, f := range reference.Flags() {
			if seen[f.Code] {
				fmt.Fprintf(w, "  %-14s %s\n", f.Code, f.Meaning)
			}
		}
	}
	return nil
}

// writeNoiseModel prints the noise growth the set measured from its
// standards, when it has one: the knee and, per group of readings by
// absorbance, the measured growth (RMS residual over the base noise)
// beside the model's. Sets without a model print nothing (they keep the
// fixed rule).
func writeNoiseModel(w io.Writer, set *reference.Set) error {
	m := set.NoiseModel
	if m == nil {
		return nil
	}
	fmt.Fprintf(w, "\nNoise growth measured from the standards (%d readings up to A = %.3g): sigma(A) = noise × sqrt(1 + 10^(2 (A - %.3f))), knee SE %.3f A\n",
		m.Readings, m.MaxA, m.KneeA, m.KneeSE)
	if len(m.Bins) == 0 {
		return nil
	}
	t := newTable(w)
	t.Header("Absorbance", "Readings", "Residual SD / noise", "Model")
	for _, b := range m.Bins {
		if err := t.Append([]string{fmt.Sprintf("%.2f-%.2f", b.LoA, b.HiA), fmt.Sprintf("%d", b.N),
			fmt.Sprintf("%.3f", b.Ratio), fmt.Sprintf("%.3f", reference.GrowthAt(b.MeanA, m.KneeA))}); err != nil {
			return fmt.Errorf("noise table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("noise table: %w", err)
	}
	return nil
}

// writeSetConditions prints the lines above the summary table: grid,
// path, ceiling and fit; provenance; pre-treatment.
func writeSetConditions(w io.Writer, set *reference.Set) {
	model := "with intercept"
	if !set.Intercept {
		model = "through the origin"
	}
	pv := set.Provenance
	fmt.Fprintf(w, "Reference set: %d compound(s), %g-%g nm (%d points), path %g cm, ceiling A = %g",
		len(set.Compounds), set.Grid[0], set.Grid[len(set.Grid)-1], len(set.Grid), set.PathCM, set.Ceiling)
	if set.Floor > 0 {
		fmt.Fprintf(w, ", floor A = %g", set.Floor)
	}
	fmt.Fprintf(w, ", fit %s\n", model)
	blank := pv.Blank
	if blank == "" {
		blank = "none"
	}
	fmt.Fprintf(w, "Built %s by %s %s from %s: %d standard scans, blank: %s\n",
		termText(pv.Created), termText(pv.Tool), termText(pv.Version), termText(pv.Sheet), len(pv.Standards), termText(blank))
	if len(set.Pretreat) > 0 {
		var steps []string
		for _, s := range set.Pretreat {
			steps = append(steps, s.String())
		}
		fmt.Fprintf(w, "Pre-treatment: %s\n", strings.Join(steps, ", "))
	}
	fmt.Fprintln(w)
}

// writeBandLines prints, one line per compound, the calibration line over
// its band: the band's range, the lowest R² and where, and at how many
// band wavelengths Mandel's test finds curvature, with a note when it
// found curvature at the band maximum only (not flagged). Nothing for a
// set without them.
func writeBandLines(w io.Writer, set *reference.Set) {
	header := false
	for _, c := range set.Compounds {
		b := c.Linearity.Band
		if b == nil {
			continue
		}
		if !header {
			fmt.Fprintf(w, "Linearity over the band (absorptivity at least %g %% of its maximum):\n", 100*reference.BandFraction)
			header = true
		}
		note := ""
		if c.Linearity.CurvedUnconfirmed {
			note = fmt.Sprintf("; curvature at the band maximum only, not confirmed at neighbouring wavelengths: likely chance at the %g %% level", 100*reference.TestLevel)
		}
		fmt.Fprintf(w, "  %s %g-%g nm: lowest R² %.5f at %g nm, curvature (Mandel, %g %%) at %d of %d wavelengths%s\n",
			termText(c.Name), b.LoNM, b.HiNM, b.MinR2, b.MinR2NM, 100*reference.TestLevel, b.Curved, b.Tested, note)
	}
}

// plusMinus writes v ± se with se to two significant digits and v to the
// same decimal place.
func plusMinus(v, se float64) string {
	if !(se > 0) || math.IsInf(se, 0) {
		return fmt.Sprintf("%.4g", v)
	}
	d := 1 - int(math.Floor(math.Log10(se)))
	d = max(0, min(d, 12))
	return fmt.Sprintf("%.*f ± %.*f", d, v, d, se)
}

// writeInterferents lists the interferents the set stores (calibrate
// --interferent), which solve and verify fit in every sample: name, the
// range its scan covers, the file and the start of its SHA-256.
func writeInterferents(w io.Writer, set *reference.Set) {
	if len(set.Interferents) == 0 {
		return
	}
	fmt.Fprintln(w, "\nInterferents stored (fitted in every sample by solve and verify):")
	for _, it := range set.Interferents {
		fmt.Fprintf(w, "  %s: %g-%g nm, from %s (SHA-256 %.12s...)\n", termText(it.Name), it.Grid[0], it.Grid[len(it.Grid)-1], termText(it.File), it.SHA256)
	}
}
