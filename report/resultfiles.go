package report

import (
	"bufio"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"huesolve/lab"
	"huesolve/unmix"
)

// CSVWriter writes one row per sample, after the comment lines of
// WriteRunComments (format, schema and the layout's run record) and the
// header. The columns are: sample, source;
// for each compound NAME: NAME_conc, NAME_se, NAME_ci95_lo, NAME_ci95_hi,
// NAME_lod, NAME_loq, NAME_unconstrained, NAME_unconstrained_se (the
// ordinary least squares estimate and its standard error, given only
// where the compound is held at zero), NAME_unit, NAME_flags; then
// rms_residual,
// reduced_chi_square, durbin_watson, r2, condition_number, points_used,
// points_dropped, shift_nm, shift_se_nm (empty when no shift was
// estimated), dilution, path_cm, suggest_dilution, one baseline_TERM per
// baseline term (empty where the chosen model lacks the term),
// interferent_NAME and interferent_NAME_se per interferent (its amount in
// units of its scan, as measured), model (the
// nuisance model chosen for the sample, with an automatic model only),
// and flags. Numbers have 6 significant
// digits; an undefined number is written "n/a"; flags are separated by
// spaces; fields are quoted as RFC 4180 (and encoding/csv) do. Failed
// samples are not written (Fail does nothing): the command reports them
// on stderr.
type CSVWriter struct {
	w      *bufio.Writer
	l      Layout
	buf    []byte
	header bool
	lab    *lab.Summary // the lab sections after the rows, if any
}

// NewCSVWriter returns a CSV writer for results of layout l.
func NewCSVWriter(w io.Writer, l Layout) *CSVWriter {
	return &CSVWriter{w: bufio.NewWriter(w), l: l}
}

// columns returns the column names.
func (c *CSVWriter) columns() []string {
	h := []string{"sample", "source"}
	for _, n := range c.l.Compounds {
		for _, s := range []string{"conc", "se", "ci95_lo", "ci95_hi", "lod", "loq", "unconstrained", "unconstrained_se", "unit", "flags"} {
			h = append(h, n+"_"+s)
		}
	}
	h = append(h, "rms_residual", "reduced_chi_square", "durbin_watson", "r2", "condition_number",
		"points_used", "points_dropped", "shift_nm", "shift_se_nm", "dilution", "path_cm", "suggest_dilution")
	for _, b := range c.l.Baseline {
		h = append(h, "baseline_"+b)
	}
	for _, n := range c.l.Interferents {
		h = append(h, "interferent_"+n, "interferent_"+n+"_se")
	}
	if c.l.Auto {
		h = append(h, "model")
	}
	return append(h, "flags")
}

func (c *CSVWriter) writeHeader() error {
	if c.header {
		return nil
	}
	c.header = true
	if c.l.HeadLater {
		return nil
	}
	return c.head(c.w)
}

// head writes the run's comment lines and the column names.
func (c *CSVWriter) head(w io.Writer) error {
	if err := WriteRunComments(w, FormatNameResults, c.l.Run); err != nil {
		return err
	}
	var b []byte
	for i, h := range c.columns() {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendCSVText(b, h)
	}
	_, err := w.Write(append(b, '\n'))
	return err
}

// WriteHead writes the head left out with Layout.HeadLater to w.
func (c *CSVWriter) WriteHead(w io.Writer) error {
	bw := bufio.NewWriter(w)
	if err := c.head(bw); err != nil {
		return err
	}
	return bw.Flush()
}

