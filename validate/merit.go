package validate

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/floats"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/unmix"
)

// ICH Q2 factors for the detection and quantitation limits from the
// standard deviation of the response and the slope (ICH Q2(R2), 2023,
// LOD = 3.3 σ/S, LOQ = 10 σ/S): the unmix package's, defined once there.
const (
	LODFactor = unmix.LODFactor
	LOQFactor = unmix.LOQFactor
)

// DefaultMinSelectivity is the selectivity below which a compound is
// refused for quantification. At 0.01 the noise on its result is 100
// times that of a compound with the same band and no overlap (variance
// inflation 1/SEL² = 10⁴); a project choice, not a published limit.
const DefaultMinSelectivity = 0.01

// MeritOptions choose the design the figures of merit are computed for;
// they should match the options samples are solved with.
type MeritOptions struct {
	// WindowLo, WindowHi crop to a wavelength window (nm); both 0 means
	// the whole grid.
	WindowLo, WindowHi float64
	// Baseline gives the nuisance columns, which count among the "other"
	// columns that take away selectivity.
	Baseline baseline.Model
	// PathCM is the sample path length (0: the set's).
	PathCM float64
	// Sigma, if > 0, is the noise SD of a sample reading (absorbance) at
	// every wavelength; 0 uses the set's noise model as solve uses it at
	// zero absorbance (a blank): noise(l) sqrt(1 + 10^(-2 WeightKneeA)),
	// see package unmix.
	Sigma float64
	// Weighted computes the standard errors and limits for a fit
	// weighted by the noise model (1/σ²) instead of an unweighted one.
	Weighted bool
	// Interferents are substances present but not quantified
	// (unmix.Options.Interferents): nuisance columns like the baseline
	// terms, so a compound they overlap loses selectivity.
	Interferents []unmix.Interferent
	// minSelectivity is the refusal threshold (0: DefaultMinSelectivity),
	// set from VerifyOptions.MinSelectivity.
	minSelectivity float64
}

// Merit holds the figures of merit of one compound.
type Merit struct {
	Compound string `json:"compound"`
	Unit     string `json:"unit"`
	// Sensitivity is ||s*||, the norm of the net analyte signal over the
	// window, in absorbance per unit concentration at the path length.
	Sensitivity float64 `json:"sensitivity"`
	// Selectivity is ||s*|| / ||s||, between 0 and 1.
	Selectivity float64 `json:"selectivity"`
	// SE is the predicted standard error of a result near zero
	// concentration from the noise alone.
	SE float64 `json:"se_blank"`
	// LOD and LOQ are LODFactor and LOQFactor times SE.
	LOD float64 `json:"lod"`
	LOQ float64 `json:"loq"`
	// Quantifiable is false when Selectivity is below the threshold;
	// Reason then says why.
	Quantifiable bool   `json:"quantifiable"`
	Reason       string `json:"reason,omitempty"`
}

// Merits are the figures of merit of every compound of a set in one
// design.
type Merits struct {
	WindowLo float64 `json:"window_lo_nm"`
	WindowHi float64 `json:"window_hi_nm"`
	Points   int     `json:"points"`
	PathCM   float64 `json:"path_cm"`
	Baseline string  `json:"baseline"`
	Weighted bool    `json:"weighted"`
	// Sigma is the root mean square of the noise SD over the rows.
	Sigma float64 `json:"noise_rms"`
	// Cond is the condition number of the whole design (compounds and
	// baseline terms, columns scaled to unit norm, weighted when
	// Weighted), at most 1/ε; Singular is true when the smallest singular
	// value is at or below lsq.RankTol of the largest (the columns are
	// linearly dependent to rounding).
	Cond     float64 `json:"condition_number"`
	Singular bool    `json:"singular"`
	// MinSelectivity is the refusal threshold that was applied.
	MinSelectivity float64 `json:"min_selectivity"`
	Compounds      []Merit `json:"compounds"`
}

// unquantifiableError says that a compound cannot be quantified in a
// design because no part of its spectrum is its own.
type unquantifiableError struct {
	Compound    string
	Selectivity float64
	Threshold   float64
	WindowLo    float64
	WindowHi    float64
	Reason      string
}

func (e *unquantifiableError) Error() string { return "validate: " + e.Unprefixed() }

// Unprefixed is the error's text without the package prefix.
func (e *unquantifiableError) Unprefixed() string {
	return fmt.Sprintf("%s cannot be quantified in %g-%g nm: %s (selectivity %.3g, below %g)",
		e.Compound, e.WindowLo, e.WindowHi, e.Reason, e.Selectivity, e.Threshold)
}

// Unwrap returns errNotSelective.
func (e *unquantifiableError) Unwrap() error { return errNotSelective }

// Err returns nil when every compound is quantifiable, else the
// *unquantifiableError of each refused compound joined with errors.Join.
func (m *Merits) Err() error {
	var errs []error
	for _, c := range m.Compounds {
		if !c.Quantifiable {
			errs = append(errs, &unquantifiableError{
				Compound: c.Compound, Selectivity: c.Selectivity, Threshold: m.MinSelectivity,
				WindowLo: m.WindowLo, WindowHi: m.WindowHi, Reason: c.Reason,
			})
		}
	}
	return errors.Join(errs...)
}

