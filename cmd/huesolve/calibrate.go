package main

import (
	"errors"
	"fmt"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"huesolve/baseline"
	"huesolve/calibration"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
	"huesolve/unmix"
	"huesolve/validate"
)

// calibrateOptions are the flags of calibrate.
type calibrateOptions struct {
	out           string
	window        string
	pathCM        float64
	ceiling       float64
	floor         float64
	throughOrigin bool
	pretreat      []string
	minR2, maxRSD float64
	accept, drop  bool
	scans         scanFlags
	output        outputFlags
	interf        []string
}

const calibrateLong = `Build a reference set from calibration standards.

SHEET is a standards sheet (comma, semicolon or tab separated text): a header
row with a column "scan" naming each standard's scan file (relative to the
sheet's folder), an optional column "column" choosing the scan inside a
wide-table file, and one column per compound headed "Name (unit)" or
"Name [unit]", e.g.

  scan,column,Ambrelin (mg/L),Corvasine (mg/L)
  blank.csv,,0,0
  std-a2.csv,,2,0
  std-c2.csv,,0,2

A row whose concentrations are all zero is a blank: the mean of the blank
rows is subtracted from every standard (or give a separate blank scan with
--blank). Standards may be pure or mixtures of several compounds. Five or more
concentration levels per compound, spanning the working range, is usual
practice.

At each wavelength the blank-corrected absorbances are fitted by least
squares on the concentrations, giving each compound's absorptivity (per unit
concentration per cm) with its standard error, and the residual noise.
Readings above the absorbance ceiling (2 by default: stray light bends
readings above about A = 2 on ordinary instruments, common practice) are
left out. A standard that reads above the ceiling where one holding at
least as much of every compound reads below half of it (at 10 % of the
wavelengths or more) is impossible for its level and refused: %T read as
absorbance (give --quantity %T) or concentrations on the wrong row. Each compound's calibration line at its band maximum is checked:
R², lack of fit against replicates, and Mandel's test for curvature
(ISO 8466-1), which sets the linear range. The same line is fitted and
tested at every wavelength of the band (absorptivity at least half its
maximum): the line under the table gives the lowest R² there and at how
many wavelengths it bends; bending at more than half of them flags the
compound curved too. At 99 % the test fails a straight line at about 1 %
of wavelengths by chance, so curvature at the band maximum counts only
when the test also fires one grid step either side of it (or over more
than half the band); a hit at the maximum alone is noted under the table
and in a warning, without flag, range cut or refit.

Bad standards are looked for on each compound's line at its band maximum:
a standard whose externally studentized residual (Belsley, Kuh & Welsch
1980) lies beyond the Bonferroni limit at 1 % is an outlier, named by scan
and sheet line; a line with R² below --min-r2 (0.995) or a relative
residual SD above --max-rsd (5 %), common practice for UV-Vis, fits
poorly. Then the set is not written (an existing file is left as it was)
and calibrate exits 4, unless --accept-outliers is given (the set is
written with the flags outlier or poor-fit) or --drop-outliers (the
outlying standards are left out, the set refitted once without them, and
the rows left out recorded in the set).

The reference set is written to the --output file (JSON, with a checksum).
A summary table goes to standard output. Exit code 4 means the set was
written but some compound is flagged (read the legend under the table),
or that it was not written because its standards failed the checks above.
Ctrl-C or SIGTERM stops calibrate at once, writing nothing (exit 130, or 143 for SIGTERM).
The set records when it was made; with the environment variable
SOURCE_DATE_EPOCH (seconds since 1970-01-01 UTC) that time is used
instead of the clock, so the same inputs give a byte-identical file.

--interferent FILE (repeatable) stores the scan of a coloured substance
that samples hold but that is not quantified (an impurity, the product
base) in the set, with its file name and SHA-256: solve and verify then
fit it in every sample, as with their own --interferent, and say so. The
scan must cover the set's grid and not be reproduced by the compounds and
an offset; the set is then written as schema 3.

` + caution