// AppendResult appends r's row, with its line end, to dst. It does not
// touch the writer, so it may run concurrently (see Encoder).
func (c *CSVWriter) AppendResult(dst []byte, r *unmix.Result) []byte {
	b := appendCSVText(dst, r.Sample)
	b = append(b, ',')
	b = appendCSVText(b, r.Source)
	field := func(v float64) {
		b = append(b, ',')
		b = appendNum(b, v)
	}
	for k, n := range c.l.Compounds {
		a := amountOf(r, k, n)
		if a == nil {
			b = append(b, ",n/a,n/a,n/a,n/a,n/a,n/a,,,,"...)
			continue
		}
		field(a.Conc)
		field(a.SE)
		field(a.Lo)
		field(a.Hi)
		field(a.LOD)
		field(a.LOQ)
		if a.HasFlag(unmix.FlagZero) {
			field(a.Free)
			field(a.FreeSE)
		} else {
			b = append(b, ",,"...)
		}
		b = append(b, ',')
		b = appendCSVText(b, a.Unit)
		b = append(b, ',')
		b = appendCSVText(b, joinFlags(a.Flags, " "))
	}
	field(r.RMS)
	field(r.ChiSqRed)
	field(r.DW)
	field(r.R2)
	field(r.Cond)
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(r.Points), 10)
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(r.Dropped), 10)
	field(r.ShiftNM)
	if r.ShiftSE > 0 {
		field(r.ShiftSE)
	} else {
		b = append(b, ',')
	}
	field(r.Dilution)
	field(r.PathCM)
	b = append(b, ',')
	if r.SuggestDilution > 0 {
		b = appendNum(b, r.SuggestDilution)
	}
	for _, t := range c.l.Baseline {
		v, ok := r.Baseline[t]
		if !ok && c.l.Auto {
			b = append(b, ',')
			continue
		}
		if !ok {
			v = math.NaN()
		}
		field(v)
	}
	for i := range c.l.Interferents {
		if i < len(r.Interferents) {
			field(r.Interferents[i].Amount)
			field(r.Interferents[i].SE)
		} else {
			b = append(b, ",n/a,n/a"...)
		}
	}
	if c.l.Auto {
		b = append(b, ',')
		b = appendCSVText(b, r.Model)
	}
	b = append(b, ',')
	b = appendCSVText(b, joinFlags(r.Flags, " "))
	return append(b, '\n')
}

// Write writes one sample's row (and the header before the first).
func (c *CSVWriter) Write(r *unmix.Result) error {
	c.buf = c.AppendResult(c.buf[:0], r)
	return c.WriteEncoded(c.buf)
}

// WriteEncoded writes a row made by AppendResult.
func (c *CSVWriter) WriteEncoded(row []byte) error {
	if err := c.writeHeader(); err != nil {
		return err
	}
	_, err := c.w.Write(row)
	return err
}

// Fail does nothing: CSV files hold solved samples only.
func (c *CSVWriter) Fail(string, error) error { return nil }

// Close writes the header if no row came, and flushes.
func (c *CSVWriter) Close() error {
	if err := c.writeHeader(); err != nil {
		return err
	}
	if c.lab != nil {
		if _, err := c.w.Write(appendLabCSV(nil, c.lab)); err != nil {
			return err
		}
	}
	return c.w.Flush()
}

// appendCSVText appends text cell f as appendCSVField does, with a
// single quote before it when a spreadsheet could take it for a formula
// (csvProtect). It allocates nothing for a cell that needs no quote.
func appendCSVText(b []byte, f string) []byte {
	if !csvProtect(f) {
		return appendCSVField(b, f)
	}
	if !strings.ContainsAny(f, ",\"\r\n") {
		b = append(b, '\'')
		return append(b, f...)
	}
	return appendQuoted(b, "'", f)
}

// appendCSVField appends f, quoted when it holds a comma, a quote, a line
// break or leading space (the rule of encoding/csv).
func appendCSVField(b []byte, f string) []byte {
	need := f == `\.` || strings.HasPrefix(f, "#") // a leading # would read as a comment line
	if f != "" {
		r, _ := utf8.DecodeRuneInString(f)
		need = need || unicode.IsSpace(r) || strings.ContainsAny(f, ",\"\r\n")
	}
	if !need {
		return append(b, f...)
	}
	return appendQuoted(b, "", f)
}

// appendQuoted appends prefix and f as one quoted CSV field, doubling
// the quotes in f (prefix holds none).
func appendQuoted(b []byte, prefix, f string) []byte {
	b = append(b, '"')
	b = append(b, prefix...)
	for i := 0; i < len(f); i++ {
		if f[i] == '"' {
			b = append(b, '"')
		}
		b = append(b, f[i])
	}
	return append(b, '"')
}

