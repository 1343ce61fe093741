package spectrum

import (
	"errors"
	"fmt"
	"math"
)

// colError is a problem at a 1-based character column of a data line.
type colError struct {
	col int
	err error
}

func (e *colError) Error() string { return fmt.Sprintf("column %d: %v", e.col, e.err) }
func (e *colError) Unwrap() error { return e.err }

func colErrf(col int, format string, a ...any) error {
	return &colError{col: col, err: fmt.Errorf(format, a...)}
}

// Kinds of ASDF tokens.
const (
	tokNone = iota
	tokAbs  // AFFN, PAC or SQZ: an absolute value
	tokDif  // DIF: a difference from the previous value
	tokDup  // DUP: a repeat count
)

// asdfToken is one token of an XYDATA line.
type asdfToken struct {
	kind  int
	val   float64 // value (tokAbs) or difference (tokDif)
	count int     // repeat count (tokDup)
	col   int     // 1-based column where it starts
}

// sqzDigit gives the sign and first digit of an SQZ or DIF character, with
// ok false for other characters:
//
//	SQZ @ A..I = 0, +1..+9   a..i = -1..-9
//	DIF % J..R = 0, +1..+9   j..r = -1..-9
func sqzDigit(c byte) (kind int, neg bool, digit byte, ok bool) {
	switch {
	case c == '@':
		return tokAbs, false, 0, true
	case c >= 'A' && c <= 'I':
		return tokAbs, false, c - 'A' + 1, true
	case c >= 'a' && c <= 'i':
		return tokAbs, true, c - 'a' + 1, true
	case c == '%':
		return tokDif, false, 0, true
	case c >= 'J' && c <= 'R':
		return tokDif, false, c - 'J' + 1, true
	case c >= 'j' && c <= 'r':
		return tokDif, true, c - 'j' + 1, true
	}
	return 0, false, 0, false
}

// dupDigit gives the first digit of a DUP character: S..Z = 1..8, s = 9.
func dupDigit(c byte) (int, bool) {
	switch {
	case c >= 'S' && c <= 'Z':
		return int(c-'S') + 1, true
	case c == 's':
		return 9, true
	}
	return 0, false
}

func isSep(c byte) bool { return c == ' ' || c == '\t' || c == ',' }

// nextToken reads the token at b[pos:] (after separators) and returns it
// with the position after it; kind tokNone means the end of the line.
func nextToken(b []byte, pos int) (asdfToken, int, error) {
	for pos < len(b) && isSep(b[pos]) {
		pos++
	}
	if pos >= len(b) {
		return asdfToken{}, pos, nil
	}
	start := pos
	c := b[pos]
	tok := asdfToken{col: start + 1}
	switch {
	case c == '+' || c == '-' || c == '.' || (c >= '0' && c <= '9'):
		// AFFN or PAC: sign, digits, decimal point, and an exponent
		// written E+n or E-n (a bare E would be an SQZ character).
		end := pos + 1
		for end < len(b) && (b[end] >= '0' && b[end] <= '9' || b[end] == '.') {
			end++
		}
		if end+2 < len(b) && (b[end] == 'E' || b[end] == 'e') && (b[end+1] == '+' || b[end+1] == '-') && b[end+2] >= '0' && b[end+2] <= '9' {
			end += 2
			for end < len(b) && b[end] >= '0' && b[end] <= '9' {
				end++
			}
		}
		v, _, err := parseNumber(b[pos:end], false)
		if err != nil {
			return tok, pos, colErrf(start+1, "%v", err)
		}
		tok.kind, tok.val = tokAbs, v
		return tok, end, nil
	}
	if kind, neg, d, ok := sqzDigit(c); ok {
		var buf [40]byte
		s := append(buf[:0], '0'+d)
		end := pos + 1
		for end < len(b) && (b[end] >= '0' && b[end] <= '9' || b[end] == '.') {
			s = append(s, b[end])
			end++
		}
		v, _, err := parseNumber(s, false)
		if err != nil {
			return tok, pos, colErrf(start+1, "bad compressed value %q: %v", b[pos:end], err)
		}
		if neg {
			v = -v
		}
		tok.kind, tok.val = kind, v
		return tok, end, nil
	}
	if d, ok := dupDigit(c); ok {
		n := d
		end := pos + 1
		for end < len(b) && b[end] >= '0' && b[end] <= '9' {
			if n > math.MaxInt32/10 {
				return tok, pos, colErrf(start+1, "DUP count %q is too large", b[pos:end])
			}
			n = n*10 + int(b[end]-'0')
			end++
		}
		tok.kind, tok.count = tokDup, n
		return tok, end, nil
	}
	if c == '?' {
		return tok, pos, colErrf(start+1, "missing value '?': %w", errNotSupported)
	}
	return tok, pos, colErrf(start+1, "unexpected character %q in a data line", rune(c))
}

