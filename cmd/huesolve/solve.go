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
	"huesolve/history"
	"huesolve/internal/atomicfile"
	"huesolve/internal/memlimit"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// solveOptions are the flags of solve.
type solveOptions struct {
	fit       fitFlags
	scans     scanFlags
	output    outputFlags
	method    methodFlags
	dilution  float64
	pathCM    float64
	samples   string
	jobs      int
	checkOnly bool
	review    solveReview
	explain   bool
	interf    []string
	lab       labFlags
	qc        recordFlag
	inputs    []batch.Input // the scan arguments expanded (check)
}

// solveProgressMin is the number of samples from which solve shows a
// progress bar (on a terminal only): shorter runs finish before a bar
// would tell anything.
const solveProgressMin = 200

// solvePlotProgressMin is the same with --plots, where each sample also
// costs a figure (some 25 ms): the bar then counts samples solved and
// plotted.
const solvePlotProgressMin = 20

const solveLong = `Unmix sample scans into concentrations with a reference set made by
calibrate. Each SCAN is a file, a folder or a quoted glob pattern; every
scan is turned into absorbance, put on the reference grid, corrected by the
blank, cropped to the window and fitted by non-negative least squares (each
compound's absorptivity times the path length, plus the baseline terms).
Concentrations are for the original sample: times the dilution, times the
reference path over the sample's (--dilution, --path-cm, or per sample
--samples SHEET with columns sample, dilution, path_cm). With --method FILE
(from window or verify --save-method) the reference set and fit options
come from the method, every argument is a scan, and options given override
the method's and are recorded; a set whose checksum differs is refused.
A sample the sheet does not name is flagged "nosheet"; a scan short of the
window is refused naming the --window that would fit. --baseline auto (the
default) gives each sample the smallest baseline model its residuals need.

Output: a table (sized for a terminal, saying what it cut; full width to a
file or pipe), or CSV or JSON by --format or by the -o file's extension.
CSV and JSON open with the run's record (tool, version, time, command line,
method, reference set, blank, sheets and inputs with their SHA-256, every
setting in force). -o FILE is written whole or not at all, and only when a
sample was solved; --report FILE.html also writes an HTML review report.
Every result carries its standard error (the sample's noise and the
calibration's error, which JSON gives as se_calibration), 95 % interval,
LOD, LOQ, fit figures and flags; flags marked "!" count the sample as flagged:
  {{FLAGS}}
README.md ("How solve works", "Result flags") explains every step and flag.

Exit codes: 0 done, nothing flagged; 1 failure (nothing solved, or an output
or a plot not written; -o FILE is left as it was); 2 bad command line;
3 some files or samples could not be read or solved (listed on stderr);
4 some samples carry a "!" flag; 130 (143 for SIGTERM) interrupted, nothing
written to -o FILE.
Sheet columns group / replicate_of and mass, volume (or --basis) add
replicate statistics and results on a reporting basis; --record DB appends
the run to a QC history file (README.md: replicates, history).

` + caution

// solveFlagList is every result flag in one line, "!" after those that
// count a sample as flagged: "zero <lod ... misfit! ...".
func solveFlagList() string {
	var b strings.Builder
	for i, f := range unmix.AllFlags() {
		if i > 0 {
			b.WriteByte(' ')
		}
		b.WriteString(string(f))
		if unmix.IsWarning(f) {
			b.WriteByte('!')
		}
	}
	return b.String()
}