func newCalibrateCmd() *cobra.Command {
	o := &calibrateOptions{}
	cmd := &cobra.Command{
		Use:   "calibrate SHEET -o REFSET",
		Short: "Build a reference set (absorptivity spectra) from standards",
		Long:  calibrateLong,
		Args:  wantArgs(1, 1, "one standards sheet"),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCalibrate(cmd, o, args[0])
		},
	}
	f := cmd.Flags()
	f.StringVarP(&o.out, "output", "o", "", "reference set file to write (JSON; - for standard output, the table then going to standard error)")
	o.scans.add(f, "every standard, instead of the sheet's blank rows")
	o.scans.addUnit(f)
	o.output.addPlots(f, "plots of the absorptivities and calibration lines")
	f.StringVar(&o.window, "window", "", "wavelength window `LO-HI` in nm (default: the range all scans share)")
	f.Float64Var(&o.pathCM, "path-cm", reference.DefaultPathCM, "cuvette path length of the standards, cm")
	f.Float64Var(&o.ceiling, "ceiling", reference.DefaultCeiling, "absorbance above which readings are left out")
	f.Float64Var(&o.floor, "floor", 0, "detector floor: absorbance below which a band is not seen (0: none)")
	f.BoolVar(&o.throughOrigin, "through-origin", false, "fit absorbance = absorptivity × path × concentration with no intercept")
	f.Float64Var(&o.minR2, "min-r2", calibration.DefaultMinR2, "least R² of a calibration line at the band maximum (0: no minimum)")
	f.Float64Var(&o.maxRSD, "max-rsd", 100*calibration.DefaultMaxRelSD, "largest relative residual SD of a calibration line, % (0: no maximum)")
	f.BoolVar(&o.accept, "accept-outliers", false, "write the set even when standards are outlying or a line fits poorly (flagged outlier, poor-fit)")
	f.BoolVar(&o.drop, "drop-outliers", false, "leave outlying standards out and refit once; the set records which rows and why")
	f.StringArrayVar(&o.interf, "interferent", nil, "scan `FILE` of a coloured substance present in samples but not quantified, stored in the set: solve and verify fit it in every sample (repeatable)")
	f.StringArrayVar(&o.pretreat, "pretreat", nil, "pre-treatment `STEP`, repeatable, applied in order: zero:LO-HI, als:LAMBDA,P or sg:WINDOW,ORDER[,DERIV]")
	return cmd
}

func runCalibrate(cmd *cobra.Command, o *calibrateOptions, sheetPath string) error {
	errw := cmd.ErrOrStderr()
	warn := warnTo(errw)
	opt, q, err := o.check(warn)
	if err != nil {
		return err
	}

	// Inputs.
	if err := checkNotInput("-o", o.out, append([]string{sheetPath, o.scans.blank}, o.interf...)...); err != nil {
		return err
	}
	sh, err := calibration.ReadSheet(sheetPath, calibration.SheetOptions{Unit: o.scans.unit, Quantity: q, Warn: warn})
	if err != nil {
		return err
	}
	if err := checkNotInput("-o", o.out, sheetFiles(sh)...); err != nil {
		return err
	}
	if opt.Blank, opt.BlankSHA256, err = o.scans.readBlank(q, warn); err != nil {
		return err
	}
	if opt.Interferents, err = storedInterferents(o.interf, q, warn); err != nil {
		return err
	}
	calWarnLostCompounds(o.out, sh, warn)

	// Build, save, report.
	ctx := cmd.Context()
	if err := ctx.Err(); err != nil {
		return calInterrupted(o.out)
	}
	set, err := calibration.BuildContext(ctx, sh, opt)
	if ctx.Err() != nil && (err == nil || errors.Is(err, ctx.Err())) {
		return calInterrupted(o.out)
	}
	if err != nil {
		return err
	}
	if err := checkStoredInterferents(set, o.interf); err != nil {
		return err
	}
	calWarnCollinear(set, warn)
	if n := badStandards(set); n > 0 && !o.accept {
		return &exitError{code: exitFlagged, msg: fmt.Sprintf("%d of %d compounds have outlying standards or a poor calibration line (named above); the set was not written to %s: correct the sheet or rescan, or give --drop-outliers to leave the outlying standards out and refit, or --accept-outliers to write it as it is",
			n, len(set.Compounds), o.out)}
	}
	if ctx.Err() != nil {
		return calInterrupted(o.out)
	}
	if err := calSave(cmd, set, o.out); err != nil {
		return err
	}
	err = o.output.writePlots(cmd, func(dir, format string) ([]string, error) {
		return report.WriteCalibrationPlots(set, dir, format)
	})
	if err != nil {
		return err
	}
	// Flags outlier and poor-fit accepted with --accept-outliers do not
	// count.
	flagged := 0
	for _, c := range set.Compounds {
		for _, f := range c.Flags {
			if !o.accept || (f != reference.FlagOutlier && f != reference.FlagPoorFit) {
				flagged++
				break
			}
		}
	}
	if flagged > 0 {
		return &exitError{code: exitFlagged, msg: fmt.Sprintf("%d of %d compounds flagged (see the legend under the table); the set was written", flagged, len(set.Compounds))}
	}
	return nil
}

