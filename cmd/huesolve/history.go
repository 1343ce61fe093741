package main

import (
	"io"
	"os"

	"github.com/spf13/cobra"

	"huesolve/history"
	"huesolve/report"
)

// historyOptions are the flags of history.
type historyOptions struct {
	output   outputFlags
	baseline int
}

const historyLong = `List the runs recorded in a QC history file (verify, solve and sequence
with --record DB, or with a method that names the file) and judge each check
standard's recoveries over time.

For each compound in each check standard (by its name in the checks sheet)
the recoveries of the recorded verify runs form a series in run order. Its
centre line and standard deviation (sample SD) come from the first
--baseline-runs points; a series with fewer points uses all it has and is
marked provisional. The Westgard multi-rule scheme (Westgard, Barry, Hunt,
Groth, Clin. Chem. 27 (1981) 493-501) is applied at every point:

  1-2s  one point beyond 2 SD (a warning)
  1-3s  one point beyond 3 SD
  2-2s  two consecutive points beyond 2 SD on the same side
  R-4s  in one run, one check standard beyond +2 SD and another beyond -2 SD
        (the same compound)
  4-1s  four consecutive points beyond 1 SD on the same side
  10-x  ten consecutive points on the same side of the centre line

The 1981 scheme looks at the other rules only after a 1-2s warning; here
every rule is checked at every point, so a shift that stays within 2 SD
shows as soon as 4-1s or 10-x sees it.

Output: the runs, one line per chart and the rules broken, on standard
output; --format csv writes one row per point (recovery, z, centre, SD,
rules broken) instead; -o FILE writes to a file. --plots DIR draws one
control chart per series (centre line, ±2 SD dashed, ±3 SD, the end of the
baseline dotted, broken points marked).

Exit codes: 0 no rejection rule broken (1-2s warnings may be listed), 4 a rule
broken, 1 the file could not be read (locked, damaged: SQLite's integrity
check runs first, or from a newer huesolve), 2 bad command line.

` + caution

func newHistoryCmd() *cobra.Command {
	o := &historyOptions{}
	cmd := &cobra.Command{
		Use:   "history DB",
		Short: "List recorded runs; control charts and Westgard rules for check standards",
		Long:  historyLong,
		Args:  wantArgs(1, 1, "a QC history file"),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runHistory(cmd, o, args[0])
		},
	}
	f := cmd.Flags()
	o.output.add(f, "one control chart per compound and check standard")
	f.IntVar(&o.baseline, "baseline-runs", history.DefaultBaseline, "number of first points of each series that set its centre line and limits")
	return cmd
}

func runHistory(cmd *cobra.Command, o *historyOptions, path string) error {
	if err := o.output.check(); err != nil {
		return err
	}
	if o.output.format == report.FormatJSON {
		return usagef("--format json: history writes table or csv")
	}
	if o.baseline < history.MinBaseline {
		return usagef("--baseline-runs %d: want at least %d", o.baseline, history.MinBaseline)
	}
	if err := checkNotInput("-o", o.output.out, path); err != nil {
		return err
	}
	// Open makes a missing file; history only reads one that is there.
	if _, err := os.Stat(path); err != nil {
		return err
	}
	db, err := history.Open(path)
	if err != nil {
		return err
	}
	defer db.Close()
	// Damage in a part the listing does not read would pass unseen.
	if err := db.Check(); err != nil {
		return err
	}
	runs, err := db.Runs(cmd.Context())
	if err != nil {
		return err
	}
	series, err := db.CheckSeries(cmd.Context())
	if err != nil {
		return err
	}
	rep := &report.HistoryReport{File: path, Runs: runs, Charts: history.Evaluate(series, o.baseline), Baseline: o.baseline}
	err = o.output.write(cmd, "history", nil,
		func(w io.Writer) error { return report.WriteHistoryCSV(w, rep.Charts) },
		func(w io.Writer) error { return report.WriteHistoryTable(w, rep) })
	if err != nil {
		return err
	}
	err = o.output.writePlots(cmd, func(dir, format string) ([]string, error) {
		return report.WriteControlCharts(rep.Charts, dir, format)
	})
	if err != nil {
		return err
	}
	for _, c := range rep.Charts {
		for _, v := range c.Violations {
			if !v.Warning {
				return &exitError{code: exitFlagged, msg: "control rules broken: see the list of violations"}
			}
		}
	}
	return nil
}