func newSolveCmd() *cobra.Command {
	o := &solveOptions{}
	cmd := &cobra.Command{
		Use:   "solve REFSET SCAN... | solve --method FILE SCAN...",
		Short: "Unmix sample scans into concentrations with uncertainties and flags",
		Long:  strings.Replace(solveLong, "{{FLAGS}}", solveFlagList(), 1),
		Args:  wantArgs(1, -1, "a reference set (or --method FILE) and at least one scan"),
		RunE: func(cmd *cobra.Command, args []string) error {
			if o.method.use != "" {
				return runSolve(cmd, o, "", args)
			}
			if err := wantArgs(2, -1, "a reference set (or --method FILE) and at least one scan")(cmd, args); err != nil {
				return err
			}
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
	o.review.flag.add(f)
	o.method.addUse(f)
	f.StringArrayVar(&o.interf, "interferent", nil, "scan `FILE` of a coloured substance present but not quantified: fitted with its own amount, in units of that scan (repeatable)")
	f.BoolVar(&o.explain, "explain", false, "after the table, what each candidate of --baseline auto scored per sample (JSON always holds it)")
	o.lab.add(f)
	o.qc.add(f)
	return cmd
}

func runSolve(cmd *cobra.Command, o *solveOptions, refPath string, scans []string) error {
	j := newSolveJob(cmd.ErrOrStderr())
	if err := o.method.apply(cmd.Flags()); err != nil {
		return err
	}
	refPath = o.method.refPath(refPath)
	mopt, q, err := o.check(cmd, j.note, refPath, scans)
	if err != nil {
		return err
	}
	if err := j.load(cmd, o, refPath, scans, mopt, q); err != nil {
		return err
	}
	j.newBatch(o, q)
	defer j.mem.Stop()
	j.keep = o.qc.path != ""
	j.showProgress(cmd, o.output.plots != "")
	if o.checkOnly {
		return runSolveCheck(cmd, j.batch, j.inputs, j.errw, j.cover.add, func() int64 {
			sheetNotes(j.track, j.sheet, j.warn, o.dilution, o.pathCM)
			j.cover.report(j.model, j.warn)
			return j.warnings.Load()
		})
	}
	sum, err := j.solve(cmd, o)
	if ctx := cmd.Context(); errors.Is(err, ctx.Err()) && ctx.Err() != nil {
		msg := fmt.Sprintf("interrupted after %d sample(s) had been solved and reported", sum.Emitted)
		switch {
		case o.output.file() != "":
			msg += "; nothing written to " + o.output.out
		case !strings.EqualFold(o.output.format, report.FormatTable):
			// CSV and JSON wait in the spool for the run's record.
			msg += "; nothing written to standard output"
		default:
			msg += "; the output above is incomplete"
		}
		return &exitError{code: exitInterrupt, msg: msg}
	}
	if err != nil {
		return err
	}
	var rerr error
	if o.review.on() && sum.Solved > 0 {
		rerr = o.review.write(j.errw)
	}
	ferr := j.finish(o, sum)
	if rerr != nil {
		return fmt.Errorf("the results were written, but the review report could not be: %w", rerr)
	}
	if sum.Solved == 0 || o.qc.path == "" {
		return ferr
	}
	if err := j.recordHistory(cmd, o); err != nil {
		return err
	}
	return ferr
}

// recordHistory appends the run to the --record history file: its
// record and every solved sample's results.
func (j *solveJob) recordHistory(cmd *cobra.Command, o *solveOptions) error {
	written := "the results are above"
	if out := o.output.file(); out != "" {
		written = "the results are in " + out
	}
	run, err := historyRun(history.KindSolve, j.run)
	if err != nil {
		return o.qc.failed(err, written)
	}
	run.Samples = j.solved
	return o.qc.record(cmd, run, written)
}

// check reads the flags of solve into the model options and the quantity
// of the scans; note tells what a flag given does not do.
func (o *solveOptions) check(cmd *cobra.Command, note func(string), refPath string, scans []string) (unmix.Options, spectrum.Quantity, error) {
	mopt, q, err := checkFitCommand(&o.fit, &o.scans, &o.output)
	if err != nil {
		return mopt, q, err
	}
	if msg := o.fit.unusedNote(cmd); msg != "" {
		note(msg)
	}
	if err := checkDilutionFlag(o.dilution); err != nil {
		return mopt, q, err
	}
	if err := checkPathFlag(o.pathCM); err != nil {
		return mopt, q, err
	}
	if o.jobs < 0 {
		return mopt, q, usagef("-j %d: want a positive number of workers", o.jobs)
	}
	if o.explain && (!mopt.Auto || !strings.EqualFold(o.output.format, report.FormatTable)) {
		return mopt, q, usagef("--explain shows the choice of --baseline auto in the table; with --format json each sample holds model_scores")
	}
	if o.checkOnly && (o.output.out != "" || o.output.plots != "" || o.review.on()) {
		return mopt, q, usagef("--check-only writes no results: leave out -o, --plots and --report")
	}
	if o.checkOnly && o.qc.path != "" {
		return mopt, q, usagef("--check-only records no run: leave out --record")
	}
	// Expanded once: load takes the same inputs (a folder of 20,000
	// scans is listed and sorted once).
	o.inputs = batch.ExpandInputs(scans)
	inputs := append(append([]string{refPath, o.method.use, o.scans.blank, o.samples}, o.interf...), scanInputFiles(o.inputs)...)
	if err = checkNotInput("-o", o.output.out, append(inputs, o.qc.path)...); err != nil {
		return mopt, q, err
	}
	if err = checkNotInput("--record", o.qc.path, inputs...); err != nil {
		return mopt, q, err
	}
	err = o.review.flag.check(o.output.out, inputs...)
	return mopt, q, err
}

// solveJob is one run of solve: what it talks on standard error through,
// the model, the inputs and the batch that solves them.
type solveJob struct {
	errw     *lockedWriter
	warn     func(string) // warnings, counted
	note     func(string)
	warnings atomic.Int64 // warnings given, for --check-only's summary
	plots    plotTally    // plots written and failed, for the closing message

	model  *unmix.Model
	sheet  *unmix.SampleSheet
	track  *unmix.SheetUse
	inputs []batch.Input
	batch  *batch.Batch
	bar    *progressbar.ProgressBar
	seen   *outcomeNotes
	run    *provenance.Run // the run's record (nil with --check-only)
	cover  coverageNotes   // scans refused for coverage (from emit, in order)
	lab    *labJob         // replicate groups and reporting basis; nil when not asked for

	mem *memlimit.Guard // the soft memory limit around large inputs

	// keep: --record is given; solved holds each solved sample's rows
	// for it, copied in emit (the batch reuses its results).
	keep   bool
	solved []history.SampleResult
}

func newSolveJob(stderr io.Writer) *solveJob {
	j := &solveJob{errw: &lockedWriter{w: stderr}, seen: newOutcomeNotes()}
	say := warnTo(j.errw)
	j.warn = func(msg string) { j.warnings.Add(1); say(msg) }
	j.note = noteTo(j.errw)
	return j
}

// load reads the reference set, the blank and the sample sheet, makes the
// model and the plot folder.
func (j *solveJob) load(cmd *cobra.Command, o *solveOptions, refPath string, scans []string, mopt unmix.Options, q spectrum.Quantity) error {
	set, err := o.method.loadSet(refPath)
	if err != nil {
		return err
	}
	var blankSum string
	if mopt.Blank, blankSum, err = o.scans.readBlank(q, j.warn); err != nil {
		return err
	}
	if mopt.Interferents, err = readInterferents(o.interf, q, j.warn); err != nil {
		return err
	}
	mopt.KeepCurves = o.output.plots != "" || o.review.on()
	if j.model, err = unmix.NewModel(set, mopt); err != nil {
		return err
	}
	if n := j.model.Excluded(); n > 0 {
		j.warn(fmt.Sprintf("%d of the %d window points are left out of every fit: a compound's absorptivity is not known there (fewer than 3 standards below the ceiling)",
			n, len(j.model.Window())))
	}
	if o.samples != "" {
		if j.sheet, err = unmix.ReadSampleSheet(o.samples); err != nil {
			return err
		}
		for _, w := range j.sheet.Warnings() {
			j.warn(w)
		}
	}
	if j.lab, err = newLabJob(o.lab, o.samples, j.sheet, j.model); err != nil {
		return err
	}
	if o.output.plots != "" {
		if err := o.output.makePlotDir(); err != nil {
			return err
		}
	}
	j.inputs = o.inputs
	if o.review.on() {
		o.review.start(j.model, set, mopt)
	}
	solveSetNotes(set, j.model, o.scans.blank, j.inputs, j.note, j.warn)
	interferentNote(set, j.note)
	if !o.checkOnly {
		return j.record(cmd, o, set, refPath, mopt, blankSum)
	}
	return nil
}

// record makes the run's record: the reference set (and method), the
// blank, the sample sheet and every input file with their SHA-256, and
// the settings in force.
func (j *solveJob) record(cmd *cobra.Command, o *solveOptions, set *reference.Set, refPath string, mopt unmix.Options, blankSum string) error {
	run, err := newRun(cmd)
	if err != nil {
		return err
	}
	o.method.recordSet(run, set, refPath)
	if o.scans.blank != "" {
		run.Blank = &provenance.File{Path: o.scans.blank, SHA256: blankSum}
	}
	if o.samples != "" {
		run.Sheets = append(run.Sheets, hashed("sample sheet", o.samples))
	}
	recordInterferents(run, set, o.interf)
	run.Settings = fitSettings(&o.fit, &o.scans, set, mopt)
	run.Settings = append(run.Settings,
		provenance.Setting{Name: "dilution", Value: strconv.FormatFloat(o.dilution, 'g', -1, 64)},
		pathSetting(o.pathCM, set))
	run.Settings = append(run.Settings, j.lab.settings(o.lab)...)
	// run.InputList is filled as the batch reads the inputs (emit).
	j.run = run
	o.review.run = run
	return nil
}

// newBatch makes the batch: factors from the sample sheet or the flags,
// and a plot per sample with --plots.
func (j *solveJob) newBatch(o *solveOptions, q spectrum.Quantity) {
	j.track = unmix.NewSheetUse(j.sheet)
	j.batch = &batch.Batch{
		Model:   j.model,
		Workers: o.jobs,
		Read:    spectrum.ReadOptions{Quantity: q, Warn: j.warn},
		Factors: func(s *spectrum.Spectrum) (unmix.Factors, error) {
			f := j.track.Factors(s)
			if f.Dilution == 0 {
				f.Dilution = o.dilution
			}
			if f.PathCM == 0 {
				f.PathCM = o.pathCM
			}
			return f, nil
		},
		// The run's record takes each input's SHA-256 from the bytes
		// read for the fit: one read per file.
		Digests: j.run != nil,
	}
	// A large input read keeps the garbage beside it in proportion
	// (internal/memlimit).
	j.mem = memlimit.Start()
	j.batch.ReadFile = func(path string, opt spectrum.ReadOptions) ([]*spectrum.Spectrum, error) {
		j.mem.Before(path)
		ss, err := spectrum.ReadFile(path, opt)
		var n int64
		for _, s := range ss {
			n += int64(len(s.Values)) * 8
		}
		j.mem.After(n)
		return ss, err
	}
	plots := o.output.plots != ""
	if !plots && !o.review.on() {
		return
	}
	names := j.model.Compounds()
	// A plot that cannot be written (a full disk) does not fail its
	// sample, which was solved and is in the results; plotting stops at
	// the first failure and finish reports it.
	j.batch.Each = func(seq int, r *unmix.Result) error {
		if o.review.on() {
			o.review.rev.Figure(seq, r)
		}
		if !plots || j.plots.stopped() {
			return nil
		}
		j.plots.add(report.SaveSamplePlot(r, names, report.SamplePlotPath(o.output.plots, seq+1, r.Sample, o.output.plotFormat)))
		return nil
	}
}

// showProgress shows a progress bar on a terminal only; with plots it
// counts samples solved and plotted (a sample is done once its figure is
// written).
func (j *solveJob) showProgress(cmd *cobra.Command, plots bool) {
	least, what := solveProgressMin, "solving"
	if plots {
		least, what = solvePlotProgressMin, "solving and plotting"
	}
	f, ok := cmd.ErrOrStderr().(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		j.batch.Progress = newProgressLog(j.errw, time.Now, progressLogEvery, what).update
		return
	}
	j.batch.Progress = func(done, known int) {
		if j.bar == nil && known >= least {
			j.bar = progressbar.NewOptions(known, progressbar.OptionSetWriter(j.errw), progressbar.OptionSetDescription(what),
				progressbar.OptionShowCount(), progressbar.OptionThrottle(100*time.Millisecond), progressbar.OptionClearOnFinish())
		}
		if j.bar != nil {
			j.bar.ChangeMax(known)
			_ = j.bar.Set(done)
		}
	}
}

// progressLogEvery is how often solve says how far it got when standard
// error is not a terminal (a log, a pipe): runs shorter than this say
// nothing more than before.
const progressLogEvery = 10 * time.Second

// progressLog writes a one-line progress message at most every interval,
// the first one interval after it was made: for long runs whose standard
// error is not a terminal, where a bar cannot be drawn.
type progressLog struct {
	w           io.Writer
	now         func() time.Time
	every       time.Duration
	what        string
	start, last time.Time
}

func newProgressLog(w io.Writer, now func() time.Time, every time.Duration, what string) *progressLog {
	t := now()
	return &progressLog{w: w, now: now, every: every, what: what, start: t, last: t}
}

// update is a batch.Progress: done samples of total expected.
func (p *progressLog) update(done, total int) {
	t := p.now()
	if t.Sub(p.last) < p.every {
		return
	}
	p.last = t
	rate := float64(done) / t.Sub(p.start).Seconds()
	fmt.Fprintf(p.w, "huesolve: %s: %d of %d scans done (%.0f/s)\n", p.what, done, total, rate)
}

// solve runs the batch and writes the results to -o FILE (complete or
// not at all) or standard output.
func (j *solveJob) solve(cmd *cobra.Command, o *solveOptions) (batch.Summary, error) {
	layout := report.LayoutOf(j.model)
	layout.Run = j.run
	layout.Explain = o.explain
	width := outputWidth(cmd.OutOrStdout(), o.output.file())
	var sum batch.Summary
	solveAll := func(w io.Writer) error {
		// CSV and JSON open with the run's record, complete only once
		// every input has been read: the rest is kept in a spool and
		// follows the head written at the end.
		var sp *spool
		body := w
		if j.run != nil && !strings.EqualFold(o.output.format, report.FormatTable) {
			sp = newSpool(o.output.file())
			defer sp.close()
			body = sp
			layout.HeadLater = true
		}
		rw, err := report.NewResultWriter(o.output.format, body, layout, width)
		if err != nil {
			return err
		}
		enc, _ := rw.(report.Encoder)
		j.batch.Encode = nil
		if enc != nil {
			j.batch.Encode = enc.AppendResult // formats in the workers
		}
		j.batch.Read.Context = cmd.Context()
		if j.run != nil && j.run.InputList == nil {
			// The inputs' SHA-256 as the batch reads them, in input
			// order, kept compact (provenance.InputList).
			j.run.InputList = &provenance.InputList{}
			j.run.InputList.Grow(len(j.inputs))
		}
		sum, err = j.batch.Run(cmd.Context(), j.inputs, func(out batch.Outcome) error {
			return j.emit(out, rw, enc, o.review.rev)
		})
		if j.bar != nil {
			_ = j.bar.Finish()
		}
		if err != nil {
			return err
		}
		if j.lab != nil {
			if err := j.lab.finish(rw, o.review.rev); err != nil {
				return err
			}
		}
		if err := rw.Close(); err != nil || sp == nil {
			return err
		}
		if err := rw.(report.HeadWriter).WriteHead(w); err != nil {
			return err
		}
		return sp.copyTo(w)
	}
	if out := o.output.file(); out != "" {
		// The file is replaced only when at least one sample was solved:
		// a run that solves nothing (a misspelt scan path, say) leaves
		// yesterday's results as they were.
		err := atomicfile.Write(out, func(w io.Writer) error {
			if err := solveAll(w); err != nil {
				return err
			}
			if sum.Solved == 0 {
				return errNothingSolved
			}
			return nil
		})
		if errors.Is(err, errNothingSolved) {
			err = nil
		}
		return sum, err
	}
	bw := bufio.NewWriter(cmd.OutOrStdout())
	err := solveAll(bw)
	if ferr := bw.Flush(); err == nil {
		err = ferr
	}
	return sum, err
}

// errNothingSolved stops the -o file of a run that solved nothing from
// replacing the file there; finish says so.
var errNothingSolved = errors.New("nothing solved")

// emit takes one outcome, in input order: its notes, its failure on
// standard error, its result to rw.
func (j *solveJob) emit(out batch.Outcome, rw report.ResultWriter, enc report.Encoder, rev *report.SolveReview) error {
	if out.Digest != nil && j.run != nil {
		recordInput(j.run.InputList, out.File, out.Digest)
	}
	j.seen.add(out, j.warn)
	j.cover.add(out.Err)
	if out.Err != nil {
		what := out.File
		if out.Result != nil {
			what = out.Result.Sample + " (" + out.File + ")"
		}
		fmt.Fprintln(j.errw, solveFailure(out, what))
		if err := rw.Fail(what, out.Err); err != nil {
			return err
		}
		if rev != nil {
			rev.Fail(what, userMessage(out.Err))
		}
	}
	if rev != nil && out.Result != nil {
		rev.Add(out.Seq, out.Result)
	}
	if j.lab != nil && out.Err == nil && out.Result != nil {
		j.lab.add(out.Result, j.track)
	}
	if j.keep && out.Result != nil {
		j.solved = append(j.solved, history.SamplesOf(out.Result)...)
	}
	switch {
	case out.Encoded != nil && enc != nil:
		return enc.WriteEncoded(out.Encoded)
	case out.Result != nil:
		return rw.Write(out.Result)
	}
	return nil
}

// solveFailure is the line on standard error for an outcome that failed:
// a file that could not be read is said skipped, naming the file once.
func solveFailure(out batch.Outcome, what string) string {
	msg := userMessage(out.Err)
	switch {
	case out.Unread && strings.HasPrefix(msg, out.File+":"):
		return "huesolve: skipped " + msg
	case out.Unread && strings.Contains(msg, out.File):
		return "huesolve: " + msg + " (skipped)"
	case out.Unread:
		return "huesolve: skipped " + out.File + ": " + msg
	}
	return "huesolve: " + what + ": " + msg
}

// finish gives the warnings kept for the end, the closing summary line,
// and the exit code.
func (j *solveJob) finish(o *solveOptions, sum batch.Summary) error {
	sheetNotes(j.track, j.sheet, j.warn, o.dilution, o.pathCM)
	j.seen.report(j.warn)
	j.cover.report(j.model, j.warn)
	plotsFailed := j.plots.report(j.errw, o.output.plots)
	line := fmt.Sprintf("huesolve: %d sample(s) solved from %d input(s): %d flagged, %d failed, %d input(s) unreadable",
		sum.Solved, sum.Files, sum.Flagged, sum.Failed, sum.Unreadable)
	line += j.lab.note()
	out := o.output.file()
	if out != "" && sum.Solved > 0 {
		line += "; results in " + out
	}
	fmt.Fprintln(j.errw, line)
	switch {
	case sum.Solved == 0:
		msg := "nothing could be solved: the reasons are above"
		if out != "" {
			msg += "; " + keptNote(out)
		}
		return &exitError{code: exitFailure, msg: msg}
	case plotsFailed:
		return &exitError{code: exitFailure, msg: "the results were written, but not every plot could be (see above)"}
	case sum.Unreadable > 0 || sum.Failed > 0:
		return &exitError{code: exitSkipped}
	case sum.Flagged > 0 || j.lab.flagged() > 0:
		return &exitError{code: exitFlagged}
	}
	return nil
}

// runSolveCheck runs the batch with CheckOnly: each problem and a summary
// line go to errw, and seen gets each outcome's error. after runs when the batch is done and returns the
// number of warnings given, which the summary counts: a check never says
// "ready" without a word when solving would warn.
func runSolveCheck(cmd *cobra.Command, runner *batch.Batch, inputs []batch.Input, errw io.Writer, seen func(error), after func() int64) error {
	runner.CheckOnly = true
	sum, err := runner.Run(cmd.Context(), inputs, func(out batch.Outcome) error {
		seen(out.Err)
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

// outputWidth is the width to size a table for: on a terminal its width
// (else $COLUMNS, else report.DefaultWidth); to a file (-o) or a pipe, 0:
// no limit, so that nothing is cut where no one can widen the window.
func outputWidth(w io.Writer, out string) int {
	if out != "" {
		return 0
	}
	f, ok := asFile(w)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		return 0
	}
	if cols, _, err := term.GetSize(int(f.Fd())); err == nil && cols > 0 {
		return cols
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

// plotTally counts solve's plots from the workers: written, and the
// first failure, after which no more are drawn.
type plotTally struct {
	written atomic.Int64
	failed  atomic.Bool
	once    sync.Once
	err     error // the first failure; read once the batch is done
}

// stopped reports whether a plot has failed.
func (p *plotTally) stopped() bool { return p.failed.Load() }

// add counts one plot written (err nil) or failed.
func (p *plotTally) add(err error) {
	if err == nil {
		p.written.Add(1)
		return
	}
	p.once.Do(func() {
		p.err = err
		p.failed.Store(true)
	})
}

// report says on w how many plots were written into dir ("" when none
// were asked for), and why plotting stopped; it returns whether it did.
func (p *plotTally) report(w io.Writer, dir string) bool {
	if dir == "" {
		return false
	}
	if p.err == nil {
		fmt.Fprintf(w, "huesolve: %d plots written to %s\n", p.written.Load(), dir)
		return false
	}
	fmt.Fprintf(w, "huesolve: %d plots written to %s; plotting stopped at the first that could not be written: %s\n",
		p.written.Load(), dir, userMessage(p.err))
	return true
}

// keptNote says what became of the -o file out when nothing was written
// to it: an existing file is left as it was.
func keptNote(out string) string {
	if _, err := os.Stat(out); err == nil {
		return out + " left as it was"
	}
	return "nothing written to " + out
}
