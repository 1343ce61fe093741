// Package reference holds reference sets, saves and loads them: the
// absorptivity spectrum of each pure compound with its standard error and
// the noise model, made from calibration standards of known concentration
// (package calibration builds them), and reads the standards sheet.
//
// # The standards sheet
//
// A standards sheet is delimited text that a chemist can keep in a
// spreadsheet and export: fields separated by commas, semicolons or tabs
// (the separator is taken from the header line: a tab if it has one, else
// a semicolon if it has one, else a comma; with semicolons or tabs a
// decimal comma such as 0,5 is read as 0.5, and one sheet may not mix
// decimal points and decimal commas). Fields may be quoted as in CSV.
// Blank lines and lines starting with # are skipped; every other row has
// as many fields as the header. The dialect is that of package
// internal/sheet, shared with the sample sheet of package unmix.
//
// The first line is the header:
//
//	scan,column,Ambrelin (mg/L),Corvasine (mg/L)
//	blank.csv,,0,0
//	std-a1.csv,,2,0
//	mixes.csv,mix-3,4,6
//
// The columns:
//
//   - scan (required): the scan file of the standard, relative to the
//     sheet's folder (or absolute). Any format package spectrum reads.
//   - column (optional): which scan of a wide-table file, by its name in
//     the file's header or by its number counting the scans (1 is the
//     first scan, the wavelength column does not count). May be empty
//     when the file holds one scan.
//   - one column per compound, headed "Name (unit)" or "Name". With no
//     unit in the header the unit given as an option is used; with
//     neither, the numbers are carried as given and a warning says so.
//   - columns headed note, notes, comment or comments are ignored.
//
// Every concentration cell must hold a number >= 0 (write 0 for a compound
// that is absent; an empty cell is an error). A row whose concentrations
// are all zero is a blank. Each compound must take at least two different
// values over the sheet.
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
// # The reference-set file (schema 1)
//
// A reference set is saved as one JSON object (indented, UTF-8) whose
// fields are those of [Set] with their JSON names:
//
//	schema       1; files with a larger number are refused
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
