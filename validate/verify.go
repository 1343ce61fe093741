package validate

import (
	"context"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"huesolve/calibration"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Default acceptance limits for check standards. ICH Q2(R2) (2023) sets no
// fixed numbers; recovery within 98-102 % and an RSD of at most 2 % are
// common practice for assays of a main component. They must be set to
// what the method's own validation plan says.
const (
	defaultRecoveryLo = 98.0
	defaultRecoveryHi = 102.0
	DefaultMaxRSD     = 2.0
)

// Limits are the acceptance limits for check standards. Zero values mean
// the defaults above.
type Limits struct {
	// RecoveryLo and RecoveryHi bound the mean recovery of each compound
	// (percent).
	RecoveryLo float64 `json:"recovery_lo_pct"`
	RecoveryHi float64 `json:"recovery_hi_pct"`
	// MaxRSD bounds the relative standard deviation of the recoveries
	// (percent); it is judged when at least two check standards hold the
	// compound.
	MaxRSD float64 `json:"max_rsd_pct"`
}

func (l Limits) withDefaults() (Limits, error) {
	if l.RecoveryLo == 0 {
		l.RecoveryLo = defaultRecoveryLo
	}
	if l.RecoveryHi == 0 {
		l.RecoveryHi = defaultRecoveryHi
	}
	if l.MaxRSD == 0 {
		l.MaxRSD = DefaultMaxRSD
	}
	for _, v := range []float64{l.RecoveryLo, l.RecoveryHi, l.MaxRSD} {
		if !(v > 0) || math.IsInf(v, 0) {
			return l, pkgerr.Errorf("validate", "acceptance limits must be positive numbers, not %g", v)
		}
	}
	if l.RecoveryLo >= l.RecoveryHi {
		return l, pkgerr.Errorf("validate", "recovery limits %g-%g %% are empty", l.RecoveryLo, l.RecoveryHi)
	}
	return l, nil
}

// Check is one check standard: its known composition and what was found,
// both in the reference set's compound order and units.
type Check struct {
	Name  string
	Known []float64
	Found []float64
	SE    []float64
	// LOQ is the quantitation limit of each result (used to judge
	// compounds the standard does not hold).
	LOQ []float64
	// Flags, if not nil, holds per compound the warning flags of its
	// result (the sample's and the compound's own), shown with the row:
	// a recovery from an ill-conditioned or misfitting solve is not to
	// be trusted as it stands.
	Flags [][]unmix.Flag
	// Zero, if not nil, marks per compound a result the non-negativity
	// constraint holds at zero (unmix.FlagZero).
	Zero []bool
}

// CheckRow is one compound in one check standard.
type CheckRow struct {
	Standard string  `json:"standard"`
	Compound string  `json:"compound"`
	Unit     string  `json:"unit"`
	Known    float64 `json:"known"`
	Found    float64 `json:"found"`
	SE       float64 `json:"se"`
	// Error is Found - Known.
	Error float64 `json:"error"`
	// Recovery is 100 Found/Known (percent), nil when Known is 0.
	Recovery *float64 `json:"recovery_pct"`
	// LOQ is the quantitation limit the result is judged against when
	// Known is 0.
	LOQ float64 `json:"loq"`
	// Pass: for Known > 0, Recovery is within the recovery limits (shown
	// for information; the verdict is on the mean); for Known = 0,
	// |Error| <= LOQ.
	Pass bool `json:"pass"`
	// Flags are the warning flags of the result (see package unmix),
	// e.g. "illcond" or "misfit"; they do not change Pass.
	Flags []unmix.Flag `json:"flags,omitempty"`
	// HeldAtZero: the non-negativity constraint holds the result at zero
	// (the compound is not seen; Found and SE are 0).
	HeldAtZero bool `json:"held_at_zero,omitempty"`
}

// CompoundVerdict sums up one compound over all check standards.
type CompoundVerdict struct {
	Compound string `json:"compound"`
	Unit     string `json:"unit"`
	// Standards counts all check standards, Holding those with Known > 0.
	Standards int `json:"standards"`
	Holding   int `json:"holding"`
	// MeanRecovery and RSD (percent) are over the standards holding the
	// compound; RSD needs two of them (RSDJudged).
	MeanRecovery float64 `json:"mean_recovery_pct"`
	RSD          float64 `json:"rsd_pct"`
	RSDJudged    bool    `json:"rsd_judged"`
	// Bias is the mean of Found - Known over the standards holding the
	// compound, in its unit.
	Bias float64 `json:"bias"`
	// RMSEP is the root mean square of Found - Known over all standards.
	RMSEP float64 `json:"rmsep"`
	// Absent counts standards without the compound, AbsentFail those
	// whose result is above its LOQ.
	Absent     int `json:"absent"`
	AbsentFail int `json:"absent_fail"`
	// Pass: mean recovery within limits, RSD within its limit when
	// judged, no absent-compound failure.
	Pass bool `json:"pass"`
	// Why lists the failed criteria.
	Why []string `json:"why,omitempty"`
}

// Verification is the outcome of a set of check standards.
type Verification struct {
	Limits    Limits            `json:"limits"`
	Compounds []CompoundVerdict `json:"compounds"`
	Rows      []CheckRow        `json:"checks"`
	Pass      bool              `json:"pass"`
	// Merits are the figures of merit of the design the checks were
	// solved with (set by VerifyContext; nil from Assess).
	Merits *Merits `json:"figures_of_merit,omitempty"`
	// Blank says what blank the check standards were corrected with.
	Blank string `json:"blank,omitempty"`
	// Converted says, per compound whose check concentrations were given
	// in another unit than the reference set's, how they were converted
	// ("checks.csv: Ambrelin µg/mL to mg/L (× 1)"); Known is in the
	// set's unit.
	Converted []string `json:"unit_conversions,omitempty"`
}

// FlaggedRows returns the number of check results (one standard, one
// compound) that carry a warning flag: results the fit does not describe
// well, whatever their recovery. Pass does not depend on it.
func (v *Verification) FlaggedRows() int {
	n := 0
	for _, r := range v.Rows {
		if len(r.Flags) > 0 {
			n++
		}
	}
	return n
}

// Assess judges check standards against the limits. names and units are
// the compounds in the order of the checks' slices.
//
// Rules, per compound:
//   - a standard holding the compound (Known > 0) gives a recovery
//     100·Found/Known; the mean recovery must lie within
//     [RecoveryLo, RecoveryHi] and, with two or more such standards, the
//     RSD of the recoveries (sample standard deviation over the mean) must
//     not exceed MaxRSD;
//   - a standard without it (Known = 0) has no recovery; it passes when
//     |Found| <= LOQ of that result;
//   - Bias is the mean of Found - Known over the standards holding it,
//     RMSEP the root mean square of Found - Known over all standards.
//
// A compound no check standard holds is judged on the absent rule alone.
// It returns an error for slices of the wrong length, negative or
// non-finite known concentrations, non-finite results and bad limits.
func Assess(names, units []string, checks []Check, lim Limits) (*Verification, error) {
	lim, err := lim.withDefaults()
	if err != nil {
		return nil, err
	}
	if err := checkChecks(names, checks); err != nil {
		return nil, err
	}
	v := &Verification{Limits: lim, Pass: true}
	for k := range names {
		unit := ""
		if k < len(units) {
			unit = units[k]
		}
		cv, rows, err := assessCompound(names[k], unit, k, checks, lim)
		if err != nil {
			return nil, err
		}
		v.Rows = append(v.Rows, rows...)
		if !cv.Pass {
			v.Pass = false
		}
		v.Compounds = append(v.Compounds, cv)
	}
	return v, nil
}

// checkChecks refuses check results of the wrong length, negative or
// non-finite known concentrations and non-finite results.
func checkChecks(names []string, checks []Check) error {
	if len(checks) == 0 {
		return pkgerr.New("validate", "no check standards")
	}
	n := len(names)
	for _, c := range checks {
		if len(c.Known) != n || len(c.Found) != n || len(c.SE) != n || len(c.LOQ) != n {
			return pkgerr.Errorf("validate", "check %s: %d known, %d found, %d SE, %d LOQ values for %d compounds",
				c.Name, len(c.Known), len(c.Found), len(c.SE), len(c.LOQ), n)
		}
		for k := range n {
			if v := c.Known[k]; !(v >= 0) || math.IsInf(v, 0) {
				return pkgerr.Errorf("validate", "check %s: known %s %g is not a non-negative number", c.Name, names[k], v)
			}
			for _, v := range []float64{c.Found[k], c.SE[k], c.LOQ[k]} {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return pkgerr.Errorf("validate", "check %s: result for %s is not finite", c.Name, names[k])
				}
			}
		}
	}
	return nil
}

