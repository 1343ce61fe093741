package units

import (
	"math"
	"testing"
)

// FuzzConvert: any two headings parse without panicking, and a
// conversion between known units and back returns the value (to
// rounding), the power of ten staying within float64's exact range.
func FuzzConvert(f *testing.F) {
	f.Add("mg/L", "µg/mL", 2.5, 0.0)
	f.Add("µmol/L; M=534.4 g/mol", "mg/L", 10.0, 0.0)
	f.Add("pg/dL", "kg/µL", 3.0, 0.0)
	f.Add("ppm", "nM", 1.0, 120.0)
	f.Fuzz(func(t *testing.T, a, b string, v, m float64) {
		ha, errA := ParseHeader(a)
		hb, errB := ParseHeader(b)
		if errA != nil || errB != nil {
			return
		}
		if ha.MolarMass != 0 {
			m = ha.MolarMass
		}
		ua, ub := Parse(ha.Unit), Parse(hb.Unit)
		c, err := Convert(ua, ub, m)
		if err != nil {
			return
		}
		if c.Exp > 22 || c.Exp < -22 {
			t.Fatalf("%q to %q: power 10^%d is not exact in float64", a, b, c.Exp)
		}
		back, err := Convert(ub, ua, m)
		if err != nil {
			t.Fatalf("%q to %q converts but not back: %v", a, b, err)
		}
		if !(v > 1e-100 && v < 1e100) || (m != 0 && !(m > 1e-3 && m <= MaxMolarMass)) {
			return
		}
		if got := back.Apply(c.Apply(v)); math.Abs(got-v) > 1e-12*v {
			t.Fatalf("%g %q to %q and back: %g", v, a, b, got)
		}
	})
}
