// Package reference holds reference sets, saves and loads them: the
// absorptivity spectrum of each pure compound with its standard error and
// the noise model, made from calibration standards of known concentration
// (package calibration builds them from a standards sheet).
//
// # How a set is built
//
// See [huesolve/calibration.Build]: common grid, blank correction, pre-treatment, least squares
// of absorbance on concentration at each wavelength (the K-matrix
// calibration, pure standards being its diagonal special case), readings
// above the absorbance ceiling left out, and a linearity check of each
// compound at its band maximum (slope, intercept, R², residual SD,
// lack-of-fit F test when there are replicates, and Mandel's fitting test
// as in ISO 8466-1), repeated over its band ([BandLinearity]).
//
// # The reference-set file (schema 1 and 2)
//
// A reference set is saved as one JSON object (indented, UTF-8) whose
// fields are those of [Set] with their JSON names:
//
//	schema       1, or 2 when the set has a noise_model; files with a
//	             larger number than SchemaVersion are refused
//	grid_nm      wavelengths (nm), strictly increasing
//	compounds    per compound: name, unit, absorptivity and absorptivity_se
//	             (per unit concentration per cm, on grid_nm), usable (false
//	             where fewer than 3 levels stayed under the ceiling),
//	             intercept (absorbance, when fitted), peak_nm,
//	             min_standard, max_standard, linearity (slope, intercept,
//	             their SEs, r2, residual_sd, levels, points, lack_of_fit_f
//	             and _p, mandel_f and _p (absent when they could not be
//	             computed), curved, curved_unconfirmed (Mandel's test
//	             fired at the band maximum only; absent when false),
//	             range_lo, range_hi, data, band), left_out,
//	             flags
//	noise        residual SD of the calibration per wavelength (absorbance
//	             at path_cm)
//	noise_model  (schema 2) the noise growth with absorbance measured from
//	             the standards: knee_a, knee_se, readings, max_a, bins
//	             (lo_a, hi_a, mean_a, ratio, n); see NoiseModel
//	path_cm      path length of the standards; ceiling, floor (absorbance)
//	intercept    whether an intercept was fitted
//	pretreat     pre-treatment steps samples must get too
//	provenance   tool, version, created (RFC 3339 UTC), sheet, blank,
//	             blank_sha256, standards (file, column, sha256, conc,
//	             sheet_line), notes (the warnings given while building)
//	checksum     SHA-256 (hex) of the compact JSON encoding of the set
//	             with checksum set to ""
//
// Numbers are written in the shortest decimal form that reads back to the
// same float64, so a set round-trips exactly. NaN and infinities are never
// written: statistics that could not be computed are left out and read
// back as NaN. [Load] refuses a file that is truncated, whose checksum does
// not match its content, or whose schema is newer than [SchemaVersion].
package reference