// calSave writes the reference set to out and its summary table to
// standard output; with -o - the set goes to standard output and the
// table to standard error.
func calSave(cmd *cobra.Command, set *reference.Set, out string) error {
	errw := cmd.ErrOrStderr()
	if out == stdoutName {
		b, err := set.Encode()
		if err != nil {
			return err
		}
		if _, err := cmd.OutOrStdout().Write(b); err != nil {
			return err
		}
		if err := report.WriteSetSummary(errw, set); err != nil {
			return err
		}
		fmt.Fprintln(errw, "huesolve: reference set written to standard output")
		return nil
	}
	if err := set.Save(out); err != nil {
		return err
	}
	if err := report.WriteSetSummary(cmd.OutOrStdout(), set); err != nil {
		// Said so that no one takes the old set for still there.
		return fmt.Errorf("the reference set was written to %s, but %w", out, err)
	}
	fmt.Fprintf(errw, "huesolve: reference set written to %s\n", out)
	return nil
}

// calWarnLostCompounds warns when the reference set about to be replaced
// (out, if it exists and loads) holds compounds the sheet lacks: a deleted
// column turns a compound's standards into blanks. Nothing is said when
// out is absent or not a reference set.
func calWarnLostCompounds(out string, sh *calibration.Sheet, warn func(string)) {
	if _, err := os.Stat(out); err != nil {
		return
	}
	old, err := reference.Load(out)
	if err != nil {
		return
	}
	have := map[string]bool{}
	for _, c := range sh.Compounds {
		have[strings.ToLower(c)] = true
	}
	var lost []string
	for _, c := range old.Compounds {
		if !have[strings.ToLower(c.Name)] {
			lost = append(lost, c.Name)
		}
	}
	if len(lost) > 0 {
		warn(fmt.Sprintf("%s, the set to be replaced, has %s %s, which %s has no column for: check that no compound column was deleted from the sheet",
			out, plural(len(lost), "compound", "compounds"), strings.Join(lost, ", "), sh.Path))
	}
}

// calInterrupted is calibrate's exit on Ctrl-C or SIGTERM: nothing is
// written.
func calInterrupted(out string) error {
	return &exitError{code: exitInterrupt, msg: "interrupted; nothing written to " + out}
}

// badStandards counts the compounds of set flagged outlier or poor-fit,
// which calibrate does not write unless told to.
func badStandards(set *reference.Set) int {
	n := 0
	for _, c := range set.Compounds {
		for _, f := range c.Flags {
			if f == reference.FlagOutlier || f == reference.FlagPoorFit {
				n++
				break
			}
		}
	}
	return n
}

