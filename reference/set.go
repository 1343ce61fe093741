package reference

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"unicode"
	"unicode/utf8"

	"huesolve/baseline"
	"huesolve/internal/atomicfile"
	"huesolve/internal/bytesize"
	"huesolve/internal/pkgerr"
	"huesolve/spectrum"
)

// SchemaVersion is the newest version of the reference-set file format
// this build reads and writes. Files from a newer schema are refused.
// Schema 2 adds noise_model; a set without one is written as schema 1,
// byte for byte as before, so older builds still read it, and refuse a
// set with a noise model as newer (rather than as damaged). Schema 3 adds
// absorptivity_cov (see [AbsorptivityCov]) and interferents, in the same
// way: a set without them is written as before.
const SchemaVersion = 3

// schemaOf is the schema a set is written as: the lowest that holds its
// optional fields (2 with a noise model, 3 with the absorptivities'
// covariance or interferents), else 1.
func (s *Set) schemaOf() int {
	v := 1
	if s.NoiseModel != nil {
		v = 2
	}
	if s.AbsorptivityCov != nil || len(s.Interferents) > 0 {
		v = 3
	}
	return v
}

// Compound is one calibrated compound.
type Compound struct {
	Name string `json:"name"`
	Unit string `json:"unit"` // concentration unit, e.g. "mg/L"; "" if not given
	// Absorptivity per unit concentration per cm of path, on Set.Grid.
	// Where Usable is false because no standard of the compound could be
	// used at that wavelength, Absorptivity and SE are 0.
	Absorptivity []float64 `json:"absorptivity"`
	SE           []float64 `json:"absorptivity_se"`
	// Usable is false at wavelengths where fewer than 3 levels stayed
	// under the ceiling for this compound.
	Usable []bool `json:"usable"`
	// Intercept per wavelength when the calibration model had one, in
	// absorbance at the standards' path length. The intercept is common to
	// all compounds of a set (one per wavelength); it is repeated in each
	// compound.
	Intercept []float64 `json:"intercept,omitempty"`
	// PeakNM is the wavelength of the largest absorptivity.
	PeakNM float64 `json:"peak_nm"`
	// Lowest and highest non-zero standard concentration.
	MinStandard float64 `json:"min_standard"`
	MaxStandard float64 `json:"max_standard"`
	// Linearity at PeakNM.
	Linearity Linearity `json:"linearity"`
	// LeftOut counts the readings of standards holding this compound that
	// were above the ceiling and left out of the fit, over all
	// wavelengths.
	LeftOut int `json:"left_out,omitempty"`
	// Flags are the quality codes of this compound (see [Flags]).
	Flags []Flag `json:"flags,omitempty"`
	// StandardsLeftOut are the standards Build left out of the whole fit
	// (for every compound) because this compound's calibration line
	// bends above its linear range, or the ceiling cut them at its band
	// maximum: the absorptivities, MinStandard, MaxStandard and Linearity
	// rest on the other standards only.
	StandardsLeftOut []Standard `json:"standards_left_out,omitempty"`
}

// Linearity describes the calibration line of one compound at its band
// maximum: absorbance (at the standards' path length, with the other
// compounds' fitted contributions removed) against concentration, always
// fitted with an intercept, as in ISO 8466-1.
type Linearity struct {
	Slope       float64 `json:"slope"`
	Intercept   float64 `json:"intercept"`
	SlopeSE     float64 `json:"slope_se"`
	InterceptSE float64 `json:"intercept_se"`
	R2          float64 `json:"r2"`
	ResidualSD  float64 `json:"residual_sd"`
	// Levels is the number of distinct non-zero concentrations in the
	// line; Points the number of readings.
	Levels int `json:"levels"`
	Points int `json:"points"`
	// Lack-of-fit F test against pure error (needs replicates); P is NaN
	// in memory and omitted in the file when there are none.
	LackOfFitF float64 `json:"lack_of_fit_f,omitempty"`
	LackOfFitP float64 `json:"lack_of_fit_p,omitempty"`
	// Mandel's fitting test (linear vs quadratic, ISO 8466-1). NaN in
	// memory and omitted in the file when there are too few points.
	MandelF float64 `json:"mandel_f,omitempty"`
	MandelP float64 `json:"mandel_p,omitempty"`
	// Curved: Mandel's test prefers a quadratic here and the curvature is
	// confirmed (see [BandLinearity.ConfirmsPeak]); CurvedUnconfirmed:
	// it prefers one here only, not at the neighbouring band
	// wavelengths, which at TestLevel is likely chance, so the line is
	// not flagged and the range keeps every level.
	Curved            bool `json:"curved"`
	CurvedUnconfirmed bool `json:"curved_unconfirmed,omitempty"`
	// Linear range: the concentrations over which the line holds.
	RangeLo float64 `json:"range_lo"`
	RangeHi float64 `json:"range_hi"`
	// Data are the readings behind the line, for plots.
	Data []Point `json:"data,omitempty"`
	// Band is the same line tested at every wavelength of the compound's
	// band (see [BandLinearity]); nil (omitted in the file) when not
	// computed, as in sets written before it was.
	Band *BandLinearity `json:"band,omitempty"`
}

