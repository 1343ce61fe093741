package main

// Notes and warnings of solve that need more than one line of code: what
// the reference set and the options imply for the results, which rows of
// the sample sheet were used, samples sharing a name, and scans too dark
// to read.

import (
	"fmt"
	"os"
	"strings"

	"huesolve/batch"
	"huesolve/reference"
	"huesolve/unmix"
)

// listCut is the most names a note lists before it gives the rest as a
// count ("and 12 more").
const listCut = 10

// nameList joins names, cut after listCut with a count of the rest.
func nameList(names []string) string {
	if len(names) <= listCut {
		return strings.Join(names, ", ")
	}
	return fmt.Sprintf("%s and %d more", strings.Join(names[:listCut], ", "), len(names)-listCut)
}

// solveSetNotes tells, before solving, what the reference set and the
// options imply: no blank, compounds whose calibration was flagged, and a
// smoothing pre-treatment that takes the Durbin-Watson flag out of play.
func solveSetNotes(set *reference.Set, model *unmix.Model, blank string, inputs []batch.Input, note, warn func(string)) {
	if blank == "" {
		note("no --blank given: the samples are fitted as read, without a blank subtracted")
	} else if bi, err := os.Stat(blank); err == nil {
		for _, in := range inputs {
			if fi, err := os.Stat(in.Path); err == nil && os.SameFile(bi, fi) {
				warn(fmt.Sprintf("the blank %s is also among the scans to solve: it is solved as a sample too", blank))
				break
			}
		}
	}
	var flagged []string
	for _, c := range set.Compounds {
		var fs []string
		for _, f := range c.Flags {
			if f == reference.FlagCurved || f == reference.FlagLackOfFit {
				fs = append(fs, string(f))
			}
		}
		if len(fs) > 0 {
			flagged = append(flagged, c.Name+" ("+strings.Join(fs, ", ")+")")
		}
	}
	if len(flagged) > 0 {
		warn(fmt.Sprintf("the reference set's calibration flags %s: results hold only within the stated linear range, and those above it are flagged over",
			nameList(flagged)))
	}
	if !model.DurbinWatsonFlagged() {
		var steps []string
		for _, st := range set.Pretreat {
			steps = append(steps, st.String())
		}
		note(fmt.Sprintf("the reference set's pre-treatment (%s) smooths the scans, which makes neighbouring residuals correlated: Durbin-Watson is reported but does not raise the pattern flag",
			strings.Join(steps, ", ")))
	}
}

// sheetNotes warns, after a run with a sample sheet (nil: none), about
// samples the sheet does not name and sheet rows no sample matched (a
// typing error in either, most often).
func sheetNotes(use *unmix.SheetUse, sheet *unmix.SampleSheet, warn func(string), dilution, pathCM float64) {
	if sheet == nil {
		return
	}
	if defaulted := use.Defaulted(); len(defaulted) > 0 {
		path := "the reference set's path"
		if pathCM > 0 {
			path = fmt.Sprintf("--path-cm %g", pathCM)
		}
		named := make([]string, len(defaulted))
		for i, n := range defaulted {
			named[i] = n
			if near, ok := sheet.Near(n); ok {
				named[i] = fmt.Sprintf("%s (the sheet has %s, line %d)", n, near, sheet.Line(near))
			}
		}
		warn(fmt.Sprintf("%d sample(s) not in the sample sheet %s took --dilution %g and %s and are flagged %s: %s",
			len(defaulted), sheet.File, dilution, path, unmix.FlagNotInSheet, nameList(named)))
	}
	var unused []string
	for _, n := range use.Unused() {
		unused = append(unused, fmt.Sprintf("%s (line %d)", n, sheet.Line(n)))
	}
	if len(unused) > 0 {
		warn(fmt.Sprintf("%d row(s) of the sample sheet %s matched no sample: %s", len(unused), sheet.File, nameList(unused)))
	}
}

// outcomeNotes watches the outcomes in order: it warns at once about a
// sample with readings too dark to convert, and remembers sample names to
// report those given by more than one scan.
type outcomeNotes struct {
	first map[string]scanPlace // sample name -> first scan
	dups  map[string][]scanPlace
	order []string
}

// scanPlace is where a sample came from: its file, and the file with the
// column ("file column 3") to tell apart samples of one wide file.
type scanPlace struct{ file, source string }

func newOutcomeNotes() *outcomeNotes {
	return &outcomeNotes{first: map[string]scanPlace{}, dups: map[string][]scanPlace{}}
}

// add takes one outcome (in input order).
func (n *outcomeNotes) add(out batch.Outcome, warn func(string)) {
	r := out.Result
	if r == nil {
		return
	}
	if r.DarkPoints > 0 {
		warn(fmt.Sprintf("%s: %s reads 0 %%T or below from %g nm (%d point(s) of the window): too dark to read there; those points are left out and the sample is flagged sat and dilute",
			out.File, r.Sample, r.DarkNM, r.DarkPoints))
	}
	here := scanPlace{file: out.File, source: r.Source}
	if here.source == "" {
		here.source = out.File
	}
	if f, ok := n.first[r.Sample]; !ok {
		n.first[r.Sample] = here
	} else {
		if len(n.dups[r.Sample]) == 0 {
			n.order = append(n.order, r.Sample)
			n.dups[r.Sample] = []scanPlace{f}
		}
		n.dups[r.Sample] = append(n.dups[r.Sample], here)
	}
}

// report warns about sample names given by more than one scan.
func (n *outcomeNotes) report(warn func(string)) {
	if len(n.order) == 0 {
		return
	}
	var items []string
	for _, s := range n.order {
		// File names alone, unless one file gave the name twice: then
		// the columns too.
		places := n.dups[s]
		files := make(map[string]bool, len(places))
		sameFile := false
		for _, p := range places {
			sameFile = sameFile || files[p.file]
			files[p.file] = true
		}
		where := make([]string, len(places))
		for i, p := range places {
			where[i] = p.file
			if sameFile {
				where[i] = p.source
			}
		}
		items = append(items, fmt.Sprintf("%s (%s)", s, strings.Join(where, ", ")))
	}
	warn(fmt.Sprintf("%d sample name(s) come from more than one scan, so their rows cannot be told apart by name: %s",
		len(n.order), nameList(items)))
}
