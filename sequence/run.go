package sequence

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat"

	"huesolve/calibration"
	"huesolve/internal/pkgerr"
	"huesolve/lab"
	"huesolve/reference"
	"huesolve/unmix"
	"huesolve/validate"
)

// Sample statuses.
const (
	Valid       = "valid"
	Invalid     = "invalid"
	Unbracketed = "unbracketed"
)

// Options control Process.
type Options struct {
	// Model is the sample model. When Model.Blank is nil and the run has
	// blank rows, their mean is the blank for checks and samples, and
	// each blank row is solved as measured (no blank subtracted): its
	// apparent concentrations show the blank's drift. A Model.Blank given
	// is subtracted from every row, blank rows too.
	Model unmix.Options
	// Limits are verify's acceptance limits (recovery window; MaxRSD is
	// not used: each check is judged on its own).
	Limits validate.Limits
	// MinSelectivity is verify's refusal threshold (0: the default).
	MinSelectivity float64
	// Lab puts the samples on a reporting basis and gathers the
	// replicate groups of the sheet (see Run.Lab).
	Lab lab.Options
}

// Entry is one row of the run, in run order.
type Entry struct {
	Order    int    `json:"order"`
	Position int    `json:"position"`
	Role     Role   `json:"role"`
	Name     string `json:"name"`
	Line     int    `json:"line"`
	// Group (samples) is the sample's replicate group ("" for none).
	Group string  `json:"group,omitempty"`
	Hours float64 `json:"hours"`
	// Pass (checks) is whether every compound of the check passed.
	Pass *bool `json:"pass,omitempty"`
	// Why (checks) lists the failed compounds.
	Why []string `json:"why,omitempty"`
	// Checks (checks) are the check's results per compound.
	Checks []validate.CheckRow `json:"check_results,omitempty"`
	// Amounts and Flags (blanks and samples) are the solve's results.
	Amounts []unmix.Amount `json:"amounts,omitempty"`
	Flags   []unmix.Flag   `json:"flags,omitempty"`
	// Status (samples): valid, invalid or unbracketed; Before and After
	// are the order numbers of the bracketing checks (0: none).
	Status string `json:"status,omitempty"`
	Before int    `json:"check_before,omitempty"`
	After  int    `json:"check_after,omitempty"`
}

// Drift is a straight line fitted to one series across the run.
type Drift struct {
	// What is "blank" (apparent concentration of the blank rows) or
	// "recovery" (check standards holding the compound, percent).
	What     string `json:"what"`
	Compound string `json:"compound"`
	Unit     string `json:"unit"`
	// Per is "position" or "hour".
	Per       string  `json:"per"`
	N         int     `json:"n"`
	Slope     float64 `json:"slope"`
	Intercept float64 `json:"intercept"`
	// SE is the slope's standard error; it needs three points (HasSE).
	SE    float64 `json:"se"`
	HasSE bool    `json:"has_se"`
}

// Run is a processed run.
type Run struct {
	Sheet  string          `json:"sheet"`
	Blank  string          `json:"blank"`
	Limits validate.Limits `json:"limits"`
	// Pass: every check passed and every sample is valid.
	Pass         bool `json:"pass"`
	Checks       int  `json:"checks"`
	ChecksFailed int  `json:"checks_failed"`
	Samples      int  `json:"samples"`
	Valid        int  `json:"valid"`
	Invalid      int  `json:"invalid"`
	Unbracketed  int  `json:"unbracketed"`
	// Timed: drift is per hour from the sheet's times.
	Timed     bool     `json:"timed"`
	Entries   []Entry  `json:"entries"`
	Drift     []Drift  `json:"drift"`
	Converted []string `json:"unit_conversions,omitempty"`
	// Lab is the samples on the reporting basis and the replicate
	// groups' statistics (nil when neither a basis nor a group is
	// asked for); its numbers may be NaN, so report writes it.
	Lab *lab.Summary `json:"-"`
	// Groups are the replicate groups' verdicts, in sheet order.
	Groups        []GroupVerdict `json:"groups,omitempty"`
	GroupsValid   int            `json:"groups_valid"`
	GroupsInvalid int            `json:"groups_invalid"`
	GroupsFlagged int            `json:"groups_flagged"`
}

