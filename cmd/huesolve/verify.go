package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/cobra"

	"huesolve/calibration"
	"huesolve/history"
	"huesolve/internal/pkgerr"
	"huesolve/method"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
	"huesolve/unmix"
	"huesolve/validate"
)

// verifyOptions are the flags of verify.
type verifyOptions struct {
	fit            fitFlags
	scans          scanFlags
	output         outputFlags
	method         methodFlags
	recovery       string
	maxRSD         float64
	minSelectivity float64
	crossval       string
	crossvalBy     string
	review         reviewFlag
	qc             recordFlag
	interf         []string
}

const verifyLong = `Solve check standards of known composition against a reference set, as if
they were samples, and judge how well their known concentrations come back.

CHECKS is a standards sheet in the same format as for calibrate: a "scan"
column, an optional "column" column, and one column per compound of the
reference set with its known concentration, in the set's unit or one that
converts to it (µg/mL, µg/L, g/L, ppm as mg/L; µmol/L, µM with the molar
mass given as "Name (µmol/L; M=534.4 g/mol)"; see README). Each check
standard is blank corrected (with --blank, or else with the mean of the sheet's blank rows, if
any), solved with the same model options as solve, and compared:

  recovery   100 × found / known, for each standard holding the compound
  mean recovery and RSD of the recoveries (sample SD over the mean)
  bias       mean of found - known over the standards holding it
  RMSEP      root mean square of found - known over all check standards

A compound passes when its mean recovery lies within --recovery, the RSD of
its recoveries is at most --max-rsd (judged with two or more standards
holding it), and, in every check standard that does not hold it, the result
is at most its quantitation limit (|found| <= LOQ). ICH Q2(R2) sets no fixed
acceptance numbers; the defaults, 98-102 % and 2 %, are common practice for
assays of a main component: set them to what your validation plan says.

Before solving, every compound's selectivity is computed for the model's
window and baseline (net analyte signal); a compound that other compounds or
the baseline terms can imitate is refused with the reason.

With --crossval SHEET (the calibration standards sheet the set was built
from), each standard, or with --crossval-by level each composition with its
replicates, is left out in turn, the reference set rebuilt from the rest
with the options the set records (grid, path, ceiling, intercept,
pre-treatment) and the left-out scan solved: RMSECV per compound.

--method FILE takes the reference set, the fit options and the acceptance
limits from a method file (options given override it); --save-method FILE
saves them, with the reference set's checksum, when every compound passed,
for solve --method.

Output: tables on standard output, or --format csv|json (with the run's
record, as solve writes it); -o FILE writes it to a file instead
(atomically; FILE.csv or FILE.json picks the format). --plots DIR writes,
per compound, found against known with a recovery panel. --report
FILE.html writes a review report: one self-contained HTML page with the
run's settings, a row and a fit figure per check standard, the verdicts
and the figures of merit.
--record DB appends the run and every check result to a QC history file
after the output is written (see huesolve history); a locked or damaged
file fails the command (exit 1) naming it.

The summary table counts, per compound, the check standards with it (known
concentration above zero: judged on recovery) and without it (known zero:
judged against its LOQ). A check result carrying a "!" flag (as in solve,
e.g. misfit or illcond) is one the fit does not describe well: the verdict
still rests on recovery, but a note on standard error and under the table
says how many carry flags, and the exit code is 4.

Exit codes: 0 every compound passed and no check result carries a "!"
flag, 4 some compound failed acceptance or some check result carries a "!"
flag, 1 the checks could not be solved, 2 bad command line, 130
interrupted (Ctrl-C; 143 for SIGTERM; it says how far it got, and nothing is written).

` + caution

func newVerifyCmd() *cobra.Command {
	o := &verifyOptions{}
	cmd := &cobra.Command{
		Use:   "verify REFSET CHECKS | verify --method FILE CHECKS",
		Short: "Judge recovery of check standards of known composition",
		Long:  verifyLong,
		Args:  wantArgs(1, 2, "a reference set (or --method FILE) and a sheet of check standards"),
		RunE: setOrMethodArgs(&o.method, "a sheet of check standards", func(cmd *cobra.Command, refPath, sheet string) error {
			return runVerify(cmd, o, refPath, sheet)
		}),
	}
	f := cmd.Flags()
	o.fit.add(f)
	o.scans.add(f, "every check standard, instead of the checks sheet's blank rows")
	o.scans.addUnit(f)
	o.output.add(f, "found-vs-known plots")
	f.StringVar(&o.recovery, "recovery", "98-102", "acceptance range of the mean recovery, `LO-HI` in percent")
	f.Float64Var(&o.maxRSD, "max-rsd", validate.DefaultMaxRSD, "largest acceptable RSD of the recoveries, percent")
	f.Float64Var(&o.minSelectivity, "min-selectivity", validate.DefaultMinSelectivity, "selectivity below which a compound is refused")
	f.StringVar(&o.crossval, "crossval", "", "cross-validate the calibration from its standards `SHEET`")
	f.StringVar(&o.crossvalBy, "crossval-by", "level", "leave out one composition with its replicates (level) or one standard at a time (standard)")
	f.StringArrayVar(&o.interf, "interferent", nil, "scan `FILE` of a coloured substance present but not quantified: fitted with its own amount in every check standard, as solve does (repeatable)")
	o.review.add(f)
	o.method.addUse(f)
	o.method.addSave(f, "the reference set, fit options and acceptance limits, when every compound passes,")
	o.qc.add(f)
	return cmd
}