// assessCompound judges compound k (name, unit) over the check standards:
// its verdict and one row per standard.
func assessCompound(name, unit string, k int, checks []Check, lim Limits) (CompoundVerdict, []CheckRow, error) {
	cv := CompoundVerdict{Compound: name, Unit: unit, Standards: len(checks)}
	var rows []CheckRow
	var rec []float64
	var sumErr, sumSq float64
	for _, c := range checks {
		e := c.Found[k] - c.Known[k]
		row := CheckRow{Standard: c.Name, Compound: name, Unit: unit, Known: c.Known[k],
			Found: c.Found[k], SE: c.SE[k], Error: e, LOQ: c.LOQ[k]}
		if k < len(c.Flags) {
			row.Flags = c.Flags[k]
		}
		row.HeldAtZero = k < len(c.Zero) && c.Zero[k]
		sumSq += e * e
		if c.Known[k] > 0 {
			r := 100 * c.Found[k] / c.Known[k]
			if math.IsInf(r, 0) {
				return cv, nil, pkgerr.Errorf("validate", "check %s: known %s %g is too small for a recovery (100 × found %g / known overflows)",
					c.Name, name, c.Known[k], c.Found[k])
			}
			row.Recovery = &r
			row.Pass = r >= lim.RecoveryLo && r <= lim.RecoveryHi
			rec = append(rec, r)
			sumErr += e
		} else {
			cv.Absent++
			row.Pass = math.Abs(e) <= c.LOQ[k]
			if !row.Pass {
				cv.AbsentFail++
			}
		}
		rows = append(rows, row)
	}
	cv.Holding = len(rec)
	cv.RMSEP = math.Sqrt(sumSq / float64(len(checks)))
	cv.Pass = true
	if len(rec) > 0 {
		cv.Bias = sumErr / float64(len(rec))
		if err := cv.judgeRecoveries(rec, lim); err != nil {
			return cv, nil, err
		}
	}
	if cv.AbsentFail > 0 {
		cv.Pass = false
		cv.Why = append(cv.Why, fmt.Sprintf("found above the LOQ in %d of %d standards without it", cv.AbsentFail, cv.Absent))
	}
	return cv, rows, nil
}