// Process solves and judges a run against set: checks with verify's
// limits, samples valid between passing checks, and the drift of blanks
// and recoveries. It stops when ctx is done.
func Process(ctx context.Context, set *reference.Set, sh *Sheet, opt Options) (*Run, error) {
	run := &Run{Sheet: sh.Path, Blank: "none"}
	mopt := opt.Model
	var blanks, checks []calibration.Row
	for _, r := range sh.Rows {
		switch r.Role {
		case RoleBlank:
			blanks = append(blanks, r.Row)
		case RoleCheck:
			checks = append(checks, r.Row)
		}
	}
	switch {
	case mopt.Blank != nil:
		run.Blank = mopt.Blank.Source.String()
	case len(blanks) > 0:
		b, err := validate.MeanBlank(blanks)
		if err != nil {
			return nil, pkgerr.Errorf("sequence", "%s: %w", sh.Path, err)
		}
		mopt.Blank = b
		run.Blank = fmt.Sprintf("mean of the %d blank row(s) of %s", len(blanks), sh.Path)
	}
	checkSheet := *sh.Sheet
	checkSheet.Standards, checkSheet.Blanks = checks, nil
	v, err := validate.VerifyContext(ctx, set, &checkSheet, validate.VerifyOptions{Model: mopt, Limits: opt.Limits, MinSelectivity: opt.MinSelectivity})
	if err != nil {
		return nil, err
	}
	run.Limits, run.Converted = v.Limits, v.Converted
	if len(v.Rows) != len(checks)*len(set.Compounds) {
		return nil, pkgerr.Errorf("sequence", "%d check results for %d checks of %d compounds", len(v.Rows), len(checks), len(set.Compounds))
	}
	model, err := unmix.NewModel(set, mopt)
	if err != nil {
		return nil, err
	}
	// Blank rows are solved as measured when their mean is the blank:
	// against their own mean half of them would sit below it, and the
	// non-negative fit's floor at 0 would hide half of a blank that
	// rises or falls across the run.
	blankModel := model
	if opt.Model.Blank == nil && len(blanks) > 0 {
		if blankModel, err = unmix.NewModel(set, opt.Model); err != nil {
			return nil, err
		}
	}
	ci := 0
	for i, r := range sh.Rows {
		if err := ctx.Err(); err != nil {
			return nil, pkgerr.Errorf("sequence", "stopped after %d of %d rows: %w", i, len(sh.Rows), err)
		}
		e := Entry{Order: r.Order, Position: i + 1, Role: r.Role, Name: r.Name, Line: r.Line, Hours: r.Hours}
		if r.Role == RoleCheck {
			e.checkFrom(v, ci, len(checks))
			ci++
		} else {
			m := model
			if r.Role == RoleBlank {
				m = blankModel
			}
			res, err := m.Solve(r.Scan, unmix.Factors{Dilution: r.Dilution})
			if err != nil {
				return nil, pkgerr.Errorf("sequence", "%s:%d: %s %s: %w", sh.Path, r.Line, r.Role, e.Name, err)
			}
			e.Amounts, e.Flags = res.Amounts, res.Flags
		}
		run.Entries = append(run.Entries, e)
	}
	if len(sh.Rows) > 0 {
		run.Timed = sh.Rows[0].HasTime
		if run.Timed {
			t0 := sh.Rows[0].Hours
			for i := range run.Entries {
				run.Entries[i].Hours -= t0
			}
		}
	}
	run.bracket()
	run.Drift = run.drift(set)
	if err := run.evaluateLab(sh, opt.Lab); err != nil {
		return nil, err
	}
	return run, nil
}

