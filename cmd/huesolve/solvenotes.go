package main

// Notes and warnings of solve that need more than one line of code: what
// the reference set and the options imply for the results, which rows of
// the sample sheet were used, samples sharing a name, and scans too dark
// to read.

import (
	"errors"
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
	switch {
	case model.CalibrationIncluded():
	case set.AbsorptivityCov != nil:
		warn("the reference set records the absorptivities' covariance without the growth of the noise with absorbance that its noise model shows (as earlier builds wrote it, which understates the calibration's error of results near the top of the standards): it is not used, so the standard errors and intervals include the calibration's error only as far as it shows in each sample's residual; calibrate again to have it propagated (se_calibration)")
	default:
		note("the reference set was made before calibrate recorded the absorptivities' covariance: the standard errors and intervals include the calibration's error only as far as it shows in each sample's residual; calibrate again to have it propagated (se_calibration)")
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
// sample with readings too dark to convert, and remembers the samples
// batch renamed because an earlier scan had their name.
type outcomeNotes struct {
	renamed []string // "NEW (was NAME, FILE)"
}

func newOutcomeNotes() *outcomeNotes { return &outcomeNotes{} }

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
	if out.Renamed != "" {
		where := r.Source
		if where == "" {
			where = out.File
		}
		n.renamed = append(n.renamed, fmt.Sprintf("%s (%s)", out.Renamed, where))
	}
}

// report notes the samples renamed because their name was taken.
func (n *outcomeNotes) report(warn func(string)) {
	if len(n.renamed) == 0 {
		return
	}
	warn(fmt.Sprintf("%d sample(s) have a name an earlier scan already gave, and are named after their file or numbered in the results: %s",
		len(n.renamed), nameList(n.renamed)))
}

// coverageNotes gathers the scans refused for not covering the window, to
// name at the end the largest window every input covers.
type coverageNotes struct {
	n      int
	lo, hi float64 // the range every refused scan covers
}

// add takes an outcome's error.
func (c *coverageNotes) add(err error) {
	var ce *unmix.CoverageError
	if !errors.As(err, &ce) {
		return
	}
	if c.n == 0 {
		c.lo, c.hi = ce.ScanLo, ce.ScanHi
	}
	c.lo, c.hi = max(c.lo, ce.ScanLo), min(c.hi, ce.ScanHi)
	c.n++
}

// report warns, when scans were refused for coverage, with the largest
// window every input covers (the scans solved cover the whole window).
func (c *coverageNotes) report(m *unmix.Model, warn func(string)) {
	if c.n == 0 {
		return
	}
	msg := fmt.Sprintf("%d scan(s) do not cover the wavelengths the window needs", c.n)
	if wlo, whi, ok := m.WindowFor(c.lo, c.hi); ok {
		msg += fmt.Sprintf("; the largest window every input covers is --window %g-%g: give it to solve to solve them all", wlo, whi)
	} else {
		msg += "; no window within the present one is covered by every input"
	}
	warn(msg)
}
