package spectrum

import (
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
)

// Tolerances of the JCAMP-DX consistency checks.
const (
	// jcampXCheck bounds, in units of DELTAX, how far the X value that
	// opens an XYDATA line may lie from the abscissa rebuilt from FIRSTX,
	// LASTX and NPOINTS (line X values are rounded; about one DELTAX is
	// allowed, see the JCAMP-DX notes).
	jcampXCheck = 1.0
	// jcampYCheckRel bounds the relative difference between the last Y of
	// a DIF line and the check value that repeats it on the next line.
	// Values are usually integers and must agree exactly; the slack only
	// absorbs rounding of decimal DIF sums.
	jcampYCheckRel = 1e-9
	// jcampFirstYRel bounds the relative difference between ##FIRSTY and
	// the first decoded Y times YFACTOR, beyond one YFACTOR step (FIRSTY is
	// often written with fewer digits).
	jcampFirstYRel = 1e-4
	// jcampEndXRel bounds the difference between FIRSTX/LASTX and the
	// first/last X of an XYPOINTS table, relative to the X span.
	jcampEndXRel = 1e-6
)

// ReadJCAMP reads one UV-Vis spectrum from a JCAMP-DX file.
//
// It accepts one block (##TITLE= ... ##END=) holding ##XYDATA=(X++(Y..Y))
// in AFFN or ASDF form (PAC, SQZ, DIF, DUP, with the DIF Y-value check) or
// ##XYPOINTS=(XY..XY). Labels are compared ignoring case, blanks, hyphens,
// slashes and underscores; "$$" starts a comment. X is rebuilt from
// FIRSTX, LASTX and NPOINTS and each line's X is only a check; the point
// count must equal NPOINTS. XUNITS NANOMETERS, MICROMETERS or 1/CM are
// converted to ascending nanometres.
//
// YUNITS ABSORBANCE gives Absorbance; "% TRANSMITTANCE" or PERCENT
// TRANSMITTANCE gives PercentT; TRANSMITTANCE is a fraction (0..1) as the
// standard says, unless the values exceed 2, in which case they are taken
// as percent (files in the wild do this) with a warning; a requested
// opt.Quantity of %T or T settles which. YUNITS that state a quantity win
// over opt.Quantity (a contradiction is warned about); opt.Quantity
// applies when YUNITS is missing or names neither absorbance nor
// transmittance. Missing YUNITS otherwise reads absorbance with a warning.
//
// Compound files (LINK, BLOCKS), NTUPLES, peak tables and NMR or mass
// spectra are refused with an error wrapping errNotSupported. Every other
// problem is a *ParseError naming the file, line and character column.
func ReadJCAMP(r io.Reader, file string, opt ReadOptions) ([]*Spectrum, error) {
	j := &jcampReader{file: file, opt: &opt, labels: map[string]*jcampRecord{}}
	if err := j.scan(newLineReader(r, file, opt.maxLine(), opt.sizeHint)); err != nil {
		return nil, err
	}
	s, err := j.spectrum()
	if err != nil {
		return nil, err
	}
	return []*Spectrum{s}, nil
}

// jcampRecord is one labelled data record.
type jcampRecord struct {
	label string // normalised
	raw   string // label as written
	value string
	line  int
	// more collects the record's continuation lines ("\n" before each)
	// until the record ends, when finish appends them to value: adding
	// each line to the string itself would copy the value so far every
	// time, quadratic in the number of lines.
	more strings.Builder
}

// finish appends the continuation lines collected in more to value.
func (r *jcampRecord) finish() {
	if r != nil && r.more.Len() > 0 {
		r.value += r.more.String()
		r.more.Reset()
	}
}

// dataLine is one line of a data table, stored in jcampReader.buf.
type dataLine struct {
	off, end int
	line     int
}

