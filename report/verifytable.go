package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"

	"huesolve/provenance"
	"huesolve/unmix"
	"huesolve/validate"
)

// VerifyReport is what verify writes: the verification with the files and
// model it was made with, and the cross-validation when one was run. Its
// JSON form is verify's --format json document.
type VerifyReport struct {
	// Format (FormatNameVerify), Schema and Run, the run's record, open
	// the JSON document; the commands set them.
	Format    string                    `json:"format"`
	Schema    int                       `json:"schema"`
	Run       *provenance.Run           `json:"run,omitempty"`
	Reference string                    `json:"reference_set"`
	Checks    string                    `json:"checks"`
	Window    [2]float64                `json:"window_nm"`
	Baseline  string                    `json:"baseline"`
	Weighted  bool                      `json:"weighted"`
	Result    *validate.Verification    `json:"verification"`
	CrossVal  *validate.CrossValidation `json:"cross_validation,omitempty"`
	// MeritsAsInspect says the design is the one inspect shows the
	// figures of merit for (SameDesign): the table then prints a line
	// pointing there instead of the same table again. JSON and CSV keep
	// the figures of merit either way.
	MeritsAsInspect bool `json:"-"`
}

// VerifyFlaggedNote is the note, on standard error and under the checks
// table, that n check results carry warning flags.
func VerifyFlaggedNote(n int) string {
	return fmt.Sprintf("%d check %s warning flags: the fit does not describe them well; see the flags with each check result",
		n, plural(n, "result carries", "results carry"))
}

// valNum formats a number for tables.
func valNum(v float64) string { return strconv.FormatFloat(v, 'g', 5, 64) }

// errNum formats an error (bias, RMSEP) for tables: two significant
// digits, like the standard errors beside the results.
func errNum(v float64) string { return strconv.FormatFloat(v, 'g', 2, 64) }

// unitSuffix is " (u)" for a unit u, "" for none.
func unitSuffix(u string) string {
	if u == "" {
		return ""
	}
	return " (" + u + ")"
}

// plural is one when n is 1, else many.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// WriteVerifyTable prints a verification for the terminal: a line saying
// what was checked against what, a table of the check results, a table
// of the compounds with their verdicts, the limits, and the figures of
// merit of the design.
func WriteVerifyTable(w io.Writer, rep *VerifyReport) error {
	v := rep.Result
	fit := "unweighted"
	if rep.Weighted {
		fit = "weighted"
	}
	fmt.Fprintf(w, "Check standards %s against %s: window %g-%g nm, baseline %s, %s fit, blank: %s\n\n",
		termText(rep.Checks), termText(rep.Reference), rep.Window[0], rep.Window[1], rep.Baseline, fit, termText(v.Blank))
	if err := writeCheckRows(w, v); err != nil {
		return err
	}
	fmt.Fprintln(w)
	if err := writeCheckCompounds(w, v, rep.CrossVal); err != nil {
		return err
	}
	fmt.Fprintln(w, "Standards with/without: check standards holding the compound (judged on recovery) / not holding it (judged against its LOQ).")
	fmt.Fprintf(w, "Limits: mean recovery %g-%g %%, RSD ≤ %g %%, compounds not in a standard found at most at their LOQ.\n",
		v.Limits.RecoveryLo, v.Limits.RecoveryHi, v.Limits.MaxRSD)
	writeUnitConversions(w, v, rep.CrossVal)
	if cv := rep.CrossVal; cv != nil {
		by := "one standard"
		if cv.ByLevel {
			by = "one composition (with its replicates)"
		}
		fmt.Fprintf(w, "RMSECV: %d folds leaving out %s at a time, %d standards predicted", cv.Folds, by, len(cv.Predictions))
		if len(cv.Failed) > 0 {
			fmt.Fprintf(w, ", %d folds failed (see stderr)", len(cv.Failed))
		}
		fmt.Fprintln(w, ".")
	}
	fmt.Fprintln(w)
	if rep.MeritsAsInspect {
		_, err := fmt.Fprintf(w, "Figures of merit of this design (%g-%g nm, baseline %s, unweighted): as huesolve inspect %s shows them.\n",
			v.Merits.WindowLo, v.Merits.WindowHi, v.Merits.Baseline, termText(rep.Reference))
		return err
	}
	return WriteMerits(w, v.Merits)
}

// writeUnitConversions prints one line per compound whose concentrations
// were converted to the reference set's unit before they were compared.
func writeUnitConversions(w io.Writer, v *validate.Verification, cv *validate.CrossValidation) {
	lines := v.Converted
	if cv != nil {
		lines = append(append([]string(nil), lines...), cv.Converted...)
	}
	for _, c := range lines {
		fmt.Fprintf(w, "Unit converted to the reference set's: %s.\n", termText(c))
	}
}

