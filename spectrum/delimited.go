package spectrum

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Thresholds of the percent-transmittance warning.
const (
	// pctTLow and pctTHigh bound the values that look like %T rather than
	// absorbance: absorbance above 5 is beyond any spectrophotometer's
	// range (common practice), so a scan of values between 5 and 100 is
	// almost surely percent transmittance.
	pctTLow, pctTHigh = 5.0, 100.0
	// pctTShare is the share of values that must lie in [pctTLow,
	// pctTHigh] before the warning is raised ("nearly all").
	pctTShare = 0.95
	// pctTMax is the most a percent transmittance reading may plausibly
	// reach: 100 plus room for noise and a blank a little darker than
	// the sample (project choice).
	pctTMax = 110.0
	// fractionTMax is the largest value a transmittance fraction may
	// plausibly reach (1 plus room for noise and a slightly bright
	// blank); above it the values look like percent.
	fractionTMax = 2.0
)

// delimiter kinds; whitespace means runs of blanks and tabs.
const whitespace = ' '

// ReadDelimited reads a two-column scan or a wide table from r; file is
// used in messages and provenance.
//
// The dialect is detected: fields separated by tab, semicolon, comma or
// blanks; decimal comma accepted when the separator is not a comma; a
// UTF-8 byte order mark and CRLF line ends accepted. Lines starting with
// '#' are comments; free text before the numeric block is skipped and its
// last line is the header. The first column holds wavelengths in nm
// (a header saying cm-1 or µm converts them); each further column is one
// spectrum, named by its header cell or else "file#colN". Wavelengths may
// be ascending or descending (the result is ascending) and are shared by
// all spectra of one table (read-only).
//
// What the values are comes from quantity words in the header
// (absorbance, abs, A; %T, percent transmittance; transmittance, T), else
// from opt.Quantity, else they are read as absorbance with a warning. A
// header word that contradicts opt.Quantity wins, with a warning naming
// the file and columns.
//
// Every problem in the file (no data, ragged rows, text in numbers,
// NaN/Inf, duplicate or out-of-order wavelengths, mixed decimal marks, an
// over-long line or too many columns) is a *ParseError naming file, line
// and (table) column. No partial result is returned with an error.
func ReadDelimited(r io.Reader, file string, opt ReadOptions) ([]*Spectrum, error) {
	if l, ok := r.(interface{ Len() int }); ok && opt.sizeHint == 0 {
		opt.sizeHint = int64(l.Len()) // a bytes.Reader, say: sizes the store
	}
	return readDelimited(newLineReader(r, file, opt.maxLine(), opt.sizeHint), file, opt)
}

// readDelimited is ReadDelimited on the lines of lr.
func readDelimited(lr *lineReader, file string, opt ReadOptions) ([]*Spectrum, error) {
	d := &delimReader{file: file, opt: &opt, maxCols: opt.maxCols()}
	if err := d.read(lr); err != nil {
		return nil, err
	}
	return d.build()
}

type delimReader struct {
	file    string
	opt     *ReadOptions
	maxCols int

	delim      byte // '\t', ';', ',' or whitespace
	allowComma bool // decimal comma possible (delimiter is not a comma)
	mark       byte // decimal mark seen so far (0: none yet)
	markLine   int  // line where mark was first seen
	ncols      int
	header     string // last text line before the block
	headerLine int
	firstLine  int // line of the first data row

	wl   []float64  // wavelengths in file order
	fill *tableFill // the values, column-major (see tablefill.go)
	dir  int        // +1 ascending, -1 descending, 0 unknown
	// scratched: wl and the values are in opt.scratch (scratch.go),
	// copied out by build.
	scratched bool
}

func (d *delimReader) errAt(line, col int, err error) error {
	return &ParseError{File: d.file, Line: line, Column: col, Err: err}
}