// check reads the flags of calibrate into the build options (all but the
// blank) and the quantity of the scans.
func (o *calibrateOptions) check(warn func(string)) (calibration.Options, spectrum.Quantity, error) {
	var opt calibration.Options
	if o.out == "" {
		return opt, 0, usagef("calibrate needs --output FILE for the reference set")
	}
	q, err := o.scans.parseQuantity()
	if err != nil {
		return opt, q, err
	}
	now, err := sourceDateEpoch()
	if err != nil {
		return opt, q, err
	}
	opt = calibration.Options{
		PathCM: o.pathCM, Ceiling: o.ceiling, Floor: o.floor,
		ThroughOrigin: o.throughOrigin, Warn: warn, Version: version, Now: now,
		MinR2: o.minR2, MaxRelSD: o.maxRSD / 100, DropOutliers: o.drop,
	}
	// Zero on the command line turns a limit off; the library's zero is
	// its default.
	if o.minR2 == 0 {
		opt.MinR2 = -1
	}
	if o.maxRSD == 0 {
		opt.MaxRelSD = -1
	}
	switch {
	case o.pathCM == 0 || checkPathFlag(o.pathCM) != nil:
		return opt, q, usagef("--path-cm %g: want a path length from %g to %g cm", o.pathCM, float64(unmix.MinPathCM), float64(unmix.MaxPathCM))
	case !(o.ceiling > 0) || o.ceiling > reference.MaxCeiling:
		return opt, q, usagef("--ceiling %g: want an absorbance above 0 and at most %d", o.ceiling, reference.MaxCeiling)
	case !(o.floor >= 0) || o.floor >= o.ceiling:
		return opt, q, usagef("--floor %g: want 0 <= floor < ceiling (%g)", o.floor, o.ceiling)
	case !(o.minR2 >= 0 && o.minR2 <= 1):
		return opt, q, usagef("--min-r2 %g: want a number from 0 (no minimum) to 1", o.minR2)
	case !(o.maxRSD >= 0 && o.maxRSD <= 100):
		return opt, q, usagef("--max-rsd %g: want a percentage from 0 (no maximum) to 100", o.maxRSD)
	case o.accept && o.drop:
		return opt, q, usagef("--accept-outliers and --drop-outliers: give one of them")
	}
	if o.window != "" {
		if opt.WindowLo, opt.WindowHi, err = parseWindowFlag(o.window); err != nil {
			return opt, q, err
		}
	}
	for _, s := range o.pretreat {
		st, err := baseline.ParseStep(s)
		if err != nil {
			return opt, q, usagef("--pretreat: %w", err) // the error quotes the step
		}
		opt.Pretreat = append(opt.Pretreat, st)
	}
	return opt, q, o.output.checkPlots()
}

// calWarnCollinear warns when the set's absorptivity spectra are so alike
// that solve would flag every sample illcond: the condition number of the
// whole grid with an offset baseline, unweighted, as inspect shows it.
// The check is advice on a set that Build has already accepted, so a
// failure to make it does not stop the set from being saved: it is a
// warning that says what was not checked and why.
func calWarnCollinear(set *reference.Set, warn func(string)) {
	bl, err := baseline.ParseModel(valDefaultBaseline)
	var m *validate.Merits
	if err == nil {
		m, err = validate.FiguresOfMerit(set, validate.MeritOptions{Baseline: bl})
	}
	if err != nil {
		warn("could not check whether the absorptivity spectra of the compounds are nearly collinear: " + userMessage(err) +
			" (huesolve inspect shows how they overlap)")
		return
	}
	if !(m.Singular || m.Cond > unmix.CondLimit) {
		return
	}
	warn(fmt.Sprintf("the absorptivity spectra of the compounds are nearly collinear over %g-%g nm: condition number %s with an offset baseline, above %g, so solve will flag every sample illcond and their standard errors are inflated (huesolve inspect shows which compounds overlap; huesolve window looks for a better window)",
		m.WindowLo, m.WindowHi, report.CondText(m.Cond, m.Singular), unmix.CondLimit))
}

// sourceDateEpoch reads the environment variable SOURCE_DATE_EPOCH (the
// reproducible-builds.org convention: a whole number of seconds since
// 1970-01-01 UTC) and returns a clock fixed at that time, or nil (the
// real clock) when it is unset or empty. A malformed value is an error,
// as the convention asks.
func sourceDateEpoch() (func() time.Time, error) {
	v := os.Getenv("SOURCE_DATE_EPOCH")
	if v == "" {
		return nil, nil
	}
	sec, err := strconv.ParseInt(v, 10, 64)
	if err != nil || sec < 0 || sec > 253402300799 { // up to 9999-12-31T23:59:59Z
		return nil, fmt.Errorf("SOURCE_DATE_EPOCH=%q: want a whole number of seconds since 1970-01-01 UTC", v)
	}
	t := time.Unix(sec, 0).UTC()
	return func() time.Time { return t }, nil
}
