package lab

import (
	"math"
	"strconv"
	"strings"

	"huesolve/unmix"
)

// Row is what a sample sheet row says for this package: the replicate
// group ("" for none) and the preparation (nil when the row gives none).
type Row struct {
	Name  string
	Line  int
	Group string
	Prep  *Prep
}

// Sheet is the replicate groups and preparations of a sample sheet.
type Sheet struct {
	File   string
	Rows   map[string]Row
	Order  []string // row names in sheet order
	Groups bool     // some row names a group
}

// Cells is what ReadCells reads from: the sample names of a sheet in
// order, the line of each (0 for a name that is not a sample of the
// sheet) and the cells of its extra columns (group, replicate_of, mass,
// mass_unit, u_mass, volume, volume_unit, u_volume). A sample sheet
// (*unmix.SampleSheet) is one; a run sheet's sample rows are another.
type Cells interface {
	Names() []string
	Line(name string) int
	Extra(name, column string) (unmix.Cell, bool)
}

// cells is a Cells with the file it was read from, for errors.
type cells struct {
	File string
	Cells
}

// ReadSheet reads the group and preparation columns of ss (nil: an empty
// Sheet), as ReadCells does.
func ReadSheet(ss *unmix.SampleSheet) (*Sheet, error) {
	if ss == nil {
		return &Sheet{Rows: map[string]Row{}}, nil
	}
	return ReadCells(ss.File, ss)
}

// ReadCells reads the group and preparation columns of the samples of c,
// a sheet read from file. A row joins a replicate group by its "group" cell, or by a
// "replicate_of" cell naming another sample of the sheet (see
// replicateOf). A preparation is mass, mass_unit, volume and volume_unit, with
// optional u_mass and u_volume (standard uncertainties in the unit of
// their value); a row gives all of mass, mass_unit, volume and
// volume_unit or none of them. Errors name file:line:column: a mass or
// volume that is not a positive finite number (a mass of 0), an
// uncertainty that is negative, a unit that is not a mass (kg, g, mg, µg)
// or a volume (L, dL, mL, µL).
func ReadCells(file string, c Cells) (*Sheet, error) {
	sh := &Sheet{Rows: map[string]Row{}, File: file}
	ss := cells{file, c}
	for _, name := range ss.Names() {
		r := Row{Name: name, Line: ss.Line(name)}
		if c, ok := ss.Extra(name, "group"); ok && c.Text != "" {
			r.Group, sh.Groups = c.Text, true
		}
		if err := replicateOf(ss, name, &r); err != nil {
			return nil, err
		}
		sh.Groups = sh.Groups || r.Group != ""
		p, err := readPrep(ss, name)
		if err != nil {
			return nil, err
		}
		r.Prep = p
		sh.Rows[name] = r
		sh.Order = append(sh.Order, name)
	}
	// A sample that others name in replicate_of is in their group.
	for _, name := range sh.Order {
		if c, _ := ss.Extra(name, "replicate_of"); c.Text != "" {
			if ref := sh.Rows[c.Text]; ref.Group == "" {
				ref.Group = c.Text
				sh.Rows[c.Text] = ref
			}
		}
	}
	return sh, nil
}

// replicateOf reads the replicate_of cell of row name into r.Group: the
// group of the sample it names, or that sample's name when it has no
// group. The sample named must be a row of the sheet that is not itself a
// replicate of another (errors name file:line:column), and a row may give
// group or replicate_of, not both.
func replicateOf(ss cells, name string, r *Row) error {
	c, _ := ss.Extra(name, "replicate_of")
	if c.Text == "" {
		return nil
	}
	if r.Group != "" {
		return errorf(ss.File, c.Line, c.Column, "sample %q: give group or replicate_of, not both", name)
	}
	if ss.Line(c.Text) == 0 {
		return errorf(ss.File, c.Line, c.Column, "sample %q: replicate_of %q is not a sample of this sheet", name, c.Text)
	}
	if c.Text == name {
		return errorf(ss.File, c.Line, c.Column, "sample %q: replicate_of names the sample itself", name)
	}
	if o, _ := ss.Extra(c.Text, "replicate_of"); o.Text != "" {
		return errorf(ss.File, c.Line, c.Column, "sample %q: replicate_of %q, which is itself a replicate of %q: name %q", name, c.Text, o.Text, o.Text)
	}
	r.Group = c.Text
	if g, _ := ss.Extra(c.Text, "group"); g.Text != "" {
		r.Group = g.Text
	}
	return nil
}

// readPrep reads the preparation of row name (nil when it gives none).
func readPrep(ss cells, name string) (*Prep, error) {
	cols := []string{"mass", "mass_unit", "volume", "volume_unit"}
	var cells [4]unmix.Cell
	given := 0
	for i, c := range cols {
		cells[i], _ = ss.Extra(name, c)
		if cells[i].Text != "" {
			given++
		}
	}
	if given == 0 {
		for _, c := range []string{"u_mass", "u_volume"} {
			if cell, _ := ss.Extra(name, c); cell.Text != "" {
				return nil, errorf(ss.File, cell.Line, cell.Column, "sample %q: %s given without mass and volume", name, c)
			}
		}
		return nil, nil
	}
	for i, c := range cols {
		if cells[i].Text == "" {
			line := ss.Line(name)
			return nil, errorf(ss.File, line, cells[i].Column, "sample %q: %s is empty; a preparation needs mass, mass_unit, volume and volume_unit", name, c)
		}
	}
	m, err := amount(ss, name, cells[0], cells[1], "mass", massExp, "a mass unit (kg, g, mg, µg)")
	if err != nil {
		return nil, err
	}
	v, err := amount(ss, name, cells[2], cells[3], "volume", volumeExp, "a volume unit (L, dL, mL, µL)")
	if err != nil {
		return nil, err
	}
	p := &Prep{Mass: m.x, Volume: v.x}
	if p.UMass, err = uncertainty(ss, name, "u_mass", m.scale); err != nil {
		return nil, err
	}
	if p.UVolume, err = uncertainty(ss, name, "u_volume", v.scale); err != nil {
		return nil, err
	}
	return p, nil
}

// scaled is a quantity in its base unit and the factor that took it there.
type scaled struct{ x, scale float64 }

// amount reads a positive number and its unit from a table of powers of
// ten.
func amount(ss cells, name string, val, unit unmix.Cell, what string, exps map[string]int, want string) (scaled, error) {
	x, err := number(val.Text)
	if err != nil || !(x > 0) || math.IsInf(x, 0) {
		return scaled{}, errorf(ss.File, val.Line, val.Column, "sample %q: %s %q is not a positive number", name, what, val.Text)
	}
	e, ok := exps[microText(unit.Text)]
	if !ok {
		return scaled{}, errorf(ss.File, unit.Line, unit.Column, "sample %q: %s unit %q cannot be converted: want %s", name, what, unit.Text, want)
	}
	s := math.Pow(10, float64(e))
	return scaled{x * s, s}, nil
}

// uncertainty reads the optional standard uncertainty in column col, in
// the unit of its value (scale takes it to the base unit).
func uncertainty(ss cells, name, col string, scale float64) (float64, error) {
	c, _ := ss.Extra(name, col)
	if c.Text == "" {
		return 0, nil
	}
	x, err := number(c.Text)
	if err != nil || !(x >= 0) || math.IsInf(x, 0) {
		return 0, errorf(ss.File, c.Line, c.Column, "sample %q: %s %q is not a number >= 0", name, col, c.Text)
	}
	return x * scale, nil
}

// number reads a decimal number, with a decimal comma accepted.
func number(s string) (float64, error) {
	return strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64)
}