func (d *delimReader) read(lr *lineReader) error {
	started := false
	defer func() {
		if d.fill != nil {
			d.fill.close()
		}
	}()
	for {
		line, ok, err := lr.next()
		if err != nil {
			if started {
				// Rows before this line come first.
				if e := d.fill.finish(); e != nil {
					return e
				}
			}
			return err
		}
		if !ok {
			break
		}
		n := lr.n
		if n == 1 && (bytes.HasPrefix(line, []byte{0xFF, 0xFE}) || bytes.HasPrefix(line, []byte{0xFE, 0xFF})) {
			return d.errAt(1, 0, errors.New("the file is UTF-16 text; save it as UTF-8 (or plain ASCII) text"))
		}
		t := trimBlank(line)
		if len(t) == 0 || t[0] == '#' {
			continue
		}
		if !started {
			delim, ncols, ok, mixed := detectRow(t)
			if mixed > 0 {
				return d.errAt(n, mixed, ErrMixedMark)
			}
			if !ok {
				d.header = string(t)
				d.headerLine = n
				continue
			}
			if ncols > d.maxCols {
				return d.errAt(n, d.maxCols+1, fmt.Errorf("table has %d columns, more than the %d this reader accepts", ncols, d.maxCols))
			}
			started = true
			d.delim, d.ncols, d.firstLine = delim, ncols, n
			d.allowComma = delim != ','
			d.fill = newTableFill(d, len(line))
			if sc := d.opt.scratch; sc != nil && d.fill.direct {
				d.scratched = true
				d.wl = floats(&sc.wl, d.fill.ld)[:0]
			} else {
				d.wl = make([]float64, 0, d.fill.ld)
			}
		}
		if err := d.fill.add(t, n); err != nil {
			return err
		}
	}
	if started {
		if err := d.fill.finish(); err != nil {
			return err
		}
	}
	if !started {
		switch {
		case lr.n == 0:
			return d.errAt(1, 0, fmt.Errorf("the file is empty: %w", ErrEmpty))
		case d.header != "":
			return d.errAt(d.headerLine, 0, fmt.Errorf("only text, no numeric rows of wavelength and values: %w", ErrEmpty))
		default:
			return d.errAt(lr.n, 0, fmt.Errorf("only blank or comment lines: %w", ErrEmpty))
		}
	}
	if len(d.wl) < 2 {
		return d.errAt(d.firstLine, 0, fmt.Errorf("only one data row; a scan needs at least two wavelengths: %w", ErrEmpty))
	}
	return nil
}

// parseRow splits t at the table's delimiter and parses every field,
// appending to row.
func (d *delimReader) parseRow(t []byte, line int, row []float64) ([]float64, error) {
	col := 0
	rest := t
	for {
		if d.delim != whitespace && col < d.ncols {
			// Fast path: a plain number right up to the delimiter or
			// the end of the line. Anything else (blanks, quotes, a
			// bad number) takes the general path below, which also
			// words the errors.
			v, mark, k, err := scanNumber(rest, d.allowComma)
			if err == nil && (k == len(rest) || rest[k] == d.delim) && (mark == 0 || mark == d.mark) {
				row = append(row, v)
				col++
				if k == len(rest) {
					break
				}
				rest = rest[k+1:]
				if col == d.ncols && len(trimBlank(rest)) == 0 {
					break // one trailing delimiter is tolerated
				}
				continue
			}
		}
		var f []byte
		last := false
		if d.delim == whitespace {
			k := 0
			for k < len(rest) && rest[k] != ' ' && rest[k] != '\t' {
				k++
			}
			f = rest[:k]
			j := k
			for j < len(rest) && (rest[j] == ' ' || rest[j] == '\t') {
				j++
			}
			rest = rest[j:]
			last = len(rest) == 0
		} else {
			k := bytes.IndexByte(rest, d.delim)
			if k < 0 {
				f, rest, last = rest, nil, true
			} else {
				f, rest = rest[:k], rest[k+1:]
				if len(trimBlank(rest)) == 0 && col+1 == d.ncols {
					last = true // one trailing delimiter is tolerated
				}
			}
			f = trimField(f)
		}
		col++
		if col > d.ncols {
			return nil, d.errAt(line, col, fmt.Errorf("ragged row: more fields than the %d columns of the first data row (line %d)", d.ncols, d.firstLine))
		}
		v, mark, err := parseNumber(f, d.allowComma)
		if err != nil {
			return nil, d.errAt(line, col, err)
		}
		if mark != 0 && mark != d.mark {
			if d.mark == 0 {
				d.mark, d.markLine = mark, line
			} else {
				return nil, d.errAt(line, col, fmt.Errorf("%w (%q here, %q from line %d)", ErrMixedMark, mark, d.mark, d.markLine))
			}
		}
		row = append(row, v)
		if last {
			break
		}
	}
	if col < d.ncols {
		return nil, d.errAt(line, col+1, fmt.Errorf("ragged row: %d fields where the first data row (line %d) has %d", col, d.firstLine, d.ncols))
	}
	return row, nil
}

