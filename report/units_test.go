package report

import "testing"

// Derived units follow from the concentration unit by dimensional
// analysis (absorbance is dimensionless): an absorptivity is A per
// (mass/volume) per cm = volume/(mass·cm), e.g. the molar absorptivity in
// L/(mol·cm) (IUPAC Gold Book, "molar decadic absorption coefficient").
func TestDerivedUnits(t *testing.T) {
	for _, c := range []struct{ conc, abs, sens string }{
		{"mg/L", "L/(mg·cm)", "A·L/mg"},
		{" µg/mL ", "mL/(µg·cm)", "A·mL/µg"},
		{"mol/L", "L/(mol·cm)", "A·L/mol"},
		{"M", "L/(mol·cm)", "A·L/mol"},
		{"µM", "L/(µmol·cm)", "A·L/µmol"},
		{"ppm", "per ppm per cm", "A per ppm"},
		{"mg/kg", "per mg/kg per cm", "A per mg/kg"},
		{"", "per unit per cm", "A per unit"},
	} {
		if got := absorptivityUnit(c.conc); got != c.abs {
			t.Errorf("absorptivityUnit(%q) = %q, want %q", c.conc, got, c.abs)
		}
		if got := sensitivityUnit(c.conc); got != c.sens {
			t.Errorf("sensitivityUnit(%q) = %q, want %q", c.conc, got, c.sens)
		}
	}
	if u := commonUnit([]string{"mg/L", "mg/L "}); u != "mg/L" {
		t.Errorf("commonUnit of one unit = %q", u)
	}
	if u := commonUnit([]string{"mg/L", "µg/L"}); u != "" {
		t.Errorf("commonUnit of two units = %q, want \"\"", u)
	}
}
