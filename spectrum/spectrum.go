// Package spectrum holds the Spectrum data type, wavelength grids
// (checking, resampling, cropping), the conversion from transmittance to
// absorbance, and every file format huesolve reads and writes (delimited
// text in its common dialects and JCAMP-DX).
//
// Wavelengths are in nanometres and strictly increasing once a spectrum has
// been loaded. Errors caused by files name the file, line and column (see
// [ParseError]); no reader returns NaN or Inf.
//
// # File formats
//
// [ReadFile] chooses the reader from the content: JCAMP-DX when the first
// non-blank line is a "##LABEL=" record, delimited text otherwise.
//
// [ReadDelimited] reads a two-column scan (wavelength, value) or a wide
// table (wavelength, then one column per spectrum) separated by commas,
// semicolons, tabs or blanks, with decimal points or (when the separator
// is not a comma) decimal commas. The header (the last text line before
// the numbers) names the spectra and may say what the values are:
// "absorbance", "%T", "transmittance" or a bracketed "[A]", "(T)".
// [WriteDelimited] writes the same layout back, exactly.
//
// [ReadJCAMP] reads one UV-Vis spectrum from a JCAMP-DX 4.24/5.x file
// (##XYDATA=(X++(Y..Y)) in AFFN or ASDF compression, or
// ##XYPOINTS=(XY..XY)); [WriteJCAMP] writes one, plain or compressed.
//
// # Adding a file format
//
// Write ReadX(r io.Reader, file string, opt ReadOptions) ([]*Spectrum,
// error) returning *ParseError values for every problem in the file and
// spectra that pass [Spectrum.Check]; let ReadFile recognise it by content;
// add its bad files to the catalogue in testdata/spectra/bad and a fuzz
// test seeded from them.
package spectrum

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"huesolve/internal/pkgerr"
)

// Quantity says what the values of a spectrum are.
type Quantity int

const (
	// Unstated means the file did not say and no flag was given.
	Unstated Quantity = iota
	// Absorbance is decadic absorbance, A = -log10(T).
	Absorbance
	// PercentT is transmittance in percent, 0..100.
	PercentT
	// Transmittance is transmittance as a fraction, 0..1.
	Transmittance
)

// String returns the name used in files and messages.
func (q Quantity) String() string {
	switch q {
	case Absorbance:
		return "absorbance"
	case PercentT:
		return "%T"
	case Transmittance:
		return "transmittance"
	default:
		return "unstated"
	}
}

// ParseQuantity reads a quantity name as given on the command line:
// "absorbance" (or "A", "abs"), "%T" (or "percent", "pct"), "T" (or
// "transmittance"). Case is ignored.
func ParseQuantity(s string) (Quantity, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "a", "abs", "absorbance":
		return Absorbance, nil
	case "%t", "percent", "pct", "percentt", "%":
		return PercentT, nil
	case "t", "transmittance", "fraction":
		return Transmittance, nil
	case "", "auto":
		return Unstated, nil
	}
	return Unstated, pkgerr.Errorf("spectrum", "unknown quantity %q (want absorbance, %%T or T)", s)
}

// Source records where a spectrum came from.
type Source struct {
	File   string // path as given by the user
	Column int    // 1-based column of the values in a delimited file; 0 if not applicable
	Line   int    // 1-based line of the first data row (or of the data table in JCAMP-DX)
}

// String gives "file", "file column 3" and so on, for messages.
func (s Source) String() string {
	out := s.File
	if out == "" {
		out = "<input>"
	}
	if s.Column > 0 {
		out += " column " + strconv.Itoa(s.Column)
	}
	return out
}

// Spectrum is one scan: values at wavelengths.
//
// Wavelengths may be shared between spectra read from one wide table, and
// between files read one after another on the same grid; treat the slice
// as read-only and Clone before changing it.
type Spectrum struct {
	Name        string
	Wavelengths []float64 // nm, strictly increasing
	Values      []float64
	Quantity    Quantity
	Source      Source
}

// Sentinel causes, tested with errors.Is.
var (
	// errTooDark marks a transmittance of zero or below: too concentrated to read.
	errTooDark = errors.New("transmittance is zero or negative: the sample is too concentrated to read, dilute it and scan again")
	// errOutOfRange marks a request for wavelengths outside the measured range.
	errOutOfRange = errors.New("wavelengths outside the measured range")
	// errGrid marks a wavelength grid that is not strictly increasing and finite.
	errGrid = errors.New("bad wavelength grid")
	// errNotSupported marks a file variant this reader refuses on purpose.
	errNotSupported = errors.New("not supported")
	// ErrEmpty marks a file or table with no data.
	ErrEmpty = errors.New("no data")
	// ErrMisread marks a file whose numbers cannot be what it was meant
	// to hold as read: percent transmittance read as absorbance, or
	// numbers with a decimal comma split at the comma of a
	// comma-separated file. The message names the fix.
	ErrMisread = errors.New("the file was not read as it was meant")
	// errTooLarge marks an input beyond the size a reader accepts
	// (ReadOptions.MaxFileBytes).
	errTooLarge = errors.New("input too large")
)

