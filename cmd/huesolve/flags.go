package main

// Flags shared by several commands: the options of the fit (solve, verify
// and, for the design alone, window), how scan files are read (blank,
// quantity, unit) and where results go (format, -o, plots). Each command
// binds the groups that apply to it, so a flag has the same name, default,
// help text and checks wherever it appears.

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"huesolve/baseline"
	"huesolve/internal/atomicfile"
	"huesolve/method"
	"huesolve/reference"
	"huesolve/report"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Bounds on the fit flags. They catch typing mistakes, not chemistry.
const (
	// maxShiftLimitNM bounds --max-shift (the method file's bound).
	maxShiftLimitNM = method.MaxShiftLimitNM
)

// valDefaultBaseline is the baseline model solve, verify and window use
// when none is given, and inspect and calibrate judge the set with: an
// offset.
const valDefaultBaseline = "offset"

// fitFlags are the options of the sample fit.
type fitFlags struct {
	window   string
	baseline string
	weighted bool
	shift    bool
	maxShift float64
	ceiling  float64
}

// valAutoBaseline is the --baseline value that chooses each sample's
// nuisance model (unmix.Options.Auto), the default of solve and verify.
const valAutoBaseline = method.AutoBaseline

// addDesign binds --baseline and --weighted, which fix the design of the
// fit (window predicts errors from them, with a fixed model only).
func (f *fitFlags) addDesign(fs *pflag.FlagSet) {
	fs.StringVar(&f.baseline, "baseline", valDefaultBaseline, "baseline `MODEL`: none, offset, linear, quadratic or cubic, optionally +scatter[=POWER]")
	fs.BoolVar(&f.weighted, "weighted", false, "weight wavelengths by the reference set's noise model")
}

// add binds every fit flag (solve, verify); --baseline defaults to auto.
func (f *fitFlags) add(fs *pflag.FlagSet) {
	fs.StringVar(&f.baseline, "baseline", valAutoBaseline, "baseline `MODEL`: auto (per sample, the smallest of offset, linear, quadratic, +scatter and a shift that the data need: F-test at p < 0.001), or a fixed none, offset, linear, quadratic or cubic, optionally +scatter[=POWER]")
	fs.BoolVar(&f.weighted, "weighted", false, "weight wavelengths by the reference set's noise model")
	fs.StringVar(&f.window, "window", "", "wavelength window `LO-HI` in nm for the fit (default: the whole reference grid)")
	fs.BoolVar(&f.shift, "shift", false, "estimate a wavelength shift of each scan")
	fs.Float64Var(&f.maxShift, "max-shift", unmix.DefaultMaxShiftNM, "largest shift in nm that --shift may find")
	fs.Float64Var(&f.ceiling, "ceiling", 0, "absorbance above which points are left out (0 or unset: the reference set's ceiling)")
}

// unusedNote returns a note when --max-shift was given without --shift,
// which alone uses it ("" otherwise).
func (f *fitFlags) unusedNote(cmd *cobra.Command) string {
	if !f.shift && !f.auto() && cmd.Flags().Changed("max-shift") {
		return fmt.Sprintf("--max-shift %g has no effect without --shift: no shift is estimated", f.maxShift)
	}
	return ""
}

// auto reports whether --baseline asks for the automatic model.
func (f *fitFlags) auto() bool {
	return strings.EqualFold(strings.TrimSpace(f.baseline), valAutoBaseline)
}

// baselineModel parses --baseline as a fixed model.
func (f *fitFlags) baselineModel() (baseline.Model, error) {
	m, err := baseline.ParseModel(f.baseline)
	if err != nil {
		return m, usagef("--baseline %q: %w", f.baseline, err)
	}
	return m, nil
}

