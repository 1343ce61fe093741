package main

import (
	"fmt"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
)

func init() { commands = append(commands, newCalibrateCmd) }

// calibrateOptions are the flags of calibrate.
type calibrateOptions struct {
	out           string
	blank         string
	window        string
	pathCM        float64
	ceiling       float64
	floor         float64
	throughOrigin bool
	pretreat      []string
	unit          string
	quantity      string
	plots         string
	plotFormat    string
}

const calibrateLong = `Build a reference set from calibration standards.

SHEET is a standards sheet (comma, semicolon or tab separated text): a header
row with a column "scan" naming each standard's scan file (relative to the
sheet's folder), an optional column "column" choosing the scan inside a
wide-table file, and one column per compound headed "Name (unit)", e.g.

  scan,column,tartrazine (mg/L),sunset yellow (mg/L)
  blank.csv,,0,0
  std-t2.csv,,2,0
  std-s2.csv,,0,2

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
left out. Each compound's calibration line at its band maximum is checked:
R², lack of fit against replicates, and Mandel's test for curvature
(ISO 8466-1), which sets the linear range.

The reference set is written to the --output file (JSON, with a checksum).
A summary table goes to standard output. Exit code 4 means the set was
written but some compound is flagged: read the legend under the table.
The set records when it was made; with the environment variable
SOURCE_DATE_EPOCH (seconds since 1970-01-01 UTC) that time is used
instead of the clock, so the same inputs give a byte-identical file.

Caution: results support, but do not replace, a validated analytical method.
For food, drug, water or other regulated testing follow local regulations,
the validated procedure and the responsible licensed professional.`

func newCalibrateCmd() *cobra.Command {
	o := &calibrateOptions{}
	cmd := &cobra.Command{
		Use:   "calibrate SHEET -o REFSET",
		Short: "Build a reference set (absorptivity spectra) from standards",
		Long:  calibrateLong,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usagef("calibrate takes one standards sheet, got %d arguments", len(args))
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCalibrate(cmd, o, args[0])
		},
	}
	f := cmd.Flags()
	f.StringVarP(&o.out, "output", "o", "", "reference set file to write (JSON)")
	f.StringVar(&o.blank, "blank", "", "blank scan `FILE` subtracted from every standard (instead of the sheet's blank rows)")
	f.StringVar(&o.window, "window", "", "wavelength window `LO-HI` in nm (default: the range all scans share)")
	f.Float64Var(&o.pathCM, "path-cm", reference.DefaultPathCM, "cuvette path length of the standards, cm")
	f.Float64Var(&o.ceiling, "ceiling", reference.DefaultCeiling, "absorbance above which readings are left out")
	f.Float64Var(&o.floor, "floor", 0, "detector floor: absorbance below which a band is not seen (0: none)")
	f.BoolVar(&o.throughOrigin, "through-origin", false, "fit absorbance = absorptivity × path × concentration with no intercept")
	f.StringArrayVar(&o.pretreat, "pretreat", nil, "pre-treatment `STEP`, repeatable, applied in order: zero:LO-HI, als:LAMBDA,P or sg:WINDOW,ORDER[,DERIV]")
	f.StringVar(&o.unit, "unit", "", "concentration unit for compounds whose header gives none, e.g. mg/L")
	f.StringVar(&o.quantity, "quantity", "", "what the scan files hold when they do not say: absorbance, %T or T")
	f.StringVar(&o.plots, "plots", "", "write plots of the absorptivities and calibration lines into `DIR`")
	f.StringVar(&o.plotFormat, "plot-format", "png", "plot format: png or svg")
	return cmd
}

// calParseWindow reads "LO-HI" (or "LO:HI") in nm.
func calParseWindow(s string) (lo, hi float64, err error) {
	s = strings.TrimSpace(s)
	sep := strings.IndexAny(s[min(1, len(s)):], "-:")
	if sep < 0 {
		return 0, 0, usagef("--window %q: want LO-HI in nm, e.g. 400-700", s)
	}
	sep += min(1, len(s))
	lo, err1 := strconv.ParseFloat(strings.TrimSpace(s[:sep]), 64)
	hi, err2 := strconv.ParseFloat(strings.TrimSpace(s[sep+1:]), 64)
	if err1 != nil || err2 != nil || !(lo > 0) || !(hi > lo) || hi > 1e6 {
		return 0, 0, usagef("--window %q: want LO-HI in nm with 0 < LO < HI, e.g. 400-700", s)
	}
	return lo, hi, nil
}

