package main

import (
	"encoding/json"
	"fmt"
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"huesolve/history"
	"huesolve/internal/pkgerr"
	"huesolve/provenance"
)

// recordFlag is --record DB of verify and solve: append the run to a QC
// history file (see history.go).
type recordFlag struct{ path string }

func (r *recordFlag) add(fs *pflag.FlagSet) {
	fs.StringVar(&r.path, "record", "", "append this run to the QC history `DB` (an SQLite file, made when missing; see huesolve history)")
}

// historyRun turns the run's provenance record into a history run: tool
// version, time, command line and reference set in their columns; every
// setting as meta "setting:NAME"; the blank, sheets and scans with their
// SHA-256 as inputs; and the whole record as JSON under meta "provenance",
// so that a field the record gains later is kept without a migration.
func historyRun(kind string, p *provenance.Run) (*history.Run, error) {
	t, err := time.Parse(time.RFC3339, p.Time)
	if err != nil {
		return nil, fmt.Errorf("the run's time %q: %w", p.Time, err)
	}
	whole, err := json.Marshal(p)
	if err != nil {
		return nil, err
	}
	run := &history.Run{Kind: kind, Time: t, ToolVersion: p.Version, CommandLine: provenance.CommandLine(p.Command),
		Meta: map[string]string{"provenance": string(whole)}}
	if p.Reference != nil {
		run.Reference = p.Reference.Path
		run.ReferenceSHA256 = p.Reference.SHA256
		if run.ReferenceSHA256 == "" {
			run.ReferenceSHA256 = p.Reference.Checksum
		}
	}
	for _, s := range p.Settings {
		run.Meta["setting:"+s.Name] = s.Value
	}
	files := append([]provenance.File(nil), p.Sheets...)
	if p.Blank != nil {
		files = append(files, *p.Blank)
	}
	for _, f := range files {
		run.Inputs = append(run.Inputs, history.Input{Path: f.Path, SHA256: f.SHA256})
	}
	p.EachInput(func(f provenance.File) {
		run.Inputs = append(run.Inputs, history.Input{Path: f.Path, SHA256: f.SHA256})
	})
	return run, nil
}

// failed is the error of a run that could not be recorded: it says that
// the results themselves were written (where: written), so that a locked
// or damaged history file is not taken for a failed analysis.
func (r *recordFlag) failed(err error, written string) error {
	return &exitError{code: exitFailure, msg: fmt.Sprintf("%s; the run was not recorded in %s (%s)", userMessage(err), r.path, written)}
}

// record appends run to the --record file.
func (r *recordFlag) record(cmd *cobra.Command, run *history.Run, written string) error {
	db, err := history.Open(r.path)
	if err != nil {
		return r.failed(err, written)
	}
	// Recorded anyway (a rerun may be meant), but said: the charts would
	// count the same check results twice.
	if prev, err := db.Earlier(cmd.Context(), run); err == nil && prev > 0 {
		warnTo(cmd.ErrOrStderr())(fmt.Sprintf("%s already holds this run: run %d had the same reference set and inputs (by SHA-256); "+
			"recorded again, its check results count twice on the control charts", r.path, prev))
	}
	id, err := db.Record(cmd.Context(), run)
	if cerr := db.Close(); err == nil && cerr != nil {
		err = pkgerr.Errorf("history", "%s: %w", r.path, cerr)
	}
	if err != nil {
		return r.failed(err, written)
	}
	fmt.Fprintf(cmd.ErrOrStderr(), "huesolve: run %d recorded in %s\n", id, r.path)
	return nil
}
