package validate

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"

	"huesolve/calibration"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/unmix"
)

// CrossValOptions control CrossValidateContext.
type CrossValOptions struct {
	// Build are the options each fold's reference set is built with;
	// BuildOptionsFor gives those a saved set was built with.
	Build calibration.Options
	// Model is the sample model the left-out standards are solved with.
	// When Model.Blank is nil, Build.Blank is used, or else the mean of
	// the sheet's blank rows, the same blank the standards were
	// corrected with.
	Model unmix.Options
	// ByLevel leaves out all standards of one composition (replicates
	// together) instead of one standard at a time.
	ByLevel bool
}

// BuildOptionsFor returns the calibration.Options that reproduce how set
// was built, as far as the set records it: window (its grid), path
// length, ceiling, floor, intercept and pre-treatment. A separate blank
// scan is not recorded; give it in Build.Blank.
func BuildOptionsFor(set *reference.Set) calibration.Options {
	o := calibration.Options{
		PathCM: set.PathCM, Ceiling: set.Ceiling, Floor: set.Floor,
		ThroughOrigin: !set.Intercept, Pretreat: set.Pretreat, Interferents: set.Interferents,
	}
	if len(set.Grid) > 0 {
		o.WindowLo, o.WindowHi = set.Grid[0], set.Grid[len(set.Grid)-1]
	}
	return o
}

// Prediction is one left-out standard.
type Prediction struct {
	Standard string    `json:"standard"`
	Line     int       `json:"line"`
	Fold     int       `json:"fold"`
	Known    []float64 `json:"known"`
	Found    []float64 `json:"found"`
}

// CrossValidation is the outcome of CrossValidateContext.
type CrossValidation struct {
	Compounds []string `json:"compounds"`
	Units     []string `json:"units"`
	ByLevel   bool     `json:"by_level"`
	Folds     int      `json:"folds"`
	// Predictions of the left-out standards, in sheet order.
	Predictions []Prediction `json:"predictions"`
	// RMSECV per compound over all predictions.
	RMSECV []float64 `json:"rmsecv"`
	// Failed lists the folds that could not be built or solved, with the
	// reason; their standards have no prediction.
	Failed []string `json:"failed,omitempty"`
	// Converted says how the calibration sheet's concentrations were
	// converted to the reference set's units, as Verification.Converted.
	Converted []string `json:"unit_conversions,omitempty"`
}

// CrossValidateContext leaves out one standard (or, ByLevel, one composition with
// its replicates) of the calibration sheet at a time, builds a reference
// set from the remaining rows with calibration.Build, solves the left-out
// scans with unmix and compares with their known concentrations:
//
//	RMSECV_k = sqrt( Σ_i (ĉ_ik - c_ik)² / N )
//
// over the N standards predicted (the sheet's blank rows are never left
// out: they are the blank). A fold that fails (too few levels left, say)
// is listed in Failed and its standards are not predicted; an error is
// returned only when no fold succeeds, or the sheet does not name the
// set's compounds. It stops when ctx is done, between folds: the error
// then wraps ctx.Err() and says how many folds had been done.
func CrossValidateContext(ctx context.Context, set *reference.Set, sheet *calibration.Sheet, opt CrossValOptions) (*CrossValidation, error) {
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
	if len(sheet.Standards) < 2 {
		return nil, pkgerr.Errorf("validate", "%s: cross-validation needs at least two standards", sheet.Path)
	}
	mopt := opt.Model
	if mopt.Blank == nil {
		mopt.Blank = opt.Build.Blank
	}
	if mopt.Blank == nil && len(sheet.Blanks) > 0 {
		b, err := meanBlank(sheet.Blanks)
		if err != nil {
			return nil, pkgerr.Errorf("validate", "%s: %w", sheet.Path, err)
		}
		mopt.Blank = b
	}
	names, units := setNames(set)
	cv := &CrossValidation{Compounds: names, Units: units, ByLevel: opt.ByLevel, Converted: converted}
	folds := foldsOf(sheet.Standards, opt.ByLevel)
	cv.Folds = len(folds)
	var preds []Prediction
	var failed foldErrors
	for f, rows := range folds {
		if err := ctx.Err(); err != nil {
			return nil, pkgerr.Errorf("validate", "cross-validation stopped after %d of %d folds: %w", f, len(folds), err)
		}
		sub := *sheet
		sub.Standards = nil
		for i, r := range sheet.Standards {
			if !slices.Contains(rows, i) {
				sub.Standards = append(sub.Standards, r)
			}
		}
		var left []string
		for _, i := range rows {
			left = append(left, fmt.Sprintf("%s (line %d)", standardName(sheet, sheet.Standards[i]), sheet.Standards[i].Line))
		}
		fail := func(err error) {
			err = fmt.Errorf("leaving out %s: %w", strings.Join(left, ", "), err)
			failed = append(failed, err)
			cv.Failed = append(cv.Failed, err.Error())
		}
		fs, err := calibration.Build(&sub, opt.Build)
		if err != nil {
			fail(err)
			continue
		}
		fcol, err := matchCompounds(fs, sheet)
		if err != nil {
			fail(err)
			continue
		}
		model, err := unmix.NewModel(fs, mopt)
		if err != nil {
			fail(err)
			continue
		}
		var fp []Prediction
		for _, i := range rows {
			r := sheet.Standards[i]
			res, err := model.Solve(r.Scan, unmix.Factors{})
			if err != nil {
				fail(err)
				fp = nil
				break
			}
			p := Prediction{Standard: standardName(sheet, r), Line: r.Line, Fold: f + 1,
				Known: make([]float64, len(col)), Found: make([]float64, len(col))}
			for k := range col {
				p.Known[k] = r.Conc[col[k]]
				// fs has the sheet's compounds in sheet order; find
				// the set's compound k there.
				for j := range fcol {
					if fcol[j] == col[k] {
						p.Found[k] = res.Amounts[j].Conc
					}
				}
			}
			fp = append(fp, p)
		}
		preds = append(preds, fp...)
	}
	if len(preds) == 0 {
		return nil, pkgerr.Errorf("validate", "%s: every cross-validation fold failed: %w", sheet.Path, failed)
	}
	slices.SortStableFunc(preds, func(a, b Prediction) int { return a.Line - b.Line })
	cv.Predictions = preds
	cv.RMSECV = make([]float64, len(col))
	for k := range col {
		var ss float64
		for _, p := range preds {
			d := p.Found[k] - p.Known[k]
			ss += d * d
		}
		cv.RMSECV[k] = math.Sqrt(ss / float64(len(preds)))
	}
	return cv, nil
}

// foldsOf groups standard indices: one per standard, or by identical
// composition.
func foldsOf(rows []calibration.Row, byLevel bool) [][]int {
	var folds [][]int
	if !byLevel {
		for i := range rows {
			folds = append(folds, []int{i})
		}
		return folds
	}
	seen := map[string]int{}
	for i, r := range rows {
		key := fmt.Sprint(r.Conc)
		if f, ok := seen[key]; ok {
			folds[f] = append(folds[f], i)
			continue
		}
		seen[key] = len(folds)
		folds = append(folds, []int{i})
	}
	return folds
}

// foldErrors are the reasons of the failed folds, said one after the
// other with "; " between them; each stays in the chain of wrapped errors
// (errors.Is, pkgerr.Plain).
type foldErrors []error

func (e foldErrors) Error() string {
	parts := make([]string, len(e))
	for i, err := range e {
		parts[i] = err.Error()
	}
	return strings.Join(parts, "; ")
}

func (e foldErrors) Unwrap() []error { return e }
