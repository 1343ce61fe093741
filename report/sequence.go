package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"

	"huesolve/lab"
	"huesolve/provenance"
	"huesolve/sequence"
)

// FormatNameSequence is the format name of the run command's result files.
const FormatNameSequence = "huesolve-sequence"

// SequenceReport is what the run command writes; its JSON form is the
// command's --format json document.
type SequenceReport struct {
	Format    string          `json:"format"`
	Schema    int             `json:"schema"`
	Run       *provenance.Run `json:"run,omitempty"`
	Reference string          `json:"reference_set"`
	Result    *sequence.Run   `json:"sequence"`
}

// SequenceVerdict is the one-line summary of a run: "PASS" or "FAIL"
// with the counts of checks and samples, and of replicate groups when
// there are any.
func SequenceVerdict(r *sequence.Run) string {
	v := "PASS"
	if !r.Pass {
		v = "FAIL"
	}
	s := fmt.Sprintf("run %s: %d %s (%d failed), %d %s: %d valid, %d invalid, %d unbracketed",
		v, r.Checks, plural(r.Checks, "check", "checks"), r.ChecksFailed,
		r.Samples, plural(r.Samples, "sample", "samples"), r.Valid, r.Invalid, r.Unbracketed)
	if n := len(r.Groups); n > 0 {
		s += fmt.Sprintf("; %d replicate %s: %d valid, %d invalid, %d flagged",
			n, plural(n, "group", "groups"), r.GroupsValid, r.GroupsInvalid, r.GroupsFlagged)
	}
	return s
}

// MarshalJSON writes the report with the run's lab section as "lab"
// (see appendLabJSON; each reported value and group with its "status"),
// which encoding/json cannot write: its undefined numbers are NaN.
func (rep SequenceReport) MarshalJSON() ([]byte, error) {
	type plain SequenceReport
	b, err := json.Marshal(plain(rep))
	if err != nil || rep.Result == nil || rep.Result.Lab == nil {
		return b, err
	}
	lab := appendLabJSONStatus(nil, rep.Result.Lab, runLabStatus(rep.Result))
	lab = bytes.TrimPrefix(lab, []byte(",\n \"lab\": "))
	out := append(b[:len(b)-1:len(b)-1], `,"lab":`...)
	return append(append(out, lab...), '}'), nil
}

// runLabStatus is the status column of a run's lab section: each
// sample's bracketing status and each group's verdict.
func runLabStatus(r *sequence.Run) *labStatus {
	st := &labStatus{sample: map[string]string{}, group: map[string]string{}}
	for _, e := range r.Entries {
		if e.Role == sequence.RoleSample {
			st.sample[e.Name] = e.Status
		}
	}
	for _, g := range r.Groups {
		st.group[g.Group] = g.Status
	}
	return st
}

