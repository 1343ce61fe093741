package main

// --report FILE of solve and verify: a review report in one
// self-contained HTML file, made by report (SolveReview, VerifyReview)
// from the run's results and the provenance gathered here.

import (
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"huesolve/batch"
	"huesolve/internal/atomicfile"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/unmix"
	"huesolve/validate"
)

// reviewFlag is --report FILE.
type reviewFlag struct {
	path string
}

// add binds --report.
func (r *reviewFlag) add(fs *pflag.FlagSet) {
	fs.StringVar(&r.path, "report", "", "also write a review report of the run to `FILE.html` (one self-contained HTML file)")
}

// check refuses a report file that is not named .html or .htm (a
// mistyped -o, say), standard output, the -o file, or one of the inputs.
func (r *reviewFlag) check(out string, inputs ...string) error {
	if r.path == "" {
		return nil
	}
	if r.path == stdoutName {
		return usagef("--report %s: give a file name ending in .html; the report is not written to standard output", r.path)
	}
	switch strings.ToLower(filepath.Ext(r.path)) {
	case ".html", ".htm":
	default:
		return usagef("--report %s: give a file name ending in .html (the report is an HTML page; -o and --format choose the results file)", r.path)
	}
	if !toStdout(out) && filepath.Clean(out) == filepath.Clean(r.path) {
		return usagef("--report %s is also the -o file: give them different names", r.path)
	}
	return checkNotInput("--report", r.path, inputs...)
}

// write writes the report atomically with fn and says so on errw.
func (r *reviewFlag) write(errw io.Writer, fn func(io.Writer) error) error {
	if err := atomicfile.Write(r.path, fn); err != nil {
		return fmt.Errorf("--report: %w", err)
	}
	fmt.Fprintf(errw, "huesolve: review report written to %s\n", r.path)
	return nil
}

// reviewCautions are the report's cautions: the help's, and the README's
// safety points.
func reviewCautions() []string {
	return []string{
		strings.ReplaceAll(caution, "\n", " "),
		"Handle dyes, solvents and acids as their safety data sheets say: gloves, eye protection, a fume hood for volatile solvents, and the disposal the sheet requires.",
		"Never look into a UV lamp or the beam of a spectrophotometer; keep the instrument's covers and interlocks in place.",
		"A result carrying a \"!\" flag is one the fit does not describe well: review its figure before reporting it.",
	}
}

// reviewProv gathers what a review report says about its run: the tool,
// the options given, the reference set and its checksum, the blank and
// the settings of the fit. More fields are appended by the caller.
type reviewProv struct {
	fields []report.Field
}

func (p *reviewProv) add(label, value string) {
	p.fields = append(p.fields, report.Field{Label: label, Value: value})
}

// addFile adds a file with its SHA-256 ("none" for no file).
func (p *reviewProv) addFile(label, path string) {
	if path == "" {
		p.add(label, "none")
		return
	}
	p.add(label, path)
	sum, err := reference.FileSHA256(path)
	if err != nil {
		sum = "could not be read: " + userMessage(err)
	}
	p.add(label+" SHA-256", sum)
}

// newProvenance starts a run's provenance: tool, time, command and the
// options given, the reference set.
func newProvenance(cmd *cobra.Command, refPath string, set *reference.Set) *reviewProv {
	p := &reviewProv{}
	p.add("Tool", "huesolve "+version)
	when := time.Now
	if fixed, err := sourceDateEpoch(); err == nil && fixed != nil {
		when = fixed
	}
	p.add("Report written (UTC)", when().UTC().Format(time.RFC3339))
	p.add("Command", "huesolve "+cmd.Name())
	var given []string
	cmd.Flags().Visit(func(f *pflag.Flag) {
		given = append(given, "--"+f.Name+" "+f.Value.String())
	})
	if len(given) == 0 {
		given = []string{"none"}
	}
	p.add("Options given", strings.Join(given, " "))
	p.addFile("Reference set", refPath)
	pv := set.Provenance
	p.add("Reference set built", fmt.Sprintf("%s by %s %s from %s", pv.Created, pv.Tool, pv.Version, pv.Sheet))
	return p
}

// addFit adds the settings of the fit in force.
func (p *reviewProv) addFit(fit *fitFlags, set *reference.Set, window []float64) {
	if len(window) > 0 {
		p.add("Window (nm)", fmt.Sprintf("%g-%g (%d points)", window[0], window[len(window)-1], len(window)))
	}
	p.add("Baseline", fit.baseline)
	p.add("Weighted", yesNo(fit.weighted))
	if fit.shift {
		p.add("Shift", fmt.Sprintf("estimated, up to %g nm", fit.maxShift))
	} else {
		p.add("Shift", "not estimated")
	}
	ceiling := fit.ceiling
	if ceiling == 0 {
		ceiling = set.Ceiling
	}
	p.add("Ceiling (A)", fmt.Sprintf("%g", ceiling))
}