// options checks the flags bound by add and returns them as model options
// (no blank yet).
func (f *fitFlags) options() (unmix.Options, error) {
	opt := unmix.Options{Weighted: f.weighted, Shift: f.shift, MaxShiftNM: f.maxShift, Ceiling: f.ceiling}
	var err error
	if f.window != "" {
		if opt.WindowLo, opt.WindowHi, err = parseWindowFlag(f.window); err != nil {
			return opt, err
		}
	}
	if f.auto() {
		// The selection starts from an offset: a blank that differs from
		// the sample's solvent by a constant is the rule (common practice).
		opt.Auto = true
		opt.Baseline = baseline.Model{Degree: 0}
	} else if opt.Baseline, err = f.baselineModel(); err != nil {
		return opt, err
	}
	if !(f.maxShift > 0) || f.maxShift > maxShiftLimitNM {
		return opt, usagef("--max-shift %g: want a number of nm above 0 and at most %d", f.maxShift, maxShiftLimitNM)
	}
	if !(f.ceiling >= 0) || f.ceiling > reference.MaxCeiling {
		return opt, usagef("--ceiling %g: want an absorbance above 0 and at most %d (0: the reference set's)", f.ceiling, reference.MaxCeiling)
	}
	return opt, nil
}

// checkFitCommand checks the flag groups that solve and verify share and
// returns the model options (no blank yet) and the quantity of unlabelled
// scan files.
func checkFitCommand(fit *fitFlags, scans *scanFlags, out *outputFlags) (unmix.Options, spectrum.Quantity, error) {
	opt, err := fit.options()
	if err != nil {
		return opt, 0, err
	}
	q, err := scans.parseQuantity()
	if err != nil {
		return opt, q, err
	}
	return opt, q, out.check()
}

// parseWindowFlag reads the --window range "LO-HI" (or "LO:HI") in nm.
func parseWindowFlag(s string) (lo, hi float64, err error) {
	return parseRangeFlag("--window", s, "nm", "400-700", 1e6)
}

// parseRangeFlag reads the range "LO-HI" (or "LO:HI") given to flag,
// with 0 < LO < HI <= max; unit and example go into the message.
func parseRangeFlag(flag, s, unit, example string, max float64) (lo, hi float64, err error) {
	s = strings.TrimSpace(s)
	sep := strings.IndexAny(s[min(1, len(s)):], "-:")
	if sep < 0 {
		return 0, 0, usagef("%s %q: want LO-HI in %s, e.g. %s", flag, s, unit, example)
	}
	sep += min(1, len(s))
	lo, err1 := strconv.ParseFloat(strings.TrimSpace(s[:sep]), 64)
	hi, err2 := strconv.ParseFloat(strings.TrimSpace(s[sep+1:]), 64)
	if err1 != nil || err2 != nil || !(lo > 0) || !(hi > lo) || hi > max {
		return 0, 0, usagef("%s %q: want LO-HI in %s with 0 < LO < HI, e.g. %s", flag, s, unit, example)
	}
	return lo, hi, nil
}

// scanFlags say how scan files are read: a separate blank, the quantity of
// unlabelled files and the unit of unlabelled compounds.
type scanFlags struct {
	blank    string
	quantity string
	unit     string
}

// add binds --blank and --quantity; from says what the blank is
// subtracted from in this command, e.g. "every sample".
func (s *scanFlags) add(fs *pflag.FlagSet, from string) {
	fs.StringVar(&s.blank, "blank", "", "blank scan `FILE` subtracted from "+from)
	s.addQuantity(fs)
}

// addQuantity binds --quantity only (look, convert).
func (s *scanFlags) addQuantity(fs *pflag.FlagSet) {
	fs.StringVar(&s.quantity, "quantity", "", "what the scan files hold when they do not say: absorbance, %T or T")
}

// addUnit binds --unit (commands that read a standards sheet).
func (s *scanFlags) addUnit(fs *pflag.FlagSet) {
	fs.StringVar(&s.unit, "unit", "", "concentration unit for compounds whose header gives none, e.g. mg/L")
}

// parseQuantity parses --quantity.
func (s *scanFlags) parseQuantity() (spectrum.Quantity, error) {
	q, err := spectrum.ParseQuantity(s.quantity)
	if err != nil {
		return q, usagef("--quantity: %w", err)
	}
	return q, nil
}