// addWavelength checks the wavelength w of the data row on line against
// the rows before it and appends it.
func (d *delimReader) addWavelength(w float64, line int) error {
	if k := len(d.wl); k > 0 {
		prev := d.wl[k-1]
		switch {
		case w == prev:
			return d.errAt(line, 1, fmt.Errorf("%w: duplicate wavelength %s (also on the row before)", errGrid, fmtG(w)))
		case d.dir == 0 && w > prev:
			d.dir = 1
		case d.dir == 0:
			d.dir = -1
		case (w > prev) != (d.dir > 0):
			order := "ascending"
			if d.dir < 0 {
				order = "descending"
			}
			return d.errAt(line, 1, fmt.Errorf("%w: wavelength %s breaks the %s order (previous row %s)", errGrid, fmtG(w), order, fmtG(prev)))
		}
	}
	d.wl = append(d.wl, w)
	return nil
}

// build turns the collected table into spectra.
func (d *delimReader) build() ([]*Spectrum, error) {
	nr, ns := len(d.wl), d.ncols-1
	cells, cellsOK := d.headerCells()
	unit := unitNM
	if cellsOK {
		unit = wavelengthUnit(cells[0])
	}
	if err := d.convertUnit(unit); err != nil {
		return nil, err
	}
	wl, vals, ld := d.columnMajor(nr, ns)
	var err error
	if d.scratched {
		if sc := d.opt.scratch; cap(d.wl) > cap(sc.wl) {
			sc.wl = d.wl[:0] // grown by append: kept for the next file
		}
		vals, ld = exactCopy(vals, nr, ld, ns), nr
		wl, err = sharedGrid(wl)
	} else {
		err = checkGrid(wl)
	}
	if err != nil {
		// Only unit conversion can get here (rounding collapsed points).
		return nil, d.errAt(d.firstLine, 1, err)
	}
	if err := d.splitDecimals(vals, nr, ld, ns, cellsOK); err != nil {
		return nil, err
	}
	qs, names := d.quantities(cells, cellsOK, ns)
	ss, pct := d.spectra(wl, vals, ld, qs, names)
	if len(pct) > 0 {
		return nil, d.errAt(d.firstLine, pct[0], fmt.Errorf("%w: %s read as absorbance, but %s; %s",
			ErrMisread, columnList(pct, ns), pctTReason, pctTFix))
	}
	return ss, nil
}

// exactCopy copies the values of a column-major store (nr rows of ns
// columns, ld rows apart) into a new one of exactly nr*ns values.
func exactCopy(vals []float64, nr, ld, ns int) []float64 {
	out := make([]float64, nr*ns)
	for j := 0; j < ns; j++ {
		copy(out[j*nr:(j+1)*nr], vals[j*ld:j*ld+nr])
	}
	return out
}

// pctTReason and pctTFix word the refusal of percent transmittance read
// as absorbance (looksPercentT), in both readers.
const (
	pctTReason = "absorbance of 5 and more is beyond any spectrophotometer and these values look like percent transmittance (0 to 100)"
	pctTFix    = "say %T in the header, or give --quantity %T"
)

// splitDecimals refuses a comma-separated table whose numbers carry a
// decimal comma, which the comma splits into two columns each ("0,123"
// read as 0 and 123): every value of every spectrum column is a whole
// number, there are at least two such columns, and either the header has
// another number of cells than the rows have fields, or there is no
// header and a column is all zero (the integer parts of absorbance below
// 1). A table of whole numbers under a header that fits (%T to the
// percent) is not refused.
func (d *delimReader) splitDecimals(vals []float64, nr, ld, ns int, cellsOK bool) error {
	if d.delim != ',' || ns < 2 {
		return nil
	}
	zeroCol := false
	for j := 0; j < ns; j++ {
		col := vals[j*ld : j*ld+nr]
		zero := true
		for _, v := range col {
			if v != math.Trunc(v) {
				return nil
			}
			zero = zero && v == 0
		}
		zeroCol = zeroCol || zero
	}
	if !(d.header != "" && !cellsOK) && !(d.header == "" && zeroCol) {
		return nil
	}
	return d.errAt(d.firstLine, 2, fmt.Errorf("%w: every value of this comma-separated file is a whole number in %d columns, as when numbers written with a decimal comma (0,123) are split at the comma into two columns; export the file with a semicolon or tab between the fields, or with decimal points",
		ErrMisread, ns))
}