func runCalibrate(cmd *cobra.Command, o *calibrateOptions, sheetPath string) error {
	errw := cmd.ErrOrStderr()
	warn := func(msg string) { fmt.Fprintln(errw, "huesolve: note:", msg) }

	// Flags.
	if o.out == "" {
		return usagef("calibrate needs --output FILE for the reference set")
	}
	q, err := spectrum.ParseQuantity(o.quantity)
	if err != nil {
		return usagef("--quantity: %v", err)
	}
	now, err := sourceDateEpoch()
	if err != nil {
		return err
	}
	opt := reference.Options{
		PathCM: o.pathCM, Ceiling: o.ceiling, Floor: o.floor,
		ThroughOrigin: o.throughOrigin, Warn: warn, Version: version, Now: now,
	}
	switch {
	case !(o.pathCM > 0) || o.pathCM > 1e3:
		return usagef("--path-cm %g: want a positive path length in cm", o.pathCM)
	case !(o.ceiling > 0):
		return usagef("--ceiling %g: want a positive absorbance", o.ceiling)
	case !(o.floor >= 0) || o.floor >= o.ceiling:
		return usagef("--floor %g: want 0 <= floor < ceiling (%g)", o.floor, o.ceiling)
	}
	if o.window != "" {
		if opt.WindowLo, opt.WindowHi, err = calParseWindow(o.window); err != nil {
			return err
		}
	}
	for _, s := range o.pretreat {
		st, err := baseline.ParseStep(s)
		if err != nil {
			return usagef("--pretreat %q: %v", s, err)
		}
		opt.Pretreat = append(opt.Pretreat, st)
	}
	pf := strings.ToLower(o.plotFormat)
	if pf != "png" && pf != "svg" {
		return usagef("--plot-format %q: want png or svg", o.plotFormat)
	}

	// Inputs.
	sh, err := reference.ReadSheet(sheetPath, reference.SheetOptions{Unit: o.unit, Quantity: q, Warn: warn})
	if err != nil {
		return err
	}
	if o.blank != "" {
		b, sum, err := calReadBlank(o.blank, q, warn)
		if err != nil {
			return err
		}
		opt.Blank, opt.BlankSHA256 = b, sum
	}

	// Build, save, report.
	set, err := reference.Build(sh, opt)
	if err != nil {
		return err
	}
	if err := set.Save(o.out); err != nil {
		return err
	}
	if err := writeSetSummary(cmd.OutOrStdout(), set); err != nil {
		return err
	}
	fmt.Fprintf(errw, "huesolve: reference set written to %s\n", o.out)
	if o.plots != "" {
		if err := os.MkdirAll(o.plots, 0o755); err != nil {
			return fmt.Errorf("plots: %w", err)
		}
		files, err := report.WriteCalibrationPlots(set, o.plots, pf)
		if err != nil {
			return err
		}
		fmt.Fprintf(errw, "huesolve: %d plots written to %s\n", len(files), o.plots)
	}
	flagged := 0
	for _, c := range set.Compounds {
		if len(c.Flags) > 0 {
			flagged++
		}
	}
	if flagged > 0 {
		return &exitError{code: exitFlagged, msg: fmt.Sprintf("%d of %d compounds flagged (see the legend under the table); the set was written", flagged, len(set.Compounds))}
	}
	return nil
}

// calReadBlank reads a separate blank scan file holding one scan.
func calReadBlank(path string, q spectrum.Quantity, warn func(string)) (*spectrum.Spectrum, string, error) {
	ss, err := spectrum.ReadFile(path, spectrum.ReadOptions{Quantity: q, Warn: warn})
	if err != nil {
		return nil, "", fmt.Errorf("blank: %w", err)
	}
	if len(ss) != 1 {
		return nil, "", fmt.Errorf("blank: %s holds %d scans; give a file with one", path, len(ss))
	}
	b := ss[0]
	if err := b.ToAbsorbance(); err != nil {
		return nil, "", fmt.Errorf("blank: %w", err)
	}
	sum, err := reference.FileSHA256(path)
	if err != nil {
		return nil, "", fmt.Errorf("blank: %w", err)
	}
	return b, sum, nil
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
