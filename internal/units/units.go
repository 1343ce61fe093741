// Package units reads concentration units and converts between them.
//
// A unit is a mass or an amount of substance per volume: a numerator
// (kg, g, mg, µg, ng, pg; mol, mmol, µmol, nmol, pmol) over a volume
// (L, dL, mL, µL), written "mg/L", "mg L-1" or "mg·L⁻¹"; the molar
// shorthands M, mM, µM, nM and pM (mol/L and its parts); and ppm and ppb,
// taken as mg/L and µg/L (see PPM). The micro prefix may be written with
// the micro sign µ (U+00B5), the Greek mu μ (U+03BC) or an ASCII u, and
// litre as L or l. Any other text is a unit this package does not know:
// it may be carried as it is, but never converted.
//
// Two units of one kind (both mass per volume, or both amount per volume)
// differ by a power of ten, applied exactly (see Conversion.Apply). A
// mass and an amount per volume convert only with the compound's molar
// mass M in g/mol: mass concentration = amount concentration × M
// (the definition of molar mass, n = m/M, divided by the volume; common
// practice, any general chemistry text).
package units

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// Kind is what a unit measures.
type Kind int

const (
	// Unknown is a unit this package does not read.
	Unknown Kind = iota
	// Mass is a mass per volume (base g/L).
	Mass
	// Amount is an amount of substance per volume (base mol/L).
	Amount
)

// String names the kind in words for messages.
func (k Kind) String() string {
	switch k {
	case Mass:
		return "a mass per volume"
	case Amount:
		return "an amount of substance per volume (molar)"
	}
	return "not a concentration unit this tool knows"
}

// Unit is a concentration unit as read.
type Unit struct {
	Text string // as written, trimmed
	Kind Kind
	// Exp is the unit's power of ten relative to its kind's base (g/L or
	// mol/L): -3 for mg/L and mM, -6 for µg/L; 0 for Unknown.
	Exp int
	// PPM marks ppm and ppb, mass fractions taken as mass per volume.
	PPM bool
}

// PPM states the assumption under which ppm and ppb are converted: in a
// dilute aqueous solution (density 1 g/mL) one part per million by mass
// is 1 mg/L and one part per billion 1 µg/L (common practice). The
// assumption is stated wherever a ppm or ppb conversion is reported.
const PPM = "ppm and ppb taken as mg/L and µg/L (dilute aqueous solution, density 1 g/mL)"

// Micro is the micro sign used when this package writes a unit.
const Micro = "\u00b5"

var (
	// massExp and amountExp are the numerators' powers of ten.
	massExp   = map[string]int{"kg": 3, "g": 0, "mg": -3, "µg": -6, "ng": -9, "pg": -12}
	amountExp = map[string]int{"mol": 0, "mmol": -3, "µmol": -6, "nmol": -9, "pmol": -12}
	// volumeExp are the denominators' powers of ten (litre is the base).
	volumeExp = map[string]int{"L": 0, "dL": -1, "mL": -3, "µL": -6}
	// molarExp are the shorthands for mol/L and its parts.
	molarExp = map[string]int{"M": 0, "mM": -3, "µM": -6, "nM": -9, "pM": -12}
	// ppmExp are the mass fractions read as mass per volume (see PPM).
	ppmExp = map[string]int{"ppm": -3, "ppb": -6}
)

// normalise writes the micro prefix as Micro, so that the tables above
// need one spelling of it.
func normalise(s string) string {
	s = strings.ReplaceAll(s, "\u03bc", Micro)
	if strings.HasPrefix(s, "u") {
		s = Micro + s[1:]
	}
	return s
}

// volume is normalise for a denominator, with litre also written l.
func volume(s string) string {
	s = normalise(s)
	if strings.HasSuffix(s, "l") {
		s = s[:len(s)-1] + "L"
	}
	return s
}