// writeCheckRows prints the table of check results, one row per standard
// and compound, and the note on flagged results under it.
func writeCheckRows(w io.Writer, v *validate.Verification) error {
	t := newTable(w)
	t.Header("Standard", "Compound", "Known", "Found ± SE", "Recovery (%)", "Within limits")
	for _, r := range v.Rows {
		rec := "-"
		if r.Recovery != nil {
			rec = fmt.Sprintf("%.2f", *r.Recovery)
		}
		unit := ""
		if r.Unit != "" {
			unit = " " + r.Unit
		}
		found := ConcText(r.Found, r.SE) // as solve prints it
		if r.HeldAtZero {
			found = ConcText(r.Found, 0) + " zero"
		}
		if err := t.Append([]string{r.Standard, r.Compound, valNum(r.Known) + unit, found, rec, checkRowVerdict(r)}); err != nil {
			return fmt.Errorf("verify table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("verify table: %w", err)
	}
	if n := v.FlaggedRows(); n > 0 {
		fmt.Fprintln(w, VerifyFlaggedNote(n)+".")
	}
	return nil
}

// checkRowVerdict is the "Within limits" cell of a check row.
func checkRowVerdict(r validate.CheckRow) string {
	ok := "yes"
	if !r.Pass {
		ok = "no"
	}
	if r.Recovery == nil { // not in the standard: judged against the LOQ
		cmp := "≤"
		if !r.Pass {
			cmp = ">"
		}
		ok += fmt.Sprintf(" (%s LOQ %.2g)", cmp, r.LOQ)
	}
	if len(r.Flags) > 0 {
		ok += ", flagged " + joinFlags(r.Flags, " ")
	}
	return ok
}

// writeCheckCompounds prints the table of compounds: standards with and
// without each, mean recovery, RSD, bias, RMSEP (and RMSECV with a
// cross-validation), and the verdict.
func writeCheckCompounds(w io.Writer, v *validate.Verification, cv *validate.CrossValidation) error {
	t := newTable(w)
	units := make([]string, len(v.Compounds))
	for i, c := range v.Compounds {
		units[i] = c.Unit
	}
	cu := unitSuffix(commonUnit(units)) // " (mg/L)" when all share it
	head := []string{"Compound", "Standards with/without", "Mean recovery (%)", "RSD (%)", "Bias" + cu, "RMSEP" + cu}
	var rmsecv map[string]float64
	if cv != nil {
		head = append(head, "RMSECV"+cu)
		rmsecv = map[string]float64{}
		for k, n := range cv.Compounds {
			rmsecv[n] = cv.RMSECV[k]
		}
	}
	head = append(head, "Verdict")
	t.Header(head...)
	for _, c := range v.Compounds {
		mean, rsd := "-", "-"
		if c.Holding > 0 {
			mean = fmt.Sprintf("%.2f", c.MeanRecovery)
		}
		if c.RSDJudged {
			rsd = fmt.Sprintf("%.2f", c.RSD)
		}
		// Errors to two significant digits, as standard errors are shown.
		bias := "-"
		if c.Holding > 0 {
			bias = errNum(c.Bias)
		}
		row := []string{c.Compound, fmt.Sprintf("%d/%d", c.Holding, c.Absent), mean, rsd, bias, errNum(c.RMSEP)}
		if rmsecv != nil {
			row = append(row, errNum(rmsecv[c.Compound]))
		}
		verdict := "pass"
		if !c.Pass {
			verdict = "FAIL: " + strings.Join(c.Why, "; ")
		}
		row = append(row, verdict)
		if err := t.Append(row); err != nil {
			return fmt.Errorf("verify table: %w", err)
		}
	}
	if err := t.Render(); err != nil {
		return fmt.Errorf("verify table: %w", err)
	}
	return nil
}

// verifyRowFlags is the flags cell of a check row: zero (held at zero)
// first, then its warning flags.
func verifyRowFlags(r validate.CheckRow) string {
	fs := r.Flags
	if r.HeldAtZero {
		fs = append([]unmix.Flag{unmix.FlagZero}, fs...)
	}
	return joinFlags(fs, " ")
}

// WriteVerifyCSV writes one row per standard and compound (record
// "check"), one per compound (record "compound") and, with
// cross-validation, one per predicted calibration standard and compound
// (record "crossval"). The last column, flags, holds a check row's
// flags as solve's NAME_flags would: zero when the result is held at zero,
// and the warning flags of its solve (e.g. illcond, misfit).
func WriteVerifyCSV(w io.Writer, v *validate.Verification, cv *validate.CrossValidation) error {
	cw := csv.NewWriter(w)
	head := []string{"record", "standard", "compound", "unit", "known", "found", "se", "error", "recovery_pct", "loq",
		"mean_recovery_pct", "rsd_pct", "bias", "rmsep", "rmsecv", "pass", "why", "flags"}
	if err := cw.Write(head); err != nil {
		return err
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for _, r := range v.Rows {
		rec := ""
		if r.Recovery != nil {
			rec = f(*r.Recovery)
		}
		if err := cw.Write([]string{"check", csvText(r.Standard), csvText(r.Compound), csvText(r.Unit), f(r.Known), f(r.Found), f(r.SE), f(r.Error), rec, f(r.LOQ),
			"", "", "", "", "", strconv.FormatBool(r.Pass), "", verifyRowFlags(r)}); err != nil {
			return err
		}
	}
	rmsecv := map[string]string{}
	if cv != nil {
		for k, n := range cv.Compounds {
			rmsecv[n] = f(cv.RMSECV[k])
		}
	}
	for _, c := range v.Compounds {
		mean, rsd, bias := "", "", ""
		if c.Holding > 0 {
			mean, bias = f(c.MeanRecovery), f(c.Bias)
		}
		if c.RSDJudged {
			rsd = f(c.RSD)
		}
		if err := cw.Write([]string{"compound", "", csvText(c.Compound), csvText(c.Unit), "", "", "", "", "", "",
			mean, rsd, bias, f(c.RMSEP), rmsecv[c.Compound], strconv.FormatBool(c.Pass), csvText(strings.Join(c.Why, "; ")), ""}); err != nil {
			return err
		}
	}
	if cv != nil {
		for _, p := range cv.Predictions {
			for k, n := range cv.Compounds {
				if err := cw.Write([]string{"crossval", csvText(p.Standard), csvText(n), csvText(cv.Units[k]), f(p.Known[k]), f(p.Found[k]), "",
					f(p.Found[k] - p.Known[k]), "", "", "", "", "", "", "", "", "", ""}); err != nil {
					return err
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
