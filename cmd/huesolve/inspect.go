package main

import (
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/validate"
)

// inspectSection writes one section of the inspect report after the
// summary.
type inspectSection func(w io.Writer, set *reference.Set, path string) error

// inspectSections are the sections of inspect after the summary, in the
// order they are printed.
var inspectSections = []inspectSection{
	inspectMerits,
}

const inspectLong = `Print what a reference set file holds: for each compound its band
maximum, peak absorptivity with standard error, R² of the calibration line,
linear range and flags, with the conditions the set was built under.

The file is refused if it was truncated, changed after it was saved
(checksum), or written by a newer huesolve.`

func newInspectCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "inspect REFSET",
		Short: "Show what a reference set holds and how sound its calibration is",
		Long:  inspectLong,
		Args:  wantArgs(1, 1, "one reference set"),
		RunE: func(cmd *cobra.Command, args []string) error {
			set, err := reference.Load(args[0])
			if err != nil {
				return err
			}
			w := cmd.OutOrStdout()
			if err := report.WriteSetSummary(w, set); err != nil {
				return err
			}
			for _, sec := range inspectSections {
				fmt.Fprintln(w)
				if err := sec(w, set, args[0]); err != nil {
					return err
				}
			}
			return nil
		},
	}
}

// inspectDesign is the figures of merit inspect shows: the whole grid,
// the default baseline of solve and verify (an offset), unweighted.
func inspectDesign(set *reference.Set) (*validate.Merits, error) {
	bl, err := baseline.ParseModel(valDefaultBaseline)
	if err != nil {
		return nil, err
	}
	m, err := validate.FiguresOfMerit(set, validate.MeritOptions{Baseline: bl})
	if err != nil {
		return nil, fmt.Errorf("figures of merit: %w", err)
	}
	return m, nil
}

// inspectMerits is the figures-of-merit section of inspect: computed over
// the whole grid with the default baseline of solve and verify (an
// offset), unweighted.
func inspectMerits(w io.Writer, set *reference.Set, _ string) error {
	m, err := inspectDesign(set)
	if err != nil {
		return err
	}
	if err := report.WriteMerits(w, m); err != nil {
		return err
	}
	fmt.Fprintln(w, "For another window or baseline model: huesolve window REFSET (it also advises on the window).")
	return nil
}
