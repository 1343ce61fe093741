package main

import (
	"fmt"
	"math"
	"strconv"
	"sync"

	"github.com/spf13/pflag"

	"huesolve/lab"
	"huesolve/provenance"
	"huesolve/report"
	"huesolve/unmix"
)

// labFlags are solve's options for replicate groups and the reporting
// basis (package lab).
type labFlags struct {
	basis  string
	maxRSD float64
}

func (l *labFlags) add(f *pflag.FlagSet) {
	f.StringVar(&l.basis, "basis", "", "report results on this `BASIS`: a mass fraction (mg/kg, µg/g, % w/w) from the sample sheet's mass and volume, or a concentration (µg/L, ...)")
	f.Float64Var(&l.maxRSD, "max-rep-rsd", lab.DefaultMaxRSD, "RSD limit in `PERCENT` of a replicate group (sample sheet column group)")
}

// options checks the flags (a basis against the units of the compounds)
// and gives them as lab's options.
func (l labFlags) options(compounds, units []string) (lab.Options, error) {
	if !(l.maxRSD > 0) || math.IsInf(l.maxRSD, 0) {
		return lab.Options{}, usagef("--max-rep-rsd %g: want a positive percentage", l.maxRSD)
	}
	opt := lab.Options{MaxRSD: l.maxRSD}
	if l.basis == "" {
		return opt, nil
	}
	b, err := lab.ParseBasis(l.basis)
	if err != nil {
		return opt, usagef("--basis: %s", userMessage(err))
	}
	for k, c := range compounds {
		if err := b.Check(c, units[k], 0); err != nil {
			return opt, err
		}
	}
	opt.Basis = &b
	return opt, nil
}

// labJob gathers what solve needs for the lab section: the sheet's groups
// and preparations, the basis, and a copy of every solved scan's amounts.
type labJob struct {
	sheet *lab.Sheet
	opt   lab.Options
	mu    sync.Mutex
	scans []lab.Scan
	sum   *lab.Summary
}

// newLabJob checks the flags (a basis against the units of model m's
// compounds) and reads the sample sheet's lab columns;
// it returns nil when neither a basis nor a replicate group is asked for.
func newLabJob(l labFlags, samples string, ss *unmix.SampleSheet, m *unmix.Model) (*labJob, error) {
	opt, err := l.options(m.Compounds(), m.Units())
	if err != nil {
		return nil, err
	}
	if opt.Basis != nil && opt.Basis.Fraction && samples == "" {
		return nil, usagef("--basis %s is a mass fraction: give each sample's mass and volume with --samples SHEET (or --basis '' to report in the results' unit)", l.basis)
	}
	j := &labJob{opt: opt}
	sh, err := lab.ReadSheet(ss)
	if err != nil {
		return nil, err
	}
	j.sheet = sh
	if j.opt.Basis == nil && !sh.Groups {
		return nil, nil
	}
	return j, nil
}

// add copies what the lab section needs from a solved result (the batch
// reuses r).
func (j *labJob) add(r *unmix.Result, track *unmix.SheetUse) {
	sc := lab.Scan{Sample: r.Sample, Source: r.Source}
	sc.Row, _ = track.Row(r.Source)
	for _, a := range r.Amounts {
		sc.Amounts = append(sc.Amounts, lab.Amount{Compound: a.Compound, Unit: a.Unit, Conc: a.Conc, SE: a.SE, LOD: a.LOD, LOQ: a.LOQ})
	}
	j.mu.Lock()
	j.scans = append(j.scans, sc)
	j.mu.Unlock()
}

// finish computes the lab section and hands it to rw (before rw.Close)
// and to the review report rev (nil: none).
func (j *labJob) finish(rw report.ResultWriter, rev *report.SolveReview) error {
	if len(j.scans) == 0 {
		return nil
	}
	s, err := lab.Evaluate(j.scans, j.sheet, j.opt)
	if err != nil {
		return err
	}
	j.sum = s
	if lw, ok := rw.(report.LabWriter); ok {
		lw.SetLab(s)
	}
	if rev != nil {
		rev.SetLab(s)
	}
	return nil
}

// flagged is the number of replicate groups flagged (0 without a lab
// section).
func (j *labJob) flagged() int {
	if j == nil || j.sum == nil {
		return 0
	}
	return j.sum.Flagged()
}

// note is the closing summary's words on the groups ("" without any).
func (j *labJob) note() string {
	if j == nil || j.sum == nil || len(j.sum.Groups) == 0 {
		return ""
	}
	return fmt.Sprintf("; %d replicate group result(s), %d flagged", len(j.sum.Groups), j.sum.Flagged())
}

// settings are the lab settings in force for the run's record: the RSD
// limit and the basis, when there is a lab section (none for nil).
func (j *labJob) settings(l labFlags) []provenance.Setting {
	if j == nil {
		return nil
	}
	s := []provenance.Setting{{Name: "max-rep-rsd", Value: strconv.FormatFloat(l.maxRSD, 'g', -1, 64)}}
	if l.basis != "" {
		s = append(s, provenance.Setting{Name: "basis", Value: l.basis})
	}
	return s
}
