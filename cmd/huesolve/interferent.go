package main

import (
	"fmt"
	"path/filepath"
	"strings"

	"github.com/spf13/pflag"

	"huesolve/baseline"
	"huesolve/method"
	"huesolve/provenance"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// readInterferents reads the --interferent files, one scan each, named by
// the file's base name (which must differ from file to file).
func readInterferents(files []string, q spectrum.Quantity, warn func(string)) ([]unmix.Interferent, error) {
	var out []unmix.Interferent
	seen := map[string]string{}
	for _, file := range files {
		ss, err := spectrum.ReadFile(file, spectrum.ReadOptions{Quantity: q, Warn: warn})
		if err != nil {
			return nil, fmt.Errorf("--interferent: %w", err)
		}
		if len(ss) != 1 {
			return nil, fmt.Errorf("--interferent: %s holds %d scans; give a file with one", file, len(ss))
		}
		name := filepath.Base(file)
		if prev, ok := seen[name]; ok {
			return nil, usagef("--interferent: %s and %s have the same name %q; rename one", prev, file, name)
		}
		seen[name] = file
		it, err := unmix.NewInterferent(ss[0], name)
		if err != nil {
			return nil, fmt.Errorf("--interferent %s: %w", file, err)
		}
		out = append(out, it)
	}
	return out, nil
}

// storedInterferents reads calibrate's --interferent files into the form
// a reference set stores them in: the scan in absorbance with its file
// and SHA-256.
func storedInterferents(files []string, q spectrum.Quantity, warn func(string)) ([]reference.Interferent, error) {
	its, err := readInterferents(files, q, warn)
	if err != nil {
		return nil, err
	}
	var out []reference.Interferent
	for i, it := range its {
		sum, err := reference.FileSHA256(files[i])
		if err != nil {
			return nil, fmt.Errorf("--interferent %s: %w", files[i], err)
		}
		out = append(out, it.ToStored(files[i], sum))
	}
	return out, nil
}

// checkStoredInterferents refuses a set whose stored interferents the fit
// could not use: a scan that does not cover the set's grid, or that a
// compound, the offset or another interferent reproduces (unmix.NewModel
// with the offset baseline, the automatic model's floor, on the whole
// grid).
func checkStoredInterferents(set *reference.Set, files []string) error {
	if len(set.Interferents) == 0 {
		return nil
	}
	bl, err := baseline.ParseModel(valDefaultBaseline)
	if err != nil {
		return err
	}
	if _, err := unmix.NewModel(set, unmix.Options{Baseline: bl}); err != nil {
		return fmt.Errorf("--interferent %s: the set cannot store it: %w", strings.Join(files, ", "), err)
	}
	return nil
}

// interferentNote is the note solve and verify give when the reference
// set stores interferents: they are fitted in every sample.
func interferentNote(set *reference.Set, note func(string)) {
	if len(set.Interferents) == 0 {
		return
	}
	var names []string
	for _, it := range set.Interferents {
		names = append(names, it.Name)
	}
	note(fmt.Sprintf("the reference set stores %s %s (calibrate --interferent): fitted in every sample with its own amount",
		plural(len(names), "interferent", "interferents"), strings.Join(names, ", ")))
}

// recordInterferents lists in the run's record the interferents the set
// stores (with the file and SHA-256 it recorded) and those given with
// --interferent (hashed now).
func recordInterferents(run *provenance.Run, set *reference.Set, given []string) {
	for _, it := range set.Interferents {
		run.Interferents = append(run.Interferents, provenance.File{Role: "stored in the reference set", Path: it.File, SHA256: it.SHA256})
	}
	for _, f := range given {
		run.Interferents = append(run.Interferents, hashed("", f))
	}
}

// methodInterferents are the --interferent files as a method saved to
// methodPath records them: the path relative to its folder and the
// file's SHA-256.
func methodInterferents(methodPath string, files []string) ([]method.Interferent, error) {
	var out []method.Interferent
	for _, f := range files {
		sum, err := reference.FileSHA256(f)
		if err != nil {
			return nil, fmt.Errorf("--interferent %s: %w", f, err)
		}
		out = append(out, method.Interferent{Path: method.RelativePath(methodPath, f), SHA256: sum})
	}
	return out, nil
}

// applyInterferents gives --interferent the method's files (checked
// against their SHA-256) when the command line gave none; files given are
// recorded as an override.
func (mf *methodFlags) applyInterferents(fs *pflag.FlagSet) error {
	fl := fs.Lookup("interferent")
	if fl == nil || len(mf.m.Fit.Interferents) == 0 {
		return nil
	}
	var saved []string
	for _, it := range mf.m.Fit.Interferents {
		saved = append(saved, it.Path)
	}
	if fl.Changed {
		given, _ := fs.GetStringArray("interferent")
		mf.overrides = append(mf.overrides, provenance.Override{Name: "interferent", Value: strings.Join(given, ", "), Method: strings.Join(saved, ", ")})
		return nil
	}
	paths, err := mf.m.InterferentPaths(mf.use)
	if err != nil {
		return err
	}
	for _, p := range paths {
		if err := fl.Value.Set(p); err != nil {
			return err
		}
	}
	return nil
}