// convertUnit turns the wavelength column, in unit as the first header
// cell states it, into nm.
func (d *delimReader) convertUnit(unit int) error {
	wl := d.wl
	switch unit {
	case unitMicrometre:
		for i := range wl {
			wl[i] *= 1000
		}
	case unitWavenumber:
		for i, x := range wl {
			if !(x > 0) {
				return d.errAt(d.firstLine+i, 1, fmt.Errorf("wavenumber %s cm-1 cannot be converted to a wavelength", fmtG(x)))
			}
			wl[i] = 1e7 / x
		}
		d.dir = -d.dir
	}
	return nil
}

// columnMajor returns the wavelengths, ascending, and the column-major
// store of the values (nr rows, ns spectra; spectrum j at vals[j*ld:]),
// reversed with them. A store whose estimate of the rows was far off is
// compacted (ld = nr).
func (d *delimReader) columnMajor(nr, ns int) (wl, vals []float64, ld int) {
	wl, vals, ld = d.wl, d.fill.vals, d.fill.ld
	d.fill = nil
	if ld-nr > nr/8 {
		for j := 0; j < ns; j++ {
			copy(vals[j*nr:(j+1)*nr], vals[j*ld:j*ld+nr])
		}
		vals, ld = vals[:nr*ns:nr*ns], nr
	}
	if d.dir < 0 {
		reverse(wl)
		for j := 0; j < ns; j++ {
			reverse(vals[j*ld : j*ld+nr])
		}
	}
	return wl[:nr:nr], vals, ld
}

// quantities reads the quantity and name of each of the ns spectrum
// columns from the header cells (cellsOK) or the header line.
func (d *delimReader) quantities(cells []string, cellsOK bool, ns int) ([]Quantity, []string) {
	qs := make([]Quantity, ns)
	var names []string
	if cellsOK {
		names = make([]string, len(cells))
	}
	var whole Quantity
	if !cellsOK && d.header != "" {
		whole = quantityFromText(d.header)
	}
	// In a table of several spectra, a column headed by a lone letter
	// ("a", "T") names a sample (columns a, b, c), unless every spectrum
	// column carries the same letter (an export repeating its quantity).
	// One spectrum column headed "A" is absorbance.
	letterNames := false
	if cellsOK && ns > 1 {
		letterNames = !sameLoneLetter(cells[1:])
	}
	stated := 0
	for j := range qs {
		if cellsOK {
			qs[j], names[j+1] = cellQuantity(cells[j+1], letterNames)
		} else {
			qs[j] = whole
		}
		if qs[j] != Unstated {
			stated++
		}
	}
	if cellsOK && stated > 0 && stated < ns {
		fillAgreed(qs)
	}
	return qs, names
}

// cellQuantity reads the quantity and name of one spectrum column's
// header cell; letterNames says that lone letters name samples.
func cellQuantity(cell string, letterNames bool) (Quantity, string) {
	if letterNames && isLoneLetter(cell) {
		return Unstated, strings.TrimSpace(cell)
	}
	q, name := cellQuantityAndName(cell)
	if letterNames && name == "" {
		// "A [%T]": sample A in %T.
		if k := strings.LastIndexAny(cell, "[("); k > 0 && isLoneLetter(cell[:k]) {
			name = strings.TrimSpace(cell[:k])
		}
	}
	return q, name
}

// fillAgreed gives columns without a word the one word the others agree
// on.
func fillAgreed(qs []Quantity) {
	var common Quantity
	for _, q := range qs {
		if q != Unstated {
			if common != Unstated && q != common {
				return
			}
			common = q
		}
	}
	for j := range qs {
		if qs[j] == Unstated {
			qs[j] = common
		}
	}
}