// BandLinearity is the calibration line of one compound fitted and tested
// at each wavelength of its band: the usable wavelengths where its
// absorptivity is at least [BandFraction] of its maximum. At each one the
// line is fitted exactly as at the band maximum (same readings, with the
// other compounds' fitted contributions removed).
type BandLinearity struct {
	// LoNM and HiNM are the first and last band wavelength.
	LoNM float64 `json:"lo_nm"`
	HiNM float64 `json:"hi_nm"`
	// Wavelengths is the number of band wavelengths with a line fitted.
	Wavelengths int `json:"wavelengths"`
	// MinR2 is the lowest R² over the band, at MinR2NM.
	MinR2   float64 `json:"min_r2"`
	MinR2NM float64 `json:"min_r2_nm"`
	// Tested is the number of band wavelengths where Mandel's test could
	// be run; Curved the number where it prefers a quadratic at
	// [TestLevel].
	Tested int `json:"mandel_tested"`
	Curved int `json:"mandel_curved"`
	// PeakNeighboursTested is the number of band wavelengths one grid
	// step either side of the band maximum (0 to 2) where Mandel's test
	// could be run; PeakNeighboursCurved the number of those where it
	// prefers a quadratic.
	PeakNeighboursTested int `json:"mandel_peak_neighbours_tested,omitempty"`
	PeakNeighboursCurved int `json:"mandel_peak_neighbours_curved,omitempty"`
}

// ConfirmsPeak reports whether curvature found by Mandel's test at the
// band maximum is borne out by the band: the test also prefers a
// quadratic at a neighbouring band wavelength (one grid step either
// side), or at more than bandCurvedShare of the band (TooCurved). At
// TestLevel a straight line fails the test at about 1 % of wavelengths
// by chance, while real curvature bends the line at every wavelength near
// the maximum (their absorptivities differ little). With no band, or no
// neighbour where the test could be run, there is nothing to weigh the
// maximum against and its result stands (true).
func (b *BandLinearity) ConfirmsPeak() bool {
	return b == nil || b.PeakNeighboursTested == 0 || b.PeakNeighboursCurved > 0 || b.TooCurved()
}

// TooCurved reports whether Mandel's test flags curvature at more than
// bandCurvedShare of the band wavelengths where it could be run.
func (b *BandLinearity) TooCurved() bool {
	return b != nil && b.Tested > 0 && float64(b.Curved) > bandCurvedShare*float64(b.Tested)
}

// Point is one reading of a calibration line.
type Point struct {
	Conc       float64 `json:"conc"`
	Absorbance float64 `json:"absorbance"`
	// Used is false for a reading left out (above the ceiling).
	Used bool `json:"used"`
}

// linearityFile is Linearity as written: the statistics that may be NaN
// are pointers, nil (omitted) when NaN.
type linearityFile struct {
	linearityPlain
	LackOfFitF *float64 `json:"lack_of_fit_f,omitempty"`
	LackOfFitP *float64 `json:"lack_of_fit_p,omitempty"`
	MandelF    *float64 `json:"mandel_f,omitempty"`
	MandelP    *float64 `json:"mandel_p,omitempty"`
}

type linearityPlain Linearity

