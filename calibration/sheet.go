package calibration

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"huesolve/internal/sheet"
	"huesolve/internal/units"
	"huesolve/reference"
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
	// Extra names further columns the caller reads (a run sheet's order,
	// role and time): each row carries their text in Row.Extra, in this
	// order ("" for a column the sheet lacks); they are not compounds.
	Extra []string
	// Loose lets a compound cell be empty (read as 0, the row marked
	// Row.Unstated) and a sheet hold no standard at all: the caller
	// judges its rows by the Extra columns.
	Loose bool
}

// Row is one row of a standards sheet with its scan loaded.
type Row struct {
	File   string // scan file as written in the sheet
	Path   string // the file's path as opened (relative to the sheet's folder)
	Column string // the scan's column within a wide table, as written; "" if none
	Line   int    // line of the sheet
	// Conc holds one concentration per compound, in Sheet.Compounds order.
	Conc []float64
	// Extra holds the text of SheetOptions.Extra's columns.
	Extra []string
	// Unstated: some compound cell was empty (SheetOptions.Loose).
	Unstated bool
	// Column numbers of Extra's columns, counting from 1 (0: absent).
	ExtraCols []int
	// Scan is the standard's spectrum, in absorbance.
	Scan *spectrum.Spectrum
	// scanSHA256 is the hash of the scan file, lower-case hex.
	scanSHA256 string
}

// isBlank reports whether the row is a blank: every concentration zero.
func (r Row) isBlank() bool {
	for _, v := range r.Conc {
		if v != 0 {
			return false
		}
	}
	return true
}

// Sheet is a parsed standards sheet with its scans loaded.
type Sheet struct {
	Path      string   // the sheet file as given
	Compounds []string // compound names, in column order
	Units     []string // unit of each compound; "" if none was stated
	// MolarMass is each compound's molar mass in g/mol, 0 if none was
	// given (in the header's brackets or the molar-mass row).
	MolarMass []float64
	// Columns is each compound's column in the sheet, counting from 1.
	Columns []int
	// Standards are the rows with some non-zero concentration, Blanks the
	// rows whose concentrations are all zero, both in sheet order.
	Standards []Row
	Blanks    []Row
}

// Sentinel causes of sheet errors, tested with errors.Is.
var (
	errSheetHeader   = errors.New("bad header")
	errConcentration = errors.New("bad concentration")
	errScanFile      = errors.New("bad scan file")
	errNoVariation   = errors.New("compound never varies")
)

// ReadSheet reads a standards sheet and the scans it names; paths in the
// sheet are relative to the sheet's folder. The format is described in the
// package documentation. Scans are converted to absorbance.
//
// Errors are *spectrum.ParseError values naming the sheet, line and, where
// it helps, column; they wrap errSheetHeader, errConcentration,
// errScanFile, errNoVariation or the reader's error. No partial sheet is
// returned with an error.
func ReadSheet(path string, opt SheetOptions) (*Sheet, error) {
	perr := func(line, col int, format string, a ...any) error {
		return &spectrum.ParseError{File: path, Line: line, Column: col, Err: fmt.Errorf(format, a...)}
	}
	text, sheetSt, err := sheet.Open(path, sheet.Options{What: "standards sheet", MaxBytes: maxSheetBytes, Warn: opt.Warn, Wrap: errSheetHeader})
	if errors.Is(err, spectrum.ErrEmpty) {
		return nil, perr(0, 0, "%w: the sheet has no header and no rows", errSheetHeader)
	}
	if err != nil {
		return nil, err
	}
	sh := &Sheet{Path: path}
	cols, err := sh.readHeader(text, opt)
	if err != nil {
		return nil, err
	}
	if len(text.Rows) > MaxSheetRows {
		return nil, perr(text.Rows[MaxSheetRows].Line, 0, "%w: more than %d rows; split the standards into several sheets and calibrate each", errConcentration, MaxSheetRows)
	}
	ld := &scanLoader{sheet: path, sheetSt: sheetSt, opt: opt, cache: map[string]loadedScans{}, conv: map[string]*spectrum.Spectrum{}}
	ld.sheetAbs, _ = filepath.Abs(path)
	mmLine := 0
	for _, rec := range text.Rows {
		if mm, err := isMolarMassRow(rec.Fields[cols.scan]); err != nil {
			return nil, text.ErrAt(rec.Line, cols.scan+1, "%w: %v", errScanFile, err)
		} else if mm {
			if err := sh.readMolarMasses(text, rec, cols, &mmLine); err != nil {
				return nil, err
			}
			continue
		}
		row, err := sh.readRow(text, rec, cols)
		if err != nil {
			return nil, err
		}
		if err := ld.load(&row, cols); err != nil {
			return nil, err
		}
		if row.isBlank() {
			sh.Blanks = append(sh.Blanks, row)
		} else {
			sh.Standards = append(sh.Standards, row)
		}
	}
	if err := sh.plausible(text, cols, opt); err != nil {
		return nil, err
	}
	return sh, sh.finish(opt)
}

