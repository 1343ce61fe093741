package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"huesolve/method"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/unmix"
	"huesolve/validate"
)

// windowOptions are the flags of window.
type windowOptions struct {
	fit        fitFlags
	output     outputFlags
	method     methodFlags
	searchIn   string
	step       float64
	minWidth   float64
	maxWidth   float64
	levels     []string
	equivalent float64
	noise      float64
	pathCM     float64
	top        int
}

const windowLong = `Advise on the wavelength window for solving samples against a reference set.

Every window whose edges lie on a grid of --step nm over the usable range
(or --search LO-HI) and that is at least --min-width nm wide is tried. For
each, the design of the fit is formed (each compound's absorptivity × path,
plus the --baseline terms) and huesolve reports its condition number and
each compound's predicted standard error, from the reference set's noise
model as solve uses it (noise growing as 10^A above A = 1) and the error
the calibration brings (for sets that record it), at a sample holding
every compound at its --level (default: the middle of its calibrated
range). No sample is needed: the prediction comes from the
design alone, by one small singular value decomposition per window.

The recommended window is the one whose worst compound's predicted error,
relative to its level, is smallest, unless a window within --equivalent
percent of that error has a condition number lower by more than the same
margin: then the best conditioned such window is taken, since a band that
only makes compounds harder to tell apart buys little real precision and
amplifies model errors (a small shift, a baseline the terms cannot follow). Wavelengths where the expected absorbance passes the set's ceiling
are left out, as solve would.

With a correct noise model and weights (--weighted), adding wavelengths
never raises the predicted error, so the advice then mostly weighs
conditioning and saturation; in the unweighted fit (solve's default),
strongly absorbing, noisy regions can cost precision.

--save-method FILE saves the recommended window with --baseline, --weighted
and --path-cm, bound to the reference set by its checksum, as a method file
that solve and verify take with --method.

Output: the best windows as a table, or --format csv (every window tried)
or json (with the figures of merit of the recommended window); -o FILE
writes to a file (atomically; FILE.csv or FILE.json picks the format).
--plots DIR writes the worst predicted error and the condition number
against window start, one line per width.

` + caution

func newWindowCmd() *cobra.Command {
	o := &windowOptions{}
	cmd := &cobra.Command{
		Use:   "window REFSET",
		Short: "Advise on the wavelength window from predicted errors and conditioning",
		Long:  windowLong,
		Args:  wantArgs(1, 1, "one reference set"),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runWindow(cmd, o, args[0])
		},
	}
	f := cmd.Flags()
	o.fit.addDesign(f)
	o.output.add(f, "plots of predicted error and condition number")
	f.StringVar(&o.searchIn, "search", "", "search windows only within `LO-HI` nm (default: the whole usable grid)")
	f.Float64Var(&o.step, "step", validate.DefaultStepNM, "spacing of window edges, nm")
	f.Float64Var(&o.minWidth, "min-width", validate.DefaultMinWidthNM, "narrowest window, nm")
	f.Float64Var(&o.maxWidth, "max-width", 0, "widest window, nm (0: no limit)")
	f.StringArrayVar(&o.levels, "level", nil, "concentration `NAME=C` at which a compound's error is judged, repeatable (default: middle of its calibrated range)")
	f.Float64Var(&o.equivalent, "equivalent", 100*validate.DefaultEquivalent, "predicted errors within this many percent of the best count as equal (0: take the strict minimum)")
	f.Float64Var(&o.noise, "noise", 0, "noise SD of a reading in absorbance, replacing the set's noise model (0: use the set's)")
	f.Float64Var(&o.pathCM, "path-cm", 0, "sample path length, cm (0: the reference set's)")
	f.IntVar(&o.top, "top", 10, "number of windows in the table")
	o.method.addSave(f, "the recommended window with --baseline, --weighted and --path-cm")
	return cmd
}