// asdfDecoder decodes the lines of an XYDATA table in order, keeping the
// state that carries from line to line (the DIF Y-value check).
type asdfDecoder struct {
	limit   int       // most points allowed (NPOINTS)
	ys      []float64 // decoded Y values, unscaled
	prevDIF bool      // the previous line ended in DIF form
}

// errYCheck marks a Y-value check that failed.
//
//lint:ignore ST1005 "Y" is JCAMP-DX's name for the ordinate, written as the standard writes it.
var errYCheck = errors.New("Y-value check failed")

// line decodes one line: an X value, then Y values in any ASDF form. It
// returns the line's X and whether the line's first Y was the check value
// repeating the last Y of the previous (DIF) line, which is verified and
// not stored twice.
func (d *asdfDecoder) line(b []byte) (x float64, checked bool, err error) {
	tok, pos, err := nextToken(b, 0)
	if err != nil {
		return 0, false, err
	}
	if tok.kind != tokAbs {
		if tok.kind == tokNone {
			return 0, false, errors.New("empty data line")
		}
		return 0, false, colErrf(tok.col, "a data line must start with its X value")
	}
	x = tok.val
	last := tokNone // kind of the last Y token (a DUP keeps its base kind)
	var cur, diff float64
	nY := 0
	prevDup := false
	for {
		tok, pos, err = nextToken(b, pos)
		if err != nil {
			return 0, false, err
		}
		if tok.kind == tokNone {
			break
		}
		switch tok.kind {
		case tokAbs:
			cur = tok.val
			if nY == 0 && d.prevDIF {
				prev := d.ys[len(d.ys)-1]
				if math.Abs(cur-prev) > jcampYCheckRel*max(math.Abs(cur), math.Abs(prev)) {
					return 0, false, &colError{col: tok.col, err: fmt.Errorf("%w: the line starts with %s but the previous line ended at %s",
						errYCheck, fmtG(cur), fmtG(prev))}
				}
				checked = true
			} else {
				if err := d.push(cur, tok.col); err != nil {
					return 0, false, err
				}
			}
			last = tokAbs
		case tokDif:
			if nY == 0 {
				return 0, false, colErrf(tok.col, "a line's first Y must be absolute (SQZ or AFFN), not a DIF difference")
			}
			diff = tok.val
			cur += diff
			if err := d.push(cur, tok.col); err != nil {
				return 0, false, err
			}
			last = tokDif
		case tokDup:
			if nY == 0 {
				return 0, false, colErrf(tok.col, "a DUP count with no Y value before it")
			}
			if prevDup {
				return 0, false, colErrf(tok.col, "two DUP counts in a row")
			}
			if tok.count < 1 {
				return 0, false, colErrf(tok.col, "DUP count %d: must be at least 1", tok.count)
			}
			if len(d.ys)+tok.count-1 > d.limit {
				return 0, false, colErrf(tok.col, "DUP count %d runs past NPOINTS=%d", tok.count, d.limit)
			}
			for r := 1; r < tok.count; r++ {
				if last == tokDif {
					cur += diff
				}
				d.ys = append(d.ys, cur)
			}
		}
		prevDup = tok.kind == tokDup
		nY++
	}
	if nY == 0 {
		return 0, false, colErrf(len(b)+1, "the line holds an X value but no Y values")
	}
	d.prevDIF = last == tokDif
	return x, checked, nil
}

// push appends one value, refusing to grow past the limit.
func (d *asdfDecoder) push(v float64, col int) error {
	if len(d.ys) >= d.limit {
		return colErrf(col, "more points than NPOINTS=%d", d.limit)
	}
	d.ys = append(d.ys, v)
	return nil
}