// Len is the number of points.
func (s *Spectrum) Len() int { return len(s.Values) }

// Clone returns a deep copy.
func (s *Spectrum) Clone() *Spectrum {
	c := *s
	c.Wavelengths = append([]float64(nil), s.Wavelengths...)
	c.Values = append([]float64(nil), s.Values...)
	return &c
}

// Check verifies the invariants: equal lengths, at least one point, finite
// values, strictly increasing finite wavelengths.
func (s *Spectrum) Check() error {
	if len(s.Values) == 0 {
		return pkgerr.Errorf("spectrum", "%s: %w", s.Source, ErrEmpty)
	}
	if len(s.Values) != len(s.Wavelengths) {
		return pkgerr.Errorf("spectrum", "%s: %d values for %d wavelengths", s.Source, len(s.Values), len(s.Wavelengths))
	}
	if err := checkGrid(s.Wavelengths); err != nil {
		return pkgerr.Errorf("spectrum", "%s: %w", s.Source, err)
	}
	for i, v := range s.Values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return pkgerr.Errorf("spectrum", "%s: value at %g nm is %v", s.Source, s.Wavelengths[i], v)
		}
	}
	return nil
}

// checkGrid reports an error wrapping errGrid unless wl is finite and
// strictly increasing.
func checkGrid(wl []float64) error {
	for i, w := range wl {
		if math.IsNaN(w) || math.IsInf(w, 0) {
			return fmt.Errorf("%w: wavelength %d is %v", errGrid, i+1, w)
		}
		if i > 0 && w <= wl[i-1] {
			if w == wl[i-1] {
				return fmt.Errorf("%w: duplicate wavelength %g nm", errGrid, w)
			}
			return fmt.Errorf("%w: wavelength %g nm follows %g nm (not increasing)", errGrid, w, wl[i-1])
		}
	}
	return nil
}

// ToAbsorbance converts a transmittance or %T value to decadic absorbance,
//
//	A = -log10(T) = 2 - log10(%T).
//
// Absorbance passes through; Unstated is treated as absorbance. A
// transmittance of zero or below returns errTooDark.
func ToAbsorbance(q Quantity, v float64) (float64, error) {
	switch q {
	case PercentT:
		if !(v > 0) {
			return 0, errTooDark
		}
		return 2 - math.Log10(v), nil
	case Transmittance:
		if !(v > 0) {
			return 0, errTooDark
		}
		return -math.Log10(v), nil
	default:
		return v, nil
	}
}

// valueError is a problem with one value of a spectrum, located by file
// and wavelength.
type valueError struct {
	Source     Source
	Wavelength float64
	Err        error
}

func (e *valueError) Error() string {
	return fmt.Sprintf("spectrum: %s at %g nm: %v", e.Source, e.Wavelength, e.Err)
}

func (e *valueError) Unwrap() error { return e.Err }

// Unprefixed is the error's text without the package prefix (see
// pkgerr.Plain).
func (e *valueError) Unprefixed() string {
	return fmt.Sprintf("%s at %g nm: %v", e.Source, e.Wavelength, e.Err)
}

// ToAbsorbance converts s in place to absorbance. On a transmittance of
// zero or below it returns a *valueError wrapping errTooDark naming the
// file and the first such wavelength, and leaves s unchanged.
func (s *Spectrum) ToAbsorbance() error {
	if s.Quantity == Absorbance || s.Quantity == Unstated {
		s.Quantity = Absorbance
		return nil
	}
	out := make([]float64, len(s.Values))
	for i, v := range s.Values {
		a, err := ToAbsorbance(s.Quantity, v)
		if err != nil {
			return &valueError{Source: s.Source, Wavelength: s.Wavelengths[i], Err: err}
		}
		out[i] = a
	}
	s.Values = out
	s.Quantity = Absorbance
	return nil
}

// CheckMeasured refuses a spectrum that reads the same value at every
// wavelength (all zero, most often), wrapping ErrMisread: no measurement
// reads exactly alike everywhere, so it is a column of an export read
// wrongly (the integer parts of numbers split at a decimal comma) or left
// empty, and solving it would report a blank sample. The message names
// the spectrum's source and what to check.
func CheckMeasured(s *Spectrum) error {
	v := s.Values
	if len(v) == 0 {
		return nil
	}
	for _, x := range v[1:] {
		if x != v[0] {
			return nil
		}
	}
	return pkgerr.Errorf("spectrum", "%s: %w: it reads %g at every wavelength, which no measurement does; check that the file's columns and decimal mark were read as meant (huesolve look shows how it reads)",
		s.Source, ErrMisread, v[0])
}
