package report

import (
	"strings"
	"testing"

	"huesolve/reference"
)

// TestBandLineNotesUnconfirmed: the band line under the calibrate and
// inspect tables notes curvature found at the band maximum only, and says
// nothing of it otherwise.
func TestBandLineNotesUnconfirmed(t *testing.T) {
	band := &reference.BandLinearity{LoNM: 518, HiNM: 600, Wavelengths: 42, MinR2: 0.99999, MinR2NM: 600,
		Tested: 42, Curved: 1, PeakNeighboursTested: 2}
	for _, unconfirmed := range []bool{false, true} {
		set := &reference.Set{Compounds: []reference.Compound{{Name: "Vexol", PeakNM: 560,
			Linearity: reference.Linearity{CurvedUnconfirmed: unconfirmed, Band: band}}}}
		var b strings.Builder
		writeBandLines(&b, set)
		out := b.String()
		if !strings.Contains(out, "Vexol 518-600 nm") || !strings.Contains(out, "at 1 of 42 wavelengths") {
			t.Fatalf("band line:\n%s", out)
		}
		noted := strings.Contains(out, "curvature at the band maximum only, not confirmed at neighbouring wavelengths: likely chance at the 99 % level")
		if noted != unconfirmed {
			t.Errorf("unconfirmed %v: band line %q", unconfirmed, out)
		}
	}
}

func TestPlusMinus(t *testing.T) {
	for _, c := range []struct {
		v, se float64
		want  string
	}{
		{0.04001, 5.6e-5, "0.040010 ± 0.000056"},
		{12.345, 0.21, "12.35 ± 0.21"},
		{1234.5, 12, "1234 ± 12"},
		{0.5, 0, "0.5"},
	} {
		if got := plusMinus(c.v, c.se); got != c.want {
			t.Errorf("plusMinus(%g, %g) = %q, want %q", c.v, c.se, got, c.want)
		}
	}
}
