package units

import (
	"errors"
	"strings"
	"testing"
)

func TestParse(t *testing.T) {
	cases := []struct {
		in   string
		kind Kind
		exp  int
		ppm  bool
	}{
		{"g/L", Mass, 0, false},
		{"mg/L", Mass, -3, false},
		{" mg/l ", Mass, -3, false},
		{"mg L-1", Mass, -3, false},
		{"mg·L⁻¹", Mass, -3, false},
		{"mg L^-1", Mass, -3, false},
		{"µg/mL", Mass, -3, false},      // micro sign U+00B5
		{"\u03bcg/mL", Mass, -3, false}, // Greek mu U+03BC
		{"ug/mL", Mass, -3, false},      // ASCII
		{"µg/L", Mass, -6, false},
		{"ng/mL", Mass, -6, false},
		{"mg/mL", Mass, 0, false},
		{"mg/dL", Mass, -2, false},
		{"µg/µL", Mass, 0, false},
		{"ppm", Mass, -3, true},
		{"PPB", Mass, -6, true},
		{"mol/L", Amount, 0, false},
		{"mmol/L", Amount, -3, false},
		{"µmol/L", Amount, -6, false},
		{"umol/l", Amount, -6, false},
		{"M", Amount, 0, false},
		{"mM", Amount, -3, false},
		{"µM", Amount, -6, false},
		{"\u03bcM", Amount, -6, false},
		{"uM", Amount, -6, false},
		{"nM", Amount, -9, false},
		{"mg/kg", Unknown, 0, false},
		{"% w/v", Unknown, 0, false},
		{"Mg/L", Unknown, 0, false}, // megagram: not a prefix this package reads
		{"mm", Unknown, 0, false},
		{"", Unknown, 0, false},
	}
	for _, c := range cases {
		u := Parse(c.in)
		if u.Kind != c.kind || u.Exp != c.exp || u.PPM != c.ppm || u.Text != strings.TrimSpace(c.in) {
			t.Errorf("Parse(%q) = %+v, want kind %v exp %d ppm %v", c.in, u, c.kind, c.exp, c.ppm)
		}
	}
}

// TestConvertFactors checks the powers of ten between units of one kind
// (SI prefixes: m = 10^-3, µ = 10^-6, n = 10^-9, d = 10^-1; BIPM SI
// Brochure, 9th edition, table 7). The results are compared exactly with
// the decimal literals they must read as.
func TestConvertFactors(t *testing.T) {
	cases := []struct {
		from, to string
		v, want  float64
	}{
		{"µg/mL", "mg/L", 2.5, 2.5},
		{"mg/L", "ug/mL", 0.7, 0.7},
		{"\u03bcg/mL", "µg/mL", 3.3, 3.3},
		{"µg/L", "mg/L", 2.5, 0.0025},
		{"mg/L", "µg/L", 0.0025, 2.5},
		{"ng/mL", "mg/L", 12, 0.012},
		{"g/L", "mg/L", 0.3, 300},
		{"mg/mL", "mg/L", 0.3, 300},
		{"mg/dL", "mg/L", 1.7, 17},
		{"ppm", "mg/L", 4.1, 4.1},
		{"ppb", "mg/L", 41, 0.041},
		{"µM", "mmol/L", 25, 0.025},
		{"mol/L", "mM", 0.1, 100},
		{"nM", "µmol/L", 3, 0.003},
	}
	for _, c := range cases {
		conv, err := Convert(Parse(c.from), Parse(c.to), 0)
		if err != nil {
			t.Errorf("%s to %s: %v", c.from, c.to, err)
			continue
		}
		if got := conv.Apply(c.v); got != c.want {
			t.Errorf("%g %s = %v %s, want exactly %v", c.v, c.from, got, c.to, c.want)
		}
	}
}

// TestConvertMolar: mass concentration = amount concentration × molar
// mass (n = m/M per volume; common practice, any general chemistry
// text). Worked example: 10 µmol/L of a compound of M = 534.4 g/mol is
// 10e-6 mol/L × 534.4 g/mol = 5.344e-3 g/L = 5.344 mg/L.
func TestConvertMolar(t *testing.T) {
	const m = 534.4
	c, err := Convert(Parse("µmol/L"), Parse("mg/L"), m)
	if err != nil {
		t.Fatal(err)
	}
	if got := c.Apply(10); !approx(got, 5.344) {
		t.Errorf("10 µmol/L = %v mg/L, want 5.344", got)
	}
	back, err := Convert(Parse("mg/L"), Parse("µM"), m)
	if err != nil {
		t.Fatal(err)
	}
	if got := back.Apply(5.344); !approx(got, 10) {
		t.Errorf("5.344 mg/L = %v µM, want 10", got)
	}
	if got := c.String(); got != "µmol/L to mg/L (× 534.4 g/mol × 10^-3)" {
		t.Errorf("String = %q", got)
	}
	if got := back.String(); got != "mg/L to µM (÷ 534.4 g/mol × 10^3)" {
		t.Errorf("String = %q", got)
	}
}

