package lab

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"huesolve/internal/pkgerr"
	"huesolve/internal/units"
	"huesolve/spectrum"
)

// Basis is the unit results are reported in: a mass fraction (mg/kg,
// µg/g, % w/w, ...) or a concentration that package internal/units
// reads (mg/L, µg/L, µM, ...).
type Basis struct {
	Text string
	// Fraction marks a mass fraction; Exp is then its power of ten
	// relative to g/g (-6 for mg/kg, -2 for % w/w).
	Fraction bool
	Exp      int
	// Conc is the concentration unit of a concentration basis.
	Conc units.Unit
}

// fractionExp are the mass fractions ParseBasis knows, by their text with
// the micro prefix written µ and spaces removed.
var fractionExp = map[string]int{
	"g/kg": -3, "mg/g": -3, "mg/kg": -6, "µg/g": -6, "µg/kg": -9, "ng/g": -9, "ng/kg": -12, "pg/g": -12,
	"%": -2, "%w/w": -2, "%(w/w)": -2, "g/100g": -2,
}

// microText writes the Greek mu and a leading ASCII u as the micro sign.
func microText(s string) string {
	s = strings.ReplaceAll(s, "\u03bc", units.Micro)
	if strings.HasPrefix(s, "u") {
		s = units.Micro + s[1:]
	}
	return s
}

// ParseBasis reads a basis: a mass fraction (g/kg, mg/g, mg/kg, µg/g,
// µg/kg, ng/g, ng/kg, pg/g, % or % w/w, g/100 g) or a concentration unit
// package internal/units reads. ppm and ppb are concentrations there
// (units.PPM); write mg/kg or µg/kg for a mass fraction.
func ParseBasis(s string) (Basis, error) {
	t := strings.TrimSpace(s)
	key := microText(strings.ReplaceAll(t, " ", ""))
	if e, ok := fractionExp[key]; ok {
		return Basis{Text: t, Fraction: true, Exp: e}, nil
	}
	u := units.Parse(t)
	if u.Kind == units.Unknown {
		return Basis{}, pkgerr.Errorf("lab", "basis %q: want a mass fraction (mg/kg, µg/g, %% w/w, ...) or a concentration (mg/L, µg/L, µM, ...)", s)
	}
	return Basis{Text: t, Conc: u}, nil
}

// Prep is a sample's preparation: mass taken (g) made up to a final
// volume (L), with standard uncertainties (0 when not given).
type Prep struct {
	Mass, UMass     float64 // g
	Volume, UVolume float64 // L
}

// massExp and volumeExp are the units of mass (relative to g) and volume
// (relative to L) a sample sheet may give.
var (
	massExp   = map[string]int{"kg": 3, "g": 0, "mg": -3, "µg": -6}
	volumeExp = map[string]int{"L": 0, "l": 0, "dL": -1, "dl": -1, "mL": -3, "ml": -3, "µL": -6, "µl": -6}
)

// Value is a result on a basis: value, standard uncertainty and limits.
type Value struct {
	V, U, LOD, LOQ float64
}

// Convert takes a result c ± uc with limits lod and loq, in the
// concentration unit ref, to basis b. A concentration basis converts the
// unit (units.Convert; molarMass in g/mol, 0 if not known). A mass
// fraction needs p (nil: an error) and takes c to g/L first:
//
//	w = c V / m
//	u(w)² = (V/m)² u(c)² + (c/m)² u(V)² + (c V/m²)² u(m)²
//
// (first-order propagation for uncorrelated inputs, GUM JCGM 100:2008
// eq. 10), then scales w to the basis' power of ten. The errors wrap
// units.ErrIncompatible when the units cannot be converted.
func (b Basis) Convert(c, uc, lod, loq float64, ref string, molarMass float64, p *Prep) (Value, error) {
	from := units.Parse(ref)
	if !b.Fraction {
		conv, err := units.Convert(from, b.Conc, molarMass)
		if err != nil {
			return Value{}, pkgerr.Errorf("lab", "basis %s: %w", b.Text, err)
		}
		return Value{conv.Apply(c), conv.Apply(uc), conv.Apply(lod), conv.Apply(loq)}, nil
	}
	if p == nil {
		return Value{}, pkgerr.Errorf("lab", "basis %s is a mass fraction: give the sample's mass and volume in the sample sheet", b.Text)
	}
	conv, err := units.Convert(from, units.Parse("g/L"), molarMass)
	if err != nil {
		return Value{}, pkgerr.Errorf("lab", "basis %s: the results' unit must convert to g/L: %w", b.Text, err)
	}
	scale := math.Pow(10, float64(-b.Exp)) // g/g -> basis
	k := p.Volume / p.Mass * scale
	cg, ug := conv.Apply(c), conv.Apply(uc)
	w := cg * k
	u := math.Sqrt(sq(k*ug) + sq(cg/p.Mass*scale*p.UVolume) + sq(cg*p.Volume/(p.Mass*p.Mass)*scale*p.UMass))
	return Value{w, u, conv.Apply(lod) * k, conv.Apply(loq) * k}, nil
}

func sq(x float64) float64 { return x * x }

// String names the basis for a heading.
func (b Basis) String() string {
	if b.Fraction && strings.HasPrefix(b.Text, "%") {
		return "% w/w"
	}
	return b.Text
}

// errorf is a sheet error naming file:line:column.
func errorf(file string, line, col int, format string, a ...any) error {
	return &spectrum.ParseError{File: file, Line: line, Column: col, Err: fmt.Errorf(format, a...)}
}

// Check reports whether results of a compound in unit ref can be put on
// basis b (molarMass in g/mol, 0 if not known): the unit conversion
// alone, before any sample's preparation is known.
func (b Basis) Check(compound, ref string, molarMass float64) error {
	_, err := b.Convert(1, 0, 0, 0, ref, molarMass, &Prep{Mass: 1, Volume: 1})
	if err != nil {
		return pkgerr.Errorf("lab", "compound %q in %q cannot be reported as %s: %w", compound, ref, b.Text, errors.Unwrap(err))
	}
	return nil
}
