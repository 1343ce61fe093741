package main

// --report FILE of solve and verify: a review report in one
// self-contained HTML file, made by report (SolveReview, VerifyReview)
// from the run's results and the provenance gathered here.

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"github.com/spf13/pflag"

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

// reviewProv is what a review report says about its run: the fields of
// the run's record (provenance.Run, the same record the CSV and JSON
// files carry), and a few lines only the page shows.
type reviewProv struct {
	fields []report.Field
}

func (p *reviewProv) add(label, value string) {
	p.fields = append(p.fields, report.Field{Label: label, Value: value})
}

// runProvenance is the page's provenance: the run's record field by
// field, then when and by what the reference set was built.
func runProvenance(run *provenance.Run, set *reference.Set) *reviewProv {
	p := &reviewProv{}
	if run != nil {
		for _, f := range run.Fields() {
			p.add(f.Label, f.Value)
		}
	}
	pv := set.Provenance
	p.add("Reference set built", fmt.Sprintf("%s by %s %s from %s", pv.Created, pv.Tool, pv.Version, pv.Sheet))
	return p
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
	flag   reviewFlag
	rev    *report.SolveReview
	window []float64       // the fit's wavelengths
	run    *provenance.Run // the run's record, once made
	set    *reference.Set
	mopt   unmix.Options
}

// on reports whether --report was given.
func (s *solveReview) on() bool { return s.flag.path != "" }

// start makes the collector once the model is known.
func (s *solveReview) start(m *unmix.Model, set *reference.Set, mopt unmix.Options) {
	s.rev = report.NewSolveReview(report.LayoutOf(m))
	s.set, s.mopt, s.window = set, mopt, m.Window()
}

// write writes the report of the run.
func (s *solveReview) write(errw io.Writer) error {
	p := runProvenance(s.run, s.set)
	if w := s.window; len(w) > 0 {
		p.add("Points in the window", fmt.Sprintf("%d (%g-%g nm)", len(w), w[0], w[len(w)-1]))
	}
	merits, err := validate.ModelMerits(s.set, s.mopt)
	ctx := reviewContext("solve", p, s.set, merits, err)
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