func runWindow(cmd *cobra.Command, o *windowOptions, refPath string) error {
	errw := cmd.ErrOrStderr()
	opt, err := o.check()
	if err != nil {
		return err
	}
	if err := checkNotInput("-o", o.output.out, refPath); err != nil {
		return err
	}
	if err := o.method.checkSave(); err != nil {
		return err
	}
	if err := checkNotInput("--save-method", o.method.save, refPath, o.output.file()); err != nil {
		return err
	}
	run, err := newRun(cmd)
	if err != nil {
		return err
	}
	set, err := reference.Load(refPath)
	if err != nil {
		return err
	}
	if len(o.levels) > 0 {
		if opt.Levels, err = winLevels(set, o.levels); err != nil {
			return err
		}
	}
	start := time.Now()
	ctx := cmd.Context()
	adv, err := validate.AdviseWindowContext(ctx, set, opt)
	if err != nil {
		return o.searchError(ctx, err)
	}
	fmt.Fprintf(errw, "huesolve: %d windows tried in %.2f s\n", len(adv.Candidates), time.Since(start).Seconds())
	best := adv.Candidates[adv.Best]
	merits, err := validate.FiguresOfMerit(set, validate.MeritOptions{
		WindowLo: best.Lo, WindowHi: best.Hi, Baseline: opt.Baseline, PathCM: o.pathCM,
		Sigma: o.noise, Weighted: o.fit.weighted,
	})
	if err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return o.searchError(ctx, err)
	}
	o.record(run, set, refPath, opt)
	rep := report.WindowReport{Format: report.FormatNameWindow, Schema: report.Schema, Run: run,
		Reference: refPath, Recommended: [2]float64{best.Lo, best.Hi}, Advice: adv, Merits: merits}
	err = o.output.write(cmd, "window advice", rep,
		func(w io.Writer) error {
			if err := report.WriteRunComments(w, report.FormatNameWindow, run); err != nil {
				return err
			}
			return report.WriteWindowCSV(w, adv)
		},
		func(w io.Writer) error { return report.WriteWindowTable(w, &rep, o.top) })
	if err != nil {
		return err
	}
	err = o.output.writePlots(cmd, func(dir, format string) ([]string, error) {
		return report.WriteWindowPlots(adv, dir, format)
	})
	if err != nil {
		return err
	}
	if o.method.save != "" {
		fit := method.Fit{WindowNM: &[2]float64{best.Lo, best.Hi}, Baseline: opt.Baseline.String(), Weighted: o.fit.weighted,
			MaxShiftNM: unmix.DefaultMaxShiftNM, PathCM: o.pathCM}
		if err := o.method.saveMethod(cmd, run, refPath, set, fit, nil); err != nil {
			return err
		}
		fmt.Fprintf(errw, "huesolve: recommended window %g-%g nm (saved in %s: give solve and verify --method %s)\n", best.Lo, best.Hi, o.method.save, o.method.save)
		return nil
	}
	fmt.Fprintf(errw, "huesolve: recommended window %g-%g nm (give --window %g-%g to solve and verify, or save it with --save-method FILE)\n", best.Lo, best.Hi, best.Lo, best.Hi)
	return nil
}

// record fills the run's record of window: the reference set and the
// settings of the search.
func (o *windowOptions) record(run *provenance.Run, set *reference.Set, refPath string, opt validate.WindowOptions) {
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	o.method.recordSet(run, set, refPath)
	search := "the whole usable grid"
	if o.searchIn != "" {
		search = g(opt.Lo) + "-" + g(opt.Hi)
	}
	levels := "middle of each compound's calibrated range"
	if len(o.levels) > 0 {
		levels = strings.Join(o.levels, " ")
	}
	noise := "the reference set's noise model"
	if o.noise > 0 {
		noise = g(o.noise)
	}
	run.Settings = []provenance.Setting{
		{Name: "baseline", Value: opt.Baseline.String()},
		{Name: "weighted", Value: strconv.FormatBool(o.fit.weighted)},
		{Name: "search", Value: search},
		{Name: "step", Value: g(o.step)},
		{Name: "min-width", Value: g(o.minWidth)},
		{Name: "max-width", Value: g(o.maxWidth)},
		{Name: "level", Value: levels},
		{Name: "equivalent", Value: g(o.equivalent)},
		{Name: "noise", Value: noise},
		pathSetting(o.pathCM, set),
	}
}