// judgeRecoveries sets the mean recovery and RSD of the recoveries rec
// and judges them against the limits.
func (cv *CompoundVerdict) judgeRecoveries(rec []float64, lim Limits) error {
	mean, sd := meanSD(rec)
	if math.IsInf(mean, 0) || math.IsNaN(sd) || math.IsInf(sd, 0) {
		return pkgerr.Errorf("validate", "%s: recoveries too large to average (known concentrations far below the results?)", cv.Compound)
	}
	cv.MeanRecovery = mean
	if len(rec) >= 2 {
		cv.RSDJudged = true
		cv.RSD = 100 * sd / math.Abs(mean)
		if mean == 0 || math.IsInf(cv.RSD, 0) {
			cv.RSD = 0
			cv.Why = append(cv.Why, fmt.Sprintf("mean recovery is %.2g %%: no RSD", mean))
			cv.Pass = false
		}
	}
	if mean < lim.RecoveryLo || mean > lim.RecoveryHi {
		cv.Pass = false
		cv.Why = append(cv.Why, fmt.Sprintf("mean recovery %.2f %% outside %g-%g %%", mean, lim.RecoveryLo, lim.RecoveryHi))
	}
	if cv.RSDJudged && cv.RSD > lim.MaxRSD {
		cv.Pass = false
		cv.Why = append(cv.Why, fmt.Sprintf("RSD %.2f %% above %g %%", cv.RSD, lim.MaxRSD))
	}
	return nil
}

// meanSD returns the mean and sample standard deviation (n - 1) of x; the
// SD is 0 for fewer than two values.
func meanSD(x []float64) (mean, sd float64) {
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	if len(x) < 2 {
		return mean, 0
	}
	var ss float64
	for _, v := range x {
		d := v - mean
		ss += d * d
	}
	return mean, math.Sqrt(ss / float64(len(x)-1))
}

// VerifyOptions control Verify.
type VerifyOptions struct {
	// Model is the sample model the checks are solved with (window,
	// baseline, weights, shift, blank). When Model.Blank is nil and the
	// check sheet has blank rows, their mean is the blank and the blank
	// rows are not judged; otherwise blank rows are judged as standards
	// holding nothing.
	Model unmix.Options
	// Limits are the acceptance limits.
	Limits Limits
	// MinSelectivity is the refusal threshold (0: DefaultMinSelectivity).
	MinSelectivity float64
	// Each, if not nil, is called with every check standard's name and
	// result as it is solved, in the order of the checks (a review
	// report draws their figures: set Model.KeepCurves). r is not kept.
	Each func(standard string, r *unmix.Result)
}