type jcampReader struct {
	file   string
	opt    *ReadOptions
	labels map[string]*jcampRecord
	order  []*jcampRecord

	table     *jcampRecord // ##XYDATA or ##XYPOINTS
	tableKind string       // "XYDATA" or "XYPOINTS"
	buf       []byte
	lines     []dataLine
	endLine   int
}

func (j *jcampReader) errAt(line, col int, format string, a ...any) error {
	return &ParseError{File: j.file, Line: line, Column: col, Err: fmt.Errorf(format, a...)}
}

func (j *jcampReader) notSupported(line int, format string, a ...any) error {
	return &ParseError{File: j.file, Line: line, Err: fmt.Errorf("%s: %w", fmt.Sprintf(format, a...), errNotSupported)}
}

// normLabel normalises a label name: upper case, without blanks, hyphens,
// slashes and underscores.
func normLabel(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == ' ' || c == '\t' || c == '-' || c == '/' || c == '_':
		case c >= 'a' && c <= 'z':
			b.WriteByte(c - 'a' + 'A')
		default:
			b.WriteByte(c)
		}
	}
	return b.String()
}

// scan reads the records of the single block.
func (j *jcampReader) scan(lr *lineReader) error {
	var cur *jcampRecord
	defer func() { cur.finish() }()
	inData := false
	started := false
	for {
		raw, ok, err := lr.next()
		if err != nil {
			return err
		}
		if !ok {
			break
		}
		n := lr.n
		line := raw
		if k := indexDollar(line); k >= 0 {
			line = line[:k]
		}
		t := trimBlank(line)
		if j.endLine > 0 {
			if len(t) == 0 {
				continue
			}
			if len(t) >= 2 && t[0] == '#' && t[1] == '#' {
				return j.notSupported(n, "a second block after ##END= on line %d (multi-block files)", j.endLine)
			}
			return j.errAt(n, 1, "text after ##END= on line %d", j.endLine)
		}
		if len(t) >= 2 && t[0] == '#' && t[1] == '#' {
			inData = false
			cur.finish()
			eq := indexByte(t, '=')
			if eq < 0 {
				return j.errAt(n, 1, "label without '=': %q", clip(string(t)))
			}
			rawLabel := string(t[2:eq])
			label := normLabel(rawLabel)
			value := strings.TrimSpace(string(t[eq+1:]))
			if !started {
				if label != "TITLE" {
					return j.errAt(n, 1, "a JCAMP-DX block must start with ##TITLE=, found ##%s=", rawLabel)
				}
				started = true
			} else if label == "TITLE" {
				return j.notSupported(n, "a block inside a block (compound LINK file)")
			}
			rec := &jcampRecord{label: label, raw: rawLabel, value: value, line: n}
			if err := j.checkLabel(rec); err != nil {
				return err
			}
			if label == "END" {
				j.endLine = n
				cur = nil
				continue
			}
			if _, dup := j.labels[label]; dup && !strings.HasPrefix(label, "$") {
				return j.errAt(n, 1, "##%s= appears twice (first on line %d)", rawLabel, j.labels[label].line)
			}
			j.labels[label] = rec
			j.order = append(j.order, rec)
			cur = rec
			if label == "XYDATA" || label == "XYPOINTS" {
				if j.table != nil {
					return j.notSupported(n, "a second data table (first on line %d)", j.table.line)
				}
				j.table, j.tableKind = rec, label
				inData = true
			}
			continue
		}
		if len(t) == 0 {
			continue
		}
		if !started {
			return j.errAt(n, 1, "text before ##TITLE=: a JCAMP-DX file starts with ##TITLE=")
		}
		if inData {
			off := len(j.buf)
			j.buf = append(j.buf, trimRight(line)...)
			j.lines = append(j.lines, dataLine{off: off, end: len(j.buf), line: n})
			continue
		}
		if cur != nil {
			cur.more.WriteByte('\n')
			cur.more.Write(t)
		}
	}
	if !started {
		if lr.n == 0 {
			return j.errAt(1, 0, "the file is empty: %w", ErrEmpty)
		}
		return j.errAt(lr.n, 0, "no JCAMP-DX records: %w", ErrEmpty)
	}
	if j.endLine == 0 {
		return j.errAt(max(lr.n, 1), 0, "the file ends at line %d without ##END=: it is truncated", lr.n)
	}
	return nil
}