func runVerify(cmd *cobra.Command, o *verifyOptions, refPath, checksPath string) error {
	warn := warnTo(cmd.ErrOrStderr())
	if err := o.method.apply(cmd.Flags()); err != nil {
		return err
	}
	refPath = o.method.refPath(refPath)
	mopt, q, vopt, err := o.check()
	if err != nil {
		return err
	}
	set, sh, blankSum, err := o.load(refPath, checksPath, &mopt, q, warn)
	if err != nil {
		return err
	}
	interferentNote(set, noteTo(cmd.ErrOrStderr()))
	run, err := newRun(cmd)
	if err != nil {
		return err
	}
	ctx := cmd.Context()
	vopt.Model = mopt
	var rev *report.VerifyReview
	if o.review.path != "" {
		rev = report.NewVerifyReview(compoundNames(set))
		vopt.Model.KeepCurves = true
		vopt.Each = rev.Figure
	}
	v, err := validate.VerifyContext(ctx, set, sh, vopt)
	if err != nil {
		return o.interrupted(ctx, err)
	}
	cv, err := o.crossValidate(ctx, set, mopt, q, warn)
	if err != nil {
		return err
	}
	o.record(run, set, refPath, checksPath, sh, mopt, blankSum, v)
	rep := report.VerifyReport{Format: report.FormatNameVerify, Schema: report.Schema, Run: run,
		Reference: refPath, Checks: checksPath, Window: [2]float64{v.Merits.WindowLo, v.Merits.WindowHi},
		Baseline: verifyBaselineName(v.Merits.Baseline, mopt.Auto), Weighted: o.fit.weighted, Result: v, CrossVal: cv}
	if im, err := inspectDesign(set); err == nil {
		rep.MeritsAsInspect = report.SameDesign(v.Merits, im)
	}
	err = o.output.write(cmd, "verification", rep,
		func(w io.Writer) error {
			if err := report.WriteRunComments(w, report.FormatNameVerify, run); err != nil {
				return err
			}
			return report.WriteVerifyCSV(w, v, cv)
		},
		func(w io.Writer) error { return report.WriteVerifyTable(w, &rep) })
	if err != nil {
		return err
	}
	err = o.output.writePlots(cmd, func(dir, format string) ([]string, error) {
		return report.WriteVerifyPlots(v, cv, dir, format)
	})
	if err != nil {
		return err
	}
	if rev != nil {
		p := runProvenance(run, set)
		p.add("Blank used", v.Blank)
		if m := v.Merits; m != nil {
			p.add("Points in the window", fmt.Sprintf("%d (%g-%g nm)", m.Points, m.WindowLo, m.WindowHi))
		}
		ctx := reviewContext("verify", p, set, v.Merits, nil)
		if err := o.review.write(cmd.ErrOrStderr(), func(w io.Writer) error { return rev.WriteHTML(w, &rep, ctx) }); err != nil {
			return err
		}
	}
	if err := o.saveMethod(cmd, run, refPath, set, mopt, vopt, v, warn); err != nil {
		return err
	}
	if err := o.recordHistory(cmd, run, v); err != nil {
		return err
	}
	return verifyVerdict(cmd.ErrOrStderr(), v, warn)
}

// record fills the run's record of verify: the reference set (and
// method), blank, sheets and their scans with SHA-256, and the settings.
func (o *verifyOptions) record(run *provenance.Run, set *reference.Set, refPath, checksPath string, sh *calibration.Sheet, mopt unmix.Options, blankSum string, v *validate.Verification) {
	o.method.recordSet(run, set, refPath)
	if o.scans.blank != "" {
		run.Blank = &provenance.File{Path: o.scans.blank, SHA256: blankSum}
	}
	run.Sheets = append(run.Sheets, hashed("checks sheet", checksPath))
	recordInterferents(run, set, o.interf)
	if o.crossval != "" {
		run.Sheets = append(run.Sheets, hashed("crossval sheet", o.crossval))
	}
	run.Settings = fitSettings(&o.fit, &o.scans, set, mopt)
	unit := o.scans.unit
	if unit == "" {
		unit = "as the sheet's headers say"
	}
	run.Settings = append(run.Settings,
		provenance.Setting{Name: "unit", Value: unit},
		provenance.Setting{Name: "recovery", Value: o.recovery},
		provenance.Setting{Name: "max-rsd", Value: strconv.FormatFloat(o.maxRSD, 'g', -1, 64)},
		provenance.Setting{Name: "min-selectivity", Value: strconv.FormatFloat(o.minSelectivity, 'g', -1, 64)})
	if o.crossval != "" {
		run.Settings = append(run.Settings, provenance.Setting{Name: "crossval-by", Value: o.crossvalBy})
	}
	seen := map[string]bool{}
	for _, p := range sheetFiles(sh) {
		if !seen[p] {
			seen[p] = true
			run.Inputs = append(run.Inputs, hashed("", p))
		}
	}
}

