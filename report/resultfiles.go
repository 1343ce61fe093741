package report

import (
	"bufio"
	"encoding/csv"
	"io"
	"strconv"
	"unicode/utf8"

	"huesolve/unmix"
)

// CSVWriter writes one row per sample. The columns are: sample, source;
// for each compound NAME: NAME_conc, NAME_se, NAME_ci95_lo, NAME_ci95_hi,
// NAME_lod, NAME_loq, NAME_unit, NAME_flags; then rms_residual,
// reduced_chi_square, durbin_watson, r2, condition_number, points_used,
// points_dropped, shift_nm, dilution, path_cm, suggest_dilution, one
// baseline_TERM per baseline term, and flags. Numbers have 6 significant
// digits; an undefined number is written "n/a"; flags are separated by
// spaces. Failed samples are not written (Fail does nothing): the command
// reports them on stderr.
type CSVWriter struct {
	w      *csv.Writer
	l      Layout
	row    []string
	header bool
}

// NewCSVWriter returns a CSV writer for results of layout l.
func NewCSVWriter(w io.Writer, l Layout) *CSVWriter {
	return &CSVWriter{w: csv.NewWriter(w), l: l}
}

// Header returns the column names.
func (c *CSVWriter) Header() []string {
	h := []string{"sample", "source"}
	for _, n := range c.l.Compounds {
		for _, s := range []string{"conc", "se", "ci95_lo", "ci95_hi", "lod", "loq", "unit", "flags"} {
			h = append(h, n+"_"+s)
		}
	}
	h = append(h, "rms_residual", "reduced_chi_square", "durbin_watson", "r2", "condition_number",
		"points_used", "points_dropped", "shift_nm", "dilution", "path_cm", "suggest_dilution")
	for _, b := range c.l.Baseline {
		h = append(h, "baseline_"+b)
	}
	return append(h, "flags")
}

func (c *CSVWriter) writeHeader() error {
	if c.header {
		return nil
	}
	c.header = true
	return c.w.Write(c.Header())
}

// Write writes one sample's row (and the header before the first).
func (c *CSVWriter) Write(r *unmix.Result) error {
	if err := c.writeHeader(); err != nil {
		return err
	}
	row := append(c.row[:0], r.Sample, r.Source)
	for k, n := range c.l.Compounds {
		a := amountOf(r, k, n)
		if a == nil {
			row = append(row, NA, NA, NA, NA, NA, NA, "", "")
			continue
		}
		row = append(row, num(a.Conc), num(a.SE), num(a.Lo), num(a.Hi), num(a.LOD), num(a.LOQ), a.Unit, joinFlags(a.Flags, " "))
	}
	sugg := ""
	if r.SuggestDilution > 0 {
		sugg = num(r.SuggestDilution)
	}
	row = append(row, num(r.RMS), num(r.ChiSqRed), num(r.DW), num(r.R2), num(r.Cond),
		strconv.Itoa(r.Points), strconv.Itoa(r.Dropped), num(r.ShiftNM), num(r.Dilution), num(r.PathCM), sugg)
	for _, b := range c.l.Baseline {
		v, ok := r.Baseline[b]
		if !ok {
			row = append(row, NA)
			continue
		}
		row = append(row, num(v))
	}
	row = append(row, joinFlags(r.Flags, " "))
	c.row = row
	return c.w.Write(row)
}

// Fail does nothing: CSV files hold solved samples only.
func (c *CSVWriter) Fail(string, error) error { return nil }

// Close writes the header if no row came, and flushes.
func (c *CSVWriter) Close() error {
	if err := c.writeHeader(); err != nil {
		return err
	}
	c.w.Flush()
	return c.w.Error()
}

// JSONWriter writes one JSON document:
//
//	{"format": "huesolve-results", "version": 1,
//	 "compounds": [{"name": ..., "unit": ...}], "baseline_terms": [...],
//	 "samples": [ one object per sample, one per line ],
//	 "failed": [{"source": ..., "error": ...}]}
//
// Field order is fixed and numbers have 6 significant digits, so the
// same results give the same bytes. An undefined number is left out and
// its name listed in the sample's "unavailable" array. The unconstrained
// estimate of a compound is given only where it is held at zero.
type JSONWriter struct {
	w      *bufio.Writer
	l      Layout
	n      int
	failed []failure
	buf    []byte
}

type failure struct{ source, msg string }

// NewJSONWriter returns a JSON writer for results of layout l.
func NewJSONWriter(w io.Writer, l Layout) *JSONWriter {
	return &JSONWriter{w: bufio.NewWriter(w), l: l}
}

// JSONVersion is the version of the results document.
const JSONVersion = 1

func (j *JSONWriter) start() error {
	b := []byte(`{"format": "huesolve-results", "version": `)
	b = strconv.AppendInt(b, JSONVersion, 10)
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
	b = append(b, "],\n \"samples\": ["...)
	_, err := j.w.Write(b)
	return err
}

// Write writes one sample object.
func (j *JSONWriter) Write(r *unmix.Result) error {
	if j.n == 0 {
		if err := j.start(); err != nil {
			return err
		}
	}
	b := j.buf[:0]
	if j.n > 0 {
		b = append(b, ',')
	}
	j.n++
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
		b = append(b, num(v)...)
	}
	b = append(b, "\n  {\"sample\": "...)
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
			b = append(b, num(v)...)
		}
		b = append(b, '}')
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
	field("dilution", "", r.Dilution)
	field("path_cm", "", r.PathCM)
	if r.SuggestDilution > 0 {
		field("suggest_dilution", "", r.SuggestDilution)
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
	b = append(b, '}')
	j.buf = b
	_, err := j.w.Write(b)
	return err
}

// Fail records a failed sample or file, written at the end.
func (j *JSONWriter) Fail(source string, err error) error {
	j.failed = append(j.failed, failure{source, err.Error()})
	return nil
}

// Close ends the document and flushes.
func (j *JSONWriter) Close() error {
	if j.n == 0 {
		if err := j.start(); err != nil {
			return err
		}
	}
	b := []byte("\n ],\n \"failed\": [")
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

func appendFlags(b []byte, fs []unmix.Flag) []byte {
	if len(fs) == 0 {
		return b
	}
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