// checkLabel refuses variants this reader does not handle.
func (j *jcampReader) checkLabel(r *jcampRecord) error {
	v := strings.ToUpper(r.value)
	switch r.label {
	case "DATATYPE":
		switch {
		case strings.Contains(v, "LINK"):
			return j.notSupported(r.line, "compound file (DATA TYPE=%s)", r.value)
		case strings.Contains(v, "NMR"), strings.Contains(v, "MASS"):
			return j.notSupported(r.line, "DATA TYPE=%s: only UV-Vis spectra are read", r.value)
		case strings.Contains(v, "UV"), strings.Contains(v, "VIS"), strings.Contains(v, "ULTRAVIOLET"):
		default:
			j.opt.warnf(j.file, "line %d: DATA TYPE=%s is not a UV/VIS spectrum; reading it anyway", r.line, r.value)
		}
	case "DATACLASS":
		if strings.Contains(v, "NTUPLE") || strings.Contains(v, "PEAK") || strings.Contains(v, "ASSIGN") {
			return j.notSupported(r.line, "DATA CLASS=%s: only XYDATA and XYPOINTS tables are read", r.value)
		}
	case "BLOCKS", "BLOCKID":
		return j.notSupported(r.line, "compound file (##%s=)", r.raw)
	case "NTUPLES", "PEAKTABLE", "PEAKASSIGNMENTS", "RADATA", "XYWPOINTS":
		return j.notSupported(r.line, "##%s= tables", r.raw)
	case ".OBSERVEFREQUENCY", ".OBSERVENUCLEUS":
		return j.notSupported(r.line, "NMR data (##%s=)", r.raw)
	case "JCAMPDX":
		if v == "" || (v[0] != '4' && v[0] != '5' && v[0] != '6') {
			j.opt.warnf(j.file, "line %d: JCAMP-DX version %q is not 4.x, 5.x or 6.x; reading it as 4.24", r.line, r.value)
		}
	case "XYDATA":
		if normLabel(v) != "(X++(Y..Y))" {
			return j.notSupported(r.line, "##XYDATA=%s (only (X++(Y..Y)) is read)", r.value)
		}
	case "XYPOINTS":
		if normLabel(v) != "(XY..XY)" {
			return j.notSupported(r.line, "##XYPOINTS=%s (only (XY..XY) is read)", r.value)
		}
	}
	return nil
}

func trimRight(b []byte) []byte {
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t' || b[len(b)-1] == '\r') {
		b = b[:len(b)-1]
	}
	return b
}

// indexDollar finds "$$".
func indexDollar(b []byte) int {
	for i := 0; i+1 < len(b); i++ {
		if b[i] == '$' && b[i+1] == '$' {
			return i
		}
	}
	return -1
}

func indexByte(b []byte, c byte) int {
	for i, x := range b {
		if x == c {
			return i
		}
	}
	return -1
}

// clip shortens s for a message.
func clip(s string) string {
	if len(s) > 60 {
		return s[:57] + "..."
	}
	return s
}

// number reads a numeric label; ok is false when it is absent.
func (j *jcampReader) number(label string) (v float64, rec *jcampRecord, ok bool, err error) {
	rec = j.labels[label]
	if rec == nil {
		return 0, nil, false, nil
	}
	f := strings.TrimSpace(rec.value)
	v, _, err = parseNumber([]byte(f), false)
	if err != nil {
		return 0, rec, false, j.errAt(rec.line, 0, "##%s=%s: %w", rec.raw, clip(f), err)
	}
	return v, rec, true, nil
}

