package main

import (
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/cobra"

	"huesolve/calibration"
	"huesolve/history"
	"huesolve/method"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/sequence"
	"huesolve/unmix"
	"huesolve/validate"
)

// sequenceOptions are the flags of sequence.
type sequenceOptions struct {
	fit            fitFlags
	scans          scanFlags
	output         outputFlags
	method         methodFlags
	recovery       string
	minSelectivity float64
	qc             recordFlag
	lab            labFlags
}

const sequenceLong = `Process an analytical run in the order it was measured: blanks, check
standards and samples, each check judged against its known composition, each
sample valid only between two passing checks.

RUNSHEET is a standards sheet (as for verify: a "scan" column, an optional
"column" column, one column per compound with its unit) with the columns

  order  the place in the run, a whole number from 1, each used once
  role   blank, check or sample
  time   optional, on every row or none: clock time HH:MM or HH:MM:SS
         (a run past midnight counts on: 24:10, 25:30)

Check rows give every compound's known concentration (0 where absent); blank
and sample rows leave those cells empty (or 0). Sample rows may also give

  sample       the name to report (default: the column, else the scan file)
  dilution     a further dilution of what was scanned (results multiplied)
  group        replicate group; or replicate_of naming another sample
  mass, mass_unit, volume, volume_unit (u_mass, u_volume optional)
               the preparation: mass taken made up to the final volume

as in solve's sample sheet. With groups, each group's mean, SD and RSD are
given, flagged !rep-rsd above --max-rep-rsd and !rep-outlier by Grubbs' test
(n >= 3); --basis puts the samples on a reporting basis (mg/kg from the
preparation, or a concentration unit) with the certificate text (n.d.,
< LOQ, rounded value). A group is valid only when every member is valid.

Checks and samples are blank corrected with --blank, or else with the mean of
the run's blank rows; each blank row is solved too (as measured, or less
--blank when given), so that its apparent concentrations show how the blank
moves. Each check standard is judged on its
own with verify's limits: its recovery (100 × found / known) within
--recovery for every compound it holds, and at most the LOQ for the others.
A sample is valid when the nearest check before it and the nearest after it
in run order both pass; a sample with no check before or after it is
unbracketed and not valid.

Drift: per compound, a straight line by ordinary least squares through the
blanks' apparent concentrations and through the checks' recoveries, against
the position in the run (1 for the first row) or, with times, hours from the
first row; the slope is given with its standard error (three points or more).

The first line of the output says whether the run passed: every check passed
and every sample is valid. Output: a table, or --format csv|json (with the
run's record); -o FILE writes it to a file (atomically; without --format, a
.csv or .json name picks the format). --record DB appends
the run, its check results and its sample results to a QC history file (see
huesolve history).

Exit codes: 0 the run passed, 4 some check failed, some sample is not
valid or some replicate group is flagged, 1 the run could not be processed, 2 bad command line, 130
interrupted.

` + caution

func newSequenceCmd() *cobra.Command {
	o := &sequenceOptions{}
	cmd := &cobra.Command{
		Use:   "sequence REFSET RUNSHEET | sequence --method FILE RUNSHEET",
		Short: "Process a run in order: checks bracket the samples, drift is reported",
		Long:  sequenceLong,
		Args:  wantArgs(1, 2, "a reference set (or --method FILE) and a run sheet"),
		RunE: setOrMethodArgs(&o.method, "a run sheet", func(cmd *cobra.Command, refPath, sheet string) error {
			return runSequence(cmd, o, refPath, sheet)
		}),
	}
	f := cmd.Flags()
	o.fit.add(f)
	o.scans.add(f, "every check and sample, instead of the mean of the run's blank rows")
	o.scans.addUnit(f)
	o.output.addFormat(f)
	f.StringVar(&o.recovery, "recovery", "98-102", "acceptance range of each check's recovery, `LO-HI` in percent")
	f.Float64Var(&o.minSelectivity, "min-selectivity", validate.DefaultMinSelectivity, "selectivity below which a compound is refused")
	o.lab.add(f)
	o.method.addUse(f)
	o.method.addSave(f, "the reference set, fit options, acceptance limits, --basis, --max-rep-rsd and --record, when every check passes,")
	o.qc.add(f)
	return cmd
}