// VerifyContext solves the check standards of sheet against set as samples and
// judges them with Assess. The sheet must name the set's compounds (in
// any order, in units that convert to the set's where both state one:
// see inSetUnits); a compound the set cannot quantify in the model's
// design is refused first (an error wrapping errNotSelective). Errors from solving a standard name the
// sheet and line. It stops when ctx is done, between check standards: the
// error then wraps ctx.Err() and says how many check standards had been
// solved.
func VerifyContext(ctx context.Context, set *reference.Set, sheet *calibration.Sheet, opt VerifyOptions) (*Verification, error) {
	if err := checkSet(set); err != nil {
		return nil, err
	}
	sheet, converted, err := inSetUnits(set, sheet)
	if err != nil {
		return nil, err
	}
	col, err := matchCompounds(set, sheet)
	if err != nil {
		return nil, err
	}
	merits, err := modelMerits(set, opt.Model, opt.MinSelectivity)
	if err != nil {
		return nil, err
	}
	if err := merits.Err(); err != nil {
		return nil, err
	}
	mopt := opt.Model
	rows := append([]calibration.Row(nil), sheet.Standards...)
	blank := "none"
	switch {
	case mopt.Blank != nil:
		blank = mopt.Blank.Source.String()
		rows = append(rows, sheet.Blanks...)
	case len(sheet.Blanks) > 0:
		b, err := meanBlank(sheet.Blanks)
		if err != nil {
			return nil, pkgerr.Errorf("validate", "%s: %w", sheet.Path, err)
		}
		mopt.Blank = b
		blank = fmt.Sprintf("mean of %d blank row(s) of %s", len(sheet.Blanks), sheet.Path)
	}
	if len(rows) == 0 {
		return nil, pkgerr.Errorf("validate", "%s: no check standards to judge", sheet.Path)
	}
	model, err := unmix.NewModel(set, mopt)
	if err != nil {
		return nil, err
	}
	var checks []Check
	for _, r := range rows {
		if err := ctx.Err(); err != nil {
			return nil, pkgerr.Errorf("validate", "stopped after %d of %d check standards: %w", len(checks), len(rows), err)
		}
		res, err := model.Solve(r.Scan, unmix.Factors{})
		if err != nil {
			return nil, pkgerr.Errorf("validate", "%s:%d: check standard %s: %w", sheet.Path, r.Line, standardName(sheet, r), err)
		}
		name := standardName(sheet, r)
		if opt.Each != nil {
			opt.Each(name, res)
		}
		checks = append(checks, checkFrom(name, r.Conc, col, res))
	}
	names, units := setNames(set)
	v, err := Assess(names, units, checks, opt.Limits)
	if err != nil {
		return nil, err
	}
	v.Merits = merits
	v.Blank = blank
	v.Converted = converted
	return v, nil
}

// ModelMerits returns the figures of merit of the design a sample model
// with options opt fits (unmix.NewModel): its window, kept clear of the
// grid's ends by the largest shift when shifts are estimated, its
// baseline and weighting, at the set's path length.
func ModelMerits(set *reference.Set, opt unmix.Options) (*Merits, error) {
	if err := checkSet(set); err != nil {
		return nil, err
	}
	return modelMerits(set, opt, 0)
}

// modelMerits is ModelMerits with a refusal threshold (0: the default).
func modelMerits(set *reference.Set, opt unmix.Options, minSel float64) (*Merits, error) {
	lo, hi := opt.WindowLo, opt.WindowHi
	if (opt.Shift || opt.Auto) && len(set.Grid) > 1 {
		// The sample model keeps the maximum shift clear of the grid's
		// ends (with Auto too, where a shift is a candidate); so do the
		// merits, on the design of the model's fixed part (with Auto its
		// floor: the terms a sample adds are not known in advance).
		if lo == 0 && hi == 0 {
			lo, hi = set.Grid[0], set.Grid[len(set.Grid)-1]
		}
		ms := opt.MaxShiftNM
		if ms == 0 {
			ms = unmix.DefaultMaxShiftNM
		}
		lo, hi = math.Max(lo, set.Grid[0]+ms), math.Min(hi, set.Grid[len(set.Grid)-1]-ms)
	}
	return FiguresOfMerit(set, MeritOptions{
		WindowLo: lo, WindowHi: hi, Baseline: opt.Baseline,
		Weighted: opt.Weighted, Interferents: opt.Interferents, minSelectivity: minSel,
	})
}