// spectra makes one spectrum per column, settles each quantity against
// the requested one and gives the warnings.
func (d *delimReader) spectra(wl, vals []float64, ld int, qs []Quantity, names []string) ([]*Spectrum, []int) {
	nr, ns := len(wl), len(qs)
	base := filepath.Base(d.file)
	if d.file == "" {
		base = "<input>"
	}
	out := make([]*Spectrum, ns)
	// Columns whose header states a quantity other than the requested
	// one, by the quantity stated: the file wins.
	contradicted := map[Quantity][]int{}
	var unstated []int
	var odd [3][]int // columns failing plausibility, by kind
	for j := 0; j < ns; j++ {
		q := qs[j]
		if d.opt.Quantity != Unstated {
			if q == Unstated {
				q = d.opt.Quantity
			} else if q != d.opt.Quantity {
				contradicted[q] = append(contradicted[q], j+2)
			}
		}
		if q == Unstated {
			q = Absorbance
			unstated = append(unstated, j+2)
		}
		name := ""
		if names != nil {
			name = strings.Join(strings.Fields(names[j+1]), " ")
		}
		if GenericName(name) {
			name = ""
		}
		if name == "" {
			if ns == 1 {
				name = strings.TrimSuffix(base, filepath.Ext(base))
			} else {
				name = base + "#col" + strconv.Itoa(j+2)
			}
		}
		s := &Spectrum{
			Name:        name,
			Wavelengths: wl,
			Values:      vals[j*ld : j*ld+nr : j*ld+nr],
			Quantity:    q,
			Source:      Source{File: d.file, Column: j + 2, Line: d.firstLine},
		}
		if k := implausible(s); k != plausible {
			odd[k] = append(odd[k], j+2)
		}
		out[j] = s
	}
	d.warnQuantities(contradicted, unstated, odd, ns)
	return out, odd[looksPct]
}

// warnQuantities gives the warnings about the spectra's quantities:
// contradicted by the header, unstated, or implausible for their values.
func (d *delimReader) warnQuantities(contradicted map[Quantity][]int, unstated []int, odd [3][]int, ns int) {
	for _, q := range []Quantity{Absorbance, PercentT, Transmittance} {
		if cols := contradicted[q]; len(cols) > 0 {
			d.opt.warnf(d.file, "the header states %s for %s, not the %s requested; reading %s as the file says (the requested quantity applies only to files that do not say)",
				q, columnList(cols, ns), d.opt.Quantity, q)
		}
	}
	if len(unstated) > 0 {
		d.opt.warnf(d.file, "the header does not say whether %s are absorbance, %%T or T; reading absorbance (state it with a header word or --quantity)", columnList(unstated, ns))
	}
	if c := odd[looksPctNotFraction]; len(c) > 0 {
		d.opt.warnf(d.file, "%s, read as transmittance fraction (0..1), mostly exceed %g; they look like percent transmittance (--quantity %%T)", columnList(c, ns), fractionTMax)
	}
}