// perVolume splits "num/den", "num den-1", "num·den⁻¹" (and "^-1")
// into numerator and denominator.
func perVolume(s string) (num, den string, ok bool) {
	if num, den, ok = strings.Cut(s, "/"); ok {
		return strings.TrimSpace(num), strings.TrimSpace(den), true
	}
	for _, inv := range []string{"^-1", "-1", "⁻¹", "−1"} {
		if rest, found := strings.CutSuffix(s, inv); found {
			for _, sep := range []string{"·", "⋅", " ", "*"} {
				if num, den, ok = strings.Cut(rest, sep); ok {
					return strings.TrimSpace(num), strings.TrimSpace(den), true
				}
			}
		}
	}
	return "", "", false
}

// Parse reads a concentration unit. Text it does not know gives a Unit of
// kind Unknown, not an error: such a unit is carried but not converted.
func Parse(s string) Unit {
	u := Unit{Text: strings.TrimSpace(s)}
	if e, ok := ppmExp[strings.ToLower(u.Text)]; ok {
		u.Kind, u.Exp, u.PPM = Mass, e, true
		return u
	}
	if e, ok := molarExp[normalise(u.Text)]; ok {
		u.Kind, u.Exp = Amount, e
		return u
	}
	num, den, ok := perVolume(u.Text)
	if !ok {
		return u
	}
	num, den = normalise(num), volume(den)
	dv, ok := volumeExp[den]
	if !ok {
		return u
	}
	if e, ok := massExp[num]; ok {
		u.Kind, u.Exp = Mass, e-dv
	} else if e, ok := amountExp[num]; ok {
		u.Kind, u.Exp = Amount, e-dv
	}
	return u
}

// Same reports whether a and b are the same unit: the same text, or both
// known with the same kind and power of ten (mg/L and µg/mL; µM and
// µmol/L; ug/mL and µg/mL).
func Same(a, b Unit) bool {
	if a.Text == b.Text {
		return true
	}
	return a.Kind != Unknown && a.Kind == b.Kind && a.Exp == b.Exp && a.PPM == b.PPM
}

// Conversion takes a value in unit From to unit To: multiply by 10^Exp,
// then by MolarMass (amount to mass) or divide by it (mass to amount)
// when MolarMass is not 0.
type Conversion struct {
	From, To Unit
	Exp      int
	// MolarMass in g/mol, 0 when both units are of one kind.
	MolarMass float64
}

// ErrIncompatible is wrapped by Convert's refusals.
var ErrIncompatible = errors.New("units cannot be converted")

// Convert returns the conversion from unit from to unit to; molarMass
// (g/mol, 0 if not known) is needed only between a mass and an amount per
// volume. Units that are not the same text must both be known.
func Convert(from, to Unit, molarMass float64) (Conversion, error) {
	c := Conversion{From: from, To: to}
	if from.Text == to.Text {
		return c, nil
	}
	switch {
	case from.Kind == Unknown:
		return c, fmt.Errorf("%w: %q is %s", ErrIncompatible, from.Text, from.Kind)
	case to.Kind == Unknown:
		return c, fmt.Errorf("%w: %q is %s", ErrIncompatible, to.Text, to.Kind)
	case from.Kind == to.Kind:
		c.Exp = from.Exp - to.Exp
		return c, nil
	case molarMass == 0:
		return c, fmt.Errorf("%w: %q is %s and %q is %s; converting needs the compound's molar mass", ErrIncompatible, from.Text, from.Kind, to.Text, to.Kind)
	}
	if err := CheckMolarMass(molarMass); err != nil {
		return c, err
	}
	// value in to = value in from × 10^from.Exp (base unit) × M^±1
	// (g/mol: mol/L -> g/L, or back) × 10^-to.Exp.
	c.Exp, c.MolarMass = from.Exp-to.Exp, molarMass
	return c, nil
}

// Identity reports whether the conversion leaves values unchanged.
func (c Conversion) Identity() bool { return c.Exp == 0 && c.MolarMass == 0 }

// Apply converts v. The power of ten is applied as one multiplication by
// 10^Exp when Exp >= 0 and one division by 10^-Exp otherwise, both powers
// exact in float64 for |Exp| <= 22, so that 2.5 µg/L is 0.0025 mg/L as
// the literal 0.0025 reads, not 2.5 × 0.001 rounded twice.
func (c Conversion) Apply(v float64) float64 {
	switch {
	case c.Exp > 0:
		v *= pow10(c.Exp)
	case c.Exp < 0:
		v /= pow10(-c.Exp)
	}
	switch {
	case c.MolarMass == 0:
	case c.From.Kind == Amount:
		v *= c.MolarMass
	default:
		v /= c.MolarMass
	}
	return v
}

