package lab

import (
	"math"
	"strconv"
	"testing"
)

// FuzzParseBasis: any text gives a basis or an error, never a panic; a
// basis read converts 1 mg/L with a preparation without panicking.
func FuzzParseBasis(f *testing.F) {
	for _, s := range []string{"mg/kg", "% w/w", "ug/g", "µg/L", "μM", "ppm", "g/100 g", "furlongs", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		b, err := ParseBasis(s)
		if err != nil {
			return
		}
		v, err := b.Convert(1, 0.1, 0.01, 0.03, "mg/L", 0, &Prep{Mass: 1, Volume: 0.1})
		if err == nil && !(v.V > 0) {
			t.Errorf("ParseBasis(%q): 1 mg/L converts to %g", s, v.V)
		}
	})
}

// FuzzRound: the rounded value reads back within half a unit of its last
// place of the value, and the uncertainty has at most two significant
// figures.
func FuzzRound(f *testing.F) {
	f.Add(12.3456, 0.0234)
	f.Add(1234.5, 567.0)
	f.Add(0.51234, 0.0996)
	f.Fuzz(func(t *testing.T, v, u float64) {
		if math.IsNaN(v) || math.IsInf(v, 0) || !(u > 1e-200) || u > 1e200 || math.Abs(v) > 1e200 {
			return
		}
		vs, us := Round(v, u)
		got, err := strconv.ParseFloat(vs, 64)
		if err != nil {
			t.Fatalf("Round(%g, %g) = %q: %v", v, u, vs, err)
		}
		ur, _ := strconv.ParseFloat(us, 64)
		if d := math.Abs(got - v); d > ur/10*0.5001+1e-12*math.Abs(v) {
			t.Errorf("Round(%g, %g) = %q, %q: off by %g", v, u, vs, us, d)
		}
	})
}