// saveMethod writes --save-method when every compound passed acceptance
// (a method is what a lab runs samples with: one whose checks failed is
// not saved, and verify says so).
func (o *verifyOptions) saveMethod(cmd *cobra.Command, run *provenance.Run, refPath string, set *reference.Set, mopt unmix.Options, vopt validate.VerifyOptions, v *validate.Verification, warn func(string)) error {
	if o.method.save == "" {
		return nil
	}
	for _, c := range v.Compounds {
		if !c.Pass {
			warn("method not saved to " + o.method.save + ": not every compound passed acceptance")
			return nil
		}
	}
	pathCM := 0.0
	if o.method.m != nil {
		pathCM = o.method.m.Fit.PathCM // verify has no --path-cm: the method's stays
	}
	acc := &method.Acceptance{RecoveryLoPct: vopt.Limits.RecoveryLo, RecoveryHiPct: vopt.Limits.RecoveryHi,
		MaxRSDPct: vopt.Limits.MaxRSD, MinSelectivity: vopt.MinSelectivity}
	fit := methodFit(&o.fit, mopt, o.scans.quantity, pathCM)
	var err error
	if fit.Interferents, err = methodInterferents(o.method.save, o.interf); err != nil {
		return err
	}
	return o.method.saveMethod(cmd, run, refPath, set, fit, acc)
}

// check reads the flags of verify into the model options, the quantity
// of the scans and the acceptance limits.
func (o *verifyOptions) check() (unmix.Options, spectrum.Quantity, validate.VerifyOptions, error) {
	vopt := validate.VerifyOptions{Limits: validate.Limits{MaxRSD: o.maxRSD}, MinSelectivity: o.minSelectivity}
	mopt, q, err := checkFitCommand(&o.fit, &o.scans, &o.output)
	if err != nil {
		return mopt, q, vopt, err
	}
	if vopt.Limits.RecoveryLo, vopt.Limits.RecoveryHi, err = valParsePercentRange(o.recovery); err != nil {
		return mopt, q, vopt, err
	}
	switch {
	case !(o.maxRSD > 0) || o.maxRSD > 100:
		return mopt, q, vopt, usagef("--max-rsd %g: want a percentage above 0", o.maxRSD)
	case !(o.minSelectivity > 0) || o.minSelectivity >= 1:
		return mopt, q, vopt, usagef("--min-selectivity %g: want a number between 0 and 1", o.minSelectivity)
	case o.crossvalBy != "level" && o.crossvalBy != "standard":
		return mopt, q, vopt, usagef("--crossval-by %q: want level or standard", o.crossvalBy)
	}
	return mopt, q, vopt, nil
}

// load reads the reference set, the checks sheet and the blank (into
// mopt), warning when there is no blank at all.
func (o *verifyOptions) load(refPath, checksPath string, mopt *unmix.Options, q spectrum.Quantity, warn func(string)) (*reference.Set, *calibration.Sheet, string, error) {
	if err := checkNotInput("-o", o.output.out, append([]string{refPath, o.method.use, checksPath, o.crossval, o.scans.blank}, o.interf...)...); err != nil {
		return nil, nil, "", err
	}
	if err := checkNotInput("-o", o.output.out, o.qc.path); err != nil {
		return nil, nil, "", err
	}
	if err := checkNotInput("--record", o.qc.path, refPath, o.method.use, checksPath, o.crossval, o.scans.blank); err != nil {
		return nil, nil, "", err
	}
	if err := o.review.check(o.output.out, refPath, checksPath, o.crossval, o.scans.blank); err != nil {
		return nil, nil, "", err
	}
	if err := o.method.checkSave(); err != nil {
		return nil, nil, "", err
	}
	if err := checkNotInput("--save-method", o.method.save, refPath, checksPath, o.crossval, o.scans.blank, o.output.file()); err != nil {
		return nil, nil, "", err
	}
	set, err := o.method.loadSet(refPath)
	if err != nil {
		return nil, nil, "", err
	}
	sh, err := valReadCheckSheet(checksPath, calibration.SheetOptions{Unit: o.scans.unit, Quantity: q, Warn: warn})
	if err != nil {
		return nil, nil, "", err
	}
	if err := checkNotInput("-o", o.output.out, sheetFiles(sh)...); err != nil {
		return nil, nil, "", err
	}
	if err := o.review.check(o.output.out, sheetFiles(sh)...); err != nil {
		return nil, nil, "", err
	}
	var blankSum string
	if mopt.Blank, blankSum, err = o.scans.readBlank(q, warn); err != nil {
		return nil, nil, "", err
	}
	if mopt.Interferents, err = readInterferents(o.interf, q, warn); err != nil {
		return nil, nil, "", err
	}

	if mopt.Blank == nil && len(sh.Blanks) == 0 {
		warn("no blank given and no blank rows in " + checksPath + ": check standards are solved as read, so the baseline terms must take up the solvent and cell")
	}
	return set, sh, blankSum, nil
}