// columnList names columns for a message: "the values", "the values in
// column 3", "the values in columns 2, 3, 4" or "the values in 1000
// columns (2, 3, 4, 5, 6, ...)".
func columnList(cols []int, ns int) string {
	if ns == 1 {
		return "the values"
	}
	if len(cols) == 1 {
		return "the values in column " + strconv.Itoa(cols[0])
	}
	var b strings.Builder
	if len(cols) > 5 {
		fmt.Fprintf(&b, "the values in %d columns (", len(cols))
	} else {
		b.WriteString("the values in columns ")
	}
	for i, c := range cols {
		if i == 5 {
			b.WriteString(", ...")
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(strconv.Itoa(c))
	}
	if len(cols) > 5 {
		b.WriteString(")")
	}
	return b.String()
}

// Outcomes of the plausibility check.
const (
	plausible = iota
	looksPct
	looksPctNotFraction
)

// implausible tells whether the values of s look like another quantity
// than the one they are read as.
func implausible(s *Spectrum) int {
	switch s.Quantity {
	case Absorbance:
		if looksPercentT(s.Values) {
			return looksPct
		}
	case Transmittance:
		n := 0
		for _, v := range s.Values {
			if v > fractionTMax {
				n++
			}
		}
		if n > len(s.Values)/2 {
			return looksPctNotFraction
		}
	}
	return plausible
}

// looksPercentT reports whether values read as absorbance are percent
// transmittance: nearly all (pctTShare) lie in [pctTLow, pctTHigh], or at
// least half are pctTLow or more while none exceeds pctTMax (a dark
// sample's %T scan, whose bands go below 5 %T). Absorbance of 5 and more
// on half a scan is beyond any spectrophotometer (common practice).
func looksPercentT(v []float64) bool {
	if len(v) == 0 {
		return false
	}
	in, high, over := 0, 0, 0
	for _, x := range v {
		if x >= pctTLow {
			high++
			if x <= pctTHigh {
				in++
			}
			if x > pctTMax {
				over++
			}
		}
	}
	return float64(in) >= pctTShare*float64(len(v)) || (2*high >= len(v) && over == 0)
}

// headerCells splits the header into cells; ok is false when there is no
// header or its cell count differs from the table's.
func (d *delimReader) headerCells() ([]string, bool) {
	if d.header == "" {
		return nil, false
	}
	h := d.header
	if !utf8.ValidString(h) {
		h = latin1ToUTF8(h)
		d.opt.warnf(d.file, "line %d: the header is not UTF-8; read it as Latin-1", d.headerLine)
		d.header = h
	}
	var cells []string
	if d.delim == whitespace {
		cells = strings.Fields(h)
	} else {
		cells = splitQuoted(h, d.delim)
		if len(cells) == d.ncols+1 && strings.TrimSpace(cells[d.ncols]) == "" {
			cells = cells[:d.ncols]
		}
	}
	if len(cells) != d.ncols {
		if d.delim != whitespace {
			d.opt.warnf(d.file, "line %d: the header has %d fields but the table has %d columns; column names ignored", d.headerLine, len(cells), d.ncols)
		}
		return nil, false
	}
	return cells, true
}

// detectRow reports whether t is a numeric row of at least two fields and
// with which delimiter. A row that would be numeric but mixes decimal
// points and decimal commas returns ok false and, in mixed, the 1-based
// field where the second convention appears.
func detectRow(t []byte) (delim byte, ncols int, ok bool, mixed int) {
	try := func(delim byte) (int, bool) {
		n := 0
		mixedAt := 0
		var mark byte
		rest := t
		for {
			var f []byte
			if delim == whitespace {
				rest = trimBlank(rest)
				if len(rest) == 0 {
					break
				}
				k := bytes.IndexAny(rest, " \t")
				if k < 0 {
					k = len(rest)
				}
				f, rest = rest[:k], rest[k:]
			} else {
				k := bytes.IndexByte(rest, delim)
				if k < 0 {
					f, rest = rest, nil
				} else {
					f, rest = rest[:k], rest[k+1:]
				}
				f = trimField(f)
				if len(f) == 0 && rest == nil && n > 0 {
					break // trailing delimiter
				}
			}
			_, m, err := parseNumber(f, delim != ',')
			if err != nil {
				return 0, false
			}
			if m != 0 {
				if mark != 0 && m != mark && mixedAt == 0 {
					mixedAt = n + 1
				}
				mark = m
			}
			n++
			if rest == nil {
				break
			}
		}
		if mixedAt > 0 && n >= 2 {
			if mixed == 0 {
				mixed = mixedAt
			}
			return 0, false
		}
		return n, n >= 2
	}
	var buf [4]byte
	cands := append(AppendDelimiters(buf[:0], t), whitespace)
	for _, c := range cands {
		if n, ok := try(c); ok {
			return c, n, true, 0
		}
	}
	return 0, 0, false, mixed
}

func trimBlank(b []byte) []byte {
	for len(b) > 0 && (b[0] == ' ' || b[0] == '\t') {
		b = b[1:]
	}
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t' || b[len(b)-1] == '\r') {
		b = b[:len(b)-1]
	}
	return b
}

// trimField trims blanks and one pair of surrounding double quotes.
func trimField(f []byte) []byte {
	if len(f) > 0 && (f[0] == ' ' || f[0] == '\t' || f[len(f)-1] == ' ' || f[len(f)-1] == '\t') {
		f = trimBlank(f)
	}
	if len(f) >= 2 && f[0] == '"' && f[len(f)-1] == '"' {
		f = trimBlank(f[1 : len(f)-1])
	}
	return f
}

