// Package unmix solves sample spectra against a reference set: it builds
// the design (reference absorptivities times path length, plus baseline
// terms), fits each sample by non-negative least squares (package lsq),
// and turns the fit into concentrations with uncertainties, fit figures
// and quality flags.
package unmix

import (
	"errors"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// Options describe the sample model. Zero values mean the documented
// defaults.
type Options struct {
	// WindowLo, WindowHi crop the fit to a wavelength window (nm); both 0
	// means the whole reference grid.
	WindowLo, WindowHi float64
	// Baseline chooses the nuisance terms.
	Baseline baseline.Model
	// Weighted weights points by the reference set's noise model, with
	// noise growing as 10^A at high absorbance.
	Weighted bool
	// Shift estimates a small wavelength shift of the sample, limited to
	// +-MaxShiftNM (default 3 nm).
	Shift      bool
	MaxShiftNM float64
	// Ceiling overrides the reference set's absorbance ceiling (0: use the set's).
	Ceiling float64
	// Blank, if not nil, is subtracted from every sample (absorbance).
	Blank *spectrum.Spectrum
}

// Factors are per-sample: dilution factor (1 if 0) and path length in cm
// (the reference set's if 0).
type Factors struct {
	Dilution float64
	PathCM   float64
}

// Flag is a quality flag on a sample or on one compound's amount.
type Flag string

// Amount is one compound's concentration in a sample.
type Amount struct {
	Compound string  `json:"compound"`
	Unit     string  `json:"unit"`
	Conc     float64 `json:"conc"`
	SE       float64 `json:"se"`
	Lo       float64 `json:"ci95_lo"`
	Hi       float64 `json:"ci95_hi"`
	Flags    []Flag  `json:"flags,omitempty"`
}

// Result is the outcome for one sample.
type Result struct {
	Sample   string             `json:"sample"`
	Source   string             `json:"source"`
	Amounts  []Amount           `json:"amounts"`
	Baseline map[string]float64 `json:"baseline,omitempty"`
	Flags    []Flag             `json:"flags,omitempty"`
	RMS      float64            `json:"rms_residual"`
	ChiSqRed float64            `json:"reduced_chi_square"`
	DW       float64            `json:"durbin_watson"`
	R2       float64            `json:"r2"`
	Cond     float64            `json:"condition_number"`
	Points   int                `json:"points_used"`
	Dropped  int                `json:"points_dropped"`
	ShiftNM  float64            `json:"shift_nm"`
	// Curves for plots (not in JSON): grid, measured, fitted, residual,
	// per-compound contributions, baseline, expected noise.
	Grid          []float64   `json:"-"`
	Measured      []float64   `json:"-"`
	Fitted        []float64   `json:"-"`
	Residual      []float64   `json:"-"`
	Contributions [][]float64 `json:"-"`
	BaselineCurve []float64   `json:"-"`
	Noise         []float64   `json:"-"`
}

var errTODO = errors.New("unmix: not yet written")

// Model is a reference set plus options, set up once and used for many
// samples.
type Model struct {
	set *reference.Set
	opt Options
}

// NewModel checks the options against the set and builds the design.
func NewModel(set *reference.Set, opt Options) (*Model, error) { return nil, errTODO }

// Solve fits one sample spectrum (any grid covering the model window; any
// quantity, converted to absorbance).
func (m *Model) Solve(s *spectrum.Spectrum, f Factors) (*Result, error) { return nil, errTODO }