const (
	// maxConc is the largest concentration a standards sheet may hold, in
	// any unit: no unit in use makes a standard's concentration a number
	// this large, and it keeps the squares the fit forms far from
	// overflow (project choice).
	maxConc = 1e12
	// maxConcRatio bounds how far a concentration may lie from the median
	// of its compound's non-zero concentrations in the sheet, either way:
	// a working range spans one to three decades (ISO 8466-1 asks for
	// one; recalled from memory), so a value 1e4 times off is a typo or a
	// unit slip (project choice).
	maxConcRatio = 1e4
)

// plausible refuses concentrations no standard has (above maxConc; in a
// calibration sheet also more than maxConcRatio from the compound's
// median, while check standards may hold traces) and, for a calibration
// sheet, a column that does not look like a concentration:
// non-zero in every row, including rows where every other compound is
// zero (the blanks), as a batch or lot number is.
func (sh *Sheet) plausible(text *sheet.Sheet, cols sheetCols, opt SheetOptions) error {
	all := sheetOrder(sh)
	for k, name := range sh.Compounds {
		var nz []float64
		for _, r := range all {
			if v := r.Conc[k]; v > 0 {
				nz = append(nz, v)
			}
		}
		if len(nz) == 0 {
			continue
		}
		sort.Float64s(nz)
		med := nz[len(nz)/2]
		for _, r := range all {
			v := r.Conc[k]
			if v > maxConc || !opt.Checks && v > 0 && (v > med*maxConcRatio || v < med/maxConcRatio) {
				return text.ErrAt(r.Line, cols.comps[k]+1, "%w: %s is %s, implausible beside the median %s of its other standards (more than %g times off, or above %g): check the number and its unit",
					errConcentration, name, fmtNum(v), fmtNum(med), maxConcRatio, maxConc)
			}
		}
		if !opt.Checks && len(sh.Compounds) > 1 && len(nz) == len(all) {
			if line := othersZero(all, k); line > 0 {
				return text.ErrAt(line, cols.comps[k]+1, "%w: column %q is non-zero in every row, also where every other compound is zero (a blank): it does not look like a concentration; if it holds no concentrations, head it \"note\" (such columns are ignored)",
					errSheetHeader, text.Header.Fields[cols.comps[k]])
			}
		}
	}
	return nil
}

// othersZero is the sheet line of the first row of all whose compounds
// other than k are all zero, or 0.
func othersZero(all []Row, k int) int {
	for _, r := range all {
		zero := true
		for l, v := range r.Conc {
			if l != k && v != 0 {
				zero = false
				break
			}
		}
		if zero {
			return r.Line
		}
	}
	return 0
}

// sheetOrder is the sheet's rows, standards and blanks, in line order.
func sheetOrder(sh *Sheet) []Row {
	all := append(append([]Row(nil), sh.Standards...), sh.Blanks...)
	sort.SliceStable(all, func(a, b int) bool { return all[a].Line < all[b].Line })
	return all
}

// standardsColumns declares the columns of a standards sheet: scan and
// column by name; every other named column is a compound.
var standardsColumns = sheet.Columns{
	Names:  []string{"scan", "column"},
	Ignore: sheet.NoteColumns(),
	Others: true,
	Wrap:   errSheetHeader,
}

// sheetCols are the positions of a standards sheet's columns (0-based;
// column -1 when the sheet has none).
type sheetCols struct {
	scan, column int
	comps        []int // compound columns, in Sheet.Compounds order
	extra        []int // SheetOptions.Extra's columns (-1: absent)
	loose        bool  // SheetOptions.Loose
}

