package spectrum

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// TestParseNumberRandom compares parseNumber with strconv.ParseFloat (the
// Go standard library's correctly rounded parser) on random decimal
// spellings: leading zeros, up to 30 digits on either side of the mark,
// exponents, decimal commas. Every accepted spelling must give the same
// bits; every spelling strconv refuses must be refused.
func TestParseNumberRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	digits := func(n int) string {
		var b strings.Builder
		for range n {
			b.WriteByte(byte('0' + rng.IntN(10)))
		}
		return b.String()
	}
	for range 200000 {
		var s strings.Builder
		switch rng.IntN(4) {
		case 0:
			s.WriteByte('-')
		case 1:
			s.WriteByte('+')
		}
		if rng.IntN(3) == 0 {
			s.WriteString(strings.Repeat("0", rng.IntN(25)))
		}
		s.WriteString(digits(rng.IntN(30)))
		if rng.IntN(3) > 0 {
			s.WriteByte('.')
			if rng.IntN(3) == 0 {
				s.WriteString(strings.Repeat("0", rng.IntN(25)))
			}
			s.WriteString(digits(rng.IntN(30)))
		}
		if rng.IntN(3) == 0 {
			s.WriteByte("eE"[rng.IntN(2)])
			if rng.IntN(2) == 0 {
				s.WriteByte("+-"[rng.IntN(2)])
			}
			s.WriteString(strconv.Itoa(rng.IntN(340)))
		}
		in := s.String()
		want, werr := strconv.ParseFloat(in, 64)
		refuse := werr != nil && !(math.Abs(want) < math.MaxFloat64) // overflow to Inf is refused
		if werr != nil && want == 0 {
			refuse = true // not a number at all
		}
		for _, comma := range []bool{false, true} {
			field := in
			if comma {
				field = strings.Replace(in, ".", ",", 1)
			}
			got, _, err := parseNumber([]byte(field), comma)
			switch {
			case refuse && err == nil:
				t.Fatalf("parseNumber(%q) = %v, strconv refuses it (%v)", field, got, werr)
			case !refuse && err != nil:
				t.Fatalf("parseNumber(%q): %v, strconv gives %v", field, err, want)
			case !refuse && math.Float64bits(got) != math.Float64bits(want):
				t.Fatalf("parseNumber(%q) = %v, strconv gives %v", field, got, want)
			}
		}
	}
}
