package sheet

import (
	"bytes"
	"errors"
	"fmt"
	"strings"

	"huesolve/internal/bytesize"
	"huesolve/spectrum"
)

// tokenizer splits decoded sheet text into records.
type tokenizer struct {
	data      []byte
	pos       int
	line      int // line of data[pos], 1-based
	lineStart int // offset where that line starts
	delim     byte
	file      string
	what      string
	maxLine   int
}

// eol is the length of the line end at data[i] (LF, CRLF or CR), 0 if
// none.
func eol(data []byte, i int) int {
	switch data[i] {
	case '\n':
		return 1
	case '\r':
		if i+1 < len(data) && data[i+1] == '\n' {
			return 2
		}
		return 1
	}
	return 0
}

// countLines counts the line ends in b.
func countLines(b []byte) int {
	n := 0
	for i := 0; i < len(b); i++ {
		if k := eol(b, i); k > 0 {
			n++
			i += k - 1
		}
	}
	return n
}

// sniff picks the separator from the first line that is not blank or a
// comment: tab if it has one, else semicolon, else comma. Text inside
// round or square brackets does not count, so that a heading such as
// "dye (µmol/L; M=534.4 g/mol)" leaves a comma-separated sheet one.
func sniff(text []byte) byte {
	for len(text) > 0 {
		k := bytes.IndexAny(text, "\r\n")
		line := text
		if k >= 0 {
			line, text = text[:k], text[k+1:]
		} else {
			text = nil
		}
		t := bytes.TrimSpace(line)
		if len(t) == 0 || t[0] == '#' {
			continue
		}
		var buf [3]byte
		if d := spectrum.AppendDelimiters(buf[:0], outsideBrackets(line)); len(d) > 0 {
			return d[0]
		}
		return ','
	}
	return ','
}

// outsideBrackets returns line with the text inside balanced round and
// square brackets blanked out; line itself when they do not balance.
func outsideBrackets(line []byte) []byte {
	if !bytes.ContainsAny(line, "([") {
		return line
	}
	out := make([]byte, 0, len(line))
	depth := 0
	for _, c := range line {
		switch {
		case c == '(' || c == '[':
			depth++
		case (c == ')' || c == ']') && depth > 0:
			depth--
			continue
		}
		if depth > 0 {
			c = ' '
		}
		out = append(out, c)
	}
	if depth != 0 {
		return line
	}
	return out
}

func (t *tokenizer) errAt(line, col int, err error) error {
	return &spectrum.ParseError{File: t.file, Line: line, Column: col, Err: err}
}

// blank reports whether c is a blank around a field: a space, or a tab
// when tab does not separate fields.
func (t *tokenizer) blank(c byte) bool {
	return c == ' ' || (c == '\t' && t.delim != '\t')
}

// endLine checks the length of the line ending at t.pos and moves past a
// line end of n bytes (n 0 at the end of the text).
func (t *tokenizer) endLine(n int) error {
	if t.pos-t.lineStart > t.maxLine {
		return t.errAt(t.line, 0, fmt.Errorf("line longer than %s: is this a %s?", bytesize.Text(int64(t.maxLine)), t.what))
	}
	if n > 0 {
		t.pos += n
		t.line++
		t.lineStart = t.pos
	}
	return nil
}

// record returns the next row that is not blank, a comment or all empty
// fields; ok is false at the end of the text.
func (t *tokenizer) record() (row Row, ok bool, err error) {
	for t.pos < len(t.data) {
		i := t.pos
		for i < len(t.data) && (t.data[i] == ' ' || t.data[i] == '\t') {
			i++
		}
		if i == len(t.data) || t.data[i] == '#' || eol(t.data, i) > 0 {
			if err := t.skipLine(i); err != nil {
				return Row{}, false, err
			}
			continue
		}
		row, err := t.fields()
		if err != nil {
			return Row{}, false, err
		}
		if !allEmpty(row.Fields) {
			return row, true, nil
		}
	}
	return Row{}, false, nil
}

// skipLine moves past the line holding data[i] and its line end.
func (t *tokenizer) skipLine(i int) error {
	for i < len(t.data) && t.data[i] != '\n' && t.data[i] != '\r' {
		i++
	}
	t.pos = i
	if i == len(t.data) {
		return t.endLine(0)
	}
	return t.endLine(eol(t.data, i))
}

// fields reads one record from t.pos up to and past its line end.
func (t *tokenizer) fields() (Row, error) {
	row := Row{Line: t.line}
	for {
		f, err := t.field(len(row.Fields) + 1)
		if err != nil {
			return Row{}, err
		}
		row.Fields = append(row.Fields, f)
		if t.pos == len(t.data) {
			return row, t.endLine(0)
		}
		if t.data[t.pos] == t.delim {
			t.pos++
			continue
		}
		return row, t.endLine(eol(t.data, t.pos))
	}
}

// Problems in the quoting of a field.
var (
	errBareQuote  = errors.New(`a " inside a field that is not quoted (quote the whole field and write "" for a quote inside it)`)
	errOpenQuote  = errors.New(`quoted field not closed: a closing " is missing`)
	errAfterQuote = errors.New(`text after the closing " of a quoted field (write "" for a quote inside it)`)
)

// field reads field col (1-based) starting at t.pos and stops at the
// delimiter, the line end or the end of the text.
func (t *tokenizer) field(col int) (string, error) {
	for t.pos < len(t.data) && t.blank(t.data[t.pos]) {
		t.pos++
	}
	if t.pos < len(t.data) && t.data[t.pos] == '"' {
		return t.quoted(col)
	}
	start := t.pos
	for ; t.pos < len(t.data); t.pos++ {
		c := t.data[t.pos]
		if c == t.delim || c == '\n' || c == '\r' {
			break
		}
		if c == '"' {
			return "", t.errAt(t.line, col, errBareQuote)
		}
	}
	return strings.TrimSpace(string(t.data[start:t.pos])), nil
}

// quoted reads a quoted field; t.pos is at its opening quote.
func (t *tokenizer) quoted(col int) (string, error) {
	line := t.line
	t.pos++
	var b []byte
	for {
		if t.pos == len(t.data) {
			return "", t.errAt(line, col, errOpenQuote)
		}
		c := t.data[t.pos]
		if c == '"' {
			if t.pos+1 < len(t.data) && t.data[t.pos+1] == '"' {
				b = append(b, '"')
				t.pos += 2
				continue
			}
			t.pos++
			break
		}
		if n := eol(t.data, t.pos); n > 0 {
			b = append(b, '\n')
			if err := t.endLine(n); err != nil {
				return "", err
			}
			continue
		}
		b = append(b, c)
		t.pos++
	}
	for t.pos < len(t.data) && t.blank(t.data[t.pos]) {
		t.pos++
	}
	if t.pos < len(t.data) && t.data[t.pos] != t.delim && eol(t.data, t.pos) == 0 {
		return "", t.errAt(t.line, col, errAfterQuote)
	}
	return strings.TrimSpace(string(b)), nil
}

func allEmpty(fields []string) bool {
	for _, f := range fields {
		if f != "" {
			return false
		}
	}
	return true
}