// factor reads XFACTOR or YFACTOR (default 1 with a warning).
func (j *jcampReader) factor(label string) (float64, error) {
	v, rec, ok, err := j.number(label)
	if err != nil {
		return 0, err
	}
	if !ok {
		if j.table != nil && j.tableKind == "XYDATA" {
			j.opt.warnf(j.file, "no ##%s=; taking 1", label)
		}
		return 1, nil
	}
	if v == 0 {
		return 0, j.errAt(rec.line, 0, "##%s= is zero", rec.raw)
	}
	return v, nil
}

// spectrum decodes the data table and applies units.
func (j *jcampReader) spectrum() (*Spectrum, error) {
	if j.table == nil {
		return nil, j.errAt(j.endLine, 0, "no ##XYDATA=(X++(Y..Y)) or ##XYPOINTS=(XY..XY) table before ##END=: %w", ErrEmpty)
	}
	xf, err := j.factor("XFACTOR")
	if err != nil {
		return nil, err
	}
	yf, err := j.factor("YFACTOR")
	if err != nil {
		return nil, err
	}
	var x, y []float64
	if j.tableKind == "XYDATA" {
		x, y, err = j.xydata(xf, yf)
	} else {
		x, y, err = j.xypoints(xf, yf)
	}
	if err != nil {
		return nil, err
	}
	for i := range y {
		if math.IsInf(y[i], 0) || math.IsInf(x[i], 0) {
			return nil, j.errAt(j.table.line, 0, "point %d overflows float64 after scaling by XFACTOR/YFACTOR", i+1)
		}
	}

	// X units.
	xu := ""
	if rec := j.labels["XUNITS"]; rec != nil {
		xu = strings.ToUpper(strings.TrimSpace(rec.value))
	}
	switch u := strings.ReplaceAll(xu, " ", ""); {
	case xu == "":
		j.opt.warnf(j.file, "no ##XUNITS=; taking nanometres")
	case strings.Contains(u, "1/CM"), strings.Contains(u, "CM-1"), strings.Contains(u, "CM^-1"), strings.Contains(u, "WAVENUMBER"):
		for i, v := range x {
			if !(v > 0) {
				return nil, j.errAt(j.table.line, 0, "wavenumber %s 1/CM at point %d cannot be converted to a wavelength", fmtG(v), i+1)
			}
			x[i] = 1e7 / v
		}
	case strings.Contains(u, "MICROM"), strings.Contains(u, "MICRON"), u == "UM", strings.Contains(u, "(UM)"), strings.Contains(u, "µM"), strings.Contains(u, "ΜM"):
		for i := range x {
			x[i] *= 1000
		}
	case strings.Contains(u, "NANOM"), u == "NM", strings.Contains(u, "(NM)"), strings.Contains(u, "[NM]"):
	default:
		rec := j.labels["XUNITS"]
		return nil, j.notSupported(rec.line, "XUNITS=%s (nanometres, micrometres or 1/CM are read)", rec.value)
	}
	if len(x) >= 2 && x[1] < x[0] {
		reverse(x)
		reverse(y)
	}
	if err := checkGrid(x); err != nil {
		return nil, j.errAt(j.table.line, 0, "%w", err)
	}

	// Y units.
	q, err := j.quantity(y)
	if err != nil {
		return nil, err
	}
	name := ""
	if rec := j.labels["TITLE"]; rec != nil {
		name = strings.Join(strings.Fields(strings.SplitN(rec.value, "\n", 2)[0]), " ")
	}
	if GenericName(name) && j.file != "" && name != "" {
		// A title such as "Sample" names no sample: the file does.
		base := filepath.Base(j.file)
		name = strings.TrimSuffix(base, filepath.Ext(base))
	}
	s := &Spectrum{
		Name:        name,
		Wavelengths: x,
		Values:      y,
		Quantity:    q,
		Source:      Source{File: j.file, Line: j.table.line},
	}
	switch implausible(s) {
	case looksPct:
		return nil, j.errAt(j.table.line, 0, "%w: the values are read as absorbance, but %s; %s", ErrMisread, pctTReason, pctTFix)
	case looksPctNotFraction:
		j.opt.warnf(j.file, "values read as transmittance fraction (0..1) mostly exceed %g; they look like percent transmittance (--quantity %%T)", fractionTMax)
	}
	return s, nil
}