// checkFrom pairs a sheet row's known concentrations (sheet order, mapped
// by col) with a result (set order).
func checkFrom(name string, conc []float64, col []int, res *unmix.Result) Check {
	n := len(col)
	c := Check{Name: name, Known: make([]float64, n), Found: make([]float64, n), SE: make([]float64, n), LOQ: make([]float64, n),
		Flags: make([][]unmix.Flag, n), Zero: make([]bool, n)}
	for k := range n {
		c.Known[k] = conc[col[k]]
		a := res.Amounts[k]
		c.Found[k], c.SE[k], c.LOQ[k] = a.Conc, a.SE, a.LOQ
		c.Zero[k] = a.HasFlag(unmix.FlagZero)
		for _, fs := range [][]unmix.Flag{res.Flags, a.Flags} {
			for _, f := range fs {
				if unmix.IsWarning(f) {
					c.Flags[k] = append(c.Flags[k], f)
				}
			}
		}
	}
	return c
}

// standardName names a standard of the sheet as solve names a sample: the
// column name of a wide-table row, else the file's name without folder
// and extension (chk-1 for checks/chk-1.csv). When another row of the
// sheet has a file of the same stem the file stays as written, so that
// names never merge.
func standardName(sh *calibration.Sheet, r calibration.Row) string {
	if r.Column != "" {
		return r.Column
	}
	stem := fileStem(r.File)
	for _, rows := range [][]calibration.Row{sh.Standards, sh.Blanks} {
		for _, o := range rows {
			if o.Column == "" && o.File != r.File && fileStem(o.File) == stem {
				return r.File
			}
		}
	}
	return stem
}

// rowFile names a sheet row for an error: its file, and its column when
// it has one.
func rowFile(r calibration.Row) string {
	if r.Column != "" {
		return r.File + " column " + r.Column
	}
	return r.File
}

// fileStem is a file's name without folder and extension.
func fileStem(file string) string {
	base := filepath.Base(filepath.FromSlash(file))
	return strings.TrimSuffix(base, filepath.Ext(base))
}

func setNames(set *reference.Set) (names, units []string) {
	for _, c := range set.Compounds {
		names = append(names, c.Name)
		units = append(units, c.Unit)
	}
	return names, units
}

// matchCompounds returns, for each compound of set, its column in sheet.
func matchCompounds(set *reference.Set, sheet *calibration.Sheet) ([]int, error) {
	idx := make(map[string]int, len(sheet.Compounds))
	for i, n := range sheet.Compounds {
		idx[strings.ToLower(n)] = i
	}
	col := make([]int, len(set.Compounds))
	used := map[int]bool{}
	for k, c := range set.Compounds {
		i, ok := idx[strings.ToLower(c.Name)]
		if !ok {
			return nil, pkgerr.Errorf("validate", "%s has no column for compound %s of the reference set", sheet.Path, c.Name)
		}
		if i < len(sheet.Units) && sheet.Units[i] != "" && c.Unit != "" && sheet.Units[i] != c.Unit {
			return nil, pkgerr.Errorf("validate", "%s gives %s in %s but the reference set in %s", sheet.Path, c.Name, sheet.Units[i], c.Unit)
		}
		col[k] = i
		used[i] = true
	}
	for i, n := range sheet.Compounds {
		if !used[i] {
			return nil, pkgerr.Errorf("validate", "%s names compound %s, which the reference set does not hold", sheet.Path, n)
		}
	}
	return col, nil
}

// meanBlank returns the mean of the blank rows' scans on the first one's
// grid (the others interpolated onto it, never extrapolated).
func meanBlank(rows []calibration.Row) (*spectrum.Spectrum, error) {
	if len(rows) == 0 {
		return nil, errors.New("no blank rows")
	}
	b := rows[0].Scan.Clone()
	if err := b.ToAbsorbance(); err != nil {
		return nil, err
	}
	for _, r := range rows[1:] {
		s := r.Scan.Clone()
		if err := s.ToAbsorbance(); err != nil {
			return nil, err
		}
		on, err := s.Resample(b.Wavelengths)
		if err != nil {
			return nil, fmt.Errorf("blank %s: %w", rowFile(r), err)
		}
		for i, v := range on.Values {
			b.Values[i] += v
		}
	}
	for i := range b.Values {
		b.Values[i] /= float64(len(rows))
	}
	b.Name = "mean blank"
	return b, nil
}

// MeanBlank returns the mean of blank rows' scans on the first one's grid
// (the others interpolated onto it, never extrapolated), as verify
// corrects check standards with a sheet's blank rows.
func MeanBlank(rows []calibration.Row) (*spectrum.Spectrum, error) {
	return meanBlank(rows)
}