// appendNum appends num(v) without allocating.
func appendNum(b []byte, v float64) []byte {
	if !finite(v) {
		return append(b, naText...)
	}
	if v == 0 {
		return append(b, '0')
	}
	return strconv.AppendFloat(b, v, 'g', numDigits, 64)
}

// Encoder is implemented by result writers whose records can be
// formatted concurrently: AppendResult may run on any goroutine, and
// WriteEncoded then writes its bytes in order.
type Encoder interface {
	AppendResult(dst []byte, r *unmix.Result) []byte
	WriteEncoded(rec []byte) error
}

// jsonWriter writes one JSON document:
//
//	{"format": "huesolve-results", "schema": 2,
//	 "run": { the run's record (provenance.Run), when the layout has one },
//	 "compounds": [{"name": ..., "unit": ...}], "baseline_terms": [...],
//	 "samples": [ one object per sample, one per line ],
//	 "failed": [{"source": ..., "error": ...}]}
//
// Field order is fixed and numbers have 6 significant digits, so the
// same results give the same bytes. An undefined number is left out and
// its name listed in the sample's "unavailable" array (present only when
// something is left out). The unconstrained estimate of a compound is
// given only where it is held at zero, shift_se_nm only where a shift
// was estimated. "flags" is always written, [] when there are none.
type jsonWriter struct {
	w      *bufio.Writer
	l      Layout
	n      int
	failed []failure
	buf    []byte
	lab    *lab.Summary // the "lab" member, if any
}

type failure struct{ source, msg string }

// newJSONWriter returns a JSON writer for results of layout l.
func newJSONWriter(w io.Writer, l Layout) *jsonWriter {
	return &jsonWriter{w: bufio.NewWriter(w), l: l}
}

func (j *jsonWriter) start() error {
	if j.l.HeadLater {
		return nil
	}
	b, err := j.head()
	if err != nil {
		return err
	}
	_, err = j.w.Write(b)
	return err
}

// WriteHead writes the head left out with Layout.HeadLater to w.
func (j *jsonWriter) WriteHead(w io.Writer) error {
	b, err := j.head()
	if err != nil {
		return err
	}
	_, err = w.Write(b)
	return err
}

// head is the document up to its first sample.
func (j *jsonWriter) head() ([]byte, error) {
	b := []byte(`{"format": "` + FormatNameResults + `", "schema": `)
	b = strconv.AppendInt(b, Schema, 10)
	if j.l.Run != nil {
		var err error
		b = append(b, ",\n \"run\": "...)
		if b, err = appendRunJSON(b, j.l.Run); err != nil {
			return nil, err
		}
	}
	b = append(b, ",\n \"compounds\": ["...)
	for k, n := range j.l.Compounds {
		if k > 0 {
			b = append(b, ", "...)
		}
		b = append(b, `{"name": `...)
		b = appendString(b, n)
		b = append(b, `, "unit": `...)
		u := ""
		if k < len(j.l.Units) {
			u = j.l.Units[k]
		}
		b = appendString(b, u)
		b = append(b, '}')
	}
	b = append(b, "],\n \"baseline_terms\": ["...)
	for k, n := range j.l.Baseline {
		if k > 0 {
			b = append(b, ", "...)
		}
		b = appendString(b, n)
	}
	return append(b, "],\n \"samples\": ["...), nil
}

// Write writes one sample object.
func (j *jsonWriter) Write(r *unmix.Result) error {
	j.buf = j.AppendResult(j.buf[:0], r)
	return j.WriteEncoded(j.buf)
}

// WriteEncoded writes a sample object made by AppendResult.
func (j *jsonWriter) WriteEncoded(obj []byte) error {
	if j.n == 0 {
		if err := j.start(); err != nil {
			return err
		}
	}
	sep := ",\n  "
	if j.n == 0 {
		sep = "\n  "
	}
	j.n++
	if _, err := j.w.WriteString(sep); err != nil {
		return err
	}
	_, err := j.w.Write(obj)
	return err
}