// addRun adds what the run's record (the one the CSV and JSON files
// carry) says beyond the fields above: the method with its checksum, the
// options given over it, and each input file's SHA-256 after its path.
func (p *reviewProv) addRun(run *provenance.Run) {
	if run == nil {
		return
	}
	sums := map[string]string{}
	for _, in := range run.Inputs {
		if in.SHA256 != "" {
			sums[in.Path] = in.SHA256
		}
	}
	for i, f := range p.fields {
		if sum, ok := sums[f.Value]; ok && strings.HasPrefix(f.Label, "Input ") {
			p.fields[i].Value += " (SHA-256 " + sum + ")"
		}
	}
	if run.Method != nil {
		p.add("Method", run.Method.Path)
		p.add("Method checksum", run.Method.Checksum)
	}
	for _, o := range run.Overrides {
		p.add("Option over the method", "--"+o.Name+" "+o.Value+" (method: "+o.Method+")")
	}
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// reviewContext is the report's context: provenance, set, merits of the
// design (or why there are none) and cautions.
func reviewContext(command string, p *reviewProv, set *reference.Set, merits *validate.Merits, meritErr error) report.ReviewContext {
	ctx := report.ReviewContext{Command: command, Provenance: p.fields, Set: set, Merits: merits, Cautions: reviewCautions()}
	if merits == nil && meritErr != nil {
		ctx.MeritsNote = "The figures of merit could not be computed: " + userMessage(meritErr)
	}
	return ctx
}

// solveReview is solve's part of --report: the collector, and the
// provenance gathered while loading.
type solveReview struct {
	flag reviewFlag
	rev  *report.SolveReview
	prov *reviewProv
	run  *provenance.Run // the run's record, once made
	set  *reference.Set
	mopt unmix.Options
}

// on reports whether --report was given.
func (s *solveReview) on() bool { return s.flag.path != "" }

// start makes the collector once the model is known.
func (s *solveReview) start(cmd *cobra.Command, o *solveOptions, refPath string, set *reference.Set, m *unmix.Model, mopt unmix.Options, inputs []batch.Input) {
	s.rev = report.NewSolveReview(report.LayoutOf(m))
	s.set, s.mopt = set, mopt
	p := newProvenance(cmd, refPath, set)
	p.addFile("Blank", o.scans.blank)
	p.addFit(&o.fit, set, m.Window())
	p.add("Dilution (unless the sample sheet says)", fmt.Sprintf("%g", o.dilution))
	path := "the reference set's"
	if o.pathCM != 0 {
		path = fmt.Sprintf("%g cm", o.pathCM)
	}
	p.add("Path length (unless the sample sheet says)", path)
	p.addFile("Sample sheet", o.samples)
	p.add("Input files", strconv.Itoa(len(inputs)))
	for i, in := range inputs {
		p.add("Input "+strconv.Itoa(i+1), in.Path)
	}
	s.prov = p
}

// write writes the report of the run.
func (s *solveReview) write(errw io.Writer) error {
	s.prov.addRun(s.run)
	merits, err := validate.ModelMerits(s.set, s.mopt)
	ctx := reviewContext("solve", s.prov, s.set, merits, err)
	return s.flag.write(errw, func(w io.Writer) error { return s.rev.WriteHTML(w, ctx) })
}

// compoundNames lists the set's compounds in order.
func compoundNames(set *reference.Set) []string {
	out := make([]string, len(set.Compounds))
	for i, c := range set.Compounds {
		out[i] = c.Name
	}
	return out
}

// verifyProvenance is what verify's review report says about its run.
func verifyProvenance(cmd *cobra.Command, o *verifyOptions, refPath, checksPath string, set *reference.Set, v *validate.Verification) *reviewProv {
	p := newProvenance(cmd, refPath, set)
	p.addFile("Check standards sheet", checksPath)
	p.addFile("Blank", o.scans.blank)
	p.add("Blank used", v.Blank)
	if m := v.Merits; m != nil {
		p.add("Window (nm)", fmt.Sprintf("%g-%g (%d points)", m.WindowLo, m.WindowHi, m.Points))
	}
	p.addFit(&o.fit, set, nil)
	lim := v.Limits
	p.add("Acceptance", fmt.Sprintf("mean recovery %g-%g %%, RSD at most %g %%", lim.RecoveryLo, lim.RecoveryHi, lim.MaxRSD))
	p.add("Least selectivity", fmt.Sprintf("%g", o.minSelectivity))
	p.addFile("Cross-validation sheet", o.crossval)
	return p
}