// WriteSequenceTable prints a run for the terminal: the verdict, what was
// run against what, one row per position of the run, and the drift.
func WriteSequenceTable(w io.Writer, rep *SequenceReport) error {
	r := rep.Result
	fmt.Fprintf(w, "%s%s\n", strings.ToUpper(SequenceVerdict(r)[:1]), SequenceVerdict(r)[1:])
	fmt.Fprintf(w, "Run sheet %s against %s; blank: %s; checks within %g-%g %% recovery, compounds not in a check at most at their LOQ.\n\n",
		termText(r.Sheet), termText(rep.Reference), termText(r.Blank), r.Limits.RecoveryLo, r.Limits.RecoveryHi)
	t := newTable(w)
	head := []string{"Order", "Role", "Name"}
	if r.Timed {
		head = append(head, "Hours")
	}
	t.Header(append(head, "Results", "Verdict")...)
	for _, e := range r.Entries {
		row := []string{strconv.Itoa(e.Order), string(e.Role), e.Name}
		if r.Timed {
			row = append(row, strconv.FormatFloat(e.Hours, 'f', 2, 64))
		}
		if err := t.Append(append(row, entryResults(e), entryVerdict(e))); err != nil {
			return fmt.Errorf("run table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("run table: %w", err)
	}
	for _, c := range r.Converted {
		fmt.Fprintf(w, "Unit converted to the reference set's: %s.\n", termText(c))
	}
	if r.Lab != nil {
		if err := writeLabTableStatus(w, r.Lab, runLabStatus(r)); err != nil {
			return err
		}
		if len(r.Groups) > 0 {
			fmt.Fprintln(w, "A replicate group is valid only when every member is valid (bracketed by two passing checks).")
		}
	}
	fmt.Fprintln(w)
	return writeDrift(w, r)
}

// entryResults is the results cell of a run row: recoveries of a check,
// concentrations ± SE of a blank or sample.
func entryResults(e sequence.Entry) string {
	var parts []string
	for _, c := range e.Checks {
		if c.Recovery != nil {
			parts = append(parts, fmt.Sprintf("%s %.2f %%", c.Compound, *c.Recovery))
		} else {
			parts = append(parts, fmt.Sprintf("%s %s (absent)", c.Compound, ConcText(c.Found, c.SE)))
		}
	}
	for _, a := range e.Amounts {
		parts = append(parts, a.Compound+" "+ConcText(a.Conc, a.SE))
	}
	s := strings.Join(parts, "; ")
	if len(e.Flags) > 0 {
		s += "; flagged " + joinFlags(e.Flags, " ")
	}
	return s
}

// entryVerdict is the verdict cell of a run row.
func entryVerdict(e sequence.Entry) string {
	switch e.Role {
	case sequence.RoleCheck:
		if *e.Pass {
			return "pass"
		}
		return "FAIL: " + strings.Join(e.Why, ", ")
	case sequence.RoleSample:
		switch e.Status {
		case sequence.Valid:
			return fmt.Sprintf("valid (checks %d and %d)", e.Before, e.After)
		case sequence.Invalid:
			return fmt.Sprintf("INVALID (checks %d and %d, not both passed)", e.Before, e.After)
		default:
			if e.Before == 0 {
				return "UNBRACKETED (no check before)"
			}
			return "UNBRACKETED (no check after)"
		}
	}
	return "-"
}

// writeDrift prints the drift lines, or says why there are none.
func writeDrift(w io.Writer, r *sequence.Run) error {
	if len(r.Drift) == 0 {
		fmt.Fprintln(w, "Drift: none fitted (a line needs two blanks or two checks holding a compound).")
		return nil
	}
	per := "position"
	if r.Timed {
		per = "hour"
	}
	t := newTable(w)
	t.Header("Drift of", "Compound", "Slope per "+per, "SE", "n")
	for _, d := range r.Drift {
		what := "blank (" + d.Unit + ")"
		if d.What == "recovery" {
			what = "check recovery (%)"
		}
		slope, se := valNum(d.Slope), "-"
		switch {
		case d.HasSE && d.SE > 0:
			// The slope to the decimal place of its SE, the SE to two
			// significant figures, as the lab section rounds (lab.Round).
			slope, se = lab.Round(d.Slope, d.SE)
		case d.HasSE:
			se = errNum(d.SE)
		}
		if err := t.Append([]string{what, d.Compound, slope, se, strconv.Itoa(d.N)}); err != nil {
			return fmt.Errorf("drift table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("drift table: %w", err)
	}
	x := "position: place in the run, 1 for the first row"
	if r.Timed {
		x = "hours from the first row's time"
	}
	fmt.Fprintf(w, "Slopes by ordinary least squares against %s; SE needs three points.\n", x)
	return nil
}

// WriteSequenceCSV writes a run as CSV: a "result" record per row of the
// run and compound, then a "drift" record per fitted line, then, when the
// run has a lab section, its sections as solve writes them (see
// appendLabCSV) with a last column status.
func WriteSequenceCSV(w io.Writer, r *sequence.Run) error {
	cw := csv.NewWriter(w)
	head := []string{"record", "order", "position", "role", "name", "hours", "compound", "unit", "known", "found", "se",
		"recovery_pct", "pass", "status", "check_before", "check_after", "slope", "slope_se", "n", "per"}
	if err := cw.Write(head); err != nil {
		return err
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	hours := func(e sequence.Entry) string {
		if r.Timed {
			return f(e.Hours)
		}
		return ""
	}
	for _, e := range r.Entries {
		lead := []string{"result", strconv.Itoa(e.Order), strconv.Itoa(e.Position), string(e.Role), csvText(e.Name), hours(e)}
		for _, c := range e.Checks {
			rec := ""
			if c.Recovery != nil {
				rec = f(*c.Recovery)
			}
			row := append(append([]string(nil), lead...), csvText(c.Compound), csvText(c.Unit), f(c.Known), f(c.Found), f(c.SE),
				rec, strconv.FormatBool(c.Pass), "", "", "", "", "", "", "")
			if err := cw.Write(row); err != nil {
				return err
			}
		}
		for _, a := range e.Amounts {
			before, after := "", ""
			if e.Before > 0 {
				before = strconv.Itoa(e.Before)
			}
			if e.After > 0 {
				after = strconv.Itoa(e.After)
			}
			row := append(append([]string(nil), lead...), csvText(a.Compound), csvText(a.Unit), "", f(a.Conc), f(a.SE),
				"", "", e.Status, before, after, "", "", "", "")
			if err := cw.Write(row); err != nil {
				return err
			}
		}
	}
	for _, d := range r.Drift {
		se := ""
		if d.HasSE {
			se = f(d.SE)
		}
		if err := cw.Write([]string{"drift", "", "", d.What, "", "", csvText(d.Compound), csvText(d.Unit), "", "", "",
			"", "", "", "", "", f(d.Slope), se, strconv.Itoa(d.N), d.Per}); err != nil {
			return err
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil || r.Lab == nil {
		return err
	}
	_, err := w.Write(appendLabCSVStatus(nil, r.Lab, runLabStatus(r)))
	return err
}