// AppendResult appends r's JSON object to dst. It does not touch the
// writer, so it may run concurrently (see Encoder).
func (j *jsonWriter) AppendResult(dst []byte, r *unmix.Result) []byte {
	b := dst
	var na []string
	// field writes "name": v, or lists label (name if empty) as
	// unavailable when v is not finite.
	field := func(name, label string, v float64) {
		if !finite(v) {
			if label == "" {
				label = name
			}
			na = append(na, label)
			return
		}
		b = append(b, ", \""...)
		b = append(b, name...)
		b = append(b, "\": "...)
		b = appendNum(b, v)
	}
	b = append(b, "{\"sample\": "...)
	b = appendString(b, r.Sample)
	b = append(b, `, "source": `...)
	b = appendString(b, r.Source)
	b = append(b, `, "amounts": [`...)
	for k := range r.Amounts {
		a := &r.Amounts[k]
		if k > 0 {
			b = append(b, ", "...)
		}
		b = append(b, `{"compound": `...)
		b = appendString(b, a.Compound)
		b = append(b, `, "unit": `...)
		b = appendString(b, a.Unit)
		pre := a.Compound + "."
		field("conc", pre+"conc", a.Conc)
		field("se", pre+"se", a.SE)
		if j.l.Calibration {
			field("se_calibration", pre+"se_calibration", a.SECal)
		}
		field("ci95_lo", pre+"ci95_lo", a.Lo)
		field("ci95_hi", pre+"ci95_hi", a.Hi)
		field("lod", pre+"lod", a.LOD)
		field("loq", pre+"loq", a.LOQ)
		if a.HasFlag(unmix.FlagZero) {
			field("unconstrained", pre+"unconstrained", a.Free)
			field("unconstrained_se", pre+"unconstrained_se", a.FreeSE)
		}
		b = appendFlags(b, a.Flags)
		b = append(b, '}')
	}
	b = append(b, ']')
	if len(j.l.Baseline) > 0 {
		b = append(b, `, "baseline": {`...)
		first := true
		for _, t := range j.l.Baseline {
			v, ok := r.Baseline[t]
			if !ok && j.l.Auto {
				continue // not in the model chosen for the sample
			}
			if !ok || !finite(v) {
				na = append(na, "baseline."+t)
				continue
			}
			if !first {
				b = append(b, ", "...)
			}
			first = false
			b = appendString(b, t)
			b = append(b, ": "...)
			b = appendNum(b, v)
		}
		b = append(b, '}')
	}
	if len(j.l.Interferents) > 0 {
		b = append(b, `, "interferents": [`...)
		for i := range r.Interferents {
			it := &r.Interferents[i]
			if i > 0 {
				b = append(b, ", "...)
			}
			b = append(b, `{"name": `...)
			b = appendString(b, it.Name)
			pre := "interferent." + it.Name + "."
			field("amount", pre+"amount", it.Amount)
			field("se", pre+"se", it.SE)
			b = append(b, '}')
		}
		b = append(b, ']')
	}
	field("rms_residual", "", r.RMS)
	field("reduced_chi_square", "", r.ChiSqRed)
	field("durbin_watson", "", r.DW)
	field("r2", "", r.R2)
	field("condition_number", "", r.Cond)
	b = append(b, `, "points_used": `...)
	b = strconv.AppendInt(b, int64(r.Points), 10)
	b = append(b, `, "points_dropped": `...)
	b = strconv.AppendInt(b, int64(r.Dropped), 10)
	field("shift_nm", "", r.ShiftNM)
	if r.ShiftSE > 0 {
		field("shift_se_nm", "", r.ShiftSE)
	}
	field("dilution", "", r.Dilution)
	field("path_cm", "", r.PathCM)
	if r.SuggestDilution > 0 {
		field("suggest_dilution", "", r.SuggestDilution)
	}
	if j.l.Auto {
		b = append(b, `, "model": `...)
		b = appendString(b, r.Model)
		b = appendModelScores(b, r.ModelScores)
	}
	b = appendFlags(b, r.Flags)
	if len(na) > 0 {
		b = append(b, `, "unavailable": [`...)
		for i, s := range na {
			if i > 0 {
				b = append(b, ", "...)
			}
			b = appendString(b, s)
		}
		b = append(b, ']')
	}
	return append(b, '}')
}

