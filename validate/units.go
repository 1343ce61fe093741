package validate

import (
	"errors"
	"fmt"
	"strings"

	"huesolve/calibration"
	"huesolve/internal/pkgerr"
	"huesolve/internal/units"
	"huesolve/reference"
)

// inSetUnits returns sheet with each compound's concentrations in the
// unit the reference set gives that compound, and one line per compound
// converted saying how ("checks.csv: Ambrelin µg/mL to mg/L (× 1)").
// Units of one kind convert by exact powers of ten; a mass and an amount
// per volume convert with the molar mass the sheet gives (package
// units). A compound without a unit on either side is taken as it is,
// and compounds the set does not hold are left for matchCompounds. The
// sheet itself is not changed; a converted copy shares its scans.
func inSetUnits(set *reference.Set, sheet *calibration.Sheet) (*calibration.Sheet, []string, error) {
	setUnit := make(map[string]string, len(set.Compounds))
	for _, c := range set.Compounds {
		setUnit[strings.ToLower(c.Name)] = c.Unit
	}
	out := *sheet
	out.Units = append([]string(nil), sheet.Units...)
	convs := make([]units.Conversion, len(sheet.Compounds))
	var notes []string
	scaled := false
	for i, name := range sheet.Compounds {
		to, ok := setUnit[strings.ToLower(name)]
		if !ok || i >= len(sheet.Units) || sheet.Units[i] == "" || to == "" {
			continue
		}
		from := sheet.Units[i]
		m := 0.0
		if i < len(sheet.MolarMass) {
			m = sheet.MolarMass[i]
		}
		conv, err := units.Convert(units.Parse(from), units.Parse(to), m)
		if err != nil {
			return nil, nil, unitRefusal(sheet, i, to, err)
		}
		out.Units[i] = to
		if from == to {
			continue
		}
		convs[i] = conv
		scaled = scaled || !conv.Identity()
		notes = append(notes, fmt.Sprintf("%s: %s %s", sheet.Path, name, conv))
	}
	if scaled {
		out.Standards = convertRows(sheet.Standards, convs)
		out.Blanks = convertRows(sheet.Blanks, convs)
	}
	return &out, notes, nil
}

// convertRows copies rows with each concentration converted by convs
// (one per compound, the zero Conversion leaving it as it is).
func convertRows(rows []calibration.Row, convs []units.Conversion) []calibration.Row {
	out := make([]calibration.Row, len(rows))
	for j, r := range rows {
		r.Conc = append([]float64(nil), r.Conc...)
		for k := range r.Conc {
			if k < len(convs) && !convs[k].Identity() {
				r.Conc[k] = convs[k].Apply(r.Conc[k])
			}
		}
		out[j] = r
	}
	return out
}

// unitRefusal is the error for compound i of sheet, whose unit cannot be
// converted to the set's unit to: it names the file, the column and the
// fix.
func unitRefusal(sheet *calibration.Sheet, i int, to string, err error) error {
	from := sheet.Units[i]
	where := sheet.Path
	if i < len(sheet.Columns) {
		where = fmt.Sprintf("%s, column %d", sheet.Path, sheet.Columns[i])
	}
	name := sheet.Compounds[i]
	fix := fmt.Sprintf("write the column in %s (or a unit of the same kind, such as mg/L, µg/mL or g/L for a mass per volume; mol/L, mmol/L or µM for an amount per volume)", to)
	fu, tu := units.Parse(from), units.Parse(to)
	if fu.Kind != units.Unknown && tu.Kind != units.Unknown && fu.Kind != tu.Kind {
		fix = fmt.Sprintf("give %s's molar mass in the column's header, e.g. \"%s (%s; M=534.4 g/mol)\", or in a row whose scan cell reads \"molar mass (g/mol)\", or write the column in %s", name, name, from, to)
	}
	if !errors.Is(err, units.ErrIncompatible) {
		fix = "check the column's unit"
	}
	return pkgerr.Errorf("validate", "%s: %s is given in %s but the reference set holds it in %s: %v; %s",
		where, name, from, to, err, fix)
}
