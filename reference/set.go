// Package reference builds, saves and loads reference sets: the
// absorptivity spectrum of each pure compound with its standard error and
// the noise model, made from calibration standards of known concentration.
package reference

import (
	"errors"

	"huesolve/baseline"
)

// SchemaVersion is the version of the reference-set file format written by
// this build. Files from a newer schema are refused.
const SchemaVersion = 1

// Compound is one calibrated compound.
type Compound struct {
	Name string `json:"name"`
	Unit string `json:"unit"` // concentration unit, e.g. "mg/L"; "" if not given
	// Absorptivity per unit concentration per cm of path, on Set.Grid.
	Absorptivity []float64 `json:"absorptivity"`
	SE           []float64 `json:"absorptivity_se"`
	// Usable is false at wavelengths where fewer than 3 levels stayed
	// under the ceiling for this compound.
	Usable []bool `json:"usable"`
	// Intercept per wavelength when the calibration model had one.
	Intercept []float64 `json:"intercept,omitempty"`
	// PeakNM is the wavelength of the largest absorptivity.
	PeakNM float64 `json:"peak_nm"`
	// Lowest and highest non-zero standard concentration.
	MinStandard float64 `json:"min_standard"`
	MaxStandard float64 `json:"max_standard"`
	// Linearity at PeakNM.
	Linearity Linearity `json:"linearity"`
}

// Linearity describes the calibration line of one compound at its band
// maximum.
type Linearity struct {
	Slope       float64 `json:"slope"`
	Intercept   float64 `json:"intercept"`
	SlopeSE     float64 `json:"slope_se"`
	InterceptSE float64 `json:"intercept_se"`
	R2          float64 `json:"r2"`
	ResidualSD  float64 `json:"residual_sd"`
	Levels      int     `json:"levels"`
	// Lack-of-fit F test against pure error (needs replicates); P is NaN
	// in memory and omitted in the file when there are none.
	LackOfFitF float64 `json:"lack_of_fit_f,omitempty"`
	LackOfFitP float64 `json:"lack_of_fit_p,omitempty"`
	// Mandel's fitting test (linear vs quadratic, ISO 8466-1).
	MandelF float64 `json:"mandel_f,omitempty"`
	MandelP float64 `json:"mandel_p,omitempty"`
	Curved  bool    `json:"curved"`
	// Linear range: the concentrations over which the line holds.
	RangeLo float64 `json:"range_lo"`
	RangeHi float64 `json:"range_hi"`
}

// Standard records one standard scan used to build the set.
type Standard struct {
	File   string    `json:"file"`
	Column string    `json:"column,omitempty"`
	SHA256 string    `json:"sha256"`
	Conc   []float64 `json:"conc"` // one per compound, in Compounds order
}

// Provenance says how and from what a set was made.
type Provenance struct {
	Tool      string     `json:"tool"`
	Version   string     `json:"version"`
	Created   string     `json:"created"` // RFC 3339, UTC
	Sheet     string     `json:"sheet"`
	Blank     string     `json:"blank,omitempty"` // blank scan file, or "sheet rows"
	Standards []Standard `json:"standards"`
}

// Set is a reference set.
type Set struct {
	Schema    int        `json:"schema"`
	Grid      []float64  `json:"grid_nm"`
	Compounds []Compound `json:"compounds"`
	// Noise is the residual standard deviation of the calibration per
	// wavelength (absorbance units at the standards' path length).
	Noise []float64 `json:"noise"`
	// PathCM is the path length the standards were scanned at.
	PathCM float64 `json:"path_cm"`
	// Ceiling is the absorbance above which readings were left out;
	// Floor the detector floor below which a band is not seen.
	Ceiling float64 `json:"ceiling"`
	Floor   float64 `json:"floor"`
	// Intercept is true when the calibration fitted an intercept.
	Intercept bool `json:"intercept"`
	// Pretreat are the pre-treatment steps applied to every standard;
	// samples must get the same.
	Pretreat   []baseline.Step `json:"pretreat,omitempty"`
	Provenance Provenance      `json:"provenance"`
	// Checksum is the SHA-256 of the file content with this field empty.
	Checksum string `json:"checksum"`
}

var errTODO = errors.New("reference: not yet written")

// Load reads a reference set, refusing files that are truncated, whose
// checksum does not match, or whose schema is newer than SchemaVersion.
func Load(path string) (*Set, error) { return nil, errTODO }

// Save writes s atomically, setting its checksum.
func (s *Set) Save(path string) error { return errTODO }