func runSequence(cmd *cobra.Command, o *sequenceOptions, refPath, sheetPath string) error {
	warn := warnTo(cmd.ErrOrStderr())
	if err := o.method.apply(cmd.Flags()); err != nil {
		return err
	}
	refPath = o.method.refPath(refPath)
	mopt, q, err := checkFitCommand(&o.fit, &o.scans, &o.output)
	if err != nil {
		return err
	}
	if err := o.method.checkSave(); err != nil {
		return err
	}
	opt := sequence.Options{MinSelectivity: o.minSelectivity}
	if opt.Limits.RecoveryLo, opt.Limits.RecoveryHi, err = valParsePercentRange(o.recovery); err != nil {
		return err
	}
	if !(o.minSelectivity > 0) || o.minSelectivity >= 1 {
		return usagef("--min-selectivity %g: want a number between 0 and 1", o.minSelectivity)
	}
	if err := checkNotInput("-o", o.output.out, refPath, o.method.use, sheetPath, o.scans.blank, o.qc.path); err != nil {
		return err
	}
	if err := checkNotInput("--record", o.qc.path, refPath, o.method.use, sheetPath, o.scans.blank); err != nil {
		return err
	}
	if err := checkNotInput("--save-method", o.method.save, refPath, sheetPath, o.scans.blank, o.qc.path, o.output.out); err != nil {
		return err
	}
	set, err := o.method.loadSet(refPath)
	if err != nil {
		return err
	}
	names, units := make([]string, len(set.Compounds)), make([]string, len(set.Compounds))
	for k, c := range set.Compounds {
		names[k], units[k] = c.Name, c.Unit
	}
	if opt.Lab, err = o.lab.options(names, units); err != nil {
		return err
	}
	sh, err := sequence.ReadSheet(sheetPath, calibration.SheetOptions{Unit: o.scans.unit, Quantity: q, Warn: warn})
	if err != nil {
		return err
	}
	if err := checkNotInput("-o", o.output.out, sheetFiles(sh.Sheet)...); err != nil {
		return err
	}
	var blankSum string
	if mopt.Blank, blankSum, err = o.scans.readBlank(q, warn); err != nil {
		return err
	}
	run, err := newRun(cmd)
	if err != nil {
		return err
	}
	opt.Model = mopt
	res, err := sequence.Process(cmd.Context(), set, sh, opt)
	if err != nil {
		return err
	}
	o.method.recordSet(run, set, refPath)
	if o.scans.blank != "" {
		run.Blank = &provenance.File{Path: o.scans.blank, SHA256: blankSum}
	}
	run.Sheets = append(run.Sheets, hashed("run sheet", sheetPath))
	run.Settings = append(fitSettings(&o.fit, &o.scans, set, mopt),
		provenance.Setting{Name: "recovery", Value: o.recovery},
		provenance.Setting{Name: "min-selectivity", Value: strconv.FormatFloat(o.minSelectivity, 'g', -1, 64)},
		provenance.Setting{Name: "max-rep-rsd", Value: strconv.FormatFloat(o.lab.maxRSD, 'g', -1, 64)})
	if o.lab.basis != "" {
		run.Settings = append(run.Settings, provenance.Setting{Name: "basis", Value: o.lab.basis})
	}
	seen := map[string]bool{}
	for _, p := range sheetFiles(sh.Sheet) {
		if !seen[p] {
			seen[p] = true
			run.Inputs = append(run.Inputs, hashed("", p))
		}
	}
	rep := report.SequenceReport{Format: report.FormatNameSequence, Schema: report.Schema, Run: run, Reference: refPath, Result: res}
	err = o.output.write(cmd, "run results", rep,
		func(w io.Writer) error {
			if err := report.WriteRunComments(w, report.FormatNameSequence, run); err != nil {
				return err
			}
			return report.WriteSequenceCSV(w, res)
		},
		func(w io.Writer) error { return report.WriteSequenceTable(w, &rep) })
	if err != nil {
		return err
	}
	if err := o.recordHistory(cmd, run, res); err != nil {
		return err
	}
	if err := o.saveMethod(cmd, run, refPath, set, mopt, opt, res); err != nil {
		return err
	}
	if !res.Pass || res.GroupsFlagged > 0 {
		return &exitError{code: exitFlagged, msg: report.SequenceVerdict(res)}
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "huesolve: %s\n", report.SequenceVerdict(res))
	return nil
}

// recordHistory appends the run to the --record history file, if one
// is given: its record, every check result (as verify's are) and every
// sample result, a sample that is not valid flagged with its status.
func (o *sequenceOptions) recordHistory(cmd *cobra.Command, p *provenance.Run, res *sequence.Run) error {
	if o.qc.path == "" {
		return nil
	}
	written := "the results are above"
	if out := o.output.file(); out != "" {
		written = "the results are in " + out
	}
	run, err := historyRun(history.KindVerify, p)
	if err != nil {
		return o.qc.failed(err, written)
	}
	pass := res.Pass
	run.Pass = &pass
	v := &validate.Verification{}
	for _, e := range res.Entries {
		v.Rows = append(v.Rows, e.Checks...)
	}
	run.Checks = history.ChecksOf(v)
	run.Meta["sequence"] = report.SequenceVerdict(res)
	for _, e := range res.Entries {
		if e.Role != sequence.RoleSample {
			continue
		}
		for _, a := range e.Amounts {
			flags := []string{}
			for _, f := range e.Flags {
				flags = append(flags, string(f))
			}
			if e.Status != sequence.Valid {
				flags = append(flags, e.Status)
			}
			run.Samples = append(run.Samples, history.SampleResult{Sample: e.Name, Source: e.Name, Compound: a.Compound, Unit: a.Unit,
				Conc: a.Conc, SE: a.SE, LOD: a.LOD, LOQ: a.LOQ, Flags: flags})
		}
	}
	return o.qc.record(cmd, run, written)
}

// saveMethod writes --save-method when every check of the run passed:
// the fit, the acceptance limits (verify's RSD limit from --method, else
// its default: sequence judges each check alone) and the reporting
// section (--basis, --max-rep-rsd, --record).
func (o *sequenceOptions) saveMethod(cmd *cobra.Command, run *provenance.Run, refPath string, set *reference.Set, mopt unmix.Options, opt sequence.Options, res *sequence.Run) error {
	if o.method.save == "" {
		return nil
	}
	if res.ChecksFailed > 0 {
		warnTo(cmd.ErrOrStderr())("method not saved to " + o.method.save + ": not every check passed")
		return nil
	}
	pathCM, maxRSD := 0.0, validate.DefaultMaxRSD
	if m := o.method.m; m != nil {
		pathCM = m.Fit.PathCM // sequence has no --path-cm: the method's stays
		if m.Acceptance != nil {
			maxRSD = m.Acceptance.MaxRSDPct
		}
	}
	acc := &method.Acceptance{RecoveryLoPct: opt.Limits.RecoveryLo, RecoveryHiPct: opt.Limits.RecoveryHi,
		MaxRSDPct: maxRSD, MinSelectivity: o.minSelectivity}
	return o.method.saveMethod(cmd, run, refPath, set, methodFit(&o.fit, mopt, o.scans.quantity, pathCM), acc)
}
