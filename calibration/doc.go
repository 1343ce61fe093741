// Package calibration builds reference sets from calibration standards:
// [Build] takes a standards sheet with its scans loaded (read by
// reference.ReadSheet) and returns a reference.Set, by per-wavelength
// least squares of absorbance on concentration (the K-matrix
// calibration) with a linearity check of each compound's calibration
// line (lack of fit, Mandel's fitting test as in ISO 8466-1) at its band
// maximum and over its band. The set's type, its file format and the
// sheet reader are package reference's.
package calibration
