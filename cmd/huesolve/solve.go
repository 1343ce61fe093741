package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"huesolve/batch"
	"huesolve/internal/atomicfile"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
	"huesolve/unmix"
)

func init() { commands = append(commands, newSolveCmd) }

// solveOptions are the flags of solve.
type solveOptions struct {
	fit       fitFlags
	scans     scanFlags
	output    outputFlags
	dilution  float64
	pathCM    float64
	samples   string
	jobs      int
	checkOnly bool
}

// solveProgressMin is the number of samples from which solve shows a
// progress bar (on a terminal only): shorter runs finish before a bar
// would tell anything.
const solveProgressMin = 200

const solveLong = `Unmix sample scans into concentrations with a reference set made by
calibrate.

Each SCAN is a file, a folder (its files, not recursive) or a quoted glob
pattern; a file may hold one scan or a wide table of many. Every scan is
converted to absorbance, brought onto the reference grid by linear
interpolation (never extrapolated: a scan must cover the window), corrected
by the blank (--blank), given the reference set's pre-treatment, cropped to
the window, and fitted by non-negative least squares: each compound's
absorptivity times the path length (concentrations >= 0), plus the baseline
terms (--baseline).

Points whose absorbance reads above the ceiling (the reference set's, or
--ceiling) are left out and counted; when the reference set's
pre-treatment has Savitzky-Golay steps, so are the points within half a
window (summed over the steps) of such a point, whose smoothed or derivative
values used the clipped reading. When more than 5 % are lost, or any
point of the window reads 0 %T or below (too dark to read: the file and
wavelength are named), the sample is flagged "dilute" with a dilution
factor that brings its highest band below the ceiling and every compound
into its calibrated range (the top of its linear range where calibrate
stated one below the highest standard; above it a result is "over").
--weighted weights wavelengths by the reference set's noise, taken to grow
as 10^A above A = 1 where little light reaches the detector. --shift estimates a wavelength shift between the instrument that
made the references and the sample's (up to --max-shift nm; reported in nm
with its standard error, positive when the sample's bands lie at longer
wavelengths). A shift within 2 standard errors of zero is not determined
(a nearly blank sample, say): the sample is fitted unshifted and shows
shift 0 with the estimate's standard error. A determined shift is applied,
its uncertainty is included in the concentrations' standard errors, and it
is flagged "shift" from 0.1 nm on ("shift-max" at the limit).

Concentrations are in the reference set's units for the original sample:
the fitted amount times the dilution factor, times the reference path over
the sample's path. Give them with --dilution and --path-cm for all samples,
or per sample with --samples SHEET: delimited text with a header row naming
the columns sample, dilution and/or path_cm (note or comment columns are
ignored, any other is refused); "sample" matches a scan's name (its column
header in a wide table) or its file name with or without extension. Empty
cells and samples not in the sheet take the flag values; solve names those
samples, and the sheet rows that matched no sample.

For each sample: concentration, standard error and 95 % interval of every
compound, its detection and quantitation limits (3.3 and 10 times the noise
over the net analyte signal), the fit figures (RMS residual, reduced
chi-square against the noise model, Durbin-Watson, R², condition number,
baseline terms, points used and dropped, shift) and flags:

` + "{{LEGEND}}" + `
"!" marks flags that count a sample as flagged. Thresholds: reduced
chi-square above 4 (misfit), Durbin-Watson below 1 (pattern; not raised
when the reference set's pre-treatment includes Savitzky-Golay smoothing,
which correlates neighbouring residuals by itself), condition number above
30 (illcond), baseline leakage below 0.5 (mimic). README.md states the
reduced chi-square's formula.

Output: a table on standard output sized for the terminal, or --format csv or
json; -o FILE writes it to a file, complete or not at all. --plots DIR writes
one figure per sample: measured and fitted spectra, each compound's part,
the baseline, and the residual against the expected noise band; stretches
left out of the fit (above the ceiling, or not calibrated) are shaded. A file
that cannot be read is reported on standard error and skipped; the others go
on.
Results come in the order of the inputs whatever the number of workers (-j).
A one-line summary goes to standard error.

--check-only reads every scan and checks that it could be solved (values,
wavelength grid, coverage of the window, sample sheet factors, enough
points below the ceiling) without solving, with the warnings solving
would give: a quick look through a large batch before the real run, and a
measure of how long reading alone takes. Problems go to standard error,
with the summary; nothing is written to standard output. The exit codes
are those solving would give, short of 4 (no fit is made to flag).

Exit codes:
  0  every input read and solved, no sample flagged
  1  failure: nothing could be solved (bad reference set, options, output,
     or not one sample could be read and solved)
  2  bad command line
  3  some files or samples could not be read or solved (listed on stderr)
  4  everything was solved, but some samples carry a "!" flag
  130 interrupted: nothing was written to -o FILE

` + caution