// readHeader finds the columns of the sheet, the compounds and their
// units.
func (sh *Sheet) readHeader(text *sheet.Sheet, opt SheetOptions) (sheetCols, error) {
	hline := text.Header.Line
	decl := standardsColumns
	decl.Names = append(append([]string(nil), decl.Names...), opt.Extra...)
	l, err := text.Layout(decl)
	if err != nil {
		return sheetCols{}, err
	}
	cols := sheetCols{scan: l.Col("scan"), column: l.Col("column"), loose: opt.Loose}
	for _, name := range opt.Extra {
		cols.extra = append(cols.extra, l.Col(name))
	}
	seen := map[string]int{}
	for _, i := range l.Others {
		h := text.Header.Fields[i]
		name, u, err := splitUnit(h)
		if err != nil {
			return sheetCols{}, text.ErrAt(hline, i+1, "%w: %v", errSheetHeader, err)
		}
		if j, dup := seen[strings.ToLower(name)]; dup {
			return sheetCols{}, text.ErrAt(hline, i+1, "%w: compound %q is named twice (columns %d and %d)", errSheetHeader, name, j+1, i+1)
		}
		seen[strings.ToLower(name)] = i
		cols.comps = append(cols.comps, i)
		sh.Compounds = append(sh.Compounds, name)
		sh.Units = append(sh.Units, u.Unit)
		sh.MolarMass = append(sh.MolarMass, u.MolarMass)
		sh.Columns = append(sh.Columns, i+1)
	}
	if cols.scan < 0 {
		return sheetCols{}, text.ErrAt(hline, 0, "%w: the header needs a column named scan (the scan file of each standard)", errSheetHeader)
	}
	if len(cols.comps) == 0 {
		return sheetCols{}, text.ErrAt(hline, 0, "%w: no compound columns: after scan (and column) give one column per compound, e.g. \"Ambrelin (mg/L)\"", errSheetHeader)
	}
	sh.settleUnits(hline, opt)
	return cols, nil
}

// settleUnits gives compounds without a unit the one of opt.Unit, and
// warns about units that are missing or that differ from opt.Unit.
func (sh *Sheet) settleUnits(hline int, opt SheetOptions) {
	warn := opt.Warn
	if warn == nil {
		warn = func(string) {}
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
				sh.Path, hline, sh.Compounds[k], u, opt.Unit))
		}
	}
	if len(noUnit) > 0 {
		warn(fmt.Sprintf("%s:%d: no concentration unit stated for %s: the numbers are carried as given (write the unit in the header as \"name (mg/L)\" or give one with --unit)",
			sh.Path, hline, strings.Join(noUnit, ", ")))
	}
}

// readRow reads the scan file, column and concentrations of one row.
func (sh *Sheet) readRow(text *sheet.Sheet, rec sheet.Row, cols sheetCols) (Row, error) {
	row := Row{Line: rec.Line, File: rec.Fields[cols.scan], Column: sheet.Field(rec, cols.column), Conc: make([]float64, len(cols.comps))}
	for _, c := range cols.extra {
		row.Extra = append(row.Extra, sheet.Field(rec, c))
		row.ExtraCols = append(row.ExtraCols, c+1)
	}
	for k, c := range cols.comps {
		if cols.loose && rec.Fields[c] == "" {
			row.Unstated = true
			continue
		}
		v, err := parseConc(text, rec, c)
		if err != nil {
			return Row{}, text.ErrAt(rec.Line, c+1, "%w: %s: %v", errConcentration, sh.Compounds[k], err)
		}
		row.Conc[k] = v
	}
	if row.File == "" {
		return Row{}, text.ErrAt(rec.Line, cols.scan+1, "%w: no scan file named", errScanFile)
	}
	return row, nil
}

// loadedScans are the scans of one file and the file's SHA-256.
type loadedScans struct {
	scans []*spectrum.Spectrum
	sum   string
}

// scanLoader loads the scans a sheet names, each file once.
type scanLoader struct {
	sheet    string
	sheetAbs string
	sheetSt  os.FileInfo
	opt      SheetOptions
	cache    map[string]loadedScans
	conv     map[string]*spectrum.Spectrum // converted scans by path and column
}