// readBlank reads the --blank file (nil when none is given) as absorbance,
// with its SHA-256.
func (s *scanFlags) readBlank(q spectrum.Quantity, warn func(string)) (*spectrum.Spectrum, string, error) {
	if s.blank == "" {
		return nil, "", nil
	}
	ss, err := spectrum.ReadFile(s.blank, spectrum.ReadOptions{Quantity: q, Warn: warn})
	if err != nil {
		return nil, "", fmt.Errorf("blank: %w", err)
	}
	if len(ss) != 1 {
		return nil, "", fmt.Errorf("blank: %s holds %d scans; give a file with one", s.blank, len(ss))
	}
	b := ss[0]
	if err := b.ToAbsorbance(); err != nil {
		return nil, "", fmt.Errorf("blank: %w", err)
	}
	sum, err := reference.FileSHA256(s.blank)
	if err != nil {
		return nil, "", fmt.Errorf("blank: %w", err)
	}
	return b, sum, nil
}

// outputFlags say where results go: the format and file of the output,
// and the folder and format of the plots.
type outputFlags struct {
	format     string
	out        string
	plots      string
	plotFormat string
	// flags is the command's flag set (from add), asked whether it has
	// --report for the hint on an -o NAME.html.
	flags *pflag.FlagSet
}

// add binds --format, -o/--output, --plots and --plot-format; plotsHelp
// says what the command draws, e.g. "one figure per sample".
func (o *outputFlags) add(fs *pflag.FlagSet, plotsHelp string) {
	o.addFormat(fs)
	o.addPlots(fs, plotsHelp)
}

// addFormat binds --format and -o/--output only (sequence, which draws
// no plots).
func (o *outputFlags) addFormat(fs *pflag.FlagSet) {
	o.flags = fs
	o.plotFormat = "png"
	fs.StringVar(&o.format, "format", "", "output format: table, csv or json (default: from the -o file's extension, .csv, .json or .txt; else table)")
	fs.StringVarP(&o.out, "output", "o", "", "write the output to `FILE` instead of standard output (- for standard output; NAME.html: the review report, where there is one)")
}

// addPlots binds --plots and --plot-format only (calibrate, whose -o is
// the reference set).
func (o *outputFlags) addPlots(fs *pflag.FlagSet, plotsHelp string) {
	fs.StringVar(&o.plots, "plots", "", "write "+plotsHelp+" into `DIR`")
	fs.StringVar(&o.plotFormat, "plot-format", "png", "plot format: png or svg")
}

// check validates --format and --plot-format and leaves them in lower
// case. Without --format the -o file's extension picks the format
// (formatOfName); a --format that contradicts a .csv or .json name is
// refused. An .html name is the review report (--report NAME.html) where
// the command has one, the table then going to standard output; other
// commands refuse it.
func (o *outputFlags) check() error {
	given := strings.ToLower(o.format)
	switch given {
	case "", report.FormatTable, report.FormatCSV, report.FormatJSON:
	default:
		return usagef("--format %q: want table, csv or json", o.format)
	}
	named, strict := formatOfName(o.file())
	switch {
	case named == formatHTML:
		rep := o.reportFlag()
		switch {
		case rep == nil:
			return usagef("-o %s: -o writes a table, CSV or JSON, not an HTML page; name the file .csv, .json or .txt", o.out)
		case given != "":
			return usagef("-o %s names an HTML page but --format is %s; give one of them only", o.out, given)
		case rep.Value.String() != "":
			return usagef("-o %s and --report %s: give the HTML review report once", o.out, rep.Value.String())
		}
		// -o NAME.html is --report NAME.html; the table goes to
		// standard output as without -o.
		if err := rep.Value.Set(o.out); err != nil {
			return usagef("-o %s: %v", o.out, err)
		}
		o.out, o.format = "", report.FormatTable
	case given == "" && named != "":
		o.format = named
	case given == "":
		o.format = report.FormatTable
	case strict && named != given:
		return usagef("-o %s names a %s file but --format is %s; give one of them only, or make them agree", o.out, strings.ToUpper(named), given)
	default:
		o.format = given
	}
	return o.checkPlots()
}