// Fail records a failed sample or file, written at the end.
func (j *jsonWriter) Fail(source string, err error) error {
	j.failed = append(j.failed, failure{source, err.Error()})
	return nil
}

// Close ends the document and flushes.
func (j *jsonWriter) Close() error {
	if j.n == 0 {
		if err := j.start(); err != nil {
			return err
		}
	}
	b := []byte("\n ]")
	if j.lab != nil {
		b = appendLabJSON(b, j.lab)
	}
	b = append(b, ",\n \"failed\": ["...)
	for i, f := range j.failed {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, "\n  {\"source\": "...)
		b = appendString(b, f.source)
		b = append(b, `, "error": `...)
		b = appendString(b, f.msg)
		b = append(b, '}')
	}
	if len(j.failed) > 0 {
		b = append(b, "\n "...)
	}
	b = append(b, "]}\n"...)
	if _, err := j.w.Write(b); err != nil {
		return err
	}
	return j.w.Flush()
}

// appendFlags appends `, "flags": [...]`, empty brackets when fs is.
func appendFlags(b []byte, fs []unmix.Flag) []byte {
	b = append(b, `, "flags": [`...)
	for i, f := range fs {
		if i > 0 {
			b = append(b, ", "...)
		}
		b = appendString(b, string(f))
	}
	return append(b, ']')
}

// appendString appends s as a JSON string: quotes, backslashes and
// control characters escaped, invalid UTF-8 replaced by U+FFFD.
func appendString(b []byte, s string) []byte {
	const hex = "0123456789abcdef"
	b = append(b, '"')
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			switch {
			case c == '"' || c == '\\':
				b = append(b, '\\', c)
			case c == '\n':
				b = append(b, '\\', 'n')
			case c == '\t':
				b = append(b, '\\', 't')
			case c == '\r':
				b = append(b, '\\', 'r')
			case c < 0x20 || c == 0x7f:
				b = append(b, '\\', 'u', '0', '0', hex[c>>4], hex[c&0xf])
			default:
				b = append(b, c)
			}
			i++
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			b = append(b, `\ufffd`...)
		} else if r == '\u2028' || r == '\u2029' {
			b = append(b, '\\', 'u', '2', '0', '2', hex[r&0xf])
		} else {
			b = append(b, s[i:i+size]...)
		}
		i += size
	}
	return append(b, '"')
}

// appendModelScores appends `, "model_scores": [...]`: per candidate of
// the automatic model, its name, the model it was tested against, its
// residual sum of squares and degrees of freedom, the F statistic and
// p-value of the added term with the level it had to pass, whether it
// was chosen, and why it could not be fitted. Numbers that are not
// finite, and the test of the floor, are left out.
func appendModelScores(b []byte, ms []unmix.ModelScore) []byte {
	b = append(b, `, "model_scores": [`...)
	num := func(name string, v float64) {
		if finite(v) {
			b = append(b, `, "`+name+`": `...)
			b = appendNum(b, v)
		}
	}
	for i := range ms {
		s := &ms[i]
		if i > 0 {
			b = append(b, ", "...)
		}
		b = append(b, `{"model": `...)
		b = appendString(b, s.Model)
		if s.Against != "" {
			b = append(b, `, "against": `...)
			b = appendString(b, s.Against)
		}
		if s.Error != "" {
			b = append(b, `, "error": `...)
			b = appendString(b, s.Error)
			b = append(b, '}')
			continue
		}
		num("rss", s.RSS)
		b = append(b, `, "dof": `...)
		b = strconv.AppendInt(b, int64(s.DoF), 10)
		if s.F != nil {
			num("f", *s.F)
		}
		if s.P != nil {
			num("p", *s.P)
			num("level", s.Level)
		}
		if s.Screened {
			b = append(b, `, "screened": true`...)
		}
		b = append(b, `, "chosen": `...)
		b = strconv.AppendBool(b, s.Chosen)
		b = append(b, '}')
	}
	return append(b, ']')
}
