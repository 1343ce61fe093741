package unmix

import (
	"errors"
	"io"
	"path/filepath"
	"slices"
	"strings"

	"huesolve/internal/sheet"
	"huesolve/spectrum"
)

// SampleSheet gives per-sample dilution factors and path lengths, read
// from delimited text with a header naming the columns "sample" and at
// least one of "dilution" and "path_cm" (any order, case ignored). The
// text is read by internal/sheet: comma, semicolon or tab separated, a
// decimal comma accepted when the separator is not a comma, fields quoted
// as in CSV, lines starting with # are comments, and every row has as many
// fields as the header. An empty cell means the default (1 for dilution,
// the reference set's path for path_cm). Columns headed note(s) or
// comment(s) are ignored; any other column is refused, so that a misspelt
// header ("path" for "path_cm") cannot be dropped without a word.
type SampleSheet struct {
	File  string
	rows  map[string]sheetRow
	order []string // sample names in sheet order
	warns []string
	// extra are the cells of the columns in ExtraColumns, by sample name
	// and column (read by package lab: replicate groups and preparation).
	extra map[string]map[string]Cell
}

// ExtraColumns are the sample sheet columns this package reads as text
// only and hands to package lab: the replicate group and the preparation
// (mass taken, final volume, their units and standard uncertainties).
var ExtraColumns = []string{"group", "replicate_of", "mass", "mass_unit", "u_mass", "volume", "volume_unit", "u_volume"}

// Cell is one cell of an extra column: its text and its 1-based line and
// column in the sheet.
type Cell struct {
	Text         string
	Line, Column int
}

// sheetColumns are the columns a sample sheet may have, as the error for
// an unknown one lists them.
const sheetColumns = "sample, dilution, path_cm, group, replicate_of, mass, mass_unit, u_mass, volume, volume_unit, u_volume (and note or comment, ignored)"

type sheetRow struct {
	f    Factors
	line int
}

// Limits of a sample sheet.
const (
	// maxSampleSheetBytes is the largest sample sheet ReadSampleSheet
	// reads (64 MiB, a million samples and more).
	maxSampleSheetBytes = 64 << 20
	// maxSheetLine is the longest line of a sample sheet (64 KiB).
	maxSheetLine = 64 << 10
)

// ReadSampleSheet reads a sample sheet file with sheet.Open: a folder,
// or a file larger than maxSampleSheetBytes, is refused before reading.
func ReadSampleSheet(path string) (*SampleSheet, error) {
	var warns []string
	text, _, err := sheet.Open(path, sampleOptions(&warns))
	if err != nil {
		return nil, err
	}
	return newSampleSheet(text, warns)
}

// sampleOptions are the sheet options of a sample sheet; warnings are
// appended to warns.
func sampleOptions(warns *[]string) sheet.Options {
	return sheet.Options{What: "sample sheet", MaxBytes: maxSampleSheetBytes, MaxLine: maxSheetLine,
		Warn: func(m string) { *warns = append(*warns, m) }}
}

// sampleColumns declares the columns of a sample sheet.
var sampleColumns = sheet.Columns{
	Names:  append([]string{"sample", "dilution", "path_cm"}, ExtraColumns...),
	Ignore: sheet.NoteColumns(),
	Known:  "a sample sheet has the columns " + sheetColumns,
}

// parseSampleSheet reads a sample sheet from r (at most
// maxSampleSheetBytes); file names it in errors, which are
// *spectrum.ParseError values with line and column. The dialect is that
// of package internal/sheet: quoting, strict field counts, the number
// syntax of the spectrum readers. Text that is not UTF-8 is read as
// Latin-1.
func parseSampleSheet(r io.Reader, file string) (*SampleSheet, error) {
	var warns []string
	text, err := sheet.Read(r, file, sampleOptions(&warns))
	if err != nil {
		return nil, err
	}
	return newSampleSheet(text, warns)
}

// newSampleSheet reads the columns and rows of a parsed sample sheet.
func newSampleSheet(text *sheet.Sheet, warns []string) (*SampleSheet, error) {
	l, err := text.Layout(sampleColumns)
	if err != nil {
		return nil, err
	}
	iSample, iDil, iPath := l.Col("sample"), l.Col("dilution"), l.Col("path_cm")
	hasExtra := false
	for _, c := range ExtraColumns {
		hasExtra = hasExtra || l.Col(c) >= 0
	}
	if iSample < 0 || (iDil < 0 && iPath < 0 && !hasExtra) {
		return nil, text.ErrAt(text.Header.Line, 0, "header needs columns sample and dilution, path_cm, group or the preparation, got %q",
			strings.Join(text.Header.Fields, string(text.Delim)))
	}
	ss := &SampleSheet{File: text.File, rows: map[string]sheetRow{}, warns: warns, extra: map[string]map[string]Cell{}}
	for _, rec := range text.Rows {
		name := rec.Fields[iSample]
		if name == "" {
			return nil, text.ErrAt(rec.Line, iSample+1, "empty sample name")
		}
		if prev, dup := ss.rows[name]; dup {
			return nil, text.ErrAt(rec.Line, iSample+1, "sample %q already given on line %d", name, prev.line)
		}
		var f Factors
		if f.Dilution, err = sampleFactor(text, rec, iDil, "dilution"); err != nil {
			return nil, err
		}
		if f.PathCM, err = sampleFactor(text, rec, iPath, "path_cm"); err != nil {
			return nil, err
		}
		ss.rows[name] = sheetRow{f: f, line: rec.Line}
		for _, c := range ExtraColumns {
			if i := l.Col(c); i >= 0 {
				if ss.extra[name] == nil {
					ss.extra[name] = map[string]Cell{}
				}
				ss.extra[name][c] = Cell{Text: strings.TrimSpace(sheet.Field(rec, i)), Line: rec.Line, Column: i + 1}
			}
		}
		ss.order = append(ss.order, name)
	}
	return ss, nil
}