// recordHistory appends the run to the --record history file, if one
// is given: its record and every check result.
func (o *verifyOptions) recordHistory(cmd *cobra.Command, p *provenance.Run, v *validate.Verification) error {
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
	pass := v.Pass
	run.Pass = &pass
	run.Checks = history.ChecksOf(v)
	return o.qc.record(cmd, run, written)
}

// crossValidate runs the cross-validation of --crossval (nil without it).
func (o *verifyOptions) crossValidate(ctx context.Context, set *reference.Set, mopt unmix.Options, q spectrum.Quantity, warn func(string)) (*validate.CrossValidation, error) {
	if o.crossval == "" {
		return nil, nil
	}
	cal, err := calibration.ReadSheet(o.crossval, calibration.SheetOptions{Unit: o.scans.unit, Quantity: q, Warn: warn})
	if err != nil {
		return nil, err
	}
	// The calibration sheet's blank rows are the blank it was built
	// with; without them, the --blank scan serves.
	bopt := validate.BuildOptionsFor(set)
	if len(cal.Blanks) == 0 {
		bopt.Blank = mopt.Blank
	}
	cmopt := mopt
	cmopt.Blank = nil
	cv, err := validate.CrossValidateContext(ctx, set, cal, validate.CrossValOptions{Build: bopt, Model: cmopt, ByLevel: o.crossvalBy == "level"})
	if err != nil {
		return nil, o.interrupted(ctx, err)
	}
	for _, f := range cv.Failed {
		warn("cross-validation: " + f)
	}
	return cv, nil
}

// interrupted turns err into exit code 130 with how far verify got when
// it is ctx's cancellation, and leaves any other error as it is.
func (o *verifyOptions) interrupted(ctx context.Context, err error) error {
	if ctx.Err() == nil || !errors.Is(err, ctx.Err()) {
		return err
	}
	msg := "interrupted: " + pkgerr.Plain(err)
	if out := o.output.file(); out != "" {
		msg += "; nothing written to " + out
	} else {
		msg += "; nothing printed"
	}
	return &exitError{code: exitInterrupt, msg: msg}
}

// verifyVerdict says on errw whether every compound passed, and gives
// the exit code: 4 when some compound failed or a check result is
// flagged.
func verifyVerdict(errw io.Writer, v *validate.Verification, warn func(string)) error {
	failed := 0
	for _, c := range v.Compounds {
		if !c.Pass {
			failed++
		}
	}
	flagged := v.FlaggedRows()
	if flagged > 0 {
		warn(report.VerifyFlaggedNote(flagged))
	}
	if failed > 0 {
		return &exitError{code: exitFlagged, msg: fmt.Sprintf("%d of %d compounds failed acceptance", failed, len(v.Compounds))}
	}
	if flagged > 0 {
		return &exitError{code: exitFlagged, msg: fmt.Sprintf("all %d compounds passed acceptance on recovery, but %d check results are flagged", len(v.Compounds), flagged)}
	}
	fmt.Fprintf(errw, "huesolve: all %d compounds passed acceptance\n", len(v.Compounds))
	return nil
}

// valReadCheckSheet reads a check-standard sheet: replicates of a single
// mixture are allowed there, unlike in a calibration sheet.
func valReadCheckSheet(path string, opt calibration.SheetOptions) (*calibration.Sheet, error) {
	opt.Checks = true
	return calibration.ReadSheet(path, opt)
}

// valParsePercentRange reads the --recovery range "LO-HI" in percent.
func valParsePercentRange(s string) (lo, hi float64, err error) {
	return parseRangeFlag("--recovery", s, "percent", "98-102", 1e4)
}

// verifyBaselineName is the baseline model verify reports: with auto, the
// floor the merits were computed on is named too.
func verifyBaselineName(merits string, auto bool) string {
	if auto {
		return valAutoBaseline + " (merits on " + merits + ")"
	}
	return merits
}
