package calibration

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"huesolve/reference"
)

// bandSheet makes invented pure standards of one compound with a narrow
// band at 450 nm that is straight in concentration, A = 0.12 c g1, and a
// broad second band at 520 nm (0.7 of the height) that bends,
// 0.7 (0.12 c - bend c^2) g2, plus noise of SD 0.001. No blanks.
func bandSheet(bend float64) (*Sheet, []float64, [][]float64, [][]float64) {
	grid := linGrid(420, 2, 71)
	g1 := band(grid, 450, 4, 1)
	g2 := band(grid, 520, 15, 0.7)
	rng := rand.New(rand.NewPCG(9, 9))
	var conc, scan [][]float64
	for _, c := range []float64{1, 2, 4, 6, 8, 10, 12} {
		for range 3 {
			row := make([]float64, len(grid))
			for j := range row {
				row[j] = 0.12*c*g1[j] + (0.12*c-bend*c*c)*g2[j] + 0.001*rng.NormFloat64()
			}
			conc = append(conc, []float64{c})
			scan = append(scan, row)
		}
	}
	return memSheet([]string{"dye"}, grid, conc, scan), grid, conc, scan
}

// TestBuildBandCurved: a compound straight at its band maximum but bending
// on a second band above half its maximum is flagged curved by the check
// over the band; the same compound with both bands straight passes.
func TestBuildBandCurved(t *testing.T) {
	for _, bend := range []float64{0, 0.001} {
		sh, _, _, _ := bandSheet(bend)
		set, err := Build(sh, Options{Ceiling: 3, Now: fixedNow})
		if err != nil {
			t.Fatal(err)
		}
		c := set.Compounds[0]
		l, b := c.Linearity, c.Linearity.Band
		if c.PeakNM != 450 || l.Curved {
			t.Fatalf("bend %g: band maximum %g nm, curved there %v; want 450 nm, straight", bend, c.PeakNM, l.Curved)
		}
		if b == nil || b.LoNM > 450 || b.HiNM < 520 || b.Tested != b.Wavelengths {
			t.Fatalf("bend %g: band %+v, want it to span 450-520 nm with every wavelength tested", bend, b)
		}
		curved := bend > 0
		if hasFlag(c.Flags, reference.FlagCurved) != curved || b.TooCurved() != curved {
			t.Errorf("bend %g: flags %v, curvature at %d of %d band wavelengths; want curved %v", bend, c.Flags, b.Curved, b.Tested, curved)
		}
		warned := strings.Contains(strings.Join(set.Provenance.Notes, "\n"), "though not at its maximum")
		if warned != curved {
			t.Errorf("bend %g: notes %q; want a warning of bending over the band %v", bend, set.Provenance.Notes, curved)
		}
		if curved && b.MinR2NM < 500 {
			t.Errorf("bend %g: lowest R² %g at %g nm, want it on the bending band", bend, b.MinR2, b.MinR2NM)
		}
		if !curved && b.MinR2 < 0.999 {
			t.Errorf("straight: lowest R² over the band %g at %g nm", b.MinR2, b.MinR2NM)
		}
	}
}

// TestBandAgreesWithMaximum: at the band wavelength of the lowest R², the
// band-maximum line code (lineTest) on that wavelength's readings gives
// the same R², and on the band maximum's readings it gives the stored
// Linearity; recounting Mandel's flags wavelength by wavelength gives the
// stored count.
func TestBandAgreesWithMaximum(t *testing.T) {
	sh, grid, conc, scan := bandSheet(0.001)
	set, err := Build(sh, Options{Ceiling: 3, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	c := set.Compounds[0]
	b := c.Linearity.Band
	at := func(nm float64) reference.Linearity {
		j := -1
		for i, w := range grid {
			if w == nm {
				j = i
			}
		}
		pts := make([]reference.Point, len(conc))
		for i := range conc {
			pts[i] = reference.Point{Conc: conc[i][0], Absorbance: scan[i][j], Used: true}
		}
		l, err := lineTest(pts, 0)
		if err != nil {
			t.Fatal(err)
		}
		return l
	}
	// Rounding only: the same readings go through the same fit.
	const agreeTol = 1e-12
	if p := at(c.PeakNM); math.Abs(p.R2-c.Linearity.R2) > agreeTol || math.Abs(p.Slope-c.Linearity.Slope) > agreeTol*math.Abs(p.Slope) {
		t.Errorf("at the maximum: R² %g slope %g, stored %g %g", p.R2, p.Slope, c.Linearity.R2, c.Linearity.Slope)
	}
	if l := at(b.MinR2NM); math.Abs(l.R2-b.MinR2) > agreeTol {
		t.Errorf("at %g nm: R² %.15g, band minimum %.15g", b.MinR2NM, l.R2, b.MinR2)
	}
	n, curved := 0, 0
	for j, w := range grid {
		if w < b.LoNM || w > b.HiNM || !c.Usable[j] || c.Absorptivity[j] < reference.BandFraction*peakOf(c) {
			continue
		}
		n++
		l := at(w)
		if l.R2 < b.MinR2-agreeTol {
			t.Errorf("at %g nm R² %g is below the band minimum %g", w, l.R2, b.MinR2)
		}
		if l.Curved {
			curved++
		}
	}
	if n != b.Wavelengths || curved != b.Curved {
		t.Errorf("recounted %d band wavelengths, %d curved; stored %d, %d", n, curved, b.Wavelengths, b.Curved)
	}
}

// peakOf is the largest absorptivity of c.
func peakOf(c reference.Compound) float64 {
	m := 0.0
	for _, v := range c.Absorptivity {
		m = max(m, v)
	}
	return m
}

// TestBandJSON: the band figures survive writing and reading, and a line
// written without them reads back with Band nil.
func TestBandJSON(t *testing.T) {
	sh, _, _, _ := bandSheet(0.001)
	set, err := Build(sh, Options{Ceiling: 3, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	l := set.Compounds[0].Linearity
	b, err := json.Marshal(l)
	if err != nil {
		t.Fatal(err)
	}
	var back reference.Linearity
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if back.Band == nil || *back.Band != *l.Band {
		t.Errorf("band read back as %+v, written %+v", back.Band, l.Band)
	}
	l.Band = nil
	if b, err = json.Marshal(l); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(b), `"band"`) {
		t.Errorf("a line without band figures writes %s", b)
	}
	back = reference.Linearity{}
	if err := json.Unmarshal(b, &back); err != nil || back.Band != nil {
		t.Errorf("read back band %+v, err %v; want nil", back.Band, err)
	}
}