// decodedPoints decodes the whole XYDATA table again without the NPOINTS
// bound (only up to maxJCAMPPoints) and returns how many Y values it
// holds, or 0 when it cannot be decoded; it explains a table that does
// not fit NPOINTS. The lines are already in memory, so this costs no more
// than the first pass.
func (j *jcampReader) decodedPoints() int {
	d := asdfDecoder{limit: maxJCAMPPoints}
	for _, dl := range j.lines {
		if _, _, err := d.line(j.buf[dl.off:dl.end]); err != nil {
			return 0
		}
	}
	return len(d.ys)
}

// fmtShort formats a number read from or derived from a file header for a
// message: at most 6 significant digits (437.736, not 437.7358490566038).
func fmtShort(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

// quantity decides what the Y values are.
func (j *jcampReader) quantity(y []float64) (Quantity, error) {
	rec := j.labels["YUNITS"]
	yu := ""
	if rec != nil {
		yu = strings.ToUpper(strings.TrimSpace(rec.value))
	}
	var q Quantity
	u := strings.ReplaceAll(yu, " ", "")
	switch {
	case yu == "":
	case strings.Contains(u, "ABSORBANCE"), u == "A", u == "AU", u == "ABS", u == "ABSORBANCEUNITS":
		q = Absorbance
	case strings.Contains(u, "TRANSMI") && (strings.Contains(u, "%") || strings.Contains(u, "PERCENT")), u == "%T":
		q = PercentT
	case strings.Contains(u, "TRANSMI"):
		q = Transmittance
		if j.opt.Quantity == PercentT {
			// TRANSMITTANCE without saying fraction or percent: the
			// requested %T only says which, it contradicts nothing.
			q = PercentT
		} else if j.opt.Quantity != Transmittance && floatsMax(y) > fractionTMax {
			q = PercentT
			j.opt.warnf(j.file, "line %d: YUNITS=%s but values reach %s: reading them as percent transmittance", rec.line, rec.value, fmtG(floatsMax(y)))
		}
	default:
		if j.opt.Quantity == Unstated {
			return Unstated, j.notSupported(rec.line, "YUNITS=%s is neither absorbance nor transmittance; if the values are one of them, say which with --quantity", rec.value)
		}
	}
	if j.opt.Quantity != Unstated {
		if q == Unstated {
			return j.opt.Quantity, nil
		}
		if q != j.opt.Quantity {
			j.opt.warnf(j.file, "line %d: YUNITS=%s states %s, not the %s requested; reading %s as the file says (the requested quantity applies only to files that do not say)",
				rec.line, rec.value, q, j.opt.Quantity, q)
		}
		return q, nil
	}
	if q == Unstated {
		j.opt.warnf(j.file, "no ##YUNITS=; reading the values as absorbance (state it with --quantity)")
		q = Absorbance
	}
	return q, nil
}

func floatsMax(v []float64) float64 {
	m := math.Inf(-1)
	for _, x := range v {
		m = max(m, x)
	}
	return m
}

// xydata decodes an ##XYDATA=(X++(Y..Y)) table.
func (j *jcampReader) xydata(xf, yf float64) (x, y []float64, err error) {
	need := func(label string) (float64, *jcampRecord, error) {
		v, rec, ok, err := j.number(label)
		if err != nil {
			return 0, nil, err
		}
		if !ok {
			return 0, nil, j.errAt(j.table.line, 0, "##XYDATA= needs ##%s=, which is missing", label)
		}
		return v, rec, nil
	}
	firstX, _, err := need("FIRSTX")
	if err != nil {
		return nil, nil, err
	}
	lastX, _, err := need("LASTX")
	if err != nil {
		return nil, nil, err
	}
	np, nrec, err := need("NPOINTS")
	if err != nil {
		return nil, nil, err
	}
	if np != math.Trunc(np) || np < 2 {
		return nil, nil, j.errAt(nrec.line, 0, "##NPOINTS=%s: a scan needs a whole number of at least 2 points", nrec.value)
	}
	if np > maxJCAMPPoints {
		return nil, nil, j.errAt(nrec.line, 0, "##NPOINTS=%s exceeds the %d points this reader accepts", nrec.value, maxJCAMPPoints)
	}
	npts := int(np)
	if firstX == lastX {
		return nil, nil, j.errAt(nrec.line, 0, "##FIRSTX= equals ##LASTX= (%s) with %d points", fmtG(firstX), npts)
	}
	deltaX := (lastX - firstX) / float64(npts-1)
	if len(j.lines) == 0 {
		return nil, nil, j.errAt(j.table.line, 0, "the ##XYDATA= table is empty: %w", ErrEmpty)
	}

	d := asdfDecoder{limit: npts, ys: make([]float64, 0, min(npts, 1<<16))}
	for _, dl := range j.lines {
		line := j.buf[dl.off:dl.end]
		first := len(d.ys)
		lx, checked, err := d.line(line)
		if err != nil {
			var ce *colError
			if errors.As(err, &ce) {
				return nil, nil, j.errAt(dl.line, ce.col, "%w", ce.err)
			}
			return nil, nil, j.errAt(dl.line, 0, "%w", err)
		}
		if len(d.ys) > npts {
			return nil, nil, j.errAt(dl.line, 0, "the table holds more points than ##NPOINTS=%d", npts)
		}
		// The line's X belongs to its first Y (the repeated check value
		// when there is one).
		k := first
		if checked {
			k--
		}
		want := firstX + float64(k)*deltaX
		if got := lx * xf; math.Abs(got-want) > jcampXCheck*math.Abs(deltaX) {
			if n := j.decodedPoints(); n > 0 && n != npts {
				// The table holds another number of points than
				// NPOINTS: that, not this line, is what is wrong.
				return nil, nil, j.errAt(nrec.line, 0, "##NPOINTS=%d disagrees with ##FIRSTX=%s, ##LASTX=%s and the data: the table holds %d decoded points (a step of %s from FIRSTX to LASTX), and line %d starts at X %s where %d points would put %s",
					npts, fmtShort(firstX), fmtShort(lastX), n, fmtShort((lastX-firstX)/float64(n-1)), dl.line, fmtShort(got), npts, fmtShort(want))
			}
			return nil, nil, j.errAt(dl.line, 1, "line X %s (x XFACTOR = %s) should be near %s for point %d as ##FIRSTX=%s, ##LASTX=%s and ##NPOINTS=%d say",
				fmtShort(lx), fmtShort(got), fmtShort(want), k+1, fmtShort(firstX), fmtShort(lastX), npts)
		}
	}
	if len(d.ys) != npts {
		return nil, nil, j.errAt(nrec.line, 0, "##NPOINTS=%d disagrees with the data: the table (lines %d-%d) holds %d decoded points from ##FIRSTX=%s to ##LASTX=%s",
			npts, j.lines[0].line, j.lines[len(j.lines)-1].line, len(d.ys), fmtShort(firstX), fmtShort(lastX))
	}
	y = d.ys
	if fy, rec, ok, err := j.number("FIRSTY"); err != nil {
		return nil, nil, err
	} else if ok {
		got := y[0] * yf
		if math.Abs(got-fy) > math.Abs(yf)+jcampFirstYRel*math.Abs(fy) {
			return nil, nil, j.errAt(rec.line, 0, "##FIRSTY=%s but the first Y of the table is %s (x YFACTOR)", rec.value, fmtG(got))
		}
	}
	x = make([]float64, npts)
	for i := range x {
		x[i] = firstX + float64(i)*deltaX
		y[i] *= yf
	}
	x[npts-1] = lastX
	return x, y, nil
}

// xypoints decodes an ##XYPOINTS=(XY..XY) table.
func (j *jcampReader) xypoints(xf, yf float64) (x, y []float64, err error) {
	np, nrec, hasN, err := j.number("NPOINTS")
	if err != nil {
		return nil, nil, err
	}
	limit := maxJCAMPPoints
	if hasN {
		if np != math.Trunc(np) || np < 2 || np > maxJCAMPPoints {
			return nil, nil, j.errAt(nrec.line, 0, "##NPOINTS=%s: want a whole number from 2 to %d", nrec.value, maxJCAMPPoints)
		}
		limit = int(np)
	}
	for _, dl := range j.lines {
		line := j.buf[dl.off:dl.end]
		pos := 0
		odd := false
		for pos < len(line) {
			c := line[pos]
			if c == ' ' || c == '\t' || c == ',' || c == ';' {
				pos++
				continue
			}
			end := pos
			for end < len(line) && !(line[end] == ' ' || line[end] == '\t' || line[end] == ',' || line[end] == ';') {
				end++
			}
			v, _, err := parseNumber(line[pos:end], false)
			if err != nil {
				if line[pos] == '?' {
					err = fmt.Errorf("missing value '?': %w", errNotSupported)
				}
				return nil, nil, j.errAt(dl.line, pos+1, "%w", err)
			}
			if !odd {
				if len(x) >= limit {
					return nil, nil, j.errAt(dl.line, pos+1, "the table holds more points than %s", limitText(hasN, limit))
				}
				x = append(x, v*xf)
				if n := len(x); n >= 2 {
					if x[n-1] == x[n-2] {
						return nil, nil, j.errAt(dl.line, pos+1, "%v: duplicate X %s", errGrid, fmtG(x[n-1]))
					}
					if n >= 3 && (x[n-1] > x[n-2]) != (x[1] > x[0]) {
						return nil, nil, j.errAt(dl.line, pos+1, "%v: X %s breaks the order of the table", errGrid, fmtG(x[n-1]))
					}
				}
			} else {
				y = append(y, v*yf)
			}
			odd = !odd
			pos = end
		}
		if odd {
			return nil, nil, j.errAt(dl.line, len(line), "an X without its Y: (XY..XY) lines hold pairs")
		}
	}
	if len(x) < 2 {
		return nil, nil, j.errAt(j.table.line, 0, "the ##XYPOINTS= table holds %d points; a scan needs at least 2: %w", len(x), ErrEmpty)
	}
	if hasN && len(x) != limit {
		return nil, nil, j.errAt(nrec.line, 0, "##NPOINTS=%d but the table holds %d points", limit, len(x))
	}
	span := math.Abs(x[len(x)-1] - x[0])
	for _, e := range []struct {
		label string
		got   float64
	}{{"FIRSTX", x[0]}, {"LASTX", x[len(x)-1]}} {
		v, rec, ok, err := j.number(e.label)
		if err != nil {
			return nil, nil, err
		}
		if ok && math.Abs(v-e.got) > jcampEndXRel*span {
			return nil, nil, j.errAt(rec.line, 0, "##%s=%s but the table's X is %s", e.label, rec.value, fmtG(e.got))
		}
	}
	return x, y, nil
}

func limitText(hasN bool, n int) string {
	if hasN {
		return "##NPOINTS=" + strconv.Itoa(n)
	}
	return "the reader's limit of " + strconv.Itoa(n)
}