func approx(a, b float64) bool { d := a - b; return d < 1e-12*b && -d < 1e-12*b }

func TestConvertRefusals(t *testing.T) {
	cases := []struct {
		from, to string
		m        float64
		want     string
	}{
		{"µmol/L", "mg/L", 0, "needs the compound's molar mass"},
		{"mg/L", "mM", 0, "needs the compound's molar mass"},
		{"mg/kg", "mg/L", 0, `"mg/kg" is not a concentration unit`},
		{"mg/L", "AU", 0, `"AU" is not a concentration unit`},
		{"mg/L", "% w/v", 300, `"% w/v" is not a concentration unit`},
		{"mg/L", "µM", -5, "above 0"},
		{"mg/L", "µM", 1e9, "at most"},
	}
	for _, c := range cases {
		_, err := Convert(Parse(c.from), Parse(c.to), c.m)
		if err == nil || !strings.Contains(err.Error(), c.want) || c.m == 0 && !errors.Is(err, ErrIncompatible) {
			t.Errorf("%s to %s: error %v, want one saying %q", c.from, c.to, err, c.want)
		}
	}
	// The same text converts as it is, known or not.
	if c, err := Convert(Parse("mg/kg"), Parse("mg/kg"), 0); err != nil || !c.Identity() {
		t.Errorf("mg/kg to mg/kg: %+v, %v", c, err)
	}
}

func TestConversionString(t *testing.T) {
	for _, c := range []struct{ from, to, want string }{
		{"µg/mL", "mg/L", "µg/mL to mg/L (× 1)"},
		{"µg/L", "mg/L", "µg/L to mg/L (× 10^-3)"},
		{"ppm", "µg/mL", "ppm to µg/mL (× 1); " + PPM},
	} {
		conv, err := Convert(Parse(c.from), Parse(c.to), 0)
		if err != nil || conv.String() != c.want {
			t.Errorf("%s to %s: %q, %v; want %q", c.from, c.to, conv.String(), err, c.want)
		}
	}
}

func TestSame(t *testing.T) {
	for _, c := range []struct {
		a, b string
		want bool
	}{
		{"mg/L", "mg/L", true}, {"ug/mL", "µg/mL", true}, {"mg/L", "µg/mL", true},
		{"µM", "µmol/L", true}, {"ppm", "mg/L", false}, {"mg/kg", "mg/kg", true},
		{"mg/kg", "g/t", false}, {"mg/L", "µg/L", false},
	} {
		if got := Same(Parse(c.a), Parse(c.b)); got != c.want {
			t.Errorf("Same(%q, %q) = %v", c.a, c.b, got)
		}
	}
}

func TestParseHeader(t *testing.T) {
	for _, c := range []struct {
		in   string
		unit string
		m    float64
		err  string
	}{
		{"mg/L", "mg/L", 0, ""},
		{"µmol/L; M=534.4 g/mol", "µmol/L", 534.4, ""},
		{"µmol/L;M = 534,4 g/mol", "µmol/L", 534.4, ""},
		{"mg/L; M=120.5g/mol", "mg/L", 120.5, ""},
		{"µmol/L; M=534.4", "", 0, "give it in g/mol"},
		{"µmol/L; MW=534.4 g/mol", "", 0, "write the molar mass as M=534.4 g/mol"},
		{"µmol/L; M=-3 g/mol", "", 0, "above 0"},
		{"µmol/L; M=x g/mol", "", 0, "not a number"},
		{"; M=3 g/mol", "", 0, "no unit"},
	} {
		h, err := ParseHeader(c.in)
		switch {
		case c.err == "" && (err != nil || h.Unit != c.unit || h.MolarMass != c.m):
			t.Errorf("ParseHeader(%q) = %+v, %v", c.in, h, err)
		case c.err != "" && (err == nil || !strings.Contains(err.Error(), c.err)):
			t.Errorf("ParseHeader(%q): error %v, want one saying %q", c.in, err, c.err)
		}
	}
}