// checkFrom fills a check entry with its results: the rows of check j
// (of n) in v, which lists them compound by compound.
func (e *Entry) checkFrom(v *validate.Verification, j, n int) {
	pass := true
	for k := 0; k*n+j < len(v.Rows); k++ {
		row := v.Rows[k*n+j]
		e.Checks = append(e.Checks, row)
		if !row.Pass {
			pass = false
			e.Why = append(e.Why, row.Compound)
		}
	}
	e.Pass = &pass
}

// rowName names a row: its column within a wide table, else its file.
func rowName(r calibration.Row) string {
	if r.Column != "" {
		return r.Column
	}
	return r.File
}

// bracket marks each sample by the checks before and after it and
// counts the run's verdict.
func (run *Run) bracket() {
	run.Pass = true
	last := -1
	for i := range run.Entries {
		e := &run.Entries[i]
		switch e.Role {
		case RoleCheck:
			run.Checks++
			if !*e.Pass {
				run.ChecksFailed++
				run.Pass = false
			}
			last = i
		case RoleSample:
			run.Samples++
			next := -1
			for j := i + 1; j < len(run.Entries); j++ {
				if run.Entries[j].Role == RoleCheck {
					next = j
					break
				}
			}
			if last >= 0 {
				e.Before = run.Entries[last].Order
			}
			if next >= 0 {
				e.After = run.Entries[next].Order
			}
			switch {
			case last < 0 || next < 0:
				e.Status = Unbracketed
				run.Unbracketed++
				run.Pass = false
			case *run.Entries[last].Pass && *run.Entries[next].Pass:
				e.Status = Valid
				run.Valid++
			default:
				e.Status = Invalid
				run.Invalid++
				run.Pass = false
			}
		}
	}
}

// drift fits, per compound, the blanks' apparent concentration and the
// checks' recovery against position or hours: lines of two points or more.
func (run *Run) drift(set *reference.Set) []Drift {
	per := "position"
	if run.Timed {
		per = "hour"
	}
	var out []Drift
	for k, c := range set.Compounds {
		var bx, by, rx, ry []float64
		for _, e := range run.Entries {
			x := float64(e.Position)
			if run.Timed {
				x = e.Hours
			}
			switch {
			case e.Role == RoleBlank && k < len(e.Amounts):
				bx, by = append(bx, x), append(by, e.Amounts[k].Conc)
			case e.Role == RoleCheck && k < len(e.Checks) && e.Checks[k].Recovery != nil:
				rx, ry = append(rx, x), append(ry, *e.Checks[k].Recovery)
			}
		}
		if d, ok := Line(bx, by); ok {
			d.What, d.Compound, d.Unit, d.Per = "blank", c.Name, c.Unit, per
			out = append(out, d)
		}
		if d, ok := Line(rx, ry); ok {
			d.What, d.Compound, d.Unit, d.Per = "recovery", c.Name, "%", per
			out = append(out, d)
		}
	}
	return out
}

// Line fits y = a + b x by ordinary least squares (gonum
// stat.LinearRegression) and gives the slope's standard error
// sqrt(s² / Sxx), s² = SSR / (n - 2), with three points or more. ok is
// false with fewer than two points or when every x is the same.
func Line(x, y []float64) (d Drift, ok bool) {
	n := len(x)
	if n < 2 || len(y) != n {
		return d, false
	}
	mx := stat.Mean(x, nil)
	var sxx float64
	for _, v := range x {
		sxx += (v - mx) * (v - mx)
	}
	if !(sxx > 0) {
		return d, false
	}
	a, b := stat.LinearRegression(x, y, nil, false)
	d.N, d.Slope, d.Intercept = n, b, a
	if n >= 3 {
		var ssr float64
		for i := range x {
			r := y[i] - (a + b*x[i])
			ssr += r * r
		}
		d.SE = math.Sqrt(ssr / float64(n-2) / sxx)
		d.HasSE = true
	}
	return d, true
}