// searchError words an error of the window search for the command line:
// a step finer than the grid or too many windows is a bad command line
// that says which flags narrow the search, an interruption exits 130/143
// with nothing written, anything else is returned as it is.
func (o *windowOptions) searchError(ctx context.Context, err error) error {
	var fine *validate.StepTooFineError
	var many *validate.TooManyWindowsError
	switch {
	case interrupted(ctx, err):
		msg := "interrupted: " + strings.TrimSuffix(userMessage(err), ": "+ctx.Err().Error())
		if o.output.out != "" {
			msg += "; nothing written to " + o.output.out
		}
		return &exitError{code: exitInterrupt, msg: msg}
	case errors.As(err, &fine):
		return usagef("--step %g: finer than the reference set's grid spacing of %g nm (windows closer than one grid step hold the same points); give --step %g or more",
			o.step, fine.GridNM, fine.GridNM)
	case errors.As(err, &many):
		return usagef("--step %g with --min-width %g makes %d windows in %g-%g nm, more than the %d window tries at most: give a larger --step or --min-width, a --max-width, or a narrower --search range",
			o.step, o.minWidth, many.Windows, many.LoNM, many.HiNM, validate.MaxWindows)
	}
	return err
}

// check reads the flags of window into the search's options (all but
// the levels, which need the reference set).
func (o *windowOptions) check() (validate.WindowOptions, error) {
	opt := validate.WindowOptions{
		Weighted: o.fit.weighted, StepNM: o.step, MinWidthNM: o.minWidth, MaxWidthNM: o.maxWidth,
		Sigma: o.noise, PathCM: o.pathCM,
	}
	var err error
	if o.fit.auto() {
		return opt, usagef("--baseline auto: window predicts the errors of one design, but auto chooses each sample's model from its own residuals; give the fixed model the samples need (default offset)")
	}
	if opt.Baseline, err = o.fit.baselineModel(); err != nil {
		return opt, err
	}
	if o.searchIn != "" {
		if opt.Lo, opt.Hi, err = winParseRange(o.searchIn); err != nil {
			return opt, err
		}
	}
	switch {
	case !(o.step > 0) || o.step > 1e4:
		return opt, usagef("--step %g: want a positive number of nm", o.step)
	case !(o.minWidth > 0) || o.minWidth > 1e5:
		return opt, usagef("--min-width %g: want a positive number of nm", o.minWidth)
	case !(o.maxWidth >= 0) || (o.maxWidth > 0 && o.maxWidth < o.minWidth):
		return opt, usagef("--max-width %g: want 0 or at least --min-width (%g)", o.maxWidth, o.minWidth)
	case !(o.equivalent >= 0) || o.equivalent > 1000:
		return opt, usagef("--equivalent %g: want a percentage, 0 or more", o.equivalent)
	case !(o.noise >= 0) || o.noise > 10:
		return opt, usagef("--noise %g: want an absorbance SD, 0 or more", o.noise)
	case checkPathFlag(o.pathCM) != nil:
		return opt, checkPathFlag(o.pathCM)
	case o.top < 1:
		return opt, usagef("--top %d: want at least 1", o.top)
	}
	opt.Equivalent = o.equivalent / 100
	if o.equivalent == 0 {
		opt.Equivalent = -1
	}
	return opt, o.output.check()
}

// winParseRange reads the --search range "LO-HI" in nm.
func winParseRange(s string) (lo, hi float64, err error) {
	return parseRangeFlag("--search", s, "nm", "400-700", 1e6)
}

// winLevels reads NAME=C flags into one level per compound of set (0 for
// compounds not named).
func winLevels(set *reference.Set, flags []string) ([]float64, error) {
	lv := make([]float64, len(set.Compounds))
	for _, f := range flags {
		name, val, ok := strings.Cut(f, "=")
		c, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if !ok || err != nil || !(c > 0) || c > 1e12 {
			return nil, usagef("--level %q: want NAME=CONCENTRATION with a positive concentration", f)
		}
		k := -1
		for i, cmp := range set.Compounds {
			if strings.EqualFold(cmp.Name, strings.TrimSpace(name)) {
				k = i
			}
		}
		if k < 0 {
			var names []string
			for _, cmp := range set.Compounds {
				names = append(names, cmp.Name)
			}
			return nil, usagef("--level %q: the reference set has no compound %q (it has %s)", f, name, strings.Join(names, ", "))
		}
		lv[k] = c
	}
	return lv, nil
}
