package reference

import (
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"unicode/utf8"

	"huesolve/internal/bytesize"
	"huesolve/spectrum"
)

// SheetOptions control ReadSheet.
type SheetOptions struct {
	// Unit is the concentration unit of compounds whose header states
	// none. Empty: carry the numbers as given and warn.
	Unit string
	// Quantity says what the scan files hold when they do not say
	// (absorbance, %T or T); Unstated lets the readers decide.
	Quantity spectrum.Quantity
	// Warn receives warnings; nil discards them.
	Warn func(msg string)
	// Checks reads a sheet of check standards: a compound may then hold
	// the same concentration in every row (replicates of one mixture),
	// which a calibration sheet may not.
	Checks bool
}

// Row is one row of a standards sheet with its scan loaded.
type Row struct {
	File   string // scan file as written in the sheet
	Path   string // the file's path as opened (relative to the sheet's folder)
	Column string // the scan's column within a wide table, as written; "" if none
	Line   int    // line of the sheet
	// Conc holds one concentration per compound, in Sheet.Compounds order.
	Conc []float64
	// Scan is the standard's spectrum, in absorbance.
	Scan *spectrum.Spectrum
	// SHA256 is the hash of the scan file, lower-case hex.
	SHA256 string
}

// Sheet is a parsed standards sheet with its scans loaded.
type Sheet struct {
	Path      string   // the sheet file as given
	Compounds []string // compound names, in column order
	Units     []string // unit of each compound; "" if none was stated
	// Standards are the rows with some non-zero concentration, Blanks the
	// rows whose concentrations are all zero, both in sheet order.
	Standards []Row
	Blanks    []Row
}

// Sentinel causes of sheet errors, tested with errors.Is.
var (
	ErrSheetHeader   = errors.New("bad header")
	ErrConcentration = errors.New("bad concentration")
	ErrScanFile      = errors.New("bad scan file")
	ErrNoVariation   = errors.New("compound never varies")
)