func newSolveCmd() *cobra.Command {
	o := &solveOptions{}
	cmd := &cobra.Command{
		Use:   "solve REFSET SCAN...",
		Short: "Unmix sample scans into concentrations with uncertainties and flags",
		Long:  strings.Replace(solveLong, "{{LEGEND}}", strings.TrimRight(unmix.Legend(), "\n"), 1),
		Args:  wantArgs(2, -1, "a reference set and at least one scan"),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runSolve(cmd, o, args[0], args[1:])
		},
	}
	f := cmd.Flags()
	o.fit.add(f)
	o.scans.add(f, "every sample")
	o.output.add(f, "one figure per sample")
	f.Float64Var(&o.dilution, "dilution", 1, "dilution factor of every sample (the sample sheet overrides it)")
	f.Float64Var(&o.pathCM, "path-cm", 0, "cell path length in cm (0: the reference set's; the sample sheet overrides it)")
	f.StringVar(&o.samples, "samples", "", "sample `SHEET` with columns sample, dilution, path_cm")
	f.IntVarP(&o.jobs, "jobs", "j", 0, "number of samples solved in parallel (default: all cores)")
	f.BoolVar(&o.checkOnly, "check-only", false, "read and check every scan without solving it")
	return cmd
}

func runSolve(cmd *cobra.Command, o *solveOptions, refPath string, scans []string) error {
	errw := &lockedWriter{w: cmd.ErrOrStderr()}
	warn := warnTo(errw)
	var warnings atomic.Int64 // warnings given, for --check-only's summary
	say := warn
	warn = func(msg string) { warnings.Add(1); say(msg) }
	note := func(msg string) { fmt.Fprintln(errw, "huesolve: note:", msg) }

	// Flags.
	mopt, q, err := checkFitCommand(&o.fit, &o.scans, &o.output)
	if err != nil {
		return err
	}
	if msg := o.fit.unusedNote(cmd); msg != "" {
		note(msg)
	}
	if err := checkDilutionFlag(o.dilution); err != nil {
		return err
	}
	if err := checkPathFlag(o.pathCM); err != nil {
		return err
	}
	if o.jobs < 0 {
		return usagef("-j %d: want a positive number of workers", o.jobs)
	}
	if o.checkOnly && (o.output.out != "" || o.output.plots != "") {
		return usagef("--check-only writes no results: leave out -o and --plots")
	}
	ropt := spectrum.ReadOptions{Quantity: q, Warn: warn}
	if err := checkNotInput("-o", o.output.out, append([]string{refPath, o.scans.blank, o.samples}, scanInputFiles(scans)...)...); err != nil {
		return err
	}

	// Reference set, blank, model, sample sheet.
	set, err := reference.Load(refPath)
	if err != nil {
		return err
	}
	if mopt.Blank, _, err = o.scans.readBlank(q, warn); err != nil {
		return err
	}
	mopt.KeepCurves = o.output.plots != ""
	model, err := unmix.NewModel(set, mopt)
	if err != nil {
		return err
	}
	if n := model.Excluded(); n > 0 {
		warn(fmt.Sprintf("%d of the %d window points are left out of every fit: a compound's absorptivity is not known there (fewer than 3 standards below the ceiling)",
			n, len(model.Window())))
	}
	var sheet *unmix.SampleSheet
	if o.samples != "" {
		if sheet, err = unmix.ReadSampleSheet(o.samples); err != nil {
			return err
		}
	}
	if o.output.plots != "" {
		if err := o.output.makePlotDir(); err != nil {
			return err
		}
	}

	inputs := batch.ExpandInputs(scans)
	solveSetNotes(set, model, o.scans.blank, inputs, note, warn)
	track := newSheetTracker(sheet)
	runner := &batch.Batch{
		Model:   model,
		Workers: o.jobs,
		Read:    ropt,
		Factors: func(s *spectrum.Spectrum) (unmix.Factors, error) {
			f := track.lookup(s)
			if f.Dilution == 0 {
				f.Dilution = o.dilution
			}
			if f.PathCM == 0 {
				f.PathCM = o.pathCM
			}
			return f, nil
		},
	}
	names := model.Compounds()
	var plotted atomic.Int64 // plots written, for the closing message
	if o.output.plots != "" {
		runner.Each = func(seq int, r *unmix.Result) error {
			if err := report.SaveSamplePlot(r, names, report.SamplePlotPath(o.output.plots, seq+1, r.Sample, o.output.plotFormat)); err != nil {
				return err
			}
			plotted.Add(1)
			return nil
		}
	}

	// Progress on a terminal only.
	var bar *progressbar.ProgressBar
	if f, ok := cmd.ErrOrStderr().(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		runner.Progress = func(done, known int) {
			if bar == nil && known >= solveProgressMin {
				bar = progressbar.NewOptions(known, progressbar.OptionSetWriter(errw), progressbar.OptionSetDescription("solving"),
					progressbar.OptionShowCount(), progressbar.OptionThrottle(100*time.Millisecond), progressbar.OptionClearOnFinish())
			}
			if bar != nil {
				bar.ChangeMax(known)
				_ = bar.Set(done)
			}
		}
	}

	if o.checkOnly {
		return runSolveCheck(cmd, runner, inputs, errw, func() int64 {
			track.report(warn, o.dilution, o.pathCM)
			return warnings.Load()
		})
	}
	seen := newOutcomeNotes()

	layout := report.LayoutOf(model)
	width := outputWidth(cmd.OutOrStdout(), o.output.out)
	var sum batch.Summary
	solveAll := func(w io.Writer) error {
		rw, err := report.NewResultWriter(o.output.format, w, layout, width)
		if err != nil {
			return err
		}
		enc, _ := rw.(report.Encoder)
		runner.Encode = nil
		if enc != nil {
			runner.Encode = enc.AppendResult // formats in the workers
		}
		sum, err = runner.Run(cmd.Context(), inputs, func(out batch.Outcome) error {
			seen.add(out, warn)
			if out.Err != nil {
				what := out.File
				if out.Result != nil {
					what = out.Result.Sample + " (" + out.File + ")"
				}
				if msg := userMessage(out.Err); out.Unread && strings.HasPrefix(msg, out.File+":") {
					fmt.Fprintf(errw, "huesolve: skipped %s\n", msg)
				} else if out.Unread && strings.Contains(msg, out.File) {
					fmt.Fprintf(errw, "huesolve: %s (skipped)\n", msg)
				} else if out.Unread {
					fmt.Fprintf(errw, "huesolve: skipped %s: %s\n", out.File, msg)
				} else {
					fmt.Fprintf(errw, "huesolve: %s: %s\n", what, msg)
				}
				if err := rw.Fail(what, out.Err); err != nil {
					return err
				}
			}
			switch {
			case out.Encoded != nil && enc != nil:
				return enc.WriteEncoded(out.Encoded)
			case out.Result != nil:
				return rw.Write(out.Result)
			}
			return nil
		})
		if bar != nil {
			_ = bar.Finish()
		}
		if err != nil {
			return err
		}
		return rw.Close()
	}
	if o.output.out != "" {
		err = atomicfile.Write(o.output.out, solveAll)
	} else {
		bw := bufio.NewWriter(cmd.OutOrStdout())
		err = solveAll(bw)
		if ferr := bw.Flush(); err == nil {
			err = ferr
		}
	}
	if errors.Is(err, cmd.Context().Err()) && cmd.Context().Err() != nil {
		msg := fmt.Sprintf("interrupted after %d sample(s) had been solved and reported", sum.Emitted)
		if o.output.out != "" {
			msg += "; nothing written to " + o.output.out
		} else {
			msg += "; the output above is incomplete"
		}
		return &exitError{code: exitInterrupt, msg: msg}
	}
	if err != nil {
		return err
	}
	track.report(warn, o.dilution, o.pathCM)
	seen.report(warn)
	if o.output.plots != "" {
		fmt.Fprintf(errw, "huesolve: %d plots written to %s\n", plotted.Load(), o.output.plots)
	}
	line := fmt.Sprintf("huesolve: %d sample(s) solved from %d input(s): %d flagged, %d failed, %d input(s) unreadable",
		sum.Solved, sum.Files, sum.Flagged, sum.Failed, sum.Unreadable)
	if o.output.out != "" {
		line += "; results in " + o.output.out
	}
	fmt.Fprintln(errw, line)
	switch {
	case sum.Solved == 0 && sum.Unreadable+sum.Failed > 0:
		return &exitError{code: exitFailure, msg: "nothing could be solved: the reasons are above"}
	case sum.Unreadable > 0 || sum.Failed > 0:
		return &exitError{code: exitSkipped}
	case sum.Flagged > 0:
		return &exitError{code: exitFlagged}
	}
	return nil
}

