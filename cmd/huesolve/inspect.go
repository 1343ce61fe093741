package main

import (
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"huesolve/reference"
	"huesolve/report"
)

func init() { commands = append(commands, newInspectCmd) }

// inspectSection writes one section of the inspect report after the
// summary. Other command files add theirs to inspectSections in an init
// function, so the sections grow without touching this file.
type inspectSection func(w io.Writer, set *reference.Set, path string) error

// inspectSections are the extra sections of inspect, in order.
var inspectSections []inspectSection

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
