package report

import (
	"fmt"
	"io"
	"strings"

	"huesolve/validate"
)

// SameDesign reports whether two sets of figures of merit are of one
// design (window, points, path, baseline, weighting, noise), so that one
// table shows both.
func SameDesign(a, b *validate.Merits) bool {
	return a != nil && b != nil && a.WindowLo == b.WindowLo && a.WindowHi == b.WindowHi && a.Points == b.Points &&
		a.PathCM == b.PathCM && a.Baseline == b.Baseline && a.Weighted == b.Weighted && a.Sigma == b.Sigma
}

// WriteMerits prints the figures of merit of one design: a line saying
// which design, a table per compound, and the reasons for any refusal.
// inspect prints it for the whole grid; verify for the design it judged
// the check standards with, when that differs (see
// VerifyReport.MeritsAsInspect); window's table leaves it to them.
func WriteMerits(w io.Writer, m *validate.Merits) error {
	fit := "unweighted fit"
	if m.Weighted {
		fit = "fit weighted by the noise model"
	}
	fmt.Fprintf(w, "Figures of merit (net analyte signal) over %g-%g nm (%d points), baseline %s, %s,\n",
		m.WindowLo, m.WindowHi, m.Points, m.Baseline, fit)
	fmt.Fprintf(w, "path %g cm, noise %.2g A (RMS), condition number %s:\n\n", m.PathCM, m.Sigma, CondText(m.Cond, m.Singular))
	units := make([]string, len(m.Compounds))
	for i, c := range m.Compounds {
		units[i] = c.Unit
	}
	t := newTable(w)
	t.Header("Compound", "Sensitivity ("+sensitivityUnit(commonUnit(units))+")", "Selectivity", "LOD", "LOQ", "Quantifiable")
	for _, c := range m.Compounds {
		unit := c.Unit
		if unit != "" {
			unit = " " + unit
		}
		lod, loq, ok := "-", "-", "no (see below)"
		if c.Quantifiable {
			lod, loq, ok = fmt.Sprintf("%.3g%s", c.LOD, unit), fmt.Sprintf("%.3g%s", c.LOQ, unit), "yes"
		}
		if err := t.Append([]string{c.Compound, fmt.Sprintf("%.4g", c.Sensitivity), fmt.Sprintf("%.3f", c.Selectivity), lod, loq, ok}); err != nil {
			return fmt.Errorf("figures of merit table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("figures of merit table: %w", err)
	}
	fmt.Fprintf(w, "Selectivity 1: no other compound or baseline term imitates any of the band; 0: fully imitated.\n")
	fmt.Fprintf(w, "LOD = %g σ/sensitivity, LOQ = %g σ/sensitivity (ICH Q2) for a result near zero.\n", validate.LODFactor, validate.LOQFactor)
	var refused []string
	for _, c := range m.Compounds {
		if !c.Quantifiable {
			refused = append(refused, fmt.Sprintf("  %s: %s (selectivity %.3g, below %g)", termText(c.Compound), c.Reason, c.Selectivity, m.MinSelectivity))
		}
	}
	if len(refused) > 0 {
		fmt.Fprintf(w, "Not quantifiable in this design:\n%s\n", strings.Join(refused, "\n"))
	}
	return nil
}

// CondText prints a condition number, or says the design is singular.
func CondText(c float64, singular bool) string {
	if singular {
		return "singular (some columns are copies of others)"
	}
	return fmt.Sprintf("%.3g", c)
}
