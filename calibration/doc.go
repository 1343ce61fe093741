// Package calibration builds reference sets from calibration standards:
// [ReadSheet] reads a standards sheet and the scans it names, and [Build]
// takes the sheet and returns a reference.Set, by per-wavelength
// least squares of absorbance on concentration (the K-matrix
// calibration) with a linearity check of each compound's calibration
// line (lack of fit, Mandel's fitting test as in ISO 8466-1) at its band
// maximum and over its band. The set's type and its file format are
// package reference's.
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
//   - one column per compound, headed "Name (unit)", "Name [unit]" or
//     "Name". With no unit in the header the unit given as an option is
//     used; with neither, the numbers are carried as given and a warning
//     says so. The brackets may add the compound's molar mass after a
//     semicolon, "Name (µmol/L; M=534.4 g/mol)", so that its
//     concentrations can be converted between mass and amount per volume
//     (package internal/units; a separator inside brackets does not
//     choose the sheet's dialect, but in a semicolon-separated sheet the
//     heading must be quoted).
//   - columns headed note, notes, comment or comments are ignored.
//
// A row whose scan cell reads "molar mass (g/mol)" (or "molar mass
// [g/mol]", any case) is not a standard: it gives each compound's molar
// mass in g/mol, or nothing in an empty cell. A sheet has at most one;
// a molar mass in a heading and in the row must agree. Package validate
// uses the molar masses to compare check standards with a reference set
// kept in the other kind of unit; calibrate does not keep them in the set.
//
// Every concentration cell must hold a number >= 0 (write 0 for a compound
// that is absent; an empty cell is an error). A row whose concentrations
// are all zero is a blank. Each compound must take at least two different
// values over the sheet.
package calibration