// ReadSheet reads a standards sheet and the scans it names; paths in the
// sheet are relative to the sheet's folder. The format is described in the
// package documentation. Scans are converted to absorbance.
//
// Errors are *spectrum.ParseError values naming the sheet, line and, where
// it helps, column; they wrap ErrSheetHeader, ErrConcentration,
// ErrScanFile, ErrNoVariation or the reader's error. No partial sheet is
// returned with an error.
func ReadSheet(path string, opt SheetOptions) (*Sheet, error) {
	warn := opt.Warn
	if warn == nil {
		warn = func(string) {}
	}
	perr := func(line, col int, format string, a ...any) error {
		return &spectrum.ParseError{File: path, Line: line, Column: col, Err: fmt.Errorf(format, a...)}
	}
	sheetSt, err := os.Stat(path)
	switch {
	case err != nil:
		return nil, fmt.Errorf("reference: standards sheet: %w", err)
	case sheetSt.IsDir():
		return nil, perr(0, 0, "%w: the standards sheet is a folder; give the sheet file", ErrSheetHeader)
	case sheetSt.Mode().IsRegular() && sheetSt.Size() > MaxSheetBytes:
		return nil, perr(0, 0, "%w: the file is %s, more than the %s a standards sheet may take (is it a sheet?)",
			ErrSheetHeader, bytesize.Text(sheetSt.Size()), bytesize.Text(MaxSheetBytes))
	}
	data, err := readUpTo(path, MaxSheetBytes)
	if errors.Is(err, errTooLarge) {
		return nil, perr(0, 0, "%w: more than the %s a standards sheet may take (is it a sheet?)", ErrSheetHeader, bytesize.Text(MaxSheetBytes))
	}
	if err != nil {
		return nil, fmt.Errorf("reference: standards sheet: %w", err)
	}
	data = bytes.TrimPrefix(data, []byte("\ufeff"))
	if !utf8.Valid(data) {
		line := 1 + bytes.Count(data[:firstInvalid(data)], []byte("\n"))
		warn(fmt.Sprintf("%s:%d: the sheet is not UTF-8 text; read it as Latin-1 (save it as UTF-8 to be sure of names and units)", path, line))
		data = latin1ToUTF8(data)
	}
	comma := sniffDelimiter(data)
	r := csv.NewReader(bytes.NewReader(data))
	r.Comma = comma
	r.Comment = '#'
	r.FieldsPerRecord = -1
	// Leading blanks are trimmed, but not tabs when tab separates fields.
	r.TrimLeadingSpace = comma != '\t'
	var records [][]string
	var lines []int
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, perr(pe.Line, pe.Column, "%w", pe.Err)
			}
			return nil, perr(0, 0, "%w", err)
		}
		line, _ := r.FieldPos(0)
		if blankRecord(rec) {
			continue
		}
		records = append(records, rec)
		lines = append(lines, line)
	}
	if len(records) == 0 {
		return nil, perr(0, 0, "%w: the sheet has no header and no rows", ErrSheetHeader)
	}

	// Header.
	header, hline := records[0], lines[0]
	sh := &Sheet{Path: path}
	scanCol, colCol := -1, -1
	var compCols []int
	ignore := map[string]bool{"note": true, "notes": true, "comment": true, "comments": true}
	seen := map[string]int{}
	for i, h := range header {
		h = strings.TrimSpace(h)
		key := strings.ToLower(h)
		switch {
		case key == "scan":
			if scanCol >= 0 {
				return nil, perr(hline, i+1, "%w: two columns named scan", ErrSheetHeader)
			}
			scanCol = i
		case key == "column":
			if colCol >= 0 {
				return nil, perr(hline, i+1, "%w: two columns named column", ErrSheetHeader)
			}
			colCol = i
		case ignore[key]:
		case h == "":
			if columnEmpty(records[1:], i) {
				continue // a trailing separator from a spreadsheet
			}
			return nil, perr(hline, i+1, "%w: column %d has values but no name", ErrSheetHeader, i+1)
		default:
			name, unit, err := splitUnit(h)
			if err != nil {
				return nil, perr(hline, i+1, "%w: %v", ErrSheetHeader, err)
			}
			if j, dup := seen[strings.ToLower(name)]; dup {
				return nil, perr(hline, i+1, "%w: compound %q is named twice (columns %d and %d)", ErrSheetHeader, name, j+1, i+1)
			}
			seen[strings.ToLower(name)] = i
			compCols = append(compCols, i)
			sh.Compounds = append(sh.Compounds, name)
			sh.Units = append(sh.Units, unit)
		}
	}
	if scanCol < 0 {
		return nil, perr(hline, 0, "%w: the header needs a column named scan (the scan file of each standard)", ErrSheetHeader)
	}
	if len(compCols) == 0 {
		return nil, perr(hline, 0, "%w: no compound columns: after scan (and column) give one column per compound, e.g. \"Ambrelin (mg/L)\"", ErrSheetHeader)
	}
	var noUnit []string
	for k, u := range sh.Units {
		switch {
		case u == "" && opt.Unit != "":
			sh.Units[k] = opt.Unit
		case u == "":
			noUnit = append(noUnit, sh.Compounds[k])
		case opt.Unit != "" && u != opt.Unit:
			warn(fmt.Sprintf("%s:%d: compound %q has unit %q in the header; the unit %q given with --unit is not used for it",
				path, hline, sh.Compounds[k], u, opt.Unit))
		}
	}
	if len(noUnit) > 0 {
		warn(fmt.Sprintf("%s:%d: no concentration unit stated for %s: the numbers are carried as given (write the unit in the header as \"name (mg/L)\" or give one with --unit)",
			path, hline, strings.Join(noUnit, ", ")))
	}

	// Rows.
	sheetAbs, _ := filepath.Abs(path)
	dir := filepath.Dir(path)
	type loaded struct {
		scans []*spectrum.Spectrum
		sum   string
	}
	cache := map[string]loaded{}
	for ri, rec := range records[1:] {
		line := lines[ri+1]
		for i := len(header); i < len(rec); i++ {
			if strings.TrimSpace(rec[i]) != "" {
				return nil, perr(line, i+1, "row has %d fields but the header names %d columns", len(rec), len(header))
			}
		}
		field := func(i int) string {
			if i < len(rec) {
				return strings.TrimSpace(rec[i])
			}
			return ""
		}
		row := Row{Line: line, File: field(scanCol), Conc: make([]float64, len(compCols))}
		if colCol >= 0 {
			row.Column = field(colCol)
		}
		allZero := true
		for k, c := range compCols {
			v, err := parseConc(field(c), comma != ',')
			if err != nil {
				return nil, perr(line, c+1, "%w: %s: %v", ErrConcentration, sh.Compounds[k], err)
			}
			row.Conc[k] = v
			if v != 0 {
				allZero = false
			}
		}
		if row.File == "" {
			return nil, perr(line, scanCol+1, "%w: no scan file named", ErrScanFile)
		}
		p := row.File
		if !filepath.IsAbs(p) {
			p = filepath.Join(dir, filepath.FromSlash(p))
		}
		row.Path = p
		ld, ok := cache[p]
		if !ok {
			st, err := os.Stat(p)
			switch {
			case errors.Is(err, os.ErrNotExist):
				return nil, perr(line, scanCol+1, "%w: %s does not exist (paths are relative to the sheet's folder %s)", ErrScanFile, p, dir)
			case err != nil:
				return nil, perr(line, scanCol+1, "%w: %v", ErrScanFile, err)
			case st.IsDir():
				return nil, perr(line, scanCol+1, "%w: %s is a folder, not a scan file", ErrScanFile, p)
			}
			if a, _ := filepath.Abs(p); a == sheetAbs || os.SameFile(st, sheetSt) {
				return nil, perr(line, scanCol+1, "%w: the sheet names itself as a scan", ErrScanFile)
			}
			ld.scans, err = spectrum.ReadFile(p, spectrum.ReadOptions{Quantity: opt.Quantity, Warn: opt.Warn})
			if err != nil {
				return nil, perr(line, scanCol+1, "%w: %w", ErrScanFile, err)
			}
			if ld.sum, err = FileSHA256(p); err != nil {
				return nil, perr(line, scanCol+1, "%w: %v", ErrScanFile, err)
			}
			if len(ld.scans) == 0 {
				return nil, perr(line, scanCol+1, "%w: %s holds no scan", ErrScanFile, p)
			}
			cache[p] = ld
		}
		row.SHA256 = ld.sum
		sp, err := pickScan(ld.scans, row.Column)
		if err != nil {
			col := scanCol + 1
			if colCol >= 0 {
				col = colCol + 1
			}
			return nil, perr(line, col, "%w: %s: %v", ErrScanFile, p, err)
		}
		sp = sp.Clone()
		if err := sp.ToAbsorbance(); err != nil {
			return nil, perr(line, scanCol+1, "%w: %w", ErrScanFile, err)
		}
		if err := sp.Check(); err != nil {
			return nil, perr(line, scanCol+1, "%w: %w", ErrScanFile, err)
		}
		row.Scan = sp
		if allZero {
			sh.Blanks = append(sh.Blanks, row)
		} else {
			sh.Standards = append(sh.Standards, row)
		}
	}
	if len(sh.Standards) == 0 && len(sh.Blanks) == 0 {
		return nil, perr(0, 0, "%w: no standards: the sheet has a header but no rows", ErrConcentration)
	}
	if len(sh.Standards) == 0 {
		return nil, perr(0, 0, "%w: no standards: every row has all concentrations zero (blanks only)", ErrConcentration)
	}
	if !opt.Checks {
		if err := sh.checkVariation(); err != nil {
			return nil, err
		}
	}
	return sh, nil
}