// reportFlag is the command's --report flag, nil when it has none.
func (o *outputFlags) reportFlag() *pflag.Flag {
	if o.flags == nil {
		return nil
	}
	return o.flags.Lookup("report")
}

// formatHTML is what formatOfName returns for an .html or .htm name.
const formatHTML = "html"

// formatOfName is the output format an -o file name asks for by its
// extension (any case): .csv csv, .json json, .txt table, .html/.htm
// formatHTML; "" for any other name (the format is then --format's, or
// table). strict is true when the name leaves no choice (.csv, .json,
// .html): a .txt file may hold CSV or JSON when --format says so.
func formatOfName(name string) (format string, strict bool) {
	switch strings.ToLower(filepath.Ext(name)) {
	case ".csv":
		return report.FormatCSV, true
	case ".json":
		return report.FormatJSON, true
	case ".html", ".htm":
		return formatHTML, true
	case ".txt":
		return report.FormatTable, false
	}
	return "", false
}

// checkPlots validates --plot-format and leaves it in lower case.
func (o *outputFlags) checkPlots() error {
	switch f := strings.ToLower(o.plotFormat); f {
	case "png", "svg":
		o.plotFormat = f
	default:
		return usagef("--plot-format %q: want png or svg", o.plotFormat)
	}
	return nil
}

// write writes the output in the chosen format: data as indented JSON,
// or what writeCSV or writeTable write. With -o FILE the file is written
// complete or not at all, and standard error says so, naming what it
// holds; else the output goes to standard output.
func (o *outputFlags) write(cmd *cobra.Command, what string, data any, writeCSV, writeTable func(io.Writer) error) error {
	fn := func(w io.Writer) error {
		switch o.format {
		case report.FormatJSON:
			enc := json.NewEncoder(w)
			enc.SetIndent("", "  ")
			return enc.Encode(data)
		case report.FormatCSV:
			return writeCSV(w)
		default:
			return writeTable(w)
		}
	}
	if toStdout(o.out) {
		return fn(cmd.OutOrStdout())
	}
	if err := atomicfile.Write(o.out, fn); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "huesolve: %s written to %s\n", what, o.out)
	return nil
}

// file is the -o file, "" for standard output (-o - or none).
func (o *outputFlags) file() string {
	if toStdout(o.out) {
		return ""
	}
	return o.out
}

// makePlotDir creates the --plots folder.
func (o *outputFlags) makePlotDir() error {
	if err := os.MkdirAll(o.plots, 0o755); err != nil {
		return fmt.Errorf("--plots: %w", err)
	}
	return nil
}

// writePlots draws the plots with draw into the --plots folder, if one
// is given, and says how many were written.
func (o *outputFlags) writePlots(cmd *cobra.Command, draw func(dir, format string) ([]string, error)) error {
	if o.plots == "" {
		return nil
	}
	if err := o.makePlotDir(); err != nil {
		return err
	}
	files, err := draw(o.plots, o.plotFormat)
	if err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "huesolve: %d plots written to %s\n", len(files), o.plots)
	return nil
}

// checkPathFlag refuses a --path-cm outside unmix.MinPathCM to
// unmix.MaxPathCM; 0 (the reference set's path) passes.
func checkPathFlag(pathCM float64) error {
	if pathCM != 0 && unmix.CheckFactors(unmix.Factors{PathCM: pathCM}) != nil {
		return usagef("--path-cm %g: want a path length from %g to %g cm (0: the reference set's)", pathCM, float64(unmix.MinPathCM), float64(unmix.MaxPathCM))
	}
	return nil
}

// checkDilutionFlag refuses a --dilution outside unmix.MinDilution to
// unmix.MaxDilution.
func checkDilutionFlag(dilution float64) error {
	if unmix.CheckFactors(unmix.Factors{Dilution: dilution}) != nil || dilution == 0 {
		return usagef("--dilution %g: want a factor from %g to %g", dilution, float64(unmix.MinDilution), float64(unmix.MaxDilution))
	}
	return nil
}
