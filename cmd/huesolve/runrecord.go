package main

// The provenance record of a run (provenance.Run) that solve, verify and
// window write into their CSV and JSON files, and the method files
// (--method, --save-method) whose settings they take and record.

import (
	"encoding/hex"
	"fmt"
	"os"
	"strconv"
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"huesolve/internal/bytesize"
	"huesolve/method"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// argsKey is the context key under which execute keeps the command-line
// arguments, for the run's record.
type argsKey struct{}

// newRun starts the record of the run of cmd: tool, version, the time
// (SOURCE_DATE_EPOCH when set, as calibrate takes it) and the command
// line as typed.
func newRun(cmd *cobra.Command) (*provenance.Run, error) {
	now, err := sourceDateEpoch()
	if err != nil {
		return nil, err
	}
	if now == nil {
		now = time.Now
	}
	args, _ := cmd.Context().Value(argsKey{}).([]string)
	return &provenance.Run{
		Tool:    "huesolve",
		Version: version,
		Time:    now().UTC().Format(time.RFC3339),
		Command: provenance.Command("huesolve", args),
		Inputs:  []provenance.File{},
	}, nil
}

// hashed is the record of the file at path with its SHA-256 (or, when it
// cannot be read, the reason); role says what it was for.
func hashed(role, path string) provenance.File {
	f := provenance.File{Role: role, Path: path}
	if st, err := os.Stat(path); err == nil && st.Size() > spectrum.DefaultMaxFileBytes {
		// Refused by the reader before it reads a byte: hashing it
		// would read gigabytes for nothing.
		f.Note = "not read: larger than " + bytesize.Text(spectrum.DefaultMaxFileBytes)
		return f
	}
	sum, err := reference.FileSHA256(path)
	if err != nil {
		f.Note = "could not be read"
		return f
	}
	f.SHA256 = sum
	return f
}

// inputRecord is the record of an input file of a batch from the digest
// its reader took of the bytes it parsed (batch.Outcome.Digest): the
// file is read once, and the SHA-256 is that of the content the results
// come from. The notes are those of hashed.
func inputRecord(path string, d *spectrum.Digest) provenance.File {
	f := provenance.File{Path: path}
	switch {
	case d.Read:
		f.SHA256 = hex.EncodeToString(d.SHA256[:])
	case d.TooLarge:
		f.Note = "not read: larger than " + bytesize.Text(spectrum.DefaultMaxFileBytes)
	default:
		f.Note = "could not be read"
	}
	return f
}

// recordInput adds the input file path, read as d says, to l.
func recordInput(l *provenance.InputList, path string, d *spectrum.Digest) {
	if d.Read {
		l.Add(path, &d.SHA256, "")
		return
	}
	l.Add(path, nil, inputRecord(path, d).Note)
}

// recordSet records the reference set read from path (and the method,
// when one named it).
func (mf *methodFlags) recordSet(run *provenance.Run, set *reference.Set, path string) {
	run.Reference = &provenance.File{Path: path, Checksum: set.Checksum}
	if mf.m != nil {
		run.Method = &provenance.File{Path: mf.use, Checksum: mf.m.Checksum}
		run.Overrides = mf.overrides
	}
}

// fitSettings are the settings of the fit in force, defaults resolved
// (the window left to the whole grid is the grid's range, the ceiling
// left to the set's is the set's), in the options' syntax: given as
// options, they make the same fit.
func fitSettings(fit *fitFlags, scans *scanFlags, set *reference.Set, opt unmix.Options) []provenance.Setting {
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	lo, hi := opt.WindowLo, opt.WindowHi
	if hi == 0 {
		lo, hi = set.Grid[0], set.Grid[len(set.Grid)-1]
	}
	ceiling := fit.ceiling
	if ceiling == 0 {
		ceiling = set.Ceiling
	}
	shift := "false"
	if fit.shift {
		shift = "true"
	}
	s := []provenance.Setting{
		{Name: "window", Value: g(lo) + "-" + g(hi)},
		{Name: "baseline", Value: fitBaselineName(opt)},
		{Name: "weighted", Value: strconv.FormatBool(fit.weighted)},
		{Name: "shift", Value: shift},
	}
	if fit.shift {
		s = append(s, provenance.Setting{Name: "max-shift", Value: g(fit.maxShift)})
	}
	q := scans.quantity
	if q == "" {
		q = "as each file says (absorbance when it does not)"
	}
	return append(s,
		provenance.Setting{Name: "ceiling", Value: g(ceiling)},
		provenance.Setting{Name: "quantity", Value: q})
}

// pathSetting is the --path-cm in force: the reference set's when 0.
func pathSetting(pathCM float64, set *reference.Set) provenance.Setting {
	if pathCM == 0 {
		pathCM = set.PathCM
	}
	return provenance.Setting{Name: "path-cm", Value: strconv.FormatFloat(pathCM, 'g', -1, 64)}
}

// methodFlags are --method (solve, verify) and --save-method (window,
// verify), and the method read.
type methodFlags struct {
	use       string
	save      string
	m         *method.Method
	overrides []provenance.Override
}

// addUse binds --method.
func (mf *methodFlags) addUse(fs *pflag.FlagSet) {
	fs.StringVar(&mf.use, "method", "", "method `FILE` (window, verify or sequence --save-method) giving the reference set and settings; options given override it")
}

// addSave binds --save-method.
func (mf *methodFlags) addSave(fs *pflag.FlagSet, what string) {
	fs.StringVar(&mf.save, "save-method", "", "save "+what+" as a method `FILE` for solve, verify and sequence --method")
}

// methodValues are the method's settings as the values of the options
// that take them; the history file of a method read from path is taken
// from the method file's folder.
func methodValues(m *method.Method, path string) []provenance.Setting {
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	f := &m.Fit
	var s []provenance.Setting
	add := func(name, value string) { s = append(s, provenance.Setting{Name: name, Value: value}) }
	if f.WindowNM != nil {
		add("window", g(f.WindowNM[0])+"-"+g(f.WindowNM[1]))
	}
	add("baseline", f.Baseline)
	add("weighted", strconv.FormatBool(f.Weighted))
	add("shift", strconv.FormatBool(f.Shift))
	add("max-shift", g(f.MaxShiftNM))
	add("ceiling", g(f.Ceiling))
	if f.Quantity != "" {
		add("quantity", f.Quantity)
	}
	add("path-cm", g(f.PathCM))
	if a := m.Acceptance; a != nil {
		add("recovery", g(a.RecoveryLoPct)+"-"+g(a.RecoveryHiPct))
		add("max-rsd", g(a.MaxRSDPct))
		add("min-selectivity", g(a.MinSelectivity))
	}
	if r := m.Report; r != nil {
		if r.Basis != "" {
			add("basis", r.Basis)
		}
		if r.MaxRepRSDPct != 0 {
			add("max-rep-rsd", g(r.MaxRepRSDPct))
		}
		if p := m.RecordPath(path); p != "" {
			add("record", p)
		}
	}
	return s
}

// methodReport is the reporting section to save with the method: each of
// --basis, --max-rep-rsd and --record that the command has, as in force
// (given, or from --method; --max-rep-rsd only when one of them set it),
// else the --method file's value; the history file's path is written
// relative to the new method file's folder. nil when none is set.
func (mf *methodFlags) methodReport(fs *pflag.FlagSet) *method.Report {
	var r method.Report
	if mf.m != nil && mf.m.Report != nil {
		r = *mf.m.Report
		if p := mf.m.RecordPath(mf.use); p != "" {
			r.Record = method.RelativePath(mf.save, p)
		}
	}
	if fl := fs.Lookup("basis"); fl != nil {
		r.Basis = fl.Value.String()
	}
	if fl := fs.Lookup("max-rep-rsd"); fl != nil && (fl.Changed || r.MaxRepRSDPct != 0) {
		if v, err := strconv.ParseFloat(fl.Value.String(), 64); err == nil {
			r.MaxRepRSDPct = v
		}
	}
	if fl := fs.Lookup("record"); fl != nil {
		r.Record = ""
		if v := fl.Value.String(); v != "" {
			r.Record = method.RelativePath(mf.save, v)
		}
	}
	if r == (method.Report{}) {
		return nil
	}
	return &r
}

// checkSave refuses --save-method - (a method is a file to keep, and
// standard output may hold the results).
func (mf *methodFlags) checkSave() error {
	if mf.save == "-" {
		return usagef("--save-method -: give a file name; a method is not written to standard output")
	}
	return nil
}

// apply reads the --method file, if one was given, and gives each option
// of fs that it holds and the command line did not set the method's
// value; an option set to another value is recorded as an override.
func (mf *methodFlags) apply(fs *pflag.FlagSet) error {
	if mf.use == "" {
		return nil
	}
	m, err := method.Load(mf.use)
	if err != nil {
		return err
	}
	mf.m = m
	for _, v := range methodValues(m, mf.use) {
		fl := fs.Lookup(v.Name)
		switch {
		case fl == nil:
		case fl.Changed:
			if given := fl.Value.String(); given != v.Value {
				mf.overrides = append(mf.overrides, provenance.Override{Name: v.Name, Value: given, Method: v.Value})
			}
		default:
			// Value.Set, not FlagSet.Set: the option stays "not given",
			// as for its default.
			if err := fl.Value.Set(v.Value); err != nil {
				return fmt.Errorf("%s: %s %q: %w", mf.use, v.Name, v.Value, err)
			}
		}
	}
	return mf.applyInterferents(fs)
}

// refPath is the reference set's path: the method's (resolved from its
// folder) with --method, else the argument.
func (mf *methodFlags) refPath(arg string) string {
	if mf.m != nil {
		return mf.m.ReferencePath(mf.use)
	}
	return arg
}

// loadSet loads the reference set: with --method the method's, refused
// when its checksum is not the method's.
func (mf *methodFlags) loadSet(path string) (*reference.Set, error) {
	if mf.m != nil {
		set, _, err := mf.m.LoadSet(mf.use)
		return set, err
	}
	return reference.Load(path)
}

// saveMethod writes the --save-method file: the reference set (by
// checksum, its path relative to the method file), the fit, the
// acceptance limits and the reporting section (methodReport); it says so
// on standard error.
func (mf *methodFlags) saveMethod(cmd *cobra.Command, run *provenance.Run, refPath string, set *reference.Set, fit method.Fit, acc *method.Acceptance) error {
	m := &method.Method{
		Reference:  method.Reference{Path: method.RelativePath(mf.save, refPath), Checksum: set.Checksum},
		Fit:        fit,
		Acceptance: acc,
		Report:     mf.methodReport(cmd.Flags()),
		Provenance: method.Provenance{Tool: run.Tool, Version: run.Version, Created: run.Time, Command: run.Command},
	}
	if err := m.Save(mf.save); err != nil {
		return err
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "huesolve: method written to %s (reference set %s, checksum %.12s...)\n", mf.save, refPath, set.Checksum)
	return nil
}

// methodFit is the fit of a method from the fit flags in force (checked).
func methodFit(fit *fitFlags, opt unmix.Options, quantity string, pathCM float64) method.Fit {
	f := method.Fit{Baseline: fitBaselineName(opt), Weighted: fit.weighted, Shift: fit.shift,
		MaxShiftNM: fit.maxShift, Ceiling: fit.ceiling, Quantity: quantity, PathCM: pathCM}
	if opt.WindowHi > 0 {
		f.WindowNM = &[2]float64{opt.WindowLo, opt.WindowHi}
	}
	return f
}

// fitBaselineName is the --baseline value a model's options stand for:
// "auto" for the automatic model (whose Baseline is its floor), else the
// fixed model's name.
func fitBaselineName(opt unmix.Options) string {
	if opt.Auto {
		return valAutoBaseline
	}
	return opt.Baseline.String()
}

// setOrMethodArgs checks the arguments of a command taking a reference
// set and a sheet, or --method FILE and the sheet alone, and calls run
// with the set's path ("" with --method) and the sheet's.
func setOrMethodArgs(mf *methodFlags, sheet string, run func(cmd *cobra.Command, refPath, sheet string) error) func(*cobra.Command, []string) error {
	return func(cmd *cobra.Command, args []string) error {
		if mf.use != "" {
			if err := wantArgs(1, 1, sheet+" with --method")(cmd, args); err != nil {
				return err
			}
			return run(cmd, "", args[0])
		}
		if err := wantArgs(2, 2, "a reference set (or --method FILE) and "+sheet)(cmd, args); err != nil {
			return err
		}
		return run(cmd, args[0], args[1])
	}
}
