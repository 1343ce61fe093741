package sequence

import (
	"fmt"
	"sort"
	"strconv"
	"strings"

	"huesolve/calibration"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Role is what a row of a run is.
type Role string

// The roles of a run sheet's rows.
const (
	RoleBlank  Role = "blank"
	RoleCheck  Role = "check"
	RoleSample Role = "sample"
)

// Columns a run sheet adds to a standards sheet: order, role and time
// (Extra columns 0 to 2), then the sample rows' own columns (labColumns).
var extraColumns = append([]string{"order", "role", "time"}, labColumns...)

// labColumns are the columns only sample rows fill: the sample's name,
// a further dilution of what was scanned, and the replicate group and
// preparation columns of a sample sheet (unmix.ExtraColumns, read by
// package lab).
var labColumns = append([]string{"sample", "dilution"}, unmix.ExtraColumns...)

// firstLab is the index of labColumns[0] among the Extra columns.
const firstLab = 3

// Row is one row of a run sheet.
type Row struct {
	calibration.Row
	Order int
	Role  Role
	// Hours is the row's time in hours (HasTime: the sheet gives times).
	Hours   float64
	HasTime bool
	// Name is the sample column's text, else the row's column within a
	// wide table, else its scan file.
	Name string
	// Dilution is a sample's further dilution (0: none given).
	Dilution float64
}

// Sheet is a run sheet with its scans loaded, rows in run order.
type Sheet struct {
	*calibration.Sheet
	Rows []Row
}

// ReadSheet reads a run sheet: a standards sheet (calibration.ReadSheet,
// check-standard rules) with the columns order (a whole number, unique),
// role (blank, check or sample) and optionally time (clock time HH:MM or
// HH:MM:SS; hours may pass 23 for a run that crosses midnight). Check
// rows give every compound's known concentration (0 where absent);
// blank and sample rows leave the compound cells empty or 0. Sample rows
// may also give sample (the name to report, default the column or scan
// file), dilution (a further dilution factor of what was scanned) and
// the replicate group and preparation columns of a sample sheet (group,
// replicate_of, mass, mass_unit, u_mass, volume, volume_unit, u_volume;
// read by package lab); other rows leave them empty. Errors name the
// sheet, line and column.
func ReadSheet(path string, opt calibration.SheetOptions) (*Sheet, error) {
	opt.Checks = true
	opt.Loose = true
	opt.Extra = extraColumns
	cs, err := calibration.ReadSheet(path, opt)
	if err != nil {
		return nil, err
	}
	all := append(append([]calibration.Row(nil), cs.Standards...), cs.Blanks...)
	sort.SliceStable(all, func(a, b int) bool { return all[a].Line < all[b].Line })
	sh := &Sheet{Sheet: cs}
	timed := -1
	for _, r := range all {
		row, err := readRow(path, r)
		if err != nil {
			return nil, err
		}
		if timed < 0 {
			timed = btoi(row.HasTime)
		} else if row.HasTime != (timed == 1) {
			return nil, rowErr(path, r, 2, "give a time on every row or on none")
		}
		sh.Rows = append(sh.Rows, row)
	}
	return sh, sh.settle(path)
}

func btoi(b bool) int {
	if b {
		return 1
	}
	return 0
}

// rowErr is an error at row r, Extra column i (0 order, 1 role, 2 time,
// then labColumns).
func rowErr(path string, r calibration.Row, i int, format string, a ...any) error {
	col := 0
	if i < len(r.ExtraCols) && r.ExtraCols[i] > 0 {
		col = r.ExtraCols[i]
	}
	return &spectrum.ParseError{File: path, Line: r.Line, Column: col, Err: fmt.Errorf(format, a...)}
}

// readRow reads the order, role and time of r and checks its
// concentrations against its role.
func readRow(path string, r calibration.Row) (Row, error) {
	row := Row{Row: r}
	if len(r.ExtraCols) < 3 || r.ExtraCols[0] == 0 || r.ExtraCols[1] == 0 {
		return row, &spectrum.ParseError{File: path, Err: fmt.Errorf("a run sheet needs the columns order and role (blank, check or sample)")}
	}
	n, err := strconv.Atoi(strings.TrimSpace(r.Extra[0]))
	if err != nil || n < 1 {
		return row, rowErr(path, r, 0, "order %q: want a whole number from 1", r.Extra[0])
	}
	row.Order = n
	switch Role(strings.ToLower(strings.TrimSpace(r.Extra[1]))) {
	case RoleBlank:
		row.Role = RoleBlank
	case RoleCheck:
		row.Role = RoleCheck
	case RoleSample:
		row.Role = RoleSample
	default:
		return row, rowErr(path, r, 1, "unknown role %q: want blank, check or sample", r.Extra[1])
	}
	if t := strings.TrimSpace(r.Extra[2]); t != "" {
		h, err := clockHours(t)
		if err != nil {
			return row, rowErr(path, r, 2, "time %q: %v", t, err)
		}
		row.Hours, row.HasTime = h, true
	}
	if err := row.readLab(path); err != nil {
		return row, err
	}
	if row.Role == RoleCheck && r.Unstated {
		return row, rowErr(path, r, 1, "a check row gives every compound's known concentration (0 where absent)")
	}
	if row.Role != RoleCheck {
		for _, v := range r.Conc {
			if v != 0 {
				return row, rowErr(path, r, 1, "a %s row gives concentrations; only check rows carry known concentrations", row.Role)
			}
		}
	}
	return row, nil
}

// readLab reads the name and dilution of row r and refuses a sample's
// own columns on a blank or check row.
func (row *Row) readLab(path string) error {
	row.Name = rowName(row.Row)
	for i, c := range labColumns {
		t := strings.TrimSpace(row.Extra[firstLab+i])
		switch {
		case t == "":
		case row.Role != RoleSample:
			return rowErr(path, row.Row, firstLab+i, "a %s row takes no %s: names, dilutions, replicate groups and preparations are for sample rows", row.Role, c)
		case c == "sample":
			row.Name = t
		case c == "dilution":
			d, _, err := spectrum.ParseNumber([]byte(t), true)
			if err == nil && d == 0 {
				err = fmt.Errorf("0")
			}
			if err == nil {
				err = unmix.CheckFactors(unmix.Factors{Dilution: d})
			}
			if err != nil {
				return rowErr(path, row.Row, firstLab+i, "dilution %q: want a factor from %g to %g", t, float64(unmix.MinDilution), float64(unmix.MaxDilution))
			}
			row.Dilution = d
		}
	}
	return nil
}

// clockHours reads HH:MM or HH:MM:SS as hours.
func clockHours(s string) (float64, error) {
	parts := strings.Split(s, ":")
	if len(parts) < 2 || len(parts) > 3 {
		return 0, fmt.Errorf("want a clock time HH:MM or HH:MM:SS")
	}
	var v [3]int
	for i, p := range parts {
		n, err := strconv.Atoi(p)
		if err != nil || n < 0 || i > 0 && (n > 59 || len(p) != 2) || i == 0 && n > 999 {
			return 0, fmt.Errorf("want a clock time HH:MM or HH:MM:SS")
		}
		v[i] = n
	}
	return float64(v[0]) + float64(v[1])/60 + float64(v[2])/3600, nil
}

// settle sorts the rows into run order and refuses duplicate order
// numbers, times that go back, and a run without a check standard.
func (sh *Sheet) settle(path string) error {
	sort.SliceStable(sh.Rows, func(a, b int) bool { return sh.Rows[a].Order < sh.Rows[b].Order })
	checks := 0
	for i, r := range sh.Rows {
		if r.Role == RoleCheck {
			checks++
		}
		if i == 0 {
			continue
		}
		p := sh.Rows[i-1]
		if r.Order == p.Order {
			return rowErr(path, r.Row, 0, "order %d is given twice (lines %d and %d)", r.Order, p.Line, r.Line)
		}
		if r.HasTime && r.Hours < p.Hours {
			return rowErr(path, r.Row, 2, "time %s at order %d is earlier than order %d's (%s): times follow the run order",
				r.Extra[2], r.Order, p.Order, p.Extra[2])
		}
	}
	if checks == 0 {
		return &spectrum.ParseError{File: path, Err: fmt.Errorf("the run has no check standard (role check): samples are valid only between passing checks")}
	}
	return nil
}