func (ld *scanLoader) errAt(line, col int, format string, a ...any) error {
	return &spectrum.ParseError{File: ld.sheet, Line: line, Column: col, Err: fmt.Errorf(format, a...)}
}

// load sets row's Path, SHA256 and Scan (in absorbance, checked).
func (ld *scanLoader) load(row *Row, cols sheetCols) error {
	line, col := row.Line, cols.scan+1
	p := row.File
	if !filepath.IsAbs(p) {
		p = filepath.Join(filepath.Dir(ld.sheet), filepath.FromSlash(p))
	}
	row.Path = p
	got, ok := ld.cache[p]
	if !ok {
		var err error
		if got, err = ld.read(p, line, col); err != nil {
			return err
		}
		ld.cache[p] = got
	}
	row.scanSHA256 = got.sum
	sp, err := pickScan(got.scans, row.Column)
	if err != nil {
		if cols.column >= 0 {
			col = cols.column + 1
		}
		return ld.errAt(line, col, "%w: %s: %w", errScanFile, p, err)
	}
	// Rows naming the same scan share one converted copy: the footprint
	// per row is then its concentrations, not a spectrum.
	key := p + "\x00" + row.Column
	if done, ok := ld.conv[key]; ok {
		row.Scan = done
		return nil
	}
	sp = sp.Clone()
	if err := sp.ToAbsorbance(); err != nil {
		return ld.errAt(line, col, "%w: %w", errScanFile, err)
	}
	if err := sp.Check(); err != nil {
		return ld.errAt(line, col, "%w: %w", errScanFile, err)
	}
	ld.conv[key] = sp
	row.Scan = sp
	return nil
}

// read reads the scan file p named on line (in column col) of the sheet.
func (ld *scanLoader) read(p string, line, col int) (loadedScans, error) {
	var got loadedScans
	st, err := os.Stat(p)
	switch {
	case errors.Is(err, os.ErrNotExist):
		return got, ld.errAt(line, col, "%w: %s does not exist (paths are relative to the sheet's folder %s)", errScanFile, p, filepath.Dir(ld.sheet))
	case err != nil:
		return got, ld.errAt(line, col, "%w: %v", errScanFile, err)
	case st.IsDir():
		return got, ld.errAt(line, col, "%w: %s is a folder, not a scan file", errScanFile, p)
	}
	if a, _ := filepath.Abs(p); a == ld.sheetAbs || os.SameFile(st, ld.sheetSt) {
		return got, ld.errAt(line, col, "%w: the sheet names itself as a scan", errScanFile)
	}
	got.scans, err = spectrum.ReadFile(p, spectrum.ReadOptions{Quantity: ld.opt.Quantity, Warn: ld.opt.Warn})
	if err != nil {
		return got, ld.errAt(line, col, "%w: %w", errScanFile, err)
	}
	if got.sum, err = reference.FileSHA256(p); err != nil {
		return got, ld.errAt(line, col, "%w: %v", errScanFile, err)
	}
	if len(got.scans) == 0 {
		return got, ld.errAt(line, col, "%w: %s holds no scan", errScanFile, p)
	}
	return got, nil
}