// pow10 is 10^n for 0 <= n <= 22, exact in float64.
func pow10(n int) float64 {
	p := 1.0
	for range n {
		p *= 10
	}
	return p
}

// String describes the conversion for a report: "µg/mL to mg/L (× 1)",
// "µmol/L to mg/L (× 534.4 g/mol × 10^-3)", with the ppm assumption
// when a ppm unit is involved.
func (c Conversion) String() string {
	var f string
	switch {
	case c.MolarMass != 0 && c.From.Kind == Amount:
		f = "× " + num(c.MolarMass) + " g/mol"
	case c.MolarMass != 0:
		f = "÷ " + num(c.MolarMass) + " g/mol"
	}
	switch {
	case c.Exp != 0 && f != "":
		f += fmt.Sprintf(" × 10^%d", c.Exp)
	case c.Exp != 0:
		f = fmt.Sprintf("× 10^%d", c.Exp)
	case f == "":
		f = "× 1"
	}
	s := fmt.Sprintf("%s to %s (%s)", c.From.Text, c.To.Text, f)
	if c.From.PPM || c.To.PPM {
		s += "; " + PPM
	}
	return s
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// Header is what a column heading's brackets hold: a unit and, after a
// semicolon, optionally the compound's molar mass: "µmol/L; M=534.4 g/mol".
type Header struct {
	Unit      string  // the unit as written, trimmed
	MolarMass float64 // g/mol; 0 when not given
}

// ParseHeader reads the text inside a column heading's brackets.
func ParseHeader(s string) (Header, error) {
	unit, rest, hasM := strings.Cut(s, ";")
	h := Header{Unit: strings.TrimSpace(unit)}
	if h.Unit == "" {
		return h, errors.New("no unit before the semicolon")
	}
	if !hasM {
		return h, nil
	}
	m, err := parseMolarMassAssign(rest)
	if err != nil {
		return h, err
	}
	h.MolarMass = m
	return h, nil
}

// parseMolarMassAssign reads "M=534.4 g/mol" (spaces optional).
func parseMolarMassAssign(s string) (float64, error) {
	s = strings.TrimSpace(s)
	name, val, ok := strings.Cut(s, "=")
	if !ok || strings.TrimSpace(name) != "M" {
		return 0, fmt.Errorf("%q after the semicolon: write the molar mass as M=534.4 g/mol", s)
	}
	return ParseMolarMass(val, true)
}

// MolarMassUnit is the one unit molar masses are written in.
const MolarMassUnit = "g/mol"

// ParseMolarMass reads a molar mass in g/mol: a number > 0, followed by
// "g/mol" when withUnit (a molar-mass row states its unit in its label).
func ParseMolarMass(s string, withUnit bool) (float64, error) {
	t := strings.TrimSpace(s)
	if withUnit {
		var ok bool
		if t, ok = strings.CutSuffix(t, MolarMassUnit); !ok {
			return 0, fmt.Errorf("molar mass %q: give it in g/mol, e.g. M=534.4 g/mol", strings.TrimSpace(s))
		}
		t = strings.TrimSpace(t)
	}
	if !strings.Contains(t, ".") {
		t = strings.Replace(t, ",", ".", 1) // a decimal comma
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil {
		return 0, fmt.Errorf("molar mass %q is not a number", strings.TrimSpace(s))
	}
	return v, CheckMolarMass(v)
}

// CheckMolarMass refuses a molar mass (g/mol) that is not above 0 and at
// most MaxMolarMass.
func CheckMolarMass(v float64) error {
	if !(v > 0) || v > MaxMolarMass {
		return fmt.Errorf("molar mass %s: want a number of g/mol above 0 and at most %g", num(v), float64(MaxMolarMass))
	}
	return nil
}

// MaxMolarMass bounds a molar mass (g/mol): far above any dye or small
// molecule, and above most proteins, so a larger number is a slip
// (project choice).
const MaxMolarMass = 1e7
