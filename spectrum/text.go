package spectrum

import (
	"bytes"
	"unicode/utf8"
)

// AppendDelimiters appends to dst the field separators that occur in
// line, in the order the delimited readers prefer them: tab, semicolon,
// comma. The spectrum reader tries each (then blanks) for a numeric row;
// the sheet reader (internal/sheet) takes the first, or comma.
func AppendDelimiters(dst, line []byte) []byte {
	for _, c := range [...]byte{'\t', ';', ','} {
		if bytes.IndexByte(line, c) >= 0 {
			dst = append(dst, c)
		}
	}
	return dst
}

// DecodeText prepares a whole text file for reading: a UTF-8 byte order
// mark is dropped, and text that is not valid UTF-8 is read as Latin-1
// (ISO 8859-1, each byte the character of that code). bad is the offset,
// in b after the mark, of the first byte that is not UTF-8, or -1 when
// the text is UTF-8 (and returned as is, without a copy).
func DecodeText(b []byte) (text []byte, bad int) {
	b = bytes.TrimPrefix(b, utf8BOM)
	if utf8.Valid(b) {
		return b, -1
	}
	bad = 0
	for bad < len(b) {
		r, n := utf8.DecodeRune(b[bad:])
		if r == utf8.RuneError && n <= 1 {
			break
		}
		bad += n
	}
	return latin1Bytes(b), bad
}

// latin1Bytes reads each byte of b as the ISO 8859-1 character of that
// code and returns the text in UTF-8.
func latin1Bytes(b []byte) []byte {
	out := make([]byte, 0, len(b)+len(b)/8)
	for _, c := range b {
		out = utf8.AppendRune(out, rune(c))
	}
	return out
}