// sampleFactor reads the dilution or path_cm (what) in column col of rec:
// 0 (the default) when the sheet has no such column or the cell is
// empty, else a positive number within the limits of CheckFactors.
func sampleFactor(text *sheet.Sheet, rec sheet.Row, col int, what string) (float64, error) {
	v := sheet.Field(rec, col)
	if v == "" {
		return 0, nil
	}
	x, err := text.Number(rec, col)
	switch {
	case errors.Is(err, sheet.ErrNotNumber):
		return 0, text.ErrAt(rec.Line, col+1, "%s %q is not a number", what, v)
	case err != nil:
		return 0, text.ErrAt(rec.Line, col+1, "%s %q: %w", what, v, err)
	case !(x > 0):
		return 0, text.ErrAt(rec.Line, col+1, "%s %q is not a positive number", what, v)
	}
	if err := CheckFactors(Factors{PathCM: x}); what == "path_cm" && err != nil {
		return 0, text.ErrAt(rec.Line, col+1, "path_cm %q: want %g to %g cm", v, float64(MinPathCM), float64(MaxPathCM))
	}
	if err := CheckFactors(Factors{Dilution: x}); what == "dilution" && err != nil {
		return 0, text.ErrAt(rec.Line, col+1, "dilution %q: want a factor from %g to %g", v, float64(MinDilution), float64(MaxDilution))
	}
	return x, nil
}

// lookup finds the factors of a scan: by its name, else by its file's
// base name with and without extension. Zero fields mean "default".
func (ss *SampleSheet) lookup(s *spectrum.Spectrum) (Factors, bool) {
	f, _, ok := ss.match(s)
	return f, ok
}

// match is lookup that also returns the sheet's name of the row that
// matched ("" when none did), so that a caller can tell which rows of the
// sheet were never used.
func (ss *SampleSheet) match(s *spectrum.Spectrum) (Factors, string, bool) {
	if ss == nil {
		return Factors{}, "", false
	}
	base := filepath.Base(s.Source.File)
	for _, k := range []string{s.Name, base, strings.TrimSuffix(base, filepath.Ext(base))} {
		if k == "" {
			continue
		}
		if r, ok := ss.rows[k]; ok {
			return r.f, k, true
		}
	}
	return Factors{}, "", false
}

// names returns the sample names of the sheet in sheet order.
func (ss *SampleSheet) names() []string {
	if ss == nil {
		return nil
	}
	return slices.Clone(ss.order)
}

// Line returns the sheet line of the row named name (0 if none).
func (ss *SampleSheet) Line(name string) int {
	if ss == nil {
		return 0
	}
	return ss.rows[name].line
}

// Warnings returns the warnings given while the sheet was read (a sheet
// that is not UTF-8 is read as Latin-1), each naming file:line.
func (ss *SampleSheet) Warnings() []string {
	if ss == nil {
		return nil
	}
	return slices.Clone(ss.warns)
}

// Near returns the sheet's sample name that name may have been meant to
// match (false if none): one that differs from it only in letter case,
// in separators (space, -, _, .) or in leading zeros of a number, so
// that M7 in the sheet is offered for a scan named M07. The suggestion
// is only named, never used: a sample matches a row by its exact name.
func (ss *SampleSheet) Near(name string) (string, bool) {
	if ss == nil {
		return "", false
	}
	key := looseName(name)
	if key == "" {
		return "", false
	}
	for _, n := range ss.order {
		if looseName(n) == key {
			return n, true
		}
	}
	return "", false
}

// looseName is name in lower case without separators and without the
// leading zeros of its numbers: the key Near compares.
func looseName(name string) string {
	var b strings.Builder
	rs := []rune(strings.ToLower(name))
	for i := 0; i < len(rs); i++ {
		r := rs[i]
		switch {
		case r == ' ' || r == '-' || r == '_' || r == '.':
		case r >= '0' && r <= '9':
			j := i
			for j < len(rs) && rs[j] >= '0' && rs[j] <= '9' {
				j++
			}
			num := strings.TrimLeft(string(rs[i:j]), "0")
			if num == "" {
				num = "0"
			}
			b.WriteString(num)
			i = j - 1
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// Extra returns the cell of column (one of ExtraColumns) in the row of
// the sample named name; ok is false when the sheet has no such row or
// column.
func (ss *SampleSheet) Extra(name, column string) (c Cell, ok bool) {
	if ss == nil {
		return Cell{}, false
	}
	c, ok = ss.extra[name][column]
	return c, ok
}

// Names returns the sample names of the sheet in sheet order.
func (ss *SampleSheet) Names() []string { return ss.names() }