// runSolveCheck runs the batch with CheckOnly: each problem and a summary
// line go to errw. after runs when the batch is done and returns the
// number of warnings given, which the summary counts: a check never says
// "ready" without a word when solving would warn.
func runSolveCheck(cmd *cobra.Command, runner *batch.Batch, inputs []batch.Input, errw io.Writer, after func() int64) error {
	runner.CheckOnly = true
	sum, err := runner.Run(cmd.Context(), inputs, func(out batch.Outcome) error {
		var msg string
		if out.Err != nil {
			msg = userMessage(out.Err)
		}
		switch {
		case out.Err == nil:
		case out.Unread && strings.HasPrefix(msg, out.File+":"):
			fmt.Fprintf(errw, "huesolve: cannot read %s\n", msg)
		case out.Unread && strings.Contains(msg, out.File):
			fmt.Fprintf(errw, "huesolve: %s\n", msg)
		case out.Unread:
			fmt.Fprintf(errw, "huesolve: cannot read %s: %s\n", out.File, msg)
		default:
			fmt.Fprintf(errw, "huesolve: %s: %s\n", out.File, msg)
		}
		return nil
	})
	if err != nil && cmd.Context().Err() != nil && errors.Is(err, cmd.Context().Err()) {
		return &exitError{code: exitInterrupt, msg: fmt.Sprintf("interrupted after %d sample(s) had been checked", sum.Emitted)}
	}
	if err != nil {
		return err
	}
	nw := after()
	line := fmt.Sprintf("huesolve: %d sample(s) read from %d input(s): %d ready to solve, %d cannot be solved, %d input(s) unreadable",
		sum.Samples, sum.Files, sum.Checked, sum.Failed, sum.Unreadable)
	if nw > 0 {
		line += fmt.Sprintf("; %d warning(s) above, which solving would give too", nw)
	}
	fmt.Fprintln(errw, line)
	switch {
	case sum.Checked == 0 && sum.Unreadable+sum.Failed > 0:
		// As solving would: nothing could be solved is a failure.
		return &exitError{code: exitFailure, msg: "nothing could be solved: the reasons are above"}
	case sum.Unreadable > 0 || sum.Failed > 0:
		return &exitError{code: exitSkipped}
	}
	return nil
}

// outputWidth is the width to size a table for: the terminal's when
// standard output is one, else $COLUMNS, else report.DefaultWidth.
func outputWidth(w io.Writer, out string) int {
	if out == "" {
		if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
			if cols, _, err := term.GetSize(int(f.Fd())); err == nil && cols > 0 {
				return cols
			}
		}
	}
	if c, err := strconv.Atoi(os.Getenv("COLUMNS")); err == nil && c > 0 {
		return c
	}
	return report.DefaultWidth
}

// lockedWriter serialises writes from the batch's goroutines.
type lockedWriter struct {
	mu sync.Mutex
	w  io.Writer
}

func (l *lockedWriter) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.w.Write(p)
}