// splitQuoted splits a header line at delim, honouring double quotes
// ("" inside quotes is a quote).
func splitQuoted(s string, delim byte) []string {
	if strings.IndexByte(s, '"') < 0 {
		// No quotes: the cells are substrings (a wide table's header
		// has a cell per scan; nothing to copy).
		out := strings.Split(s, string(delim))
		for i, c := range out {
			out[i] = strings.TrimSpace(c)
		}
		return out
	}
	var out []string
	var cur strings.Builder
	inq := false
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case inq && c == '"' && i+1 < len(s) && s[i+1] == '"':
			cur.WriteByte('"')
			i++
		case c == '"':
			inq = !inq
		case !inq && c == delim:
			out = append(out, strings.TrimSpace(cur.String()))
			cur.Reset()
		default:
			cur.WriteByte(c)
		}
	}
	return append(out, strings.TrimSpace(cur.String()))
}

func latin1ToUTF8(s string) string { return string(latin1Bytes([]byte(s))) }

// headerWords splits a header cell into lower-case words; a word is a run
// of letters, digits and '%'. bracketed reports, per word, whether it stood
// alone inside (), [] or {}.
func headerWords(cell string) (words []string, bracketed []bool) {
	cell = strings.ToLower(cell)
	start := -1 // start of the current word, -1 between words
	flush := func(end int) {
		if start < 0 {
			return
		}
		w := cell[start:end] // the word's runes, as they are in cell
		br := false
		if start > 0 && end < len(cell) {
			o, c := cell[start-1], cell[end]
			br = (o == '(' && c == ')') || (o == '[' && c == ']') || (o == '{' && c == '}')
		}
		words = append(words, w)
		bracketed = append(bracketed, br)
		start = -1
	}
	for i, r := range cell {
		if unicode.IsLetter(r) || unicode.IsDigit(r) || r == '%' {
			if start < 0 {
				start = i
			}
			continue
		}
		flush(i)
	}
	flush(len(cell))
	return words, bracketed
}

// quantityFromText finds a quantity word in a header cell: "%T", "T%",
// "percent", "% transmittance" mean PercentT; "transmittance", "trans" or
// a lone "T" mean Transmittance; "absorbance", "abs", "absorption" or a
// lone "A" mean Absorbance. A lone letter counts only when it is the whole
// cell or stands in brackets, so "A1" or "Sample A" name spectra.
func quantityFromText(cell string) Quantity {
	words, br := headerWords(cell)
	whole := len(words) == 1
	pct, trans, abs := false, false, false
	for i, w := range words {
		lone := whole || br[i]
		switch w {
		case "%t", "t%", "%transmittance", "%trans", "percent", "pct", "percentt", "%":
			pct = true
		case "transmittance", "transmission", "trans":
			trans = true
		case "t":
			if lone {
				trans = true
			}
		case "absorbance", "abs", "absorption", "extinction":
			abs = true
		case "a", "au":
			if lone {
				abs = true
			}
		}
	}
	if pct && (trans || !abs) {
		return PercentT
	}
	switch {
	case trans && !abs:
		return Transmittance
	case abs && !trans:
		return Absorbance
	}
	return Unstated
}

// cellQuantityAndName reads a header cell: "std 1 [absorbance]" gives
// Absorbance and "std 1"; "std 1" gives Unstated and "std 1"; a cell that
// is only a quantity word ("%T") gives that quantity and no name.
func cellQuantityAndName(cell string) (Quantity, string) {
	c := strings.TrimSpace(cell)
	if n := len(c); n > 0 && (c[n-1] == ']' || c[n-1] == ')') {
		open := byte('[')
		if c[n-1] == ')' {
			open = '('
		}
		if k := strings.LastIndexByte(c, open); k >= 0 {
			if q := quantityFromText(c[k:]); q != Unstated {
				name := strings.TrimSpace(c[:k])
				// "Transmittance (%)" is a quantity, not a name; "A!A
				// [absorbance]" is named A!A (its words alone say
				// nothing).
				if onlyQuantityWords(name) && quantityFromText(name) != Unstated {
					name = ""
				}
				return q, name
			}
		}
	}
	q := quantityFromText(c)
	if q != Unstated && onlyQuantityWords(c) {
		return q, ""
	}
	return q, c
}

