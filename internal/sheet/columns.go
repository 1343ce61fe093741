package sheet

import (
	"fmt"
	"strings"
)

// NoteColumns returns the names of columns every sheet reads and drops:
// free text for the people who keep the sheet. Each call gives a new
// slice.
func NoteColumns() []string { return []string{"note", "notes", "comment", "comments"} }

// Columns declares the columns of a kind of sheet. A sheet matches its
// header against them with Sheet.Layout.
type Columns struct {
	// Names are the columns the sheet knows, in lower case; each may
	// appear at most once. Whether one is required is the sheet's rule
	// (Layout.Col is -1 for a column the header lacks).
	Names []string
	// Ignore are names of columns that are read and dropped, typically
	// NoteColumns.
	Ignore []string
	// Others lets the header have other named columns, returned in
	// Layout.Others for the sheet to interpret (compounds of a standards
	// sheet). Without it another name is an error that quotes it and
	// then says Known.
	Others bool
	// Known ends the message about an unknown column ("a sample sheet
	// has the columns sample, dilution, path_cm").
	Known string
	// Wrap, if not nil, is wrapped by every error about the header.
	Wrap error
}

// Layout says where the declared columns are in one sheet.
type Layout struct {
	cols map[string]int
	// Others are the 0-based positions of the named columns that are not
	// declared, in header order (with Columns.Others).
	Others []int
}

// Col is the 0-based position of the declared column name, or -1 when
// the header does not have it.
func (l Layout) Col(name string) int {
	if i, ok := l.cols[name]; ok {
		return i
	}
	return -1
}

// headerKey is the form in which column names are compared: lower case,
// surrounding blanks dropped.
func headerKey(name string) string { return strings.ToLower(strings.TrimSpace(name)) }

// Layout matches the header against c. A column without a name is
// allowed when no row has a value in it (a trailing separator from a
// spreadsheet); a declared column named twice, an unknown column (without
// c.Others) and a nameless column with values are errors naming the
// header's line and the column.
func (sh *Sheet) Layout(c Columns) (Layout, error) {
	l := Layout{cols: map[string]int{}}
	line := sh.Header.Line
	for i, h := range sh.Header.Fields {
		key := headerKey(h)
		switch {
		case contains(c.Names, key):
			if j, dup := l.cols[key]; dup {
				return Layout{}, sh.headerErr(c, line, i+1, "column %q given twice (first in column %d)", key, j+1)
			}
			l.cols[key] = i
		case contains(c.Ignore, key):
		case key == "":
			if !sh.columnEmpty(i) {
				return Layout{}, sh.headerErr(c, line, i+1, "column %d has values but no name", i+1)
			}
		case c.Others:
			l.Others = append(l.Others, i)
		default:
			return Layout{}, sh.headerErr(c, line, i+1, "unknown column %q; %s", strings.TrimSpace(h), c.Known)
		}
	}
	return l, nil
}

func (sh *Sheet) headerErr(c Columns, line, col int, format string, a ...any) error {
	err := fmt.Errorf(format, a...)
	if c.Wrap != nil {
		err = fmt.Errorf("%w: %w", c.Wrap, err)
	}
	return sh.errAt(line, col, err)
}

func (sh *Sheet) columnEmpty(i int) bool {
	for _, r := range sh.Rows {
		if r.Fields[i] != "" {
			return false
		}
	}
	return true
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