// checkVariation reports a compound whose concentration is the same in
// every row of the sheet.
func (sh *Sheet) checkVariation() error {
	all := append(append([]Row(nil), sh.Standards...), sh.Blanks...)
	for k, name := range sh.Compounds {
		first := all[0].Conc[k]
		varies := false
		for _, r := range all[1:] {
			if r.Conc[k] != first {
				varies = true
				break
			}
		}
		if !varies {
			return &spectrum.ParseError{File: sh.Path, Err: fmt.Errorf("%w: %s is %g in every row, so its absorptivity cannot be found (give standards at several concentrations)", ErrNoVariation, name, first)}
		}
	}
	return nil
}

// pickScan chooses the scan named by col (a name, or a 1-based number
// counting the scans of the file) among scans.
func pickScan(scans []*spectrum.Spectrum, col string) (*spectrum.Spectrum, error) {
	names := func() string {
		var b []string
		for i, s := range scans {
			b = append(b, fmt.Sprintf("%d %q", i+1, s.Name))
		}
		return strings.Join(b, ", ")
	}
	if col == "" {
		if len(scans) > 1 {
			return nil, fmt.Errorf("the file holds %d scans (%s): name one in the sheet's column field", len(scans), names())
		}
		return scans[0], nil
	}
	for _, s := range scans {
		if s.Name == col {
			return s, nil
		}
	}
	for _, s := range scans {
		if strings.EqualFold(s.Name, col) {
			return s, nil
		}
	}
	if n, err := strconv.Atoi(col); err == nil {
		if n < 1 || n > len(scans) {
			return nil, fmt.Errorf("column %d: the file holds %d scans (%s)", n, len(scans), names())
		}
		return scans[n-1], nil
	}
	return nil, fmt.Errorf("no scan named %q in the file; it holds %s", col, names())
}