// FiguresOfMerit computes sensitivity, selectivity, the blank-level
// standard error and the limits of detection and quantitation of every
// compound of set in the design chosen by opt (see the package comment
// for the formulas).
//
// A compound whose selectivity is below opt.minSelectivity is marked not
// quantifiable with a reason: no absorbance in the window, imitated by the
// baseline terms, a copy of another compound, or a combination of the
// others; Merits.Err turns these into errors. Its SE and limits are then
// 0 (not defined).
//
// It returns an error for a set without compounds, a window with fewer
// usable wavelengths than columns plus one, and a missing noise model
// (errNoNoise) when opt.Sigma is 0.
func FiguresOfMerit(set *reference.Set, opt MeritOptions) (*Merits, error) {
	if err := checkSet(set); err != nil {
		return nil, err
	}
	path := opt.PathCM
	if path == 0 {
		path = set.PathCM
	}
	if !(path > 0) || math.IsInf(path, 0) {
		return nil, pkgerr.Errorf("validate", "path length %g cm is not a positive number", path)
	}
	minSel := opt.minSelectivity
	if minSel == 0 {
		minSel = DefaultMinSelectivity
	}
	d, err := newDesign(set, opt.WindowLo, opt.WindowHi, opt.Baseline, path, opt.Sigma, opt.Interferents...)
	if err != nil {
		return nil, err
	}
	idx := d.idx
	ncol := len(d.comp) + len(d.nuis)
	if len(idx) < ncol+1 {
		return nil, fmt.Errorf("%w: %d in %g-%g nm for %d columns", errWindow, len(idx), opt.WindowLo, opt.WindowHi, ncol)
	}
	out := &Merits{
		WindowLo: d.wl[0], WindowHi: d.wl[len(d.wl)-1], Points: len(idx),
		PathCM: path, Baseline: opt.Baseline.String(), Weighted: opt.Weighted,
		Sigma: rms(d.sigma), MinSelectivity: minSel,
	}
	var w []float64
	if opt.Weighted {
		w = make([]float64, len(d.sigma))
		for r, s := range d.sigma {
			w[r] = 1 / s
		}
	}
	all := append(append([][]float64(nil), d.comp...), d.nuis...)
	if out.Cond, out.Singular, err = condScaled(len(idx), all, w); err != nil {
		return nil, err
	}

	var p projector
	nas := make([]float64, len(idx))
	nasW := make([]float64, len(idx))
	others := make([][]float64, 0, ncol)
	for n, c := range set.Compounds {
		others = others[:0]
		for k, col := range d.comp {
			if k != n {
				others = append(others, col)
			}
		}
		others = append(others, d.nuis...)
		if err := p.reset(len(idx), others, nil); err != nil {
			return nil, err
		}
		p.residual(nas, d.comp[n], nil)
		norm := floats.Norm(d.comp[n], 2)
		sen := floats.Norm(nas, 2)
		m := Merit{Compound: c.Name, Unit: c.Unit, Sensitivity: sen}
		if norm > 0 {
			m.Selectivity = sen / norm
		}
		m.Quantifiable = m.Selectivity >= minSel
		if !m.Quantifiable {
			if m.Reason, err = whyNotSelective(set, d, n, minSel); err != nil {
				return nil, err
			}
		} else {
			if opt.Weighted {
				if err := p.reset(len(idx), others, w); err != nil {
					return nil, err
				}
				p.residual(nasW, d.comp[n], w)
				m.SE = 1 / floats.Norm(nasW, 2)
			} else {
				// g = s*/||s*||² is the row of the pseudo-inverse that
				// gives c_n; its variance is Σ g_i² σ_i².
				var v float64
				for r, x := range nas {
					g := x / (sen * sen)
					v += g * g * d.sigma[r] * d.sigma[r]
				}
				m.SE = math.Sqrt(v)
			}
			m.LOD = LODFactor * m.SE
			m.LOQ = LOQFactor * m.SE
		}
		out.Compounds = append(out.Compounds, m)
	}
	return out, nil
}

// whyNotSelective names what takes away compound n's signal: nothing
// there, the baseline terms alone, one other compound (with or without
// the baseline terms), or several together; errSVD when a factorization
// fails.
func whyNotSelective(set *reference.Set, d *design, n int, minSel float64) (string, error) {
	col := d.comp[n]
	norm := floats.Norm(col, 2)
	if !(norm > 0) {
		return "it does not absorb in this window", nil
	}
	var p projector
	res := make([]float64, len(col))
	var err error
	sel := func(others [][]float64) float64 {
		if e := p.reset(len(col), others, nil); e != nil {
			err = e
			return math.Inf(1)
		}
		p.residual(res, col, nil)
		return floats.Norm(res, 2) / norm
	}
	if len(d.nuis) > 0 && sel(d.nuis) < minSel {
		return fmt.Sprintf("the baseline terms (%s) can imitate its spectrum", strings.Join(d.nuisName, ", ")), nil
	}
	if err != nil {
		return "", err
	}
	best, bestSel := -1, math.Inf(1)
	for k := range d.comp {
		if k == n {
			continue
		}
		s := sel(append([][]float64{d.comp[k]}, d.nuis...))
		if s < bestSel {
			best, bestSel = k, s
		}
	}
	if err != nil {
		return "", err
	}
	if best >= 0 && bestSel < minSel {
		if len(d.nuis) > 0 {
			return fmt.Sprintf("its spectrum is a copy of %s's (up to scale and baseline terms)", set.Compounds[best].Name), nil
		}
		return fmt.Sprintf("its spectrum is a copy of %s's (up to scale)", set.Compounds[best].Name), nil
	}
	if len(d.nuis) > 0 {
		return "a combination of the other compounds and the baseline terms can imitate its spectrum", nil
	}
	return "a combination of the other compounds can imitate its spectrum", nil
}
