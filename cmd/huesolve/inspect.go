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

--plots DIR writes the noise figure (noise-model.png, or .svg with
--plot-format svg): the standards' residual SD over the base noise per
absorbance group, with error bars, against the fitted noise model, its knee
marked, beside the fixed rule of sets without a model. A set without a
measured noise model has no such figure (a note says so).

The file is refused if it was truncated, changed after it was saved
(checksum), or written by a newer huesolve.`

func newInspectCmd() *cobra.Command {
	var out outputFlags
	cmd := &cobra.Command{
		Use:   "inspect REFSET",
		Short: "Show what a reference set holds and how sound its calibration is",
		Long:  inspectLong,
		Args:  wantArgs(1, 1, "one reference set"),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.checkPlots(); err != nil {
				return err
			}
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
			return inspectPlots(cmd, &out, set)
		},
	}
	out.addPlots(cmd.Flags(), "the noise figure (residual SD against absorbance, the fitted noise model)")
	return cmd
}

// inspectPlots writes the noise figure into the --plots folder, if one is
// given; a set without a measured noise model gets a note instead.
func inspectPlots(cmd *cobra.Command, out *outputFlags, set *reference.Set) error {
	if out.plots == "" {
		return nil
	}
	if set.NoiseModel == nil {
		noteTo(cmd.ErrOrStderr())("no noise figure written: the set holds no measured noise model (it keeps the fixed rule; calibrate measures one when the standards reach above its knee)")
		return nil
	}
	return out.writePlots(cmd, func(dir, format string) ([]string, error) {
		f, err := report.WriteNoisePlot(set, dir, format)
		if err != nil {
			return nil, err
		}
		return []string{f}, nil
	})
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