// isLoneLetter reports whether a header cell is nothing but one of the
// single letters that can mean a quantity (A for absorbance, T for
// transmittance), in either case.
func isLoneLetter(cell string) bool {
	switch strings.TrimSpace(cell) {
	case "a", "A", "t", "T":
		return true
	}
	return false
}

// sameLoneLetter reports whether every cell is the same lone quantity
// letter (ignoring case).
func sameLoneLetter(cells []string) bool {
	for _, c := range cells {
		if !isLoneLetter(c) || !strings.EqualFold(strings.TrimSpace(c), strings.TrimSpace(cells[0])) {
			return false
		}
	}
	return len(cells) > 0
}

// onlyQuantityWords reports whether s has words and all are quantity
// words.
func onlyQuantityWords(s string) bool {
	words, _ := headerWords(s)
	if len(words) == 0 {
		return false
	}
	for _, w := range words {
		switch w {
		case "%t", "t%", "%", "percent", "pct", "transmittance", "transmission", "trans", "t",
			"absorbance", "abs", "absorption", "a", "au":
		default:
			return false
		}
	}
	return true
}

// Wavelength units named in a header.
const (
	unitNM = iota
	unitMicrometre
	unitWavenumber
)

// wavelengthUnit reads the unit of the wavelength column from its header
// cell: cm-1 / 1/cm / wavenumber, µm / um / micrometre, else nm.
func wavelengthUnit(cell string) int {
	c := strings.ToLower(strings.ReplaceAll(cell, " ", ""))
	switch {
	case strings.Contains(c, "cm-1"), strings.Contains(c, "cm^-1"), strings.Contains(c, "1/cm"),
		strings.Contains(c, "cm⁻¹"), strings.Contains(c, "wavenumber"):
		return unitWavenumber
	case strings.Contains(c, "µm"), strings.Contains(c, "μm"), strings.Contains(c, "(um)"),
		strings.Contains(c, "[um]"), strings.Contains(c, "micromet"), strings.Contains(c, "micron"):
		return unitMicrometre
	}
	return unitNM
}

func reverse(x []float64) {
	for i, j := 0, len(x)-1; i < j; i, j = i+1, j-1 {
		x[i], x[j] = x[j], x[i]
	}
}

// fmtG formats a float in the shortest form that reads back exactly.
func fmtG(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// genericNames are header words that say what a column holds, not which
// sample it is: a value column headed by one of them (case ignored, a
// trailing unit in brackets ignored) is named after the file instead.
// Lone letters are not among them: in a wide table they name samples
// (columns a, b, c), and a two-column file's "A" is a quantity word.
var genericNames = map[string]bool{
	"sample": true, "samples": true, "sample name": true, "name": true,
	"intensity": true, "value": true, "values": true, "y": true, "x": true,
	"data": true, "signal": true, "reading": true, "readings": true,
	"measurement": true, "response": true, "spectrum": true, "scan": true,
	"counts": true, "ordinate": true, "result": true,
	"absorbance": true, "abs": true, "od": true, "transmittance": true, "%t": true,
	"wavelength": true, "wavelengths": true, "lambda": true, "λ": true, "nm": true,
}

// GenericName reports whether a value column's header cell names no
// sample: empty, or one of genericNames ("Sample", "Intensity", "Value",
// "Wavelength (nm)", "y", ...), case ignored and a trailing unit in
// brackets ("(nm)", "[a.u.]") ignored. Such a column of a two-column
// file takes the file's stem as its name, and one of a wide table
// "file#colN".
func GenericName(cell string) bool {
	c := strings.ToLower(strings.TrimSpace(cell))
	if n := len(c); n > 0 && (c[n-1] == ')' || c[n-1] == ']') {
		open := "("
		if c[n-1] == ']' {
			open = "["
		}
		if k := strings.LastIndex(c, open); k > 0 {
			c = strings.TrimSpace(c[:k])
		}
	}
	c = strings.Join(strings.Fields(c), " ")
	return c == "" || genericNames[c]
}