func finiteOrNil(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func nanIfNil(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// MarshalJSON writes l, leaving out the test statistics that are NaN.
func (l Linearity) MarshalJSON() ([]byte, error) {
	return json.Marshal(linearityFile{
		linearityPlain: linearityPlain(l),
		LackOfFitF:     finiteOrNil(l.LackOfFitF),
		LackOfFitP:     finiteOrNil(l.LackOfFitP),
		MandelF:        finiteOrNil(l.MandelF),
		MandelP:        finiteOrNil(l.MandelP),
	})
}

// UnmarshalJSON reads l; test statistics absent from the file are NaN.
func (l *Linearity) UnmarshalJSON(b []byte) error {
	var f linearityFile
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	*l = Linearity(f.linearityPlain)
	l.LackOfFitF = nanIfNil(f.LackOfFitF)
	l.LackOfFitP = nanIfNil(f.LackOfFitP)
	l.MandelF = nanIfNil(f.MandelF)
	l.MandelP = nanIfNil(f.MandelP)
	return nil
}

// Standard records one standard scan used to build the set.
type Standard struct {
	File   string    `json:"file"`
	Column string    `json:"column,omitempty"`
	SHA256 string    `json:"sha256"`
	Conc   []float64 `json:"conc"` // one per compound, in Compounds order
	// Line is the line of the standards sheet the standard was read from.
	Line int `json:"sheet_line,omitempty"`
}

// Provenance says how and from what a set was made.
type Provenance struct {
	Tool      string     `json:"tool"`
	Version   string     `json:"version"`
	Created   string     `json:"created"` // RFC 3339, UTC
	Sheet     string     `json:"sheet"`
	Blank     string     `json:"blank,omitempty"` // blank scan file, or "sheet rows"
	Standards []Standard `json:"standards"`
	// BlankSHA256 is the SHA-256 of the separate blank scan file, if any.
	BlankSHA256 string `json:"blank_sha256,omitempty"`
	// Notes are the warnings given while the set was built.
	Notes []string `json:"notes,omitempty"`
}

// Set is a reference set.
type Set struct {
	Schema    int        `json:"schema"`
	Grid      []float64  `json:"grid_nm"`
	Compounds []Compound `json:"compounds"`
	// Noise is the residual standard deviation of the calibration per
	// wavelength (absorbance units at the standards' path length).
	Noise []float64 `json:"noise"`
	// NoiseModel is the noise growth with absorbance measured from the
	// standards; nil (omitted) in sets that do not have one, which keep
	// the fixed rule (see [Set.Sigma]).
	NoiseModel *NoiseModel `json:"noise_model,omitempty"`
	// AbsorptivityCov is what the covariance of the fitted absorptivities
	// needs (see [AbsorptivityCov]); nil (omitted) in sets made before it
	// was recorded, whose results leave the calibration's uncertainty out.
	AbsorptivityCov *AbsorptivityCov `json:"absorptivity_cov,omitempty"`
	// Interferents are scans of substances present but not quantified,
	// stored at calibrate time; nil (omitted) in sets without them.
	Interferents []Interferent `json:"interferents,omitempty"`
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

// The noise model of a sample reading: the one rule unmix (weights,
// chi-square, detection limits, noise band) and validate (figures of
// merit, window advice) both use.
//
//	sigma_i(A) = max(Noise_i, NoiseFloorAU) * sqrt(1 + 10^(2 (A - WeightKneeA)))
//
// The floor is absolute, not relative to the set's median noise: a
// quiet stretch of a set with large median noise keeps its own, smaller,
// noise, as the fit sees it, so that a detection limit from a solve and
// one from the figures of merit agree for the same design.
const (
	// NoiseFloorAU is the smallest noise sigma (absorbance units) used
	// anywhere: it keeps weights and chi-square finite where a reference
	// set's noise is zero (a zeroed region, say). Typical UV-Vis
	// photometric noise is near 1e-4 AU (common practice), so the floor
	// does not bind on real data.
	NoiseFloorAU = 1e-5
	// WeightKneeA is the absorbance above which the noise model grows as
	// 10^A (below it the calibration noise holds). Photometric noise
	// takes over near A = 1 on common instruments (common practice):
	// s_A = 0.434 s_T / T for constant transmittance noise s_T.
	WeightKneeA = 1.0
)

// NoiseFloor is the calibration noise at grid point i with the floor
// applied: max(Noise[i], NoiseFloorAU).
func (s *Set) NoiseFloor(i int) float64 { return math.Max(s.Noise[i], NoiseFloorAU) }

// NoiseGrowth is the fixed rule's factor sqrt(1 + 10^(2 (a - WeightKneeA)))
// by which the noise of a reading of absorbance a exceeds the calibration
// noise, for sets without a measured noise model (see
// [Set.NoiseGrowth]). A negative a or NaN counts as 0.
func NoiseGrowth(a float64) float64 { return GrowthAt(a, WeightKneeA) }

// Sigma is the noise SD of a reading of absorbance a at grid point i:
// NoiseFloor(i) * s.NoiseGrowth(a), the measured growth when the set
// has a noise model and the fixed rule otherwise.
func (s *Set) Sigma(i int, a float64) float64 { return s.NoiseFloor(i) * s.NoiseGrowth(a) }

// Sentinel causes of Load errors, tested with errors.Is.
var (
	// errTruncated: the file ends before the JSON document does.
	errTruncated = errors.New("the file ends early (truncated or still being written)")
	// errChecksum: the content does not match its checksum.
	errChecksum = errors.New("checksum does not match the content: the file was changed after it was saved (edited by hand or damaged); build it again with huesolve calibrate")
	// errNewerSchema: the file was written by a newer huesolve.
	errNewerSchema = errors.New("the file uses a newer reference-set schema than this huesolve reads; update huesolve")
	// errNotSet: the file is JSON but not a reference set.
	errNotSet = errors.New("not a huesolve reference set")
	// errInvalid: the content breaks an invariant of a reference set.
	errInvalid = errors.New("invalid reference set")
)

// computeChecksum returns the SHA-256, in lower-case hex, of the canonical
// content of s: its compact JSON encoding with the Checksum field empty.
func (s *Set) computeChecksum() (string, error) {
	c := *s
	c.Checksum = ""
	b, err := json.Marshal(&c)
	if err != nil {
		return "", pkgerr.Errorf("reference", "encode set: %w", err)
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:]), nil
}

// Validate checks the invariants of a set and that every field lies in a
// plausible range (the limits are named constants in conventions.go):
//
//   - grid_nm: at least two points, finite, strictly increasing, within
//     [MinGridNM, MaxGridNM];
//   - noise: on the grid, finite, 0 <= noise <= MaxNoiseAU;
//   - path_cm in [MinPathCM, MaxPathCM]; 0 <= floor < ceiling <=
//     MaxCeiling;
//   - pretreat: steps baseline.ParseStep would accept (Step.Check) that
//     can be applied on the set's own grid;
//   - per compound: a non-empty name, unique in the set, and a unit, both
//     free of control characters (see TextFault); absorptivity and
//     intercept finite, SE finite and >= 0, all on the grid; peak_nm inside
//     the grid; min_standard and max_standard with 0 < min <= max; known
//     flags only (Flags); the linearity figures finite and in range (R²
//     in [0, 1], standard errors and SDs >= 0, F >= 0 and P in [0, 1]
//     when present, counts >= 0, 0 <= range_lo <= range_hi, band limits
//     on the grid);
//   - per standard of the provenance: one finite, non-negative
//     concentration per compound.
//
// A set made in memory may leave out what Build records: Noise, SE and
// Usable may be empty, the ceiling 0 (the default), and peak_nm,
// min_standard and max_standard 0 (not recorded). A set written by Save
// or read by Load must record all of them (see validateRecorded). It is
// the one check of a set: Load, Save and Build call it, and so do the
// packages that solve with a set (unmix, validate). Errors wrap
// errInvalid and name the field (by its name in the file), the compound
// and the value.
func (s *Set) Validate() error {
	if err := s.validateGrid(); err != nil {
		return err
	}
	if err := s.validatePretreat(); err != nil {
		return err
	}
	if err := s.validateCompounds(); err != nil {
		return err
	}
	if err := s.validateNoiseModel(); err != nil {
		return err
	}
	if err := s.validateAbsorptivityCov(); err != nil {
		return err
	}
	if err := s.validateInterferents(); err != nil {
		return err
	}
	return s.validateStandards()
}

// validateRecorded checks that s records everything Build records, as a
// set in a file must: noise, absorptivity SE and usable marks on the
// grid, a ceiling, each compound's band maximum and standards range. A set with max_standard 0 would never flag a result
// over its range, one without noise would weigh nothing.
func (s *Set) validateRecorded() error {
	n := len(s.Grid)
	switch {
	case len(s.Noise) != n:
		return invalid("noise: %d values for %d wavelengths", len(s.Noise), n)
	case s.Ceiling == 0:
		return invalid("ceiling is 0: a saved set records its ceiling")
	}
	for _, c := range s.Compounds {
		switch {
		case len(c.SE) != n:
			return invalid("compound %q: absorptivity_se: %d values for %d wavelengths", c.Name, len(c.SE), n)
		case len(c.Usable) != n:
			return invalid("compound %q: usable: %d marks for %d wavelengths", c.Name, len(c.Usable), n)
		case c.PeakNM == 0:
			return invalid("compound %q: peak_nm 0 is outside the grid %g-%g nm", c.Name, s.Grid[0], s.Grid[n-1])
		case !(c.MinStandard > 0):
			return invalid("compound %q: min_standard %g: want a positive concentration", c.Name, c.MinStandard)
		}
	}
	return nil
}

// invalid returns an error wrapping errInvalid.
func invalid(format string, a ...any) error {
	return fmt.Errorf("%w: %s", errInvalid, fmt.Sprintf(format, a...))
}

// validateGrid checks the grid, the noise model, the path length, the
// ceiling and floor, and that there are compounds.
func (s *Set) validateGrid() error {
	n := len(s.Grid)
	if n < 2 {
		return invalid("grid has %d points, need at least 2", n)
	}
	for i, w := range s.Grid {
		if !finite(w) || (i > 0 && w <= s.Grid[i-1]) {
			return invalid("grid_nm is not finite and strictly increasing at point %d (%g nm)", i+1, w)
		}
		if w < MinGridNM || w > MaxGridNM {
			return invalid("grid_nm point %d (%g nm) is outside %g-%g nm (UV-Vis-NIR)", i+1, w, float64(MinGridNM), float64(MaxGridNM))
		}
	}
	if len(s.Compounds) == 0 {
		return invalid("no compounds")
	}
	if len(s.Noise) > 0 {
		if err := checkSlice("noise", s.Noise, n); err != nil {
			return invalid("%v", err)
		}
	}
	for i, v := range s.Noise {
		if v < 0 || v > MaxNoiseAU {
			return invalid("noise %g at %g nm is outside 0-%g (absorbance units)", v, s.Grid[i], float64(MaxNoiseAU))
		}
	}
	if !(s.PathCM >= MinPathCM && s.PathCM <= MaxPathCM) {
		return invalid("path_cm %g is outside %g-%g cm", s.PathCM, float64(MinPathCM), float64(MaxPathCM))
	}
	if !finite(s.Ceiling) || s.Ceiling < 0 || s.Ceiling > MaxCeiling {
		return invalid("ceiling %g is outside 0-%g (absorbance)", s.Ceiling, float64(MaxCeiling))
	}
	if !finite(s.Floor) || s.Floor < 0 || s.Ceiling != 0 && s.Ceiling <= s.Floor {
		return invalid("ceiling %g and floor %g: need 0 <= floor < ceiling", s.Ceiling, s.Floor)
	}
	return nil
}

// validatePretreat checks each pre-treatment step (the check ParseStep
// makes) and applies the steps to a flat spectrum on the set's grid,
// which finds what only the grid shows: a zeroing region with no grid
// points, a Savitzky-Golay window longer than the grid or an uneven
// grid. Build applied the same steps to every standard, so a set it made
// always passes; a damaged one would fail only sample by sample.
func (s *Set) validatePretreat() error {
	if len(s.Pretreat) == 0 {
		return nil
	}
	for i, st := range s.Pretreat {
		if err := st.Check(); err != nil {
			return invalid("pretreat step %d: %v", i+1, err)
		}
	}
	if _, err := baseline.ApplyAll(s.Pretreat, s.Grid, make([]float64, len(s.Grid))); err != nil {
		return invalid("pretreat cannot be applied on the set's grid: %v", err)
	}
	return nil
}

// validateCompounds checks each compound: a unique name, its
// per-wavelength slices and its linearity figures.
func (s *Set) validateCompounds() error {
	seen := map[string]bool{}
	for i := range s.Compounds {
		c := &s.Compounds[i]
		if err := c.validateText(); err != nil {
			return err
		}
		if seen[c.Name] {
			return invalid("compound %q appears twice", c.Name)
		}
		seen[c.Name] = true
		if err := s.validateSpectra(c); err != nil {
			return err
		}
		if err := s.validateFigures(c); err != nil {
			return err
		}
		if err := c.validateLinearity(s.Grid); err != nil {
			return err
		}
	}
	return nil
}

// validateText checks c's name and unit and its flags.
func (c *Compound) validateText() error {
	if c.Name == "" {
		return invalid("a compound has no name")
	}
	if bad := TextFault(c.Name); bad != "" {
		return invalid("compound name %q %s", c.Name, bad)
	}
	if bad := TextFault(c.Unit); bad != "" {
		return invalid("compound %q: unit %q %s", c.Name, c.Unit, bad)
	}
	for _, f := range c.Flags {
		if !slices.ContainsFunc(flagMeanings, func(m FlagMeaning) bool { return m.Code == f }) {
			return invalid("compound %q: unknown flag %q", c.Name, f)
		}
	}
	return nil
}

// TextFault says why s is not safe to show on a terminal as it is (""
// when it is): it holds a control character (Unicode category Cc: line
// breaks, tabs, the escape that starts a terminal control sequence), a
// bidirectional control (U+202A-U+202E, U+2066-U+2069, which reorder
// what a terminal shows), or is not UTF-8. A compound's name or unit
// with such a fault is refused (Validate); package report escapes other
// names (samples, scans, files) that have one.
func TextFault(s string) string {
	if !utf8.ValidString(s) {
		return "is not UTF-8"
	}
	for _, r := range s {
		if unicode.IsControl(r) || r >= '\u202a' && r <= '\u202e' || r >= '\u2066' && r <= '\u2069' {
			return fmt.Sprintf("holds the control character %U", r)
		}
	}
	return ""
}

// validateSpectra checks c's per-wavelength slices: absorptivity and
// intercept finite, SE finite and non-negative, all on the grid.
func (s *Set) validateSpectra(c *Compound) error {
	n := len(s.Grid)
	if err := checkSlice("absorptivity", c.Absorptivity, n); err != nil {
		return invalid("compound %q: %v", c.Name, err)
	}
	if len(c.SE) > 0 {
		if err := checkSlice("absorptivity_se", c.SE, n); err != nil {
			return invalid("compound %q: %v", c.Name, err)
		}
	}
	for j, v := range c.SE {
		if v < 0 {
			return invalid("compound %q: absorptivity_se %g at %g nm is negative", c.Name, v, s.Grid[j])
		}
	}
	if len(c.Usable) != 0 && len(c.Usable) != n {
		return invalid("compound %q: %d usable marks for %d wavelengths", c.Name, len(c.Usable), n)
	}
	if s.Intercept && c.Intercept != nil {
		if err := checkSlice("intercept", c.Intercept, n); err != nil {
			return invalid("compound %q: %v", c.Name, err)
		}
	}
	return nil
}

// validateFigures checks c's band maximum (0, not recorded, or inside
// the grid), its standards range (both 0, not recorded, or
// 0 < min <= max) and its count of readings left out.
func (s *Set) validateFigures(c *Compound) error {
	lo, hi := s.Grid[0], s.Grid[len(s.Grid)-1]
	switch {
	case !finite(c.PeakNM) || c.PeakNM != 0 && (c.PeakNM < lo || c.PeakNM > hi):
		return invalid("compound %q: peak_nm %g is outside the grid %g-%g nm", c.Name, c.PeakNM, lo, hi)
	case !finite(c.MinStandard) || !finite(c.MaxStandard) || c.MinStandard < 0 || c.MaxStandard < 0:
		return invalid("compound %q: min_standard %g and max_standard %g: want 0 < min <= max", c.Name, c.MinStandard, c.MaxStandard)
	case (c.MinStandard != 0 || c.MaxStandard != 0) && !(c.MinStandard > 0 && c.MinStandard <= c.MaxStandard):
		return invalid("compound %q: min_standard %g and max_standard %g: want 0 < min <= max", c.Name, c.MinStandard, c.MaxStandard)
	case c.LeftOut < 0:
		return invalid("compound %q: left_out %d is negative", c.Name, c.LeftOut)
	}
	return nil
}

// validateLinearity checks the figures of c's calibration line and of
// its band test: finite, and each in its range.
func (c *Compound) validateLinearity(grid []float64) error {
	l := c.Linearity
	bad := func(field string, v any) error {
		return invalid("compound %q: linearity %s %v is out of range", c.Name, field, v)
	}
	for _, f := range []struct {
		name string
		v    float64
		min  float64
	}{
		{"slope", l.Slope, math.Inf(-1)}, {"intercept", l.Intercept, math.Inf(-1)},
		{"slope_se", l.SlopeSE, 0}, {"intercept_se", l.InterceptSE, 0}, {"residual_sd", l.ResidualSD, 0},
		{"range_lo", l.RangeLo, 0}, {"range_hi", l.RangeHi, l.RangeLo},
	} {
		if !finite(f.v) || f.v < f.min {
			return bad(f.name, f.v)
		}
	}
	if !r2OK(l.R2) {
		return bad("r2", l.R2)
	}
	for _, f := range []struct {
		name string
		v    float64
		max  float64
	}{{"lack_of_fit_f", l.LackOfFitF, math.Inf(1)}, {"lack_of_fit_p", l.LackOfFitP, 1},
		{"mandel_f", l.MandelF, math.Inf(1)}, {"mandel_p", l.MandelP, 1}} {
		if !math.IsNaN(f.v) && !(f.v >= 0 && f.v <= f.max && finite(f.v)) {
			return bad(f.name, f.v)
		}
	}
	switch {
	case l.Levels < 0 || l.Points < l.Levels:
		return invalid("compound %q: linearity levels %d and points %d: want 0 <= levels <= points", c.Name, l.Levels, l.Points)
	case l.Curved && l.CurvedUnconfirmed:
		return invalid("compound %q: the line is marked both curved and curved unconfirmed", c.Name)
	}
	if err := c.validateBand(grid); err != nil {
		return err
	}
	for _, p := range l.Data {
		if !finite(p.Conc) || !finite(p.Absorbance) || p.Conc < 0 {
			return invalid("compound %q: a calibration point (conc %v, absorbance %v) is not finite or has a negative concentration", c.Name, p.Conc, p.Absorbance)
		}
	}
	return nil
}

// r2OK reports whether v can be an R²: in [0, 1] up to r2Slack.
func r2OK(v float64) bool { return v >= -r2Slack && v <= 1+r2Slack }

// validateBand checks the band test's figures: wavelengths on the grid
// in order, R² in range and consistent counts.
func (c *Compound) validateBand(grid []float64) error {
	b := c.Linearity.Band
	if b == nil {
		return nil
	}
	lo, hi := grid[0], grid[len(grid)-1]
	in := func(v float64) bool { return v >= lo && v <= hi }
	if !in(b.LoNM) || !in(b.HiNM) || b.LoNM > b.HiNM || !(b.MinR2NM >= b.LoNM && b.MinR2NM <= b.HiNM) || !r2OK(b.MinR2) ||
		b.Wavelengths < 0 || b.Tested < 0 || b.Curved < 0 || b.Curved > b.Tested || b.Tested > b.Wavelengths ||
		b.PeakNeighboursTested < 0 || b.PeakNeighboursTested > 2 || b.PeakNeighboursCurved < 0 ||
		b.PeakNeighboursCurved > b.PeakNeighboursTested {
		return invalid("compound %q: a band linearity figure is out of range (band %g-%g nm, lowest R² %g at %g nm, counts %d/%d/%d, neighbours %d/%d)",
			c.Name, b.LoNM, b.HiNM, b.MinR2, b.MinR2NM, b.Wavelengths, b.Tested, b.Curved, b.PeakNeighboursTested, b.PeakNeighboursCurved)
	}
	return nil
}

// validateStandards checks the standards of the provenance: one finite,
// non-negative concentration per compound.
func (s *Set) validateStandards() error {
	for i, st := range s.Provenance.Standards {
		if len(st.Conc) != len(s.Compounds) {
			return invalid("standard %d (%s) has %d concentrations for %d compounds", i+1, st.File, len(st.Conc), len(s.Compounds))
		}
		for _, v := range st.Conc {
			if !finite(v) || v < 0 {
				return invalid("standard %d (%s) has concentration %v", i+1, st.File, v)
			}
		}
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func checkSlice(what string, v []float64, n int) error {
	if len(v) != n {
		return fmt.Errorf("%d %s values for %d wavelengths", len(v), what, n)
	}
	for i, x := range v {
		if !finite(x) {
			return fmt.Errorf("%s at point %d is %v", what, i+1, x)
		}
	}
	return nil
}

// maxSetBytes is the largest reference-set file Load reads (256 MiB): a
// set of 50 compounds on 10,000 wavelengths takes some 40 MiB.
const maxSetBytes = 256 << 20

// Load reads a reference set, refusing files that are truncated, whose
// checksum does not match, or whose schema is newer than SchemaVersion.
// A UTF-8 byte order mark, as some editors add, is ignored (the checksum
// is over the content, not the layout). Errors name the file and wrap
// errTruncated, errChecksum, errNewerSchema, errNotSet or errInvalid; a
// folder, or a file larger than maxSetBytes, is refused before reading
// (errNotSet), and so is a named pipe, socket or device
// (spectrum.ErrNotRegular: opened with spectrum.OpenInput).
func Load(path string) (*Set, error) {
	fail := func(err error) (*Set, error) { return nil, pkgerr.Errorf("reference", "%s: %w", path, err) }
	f, st, err := spectrum.OpenInput(path)
	if err != nil {
		return nil, pkgerr.Errorf("reference", "%w", err)
	}
	defer f.Close()
	switch {
	case st.IsDir():
		return fail(fmt.Errorf("%w: it is a folder", errNotSet))
	case st.Mode().IsRegular() && st.Size() > maxSetBytes:
		return fail(fmt.Errorf("%w: the file is %s, more than the %s a reference set may take", errNotSet,
			bytesize.Text(st.Size()), bytesize.Text(maxSetBytes)))
	}
	data, err := readUpTo(f, maxSetBytes)
	if errors.Is(err, errTooLarge) {
		return fail(fmt.Errorf("%w: more than the %s a reference set may take", errNotSet, bytesize.Text(maxSetBytes)))
	}
	if err != nil {
		return nil, pkgerr.Errorf("reference", "%w", err)
	}
	s, err := decode(data)
	if err != nil {
		return fail(err)
	}
	return s, nil
}

// decode reads a reference set file's bytes: a byte order mark is
// skipped; the schema, the checksum and every field (Validate, and what a
// set in a file must record) are checked. Errors wrap errTruncated,
// errNotSet, errNewerSchema, errChecksum or errInvalid; Load adds the
// file's name.
func decode(data []byte) (*Set, error) {
	data = bytes.TrimPrefix(data, []byte("\ufeff"))
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, fmt.Errorf("%w: the file is empty", errTruncated)
	}
	var head struct {
		Schema *int `json:"schema"`
	}
	if err := json.Unmarshal(data, &head); err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			if se.Offset >= int64(len(bytes.TrimRight(data, " \t\r\n"))) {
				return nil, errTruncated
			}
			line := 1 + bytes.Count(data[:se.Offset], []byte("\n"))
			return nil, fmt.Errorf("%w: not valid JSON at line %d: %w", errNotSet, line, se)
		}
		return nil, fmt.Errorf("%w: %w", errNotSet, err)
	}
	switch {
	case head.Schema == nil:
		return nil, fmt.Errorf("%w: no schema field", errNotSet)
	case *head.Schema > SchemaVersion:
		return nil, fmt.Errorf("%w (file schema %d, this build reads up to %d)", errNewerSchema, *head.Schema, SchemaVersion)
	case *head.Schema < 1:
		return nil, fmt.Errorf("%w: schema %d", errNotSet, *head.Schema)
	}
	s := new(Set)
	if err := json.Unmarshal(data, s); err != nil {
		return nil, fmt.Errorf("%w: %w", errNotSet, err)
	}
	if s.Checksum == "" {
		return nil, fmt.Errorf("%w: the file has no checksum", errChecksum)
	}
	sum, err := s.computeChecksum()
	if err != nil {
		return nil, err
	}
	if sum != s.Checksum {
		return nil, errChecksum
	}
	if s.Schema < s.schemaOf() {
		return nil, invalid("%s in a schema %d file (it came with schema %d)", s.newestField(), s.Schema, s.schemaOf())
	}
	if err := s.Validate(); err != nil {
		return nil, err
	}
	if err := s.validateRecorded(); err != nil {
		return nil, err
	}
	return s, nil
}

// errTooLarge: readUpTo found more than its limit.
var errTooLarge = errors.New("too large")

// readUpTo reads f, failing with errTooLarge once it holds more than
// limit bytes (a file growing while it is read is not trusted to be small
// because a size check passed).
func readUpTo(f io.Reader, limit int64) ([]byte, error) {
	data, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, err
	}
	if int64(len(data)) > limit {
		return nil, errTooLarge
	}
	return data, nil
}

// Encode is the file Save writes, for a writer of the caller's (standard
// output): it checks s (see Validate), sets its Schema to SchemaVersion
// and its checksum, and returns it as indented JSON ending in a newline.
func (s *Set) Encode() ([]byte, error) {
	s.Schema = s.schemaOf()
	if err := s.Validate(); err != nil {
		return nil, err
	}
	if err := s.validateRecorded(); err != nil {
		return nil, err
	}
	sum, err := s.computeChecksum()
	if err != nil {
		return nil, err
	}
	s.Checksum = sum
	b, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		return nil, err
	}
	return append(b, '\n'), nil
}

// Save checks s (see Validate), sets its Schema to SchemaVersion and its
// checksum, and writes it atomically as indented JSON. Floats are written
// in the shortest form that reads back to the same float64.
func (s *Set) Save(path string) error {
	b, err := s.Encode()
	if err != nil {
		return pkgerr.Errorf("reference", "save %s: %w", path, err)
	}
	if err := atomicfile.WriteBytes(path, b); err != nil {
		return pkgerr.Errorf("reference", "%w", err)
	}
	return nil
}
