package lab

import "testing"

// The rule: uncertainty to 2 significant figures, value to the same
// decimal place (GUM, JCGM 100:2008, §7.2.6). Cases worked by hand.
func TestRound(t *testing.T) {
	for _, c := range []struct {
		v, u       float64
		value, unc string
	}{
		{12.3456, 0.0234, "12.346", "0.023"},
		{1234.5, 56.7, "1235", "57"},
		{1234.5, 567, "1230", "570"},
		{0.51234, 0.0996, "0.51", "0.10"}, // u rounds up to 0.10: two figures, not 0.100
		{2.5, 0.25, "2.50", "0.25"},
		{-0.0049, 0.0012, "-0.0049", "0.0012"},
		{7.25, 0, "7.25", ""},
		{1234.5, 0, "1230", ""},
	} {
		v, u := Round(c.v, c.u)
		if v != c.value || u != c.unc {
			t.Errorf("Round(%g, %g) = %q, %q, want %q, %q", c.v, c.u, v, u, c.value, c.unc)
		}
	}
}

func TestCertText(t *testing.T) {
	for _, c := range []struct {
		v, u, lod, loq float64
		want           string
	}{
		{0.02, 0.01, 0.033, 0.1, "n.d. (< LOD 0.033)"},
		{0.05, 0.01, 0.033, 0.1, "< LOQ (0.10)"},
		{0.4567, 0.0123, 0.033, 0.1, "0.457"},
		{0.4567, 0.0123, 0, 0, "0.457"},
	} {
		if got := CertText(c.v, c.u, c.lod, c.loq); got != c.want {
			t.Errorf("CertText(%g, %g, %g, %g) = %q, want %q", c.v, c.u, c.lod, c.loq, got, c.want)
		}
	}
}