// MaxSheetBytes is the largest standards sheet ReadSheet reads (64 MiB,
// hundreds of thousands of rows).
const MaxSheetBytes = 64 << 20

// FileSHA256 returns the SHA-256 of a file's content in lower-case hex,
// reading it in pieces (memory does not grow with the file).
func FileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("%s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// firstInvalid is the offset of the first byte of data that is not part
// of valid UTF-8.
func firstInvalid(data []byte) int {
	for i := 0; i < len(data); {
		r, n := utf8.DecodeRune(data[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return len(data)
}

// latin1ToUTF8 reads each byte as the ISO 8859-1 character of that code.
func latin1ToUTF8(b []byte) []byte {
	out := make([]byte, 0, len(b)+len(b)/8)
	for _, c := range b {
		out = utf8.AppendRune(out, rune(c))
	}
	return out
}

// sniffDelimiter picks the field separator from the first line that is
// not blank or a comment: tab if it has one, else semicolon, else comma.
func sniffDelimiter(data []byte) rune {
	for _, line := range strings.Split(string(data), "\n") {
		t := strings.TrimSpace(line)
		if t == "" || strings.HasPrefix(t, "#") {
			continue
		}
		switch {
		case strings.Contains(line, "\t"):
			return '\t'
		case strings.Contains(line, ";"):
			return ';'
		}
		return ','
	}
	return ','
}

// splitUnit splits "Name (unit)" into its parts; "Name" has no unit.
func splitUnit(h string) (name, unit string, err error) {
	if strings.HasSuffix(h, ")") {
		if i := strings.LastIndex(h, "("); i >= 0 {
			name = strings.TrimSpace(h[:i])
			unit = strings.TrimSpace(h[i+1 : len(h)-1])
			if name == "" {
				return "", "", fmt.Errorf("column %q has a unit but no compound name", h)
			}
			if unit == "" {
				return "", "", fmt.Errorf("column %q has empty brackets where the unit goes", h)
			}
			return name, unit, nil
		}
	}
	if strings.ContainsAny(h, "()") {
		return "", "", fmt.Errorf("column %q: write a compound as \"name\" or \"name (unit)\"", h)
	}
	return h, "", nil
}

// parseConc reads a concentration: a finite number >= 0. decimalComma
// accepts "0,5" for 0.5 (when the sheet's separator is not a comma).
func parseConc(s string, decimalComma bool) (float64, error) {
	if s == "" {
		return 0, errors.New("empty cell: write 0 for a compound that is absent")
	}
	t := s
	if decimalComma && strings.Count(t, ",") == 1 && !strings.Contains(t, ".") {
		t = strings.Replace(t, ",", ".", 1)
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || strings.ContainsAny(t, "xXpP_") {
		return 0, fmt.Errorf("%q is not a number", s)
	}
	if v < 0 {
		return 0, fmt.Errorf("%q is negative", s)
	}
	return v, nil
}

func blankRecord(rec []string) bool {
	for _, f := range rec {
		if strings.TrimSpace(f) != "" {
			return false
		}
	}
	return true
}

func columnEmpty(recs [][]string, i int) bool {
	for _, r := range recs {
		if i < len(r) && strings.TrimSpace(r[i]) != "" {
			return false
		}
	}
	return true
}
