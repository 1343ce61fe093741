package validate

import (
	"math"
	"testing"

	"huesolve/spectrum"
	"huesolve/unmix"
)

// TestSelectivityFallsWithInterferent: an interferent overlapping one
// compound takes away that compound's selectivity (its band is no longer
// all its own) and leaves a compound it does not overlap at 1.
func TestSelectivityFallsWithInterferent(t *testing.T) {
	g := grid(400, 700, 1)
	set := memSet(g, []string{"A", "B"}, [][]float64{gauss(g, 450, 10, 1), gauss(g, 650, 10, 0.5)}, 0.001)
	it, err := unmix.NewInterferent(&spectrum.Spectrum{Wavelengths: g, Values: gauss(g, 460, 15, 1), Quantity: spectrum.Absorbance}, "haze.csv")
	if err != nil {
		t.Fatal(err)
	}
	m, err := FiguresOfMerit(set, MeritOptions{Baseline: noBaseline, Interferents: []unmix.Interferent{it}})
	if err != nil {
		t.Fatal(err)
	}
	// The selectivity of A is the part of its column orthogonal to the
	// interferent's: sqrt(1 - cos^2), cos the cosine of the two bands.
	a, h := gauss(g, 450, 10, 1), gauss(g, 460, 15, 1)
	var ah, aa, hh float64
	for i := range g {
		ah += a[i] * h[i]
		aa += a[i] * a[i]
		hh += h[i] * h[i]
	}
	want := math.Sqrt(1 - ah*ah/(aa*hh))
	if got := m.Compounds[0].Selectivity; math.Abs(got-want) > 1e-9 {
		t.Errorf("selectivity of A with the interferent %.12g, want %.12g", got, want)
	}
	if got := m.Compounds[1].Selectivity; math.Abs(got-1) > 1e-6 {
		t.Errorf("selectivity of B %.12g, want 1 (no overlap)", got)
	}
}
