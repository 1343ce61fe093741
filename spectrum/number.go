package spectrum

import (
	"errors"
	"math"
	"strconv"
	"unsafe"
)

// Problems with one numeric field; the readers wrap them in a ParseError.
var (
	errEmptyField = errors.New("empty field where a number belongs")
	errNonFinite  = errors.New("value is not a finite number (NaN or Inf are not accepted)")
)

// ErrMixedMark: a number uses a different decimal mark ('.' or ',') from
// earlier numbers of the same file. The delimited readers and the sheet
// reader (internal/sheet) wrap it.
var ErrMixedMark = errors.New("mixed decimal conventions: this number uses a different decimal mark from earlier ones")

// numError is a field that is not a number; pos is the offset of the first
// offending byte.
type numError struct {
	field string
	pos   int
}

func (e *numError) Error() string {
	if e.pos < len(e.field) {
		return "not a number: " + strconv.Quote(e.field) + " (unexpected " + strconv.QuoteToASCII(string(e.field[e.pos:e.pos+1])) + ")"
	}
	return "not a number: " + strconv.Quote(e.field)
}

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseNumber parses a plain decimal number: an optional sign, digits with
// at most one decimal mark ('.' or, when allowComma, ','), and an optional
// exponent (e or E, optional sign, digits). It returns the value and the
// decimal mark it saw (0 if none). NaN, Inf, hexadecimal and digit
// separators are refused.
//
// Numbers of at most 19 significant digits whose decimal exponent lies in
// [-22, 22] are converted with one exact multiplication or division of
// exactly representable values, which is correctly rounded (W. D. Clinger,
// "How to read floating point numbers accurately", PLDI 1990); all others
// go to strconv.ParseFloat, so every result is the correctly rounded
// float64 that strconv would give.
func parseNumber(b []byte, allowComma bool) (v float64, mark byte, err error) {
	return ParseNumber(b, allowComma)
}

// ParseNumber is the number syntax of every reader of the project (the
// spectrum readers and the sheets of internal/sheet): see parseNumber. It
// returns the decimal mark the field used (0 if none) so that a caller
// can refuse a file mixing decimal points and decimal commas.
func ParseNumber(b []byte, allowComma bool) (v float64, mark byte, err error) {
	v, mark, k, err := scanNumber(b, allowComma)
	if err == nil && k < len(b) {
		return 0, 0, badNumber(b, k)
	}
	return v, mark, err
}

// scanNumber parses the number at the start of b as parseNumber does and
// returns, with it, the number of bytes it took; what follows is left to
// the caller. The errors are parseNumber's for a field that starts like
// b (they quote all of b).
func scanNumber(b []byte, allowComma bool) (v float64, mark byte, k int, err error) {
	n := len(b)
	if n == 0 {
		return 0, 0, 0, errEmptyField
	}
	i := 0
	neg := false
	if b[0] == '+' || b[0] == '-' {
		neg = b[0] == '-'
		i++
	}
	// Digits go into mant while it has room for one more (at most 19
	// significant digits; leading zeros leave mant at 0 and cost
	// nothing); later digits only move the decimal exponent.
	const room = 1e18
	var mant uint64
	exp10 := 0 // decimal exponent adjustment
	trunc := false
	start := i
	for ; i < n; i++ {
		c := b[i] - '0'
		if c > 9 {
			break
		}
		if mant < room {
			mant = mant*10 + uint64(c)
		} else {
			exp10++
			trunc = trunc || c != 0
		}
	}
	digits := i - start
	if i < n && (b[i] == '.' || (b[i] == ',' && allowComma)) {
		mark = b[i]
		i++
		start = i
		for ; i < n; i++ {
			c := b[i] - '0'
			if c > 9 {
				break
			}
			if mant < room {
				mant = mant*10 + uint64(c)
				exp10--
			} else {
				trunc = trunc || c != 0
			}
		}
		digits += i - start
	}
	sawDigit := digits > 0
	if !sawDigit {
		return 0, 0, 0, badNumber(b, i)
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		j := i + 1
		eneg := false
		if j < n && (b[j] == '+' || b[j] == '-') {
			eneg = b[j] == '-'
			j++
		}
		if j >= n || b[j] < '0' || b[j] > '9' {
			return 0, 0, 0, badNumber(b, min(j, n-1))
		}
		e := 0
		for ; j < n && b[j] >= '0' && b[j] <= '9'; j++ {
			if e < 100000 {
				e = e*10 + int(b[j]-'0')
			}
		}
		if eneg {
			e = -e
		}
		exp10 += e
		i = j
	}
	if !trunc && mant < 1<<53 {
		f := float64(mant)
		switch {
		case mant == 0:
			f = 0
		case exp10 == 0:
		case exp10 > 0 && exp10 <= 22:
			f *= pow10[exp10]
		case exp10 < 0 && exp10 >= -22:
			f /= pow10[-exp10]
		default:
			goto slow
		}
		if neg {
			f = -f
		}
		return f, mark, i, nil
	}
slow:
	var buf [64]byte
	s := buf[:0]
	if i > len(buf) {
		s = make([]byte, 0, i)
	}
	s = append(s, b[:i]...)
	if mark == ',' {
		for j := range s {
			if s[j] == ',' {
				s[j] = '.'
			}
		}
	}
	f, perr := strconv.ParseFloat(unsafe.String(unsafe.SliceData(s), len(s)), 64)
	if perr != nil && (math.IsInf(f, 0) || math.IsNaN(f)) {
		return 0, 0, 0, errNonFinite
	}
	if perr != nil {
		var ne *strconv.NumError
		if !errors.As(perr, &ne) || ne.Err != strconv.ErrRange {
			return 0, 0, 0, &numError{field: string(b[:i]), pos: 0}
		}
		// Underflow: strconv returns the nearest float64 (0 or a
		// subnormal) together with ErrRange; that value is right.
	}
	return f, mark, i, nil
}

// badNumber builds the error for a field that failed at offset pos, naming
// NaN and Inf spellings specifically.
func badNumber(b []byte, pos int) error {
	s := b
	if len(s) > 0 && (s[0] == '+' || s[0] == '-') {
		s = s[1:]
	}
	switch lowerASCII(string(s)) {
	case "nan", "inf", "infinity", "1.#inf", "1.#qnan", "1.#ind":
		return errNonFinite
	}
	return &numError{field: string(b), pos: pos}
}

func lowerASCII(s string) string {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c >= 'A' && c <= 'Z' {
			b := []byte(s)
			for j := i; j < len(b); j++ {
				if b[j] >= 'A' && b[j] <= 'Z' {
					b[j] += 'a' - 'A'
				}
			}
			return string(b)
		}
	}
	return s
}
