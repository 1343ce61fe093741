package report

import (
	"io"
	"strconv"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"

	"huesolve/reference"
)

// Names that come from files (samples, scans, files, sheets) reach the
// terminal and spreadsheets through this package, so it makes them safe
// for both. JSON documents keep them exact (JSON escapes them).

// termText is s as a terminal may show it: s itself when it is safe
// (reference.TextFault finds nothing), else s quoted with Go's escapes
// (strconv.Quote), so that an escape sequence, a line break or a
// bidirectional control in a name is shown, not obeyed: "\x1b[31mred"
// prints as "\x1b[31mred", quotes included.
func termText(s string) string {
	if reference.TextFault(s) == "" {
		return s
	}
	return strconv.Quote(s)
}

// csvFormulaStart reports whether a spreadsheet could take a text cell
// starting with b for a formula: '=', '+', '-' and '@' start one, and a
// tab or carriage return before them is skipped by some programs (OWASP,
// "CSV Injection", common practice for spreadsheets).
func csvFormulaStart(b byte) bool {
	switch b {
	case '=', '+', '-', '@', '\t', '\r':
		return true
	}
	return false
}

// csvProtect reports whether text cell s needs a leading single quote to
// keep a spreadsheet from evaluating it: it starts like a formula
// (csvFormulaStart) and is not a plain number ("-0.0012" and "+5" stay
// numbers, and a number is no formula).
func csvProtect(s string) bool {
	if s == "" || !csvFormulaStart(s[0]) {
		return false
	}
	_, err := strconv.ParseFloat(s, 64)
	return err != nil
}

// csvText is text cell s as written to CSV by encoding/csv: with a single
// quote put before it when it could start a formula (csvProtect). Only
// text cells go through it; numbers are written as they are.
func csvText(s string) string {
	if csvProtect(s) {
		return "'" + s
	}
	return s
}

// termTable is a terminal table whose cells and headers go through
// termText.
type termTable struct{ t *tablewriter.Table }

// newTable is a terminal table whose headers are printed as written
// (after termText).
func newTable(w io.Writer) termTable {
	return termTable{tablewriter.NewTable(w, tablewriter.WithHeaderAutoFormat(tw.Off))}
}

// Header sets the header cells.
func (t termTable) Header(cells ...string) { t.t.Header(termCells(cells)) }

// Append adds a row.
func (t termTable) Append(cells []string) error { return t.t.Append(termCells(cells)) }

// Render prints the table.
func (t termTable) Render() error { return t.t.Render() }

// termCells returns cells through termText (cells itself when all are
// safe).
func termCells(cells []string) []string {
	var out []string
	for i, c := range cells {
		if q := termText(c); q != c {
			if out == nil {
				out = append([]string(nil), cells...)
			}
			out[i] = q
		}
	}
	if out == nil {
		return cells
	}
	return out
}