// finish checks the sheet as a whole: it has standards and (for a
// calibration sheet) every compound varies.
func (sh *Sheet) finish(opt SheetOptions) error {
	perr := func(format string, a ...any) error {
		return &spectrum.ParseError{File: sh.Path, Err: fmt.Errorf(format, a...)}
	}
	if opt.Loose && len(sh.Standards)+len(sh.Blanks) > 0 {
		return nil
	}
	if len(sh.Standards) == 0 && len(sh.Blanks) == 0 {
		return perr("%w: no standards: the sheet has a header but no rows", errConcentration)
	}
	if len(sh.Standards) == 0 {
		return perr("%w: no standards: every row has all concentrations zero (blanks only)", errConcentration)
	}
	if !opt.Checks {
		return sh.checkVariation()
	}
	return nil
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
			return &spectrum.ParseError{File: sh.Path, Err: fmt.Errorf("%w: %s is %g in every row, so its absorptivity cannot be found (give standards at several concentrations)", errNoVariation, name, first)}
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

// maxSheetBytes is the largest standards sheet ReadSheet reads (64 MiB,
// hundreds of thousands of rows).
const maxSheetBytes = 64 << 20

// MaxSheetRows is the most rows (standards and blanks) ReadSheet reads:
// far more than any calibration (tens of standards), and with Build's
// footprint per row (see README, "Limits") a bound on calibrate's memory
// whatever the sheet holds (project choice).
const MaxSheetRows = 20000

// splitUnit splits "Name (unit)" or "Name [unit]" into its parts; "Name"
// has no unit. The brackets may also give the molar mass after a
// semicolon: "Name (µmol/L; M=534.4 g/mol)".
func splitUnit(h string) (name string, u units.Header, err error) {
	for _, br := range [][2]string{{"(", ")"}, {"[", "]"}} {
		if !strings.HasSuffix(h, br[1]) {
			continue
		}
		i := strings.LastIndex(h, br[0])
		if i < 0 {
			break
		}
		name = strings.TrimSpace(h[:i])
		inner := strings.TrimSpace(h[i+1 : len(h)-1])
		switch {
		case name == "":
			return "", u, fmt.Errorf("column %q has a unit but no compound name", h)
		case inner == "":
			return "", u, fmt.Errorf("column %q has empty brackets where the unit goes", h)
		case strings.ContainsAny(name, "()[]"):
			return "", u, fmt.Errorf("column %q: write a compound as \"name\", \"name (unit)\" or \"name [unit]\"", h)
		}
		if u, err = units.ParseHeader(inner); err != nil {
			return "", u, fmt.Errorf("column %q: %v", h, err)
		}
		return name, u, nil
	}
	if strings.ContainsAny(h, "()[]") {
		return "", u, fmt.Errorf("column %q: write a compound as \"name\", \"name (unit)\" or \"name [unit]\"", h)
	}
	return h, u, nil
}

// molarMassLabels are the scan cells (compared without case) of the
// row that gives the compounds' molar masses in g/mol.
var molarMassLabels = []string{"molar mass (g/mol)", "molar mass [g/mol]"}

// isMolarMassRow reports whether a scan cell labels the molar-mass row; a
// cell naming a molar mass without its unit is an error.
func isMolarMassRow(cell string) (bool, error) {
	c := strings.ToLower(strings.Join(strings.Fields(cell), " "))
	for _, l := range molarMassLabels {
		if c == l {
			return true, nil
		}
	}
	if strings.HasPrefix(c, "molar mass") {
		return false, fmt.Errorf("%q: label the molar-mass row %q (the masses in g/mol)", cell, molarMassLabels[0])
	}
	return false, nil
}

// readMolarMasses reads the molar-mass row: per compound a molar mass in
// g/mol, or an empty cell for none. A compound whose header also gives
// one must give the same.
func (sh *Sheet) readMolarMasses(text *sheet.Sheet, rec sheet.Row, cols sheetCols, seen *int) error {
	if *seen > 0 {
		return text.ErrAt(rec.Line, cols.scan+1, "%w: a second molar-mass row (the first is on line %d)", errConcentration, *seen)
	}
	*seen = rec.Line
	for k, c := range cols.comps {
		if rec.Fields[c] == "" {
			continue
		}
		v, err := text.Number(rec, c)
		if err == nil {
			err = units.CheckMolarMass(v)
		}
		if err != nil {
			return text.ErrAt(rec.Line, c+1, "%w: %s: molar mass %q: want a number of g/mol above 0", errConcentration, sh.Compounds[k], rec.Fields[c])
		}
		if m := sh.MolarMass[k]; m != 0 && m != v {
			return text.ErrAt(rec.Line, c+1, "%w: %s: molar mass %s g/mol here but %s g/mol in the header", errConcentration, sh.Compounds[k], fmtNum(v), fmtNum(m))
		}
		sh.MolarMass[k] = v
	}
	return nil
}

// parseConc reads field c of rec as a concentration: a finite number
// >= 0 in the sheets' number syntax.
func parseConc(text *sheet.Sheet, rec sheet.Row, c int) (float64, error) {
	s := rec.Fields[c]
	if s == "" {
		return 0, errors.New("empty cell: write 0 for a compound that is absent")
	}
	v, err := text.Number(rec, c)
	if errors.Is(err, sheet.ErrNotNumber) {
		return 0, fmt.Errorf("%q is not a number", s)
	}
	if err != nil {
		return 0, err
	}
	if v < 0 {
		return 0, fmt.Errorf("%q is negative", s)
	}
	return v, nil
}
