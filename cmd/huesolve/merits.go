package main

import (
	"fmt"
	"io"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/validate"
)

// The figures-of-merit section of inspect: computed over the whole grid
// with the default baseline of solve and verify (an offset), unweighted.
func init() { inspectSections = append(inspectSections, valInspectMerits) }

// valDefaultBaseline is the baseline model verify and window use when none
// is given: an offset, as for solve.
const valDefaultBaseline = "offset"

func valInspectMerits(w io.Writer, set *reference.Set, _ string) error {
	bl, err := baseline.ParseModel(valDefaultBaseline)
	if err != nil {
		return err
	}
	m, err := validate.FiguresOfMerit(set, validate.MeritOptions{Baseline: bl})
	if err != nil {
		return fmt.Errorf("figures of merit: %w", err)
	}
	if err := report.WriteMerits(w, m); err != nil {
		return err
	}
	fmt.Fprintln(w, "For another window or baseline model: huesolve window REFSET (it also advises on the window).")
	return nil
}
