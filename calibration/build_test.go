package calibration

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"huesolve/baseline"
	"huesolve/internal/near"
	"huesolve/reference"
	"huesolve/spectrum"
)

// band is an invented Gaussian absorption band.
func band(wl []float64, centre, width, height float64) []float64 {
	v := make([]float64, len(wl))
	for i, w := range wl {
		d := (w - centre) / width
		v[i] = height * math.Exp(-d*d/2)
	}
	return v
}

func linGrid(lo, step float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo + step*float64(i)
	}
	return g
}

// memSheet makes a sheet in memory: row i has concentrations conc[i] and
// absorbances scan[i] on grid.
func memSheet(names []string, grid []float64, conc, scan [][]float64) *Sheet {
	sh := &Sheet{Path: "standards.csv", Compounds: names, Units: make([]string, len(names))}
	for i := range conc {
		r := Row{
			File: fmt.Sprintf("std-%02d.csv", i+1), Line: i + 2, Conc: conc[i],
			Scan: &spectrum.Spectrum{Wavelengths: grid, Values: scan[i], Quantity: spectrum.Absorbance,
				Source: spectrum.Source{File: fmt.Sprintf("std-%02d.csv", i+1)}},
			scanSHA256: strings.Repeat("0", 64),
		}
		if allZero(conc[i]) {
			sh.Blanks = append(sh.Blanks, r)
		} else {
			sh.Standards = append(sh.Standards, r)
		}
	}
	return sh
}

// synth makes absorbances A = C K (+ offset) (+ noise) at path 1.
func synth(conc [][]float64, k [][]float64, offset, noise float64, rng *rand.Rand) [][]float64 {
	out := make([][]float64, len(conc))
	for i, c := range conc {
		row := make([]float64, len(k[0]))
		for j := range row {
			row[j] = offset
			for q := range c {
				row[j] += c[q] * k[q][j]
			}
			if rng != nil {
				row[j] += noise * rng.NormFloat64()
			}
		}
		out[i] = row
	}
	return out
}

var fixedNow = func() time.Time { return time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC) }

// TestBuildNorris runs NIST StRD Norris through Build as a one-compound
// calibration (x the concentration, y/norrisScale the absorbance at the
// band maximum; a second wavelength carries half the signal).
//
// Norris's y reaches about 920, far above any absorbance a set may hold
// (reference.MaxCeiling), so it is divided by norrisScale, a power of
// two: the division is exact in binary floating point and every step of
// the fit scales exactly with it, so the certified values divided by the
// same power of two are met to the same digits.
func TestBuildNorris(t *testing.T) {
	const norrisScale = 1024
	x, y := readNorris(t)
	grid := []float64{500, 501}
	conc := make([][]float64, len(x))
	scan := make([][]float64, len(x))
	for i := range x {
		conc[i] = []float64{x[i]}
		scan[i] = []float64{y[i] / norrisScale, y[i] / 2 / norrisScale}
	}
	sh := memSheet([]string{"norris"}, grid, conc, scan)
	set, err := Build(sh, Options{Ceiling: reference.MaxCeiling, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	c := set.Compounds[0]
	if c.PeakNM != 500 {
		t.Fatalf("peak at %g nm, want 500", c.PeakNM)
	}
	// Certified values, NIST StRD Norris (testdata/reference/Norris.dat),
	// at least minLRENorris correct digits (see TestLineNorris).
	lo := near.MaxLRE + 0.0
	for _, v := range []struct {
		name      string
		got, want float64
	}{
		{"absorptivity", c.Absorptivity[0], 1.00211681802045 / norrisScale},
		{"absorptivity SE", c.SE[0], 0.429796848199937e-03 / norrisScale},
		{"intercept", c.Intercept[0], -0.262323073774029 / norrisScale},
		{"noise", set.Noise[0], 0.884796396144373 / norrisScale},
		{"line slope", c.Linearity.Slope, 1.00211681802045 / norrisScale},
		{"line intercept", c.Linearity.Intercept, -0.262323073774029 / norrisScale},
		{"line slope SD", c.Linearity.SlopeSE, 0.429796848199937e-03 / norrisScale},
		{"line intercept SD", c.Linearity.InterceptSE, 0.232818234301152 / norrisScale},
		{"line residual SD", c.Linearity.ResidualSD, 0.884796396144373 / norrisScale},
		{"line R2", c.Linearity.R2, 0.999993745883712},
	} {
		lo = math.Min(lo, near.MinLRE(t, "Norris "+v.name+" (NIST certified)", v.got, v.want, minLRENorris))
	}
	t.Logf("smallest LRE over the NIST certified values: %.1f", lo)
	if c.Linearity.Curved {
		t.Error("Norris flagged curved")
	}
	if set.Provenance.Created != "2026-01-02T03:04:05Z" || len(set.Provenance.Standards) != 36 {
		t.Errorf("provenance: created %q, %d standards", set.Provenance.Created, len(set.Provenance.Standards))
	}
}

var mixNames = []string{"red", "yellow", "blue"}

// trueK is an invented set of overlapping bands on 400-600 nm.
func trueK(grid []float64) [][]float64 {
	return [][]float64{
		band(grid, 500, 25, 0.050),
		band(grid, 430, 20, 0.080),
		add(band(grid, 560, 30, 0.060), band(grid, 480, 15, 0.010)),
	}
}

func add(a, b []float64) []float64 {
	for i := range a {
		a[i] += b[i]
	}
	return a
}

// pureDesign: blanks, then 5 levels of each compound alone, in duplicate.
func pureDesign() [][]float64 {
	c := [][]float64{{0, 0, 0}, {0, 0, 0}}
	for k := range 3 {
		for _, v := range []float64{2, 4, 6, 8, 10} {
			for range 2 {
				r := make([]float64, 3)
				r[k] = v
				c = append(c, r)
			}
		}
	}
	return c
}

// mixedDesign: blanks, then mixtures with the concentrations varied
// independently (a fixed 3-factor layout, levels 0-10).
func mixedDesign() [][]float64 {
	c := [][]float64{{0, 0, 0}, {0, 0, 0}}
	lv := []float64{0, 2, 5, 10}
	for a := range lv {
		for b := range lv {
			cc := lv[(a+2*b)%4]
			if a == 0 && b == 0 {
				continue
			}
			c = append(c, []float64{lv[a], lv[b], cc})
		}
	}
	return c
}

// TestBuildExactK: noise-free mixtures of invented bands give back the
// exact K (the classical K-matrix calibration is exact for exact data).
func TestBuildExactK(t *testing.T) {
	grid := linGrid(400, 2, 101)
	k := trueK(grid)
	for _, through := range []bool{false, true} {
		conc := mixedDesign()
		sh := memSheet(mixNames, grid, conc, synth(conc, k, 0.02, 0, nil))
		set, err := Build(sh, Options{ThroughOrigin: through, Now: fixedNow})
		if err != nil {
			t.Fatal(err)
		}
		for q, c := range set.Compounds {
			for j := range grid {
				// Exact data: only rounding error remains.
				if d := math.Abs(c.Absorptivity[j] - k[q][j]); d > 1e-13 {
					t.Fatalf("through origin %v: %s at %g nm: K = %.17g, want %.17g", through, c.Name, grid[j], c.Absorptivity[j], k[q][j])
				}
			}
		}
		if through && len(set.Compounds[0].Intercept) != 0 {
			t.Error("through-origin set has an intercept")
		}
	}
}

// TestBuildPureVsMixed: pure and mixed designs of the same compounds give
// the same K within their standard errors, and each is within its SE of
// the invented truth.
func TestBuildPureVsMixed(t *testing.T) {
	grid := linGrid(400, 2, 101)
	k := trueK(grid)
	const noise = 0.001
	rng := rand.New(rand.NewPCG(1, 1))
	var sets [2]*reference.Set
	for d, conc := range [][][]float64{pureDesign(), mixedDesign()} {
		sh := memSheet(mixNames, grid, conc, synth(conc, k, 0.03, noise, rng))
		s, err := Build(sh, Options{Now: fixedNow})
		if err != nil {
			t.Fatal(err)
		}
		sets[d] = s
		// The noise model recovers the noise put in: with 11 or more degrees
		// of freedom per wavelength, 101 wavelengths stay within 0.4-1.8
		// times the true SD (chi-square bounds far in the tails).
		for j, v := range s.Noise {
			if v < 0.4*noise || v > 1.8*noise {
				t.Fatalf("design %d: noise at %g nm = %g, want about %g", d, grid[j], v, noise)
			}
		}
	}
	worst := 0.0
	for q := range k {
		for j := range grid {
			a, b := sets[0].Compounds[q], sets[1].Compounds[q]
			z := (a.Absorptivity[j] - b.Absorptivity[j]) / math.Hypot(a.SE[j], b.SE[j])
			worst = max(worst, math.Abs(z))
			for _, s := range []reference.Compound{a, b} {
				if zz := (s.Absorptivity[j] - k[q][j]) / s.SE[j]; math.Abs(zz) > 5 {
					t.Errorf("%s at %g nm: K %g is %.1f SE from the truth %g", s.Name, grid[j], s.Absorptivity[j], zz, k[q][j])
				}
			}
		}
	}
	// 303 comparisons of roughly normal z: 5 is far out in the tail.
	if worst > 5 {
		t.Errorf("pure and mixed designs differ by up to %.1f combined SE", worst)
	}
	for q, c := range sets[0].Compounds {
		if math.Abs(c.PeakNM-[]float64{500, 430, 560}[q]) > 4 {
			t.Errorf("%s: band maximum at %g nm", c.Name, c.PeakNM)
		}
		if c.Linearity.Curved {
			t.Errorf("%s: straight calibration flagged curved (Mandel p %g)", c.Name, c.Linearity.MandelP)
		}
	}
}

// TestBuildPathScaling: Beer-Lambert, A = eps b c (the definition of
// absorptivity). The same scans declared at 2 cm give absorptivities per cm
// exactly half those declared at 1 cm.
func TestBuildPathScaling(t *testing.T) {
	grid := linGrid(400, 2, 101)
	conc := pureDesign()
	sh := memSheet(mixNames, grid, conc, synth(conc, trueK(grid), 0, 0.001, rand.New(rand.NewPCG(2, 2))))
	s1, err := Build(sh, Options{PathCM: 1, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	s2, err := Build(sh, Options{PathCM: 2, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	for q := range s1.Compounds {
		for j := range grid {
			a, b := s1.Compounds[q], s2.Compounds[q]
			if b.Absorptivity[j] != a.Absorptivity[j]/2 || b.SE[j] != a.SE[j]/2 {
				t.Fatalf("%s at %g nm: 2 cm gives %g +- %g, 1 cm %g +- %g; want exactly half",
					a.Name, grid[j], b.Absorptivity[j], b.SE[j], a.Absorptivity[j], a.SE[j])
			}
		}
	}
	if s2.PathCM != 2 {
		t.Errorf("path = %g", s2.PathCM)
	}
}

// TestBuildCurved: a calibration that bends at high concentration (the
// response saturates) is flagged by Mandel's test and its range is cut;
// the same levels on a straight line pass.
func TestBuildCurved(t *testing.T) {
	grid := linGrid(450, 5, 21)
	shape := band(grid, 500, 20, 1)
	levels := []float64{1, 2, 4, 6, 8, 10, 12}
	for _, bend := range []float64{0, 0.004} {
		rng := rand.New(rand.NewPCG(3, 3))
		var conc, scan [][]float64
		conc = append(conc, []float64{0}, []float64{0})
		scan = append(scan, make([]float64, len(grid)), make([]float64, len(grid)))
		for _, c := range levels {
			for range 3 {
				// Peak absorbance 0.12 c - bend c^2: at bend 0.004 the top
				// level reads 0.58 below the line.
				row := make([]float64, len(grid))
				for j := range row {
					row[j] = shape[j]*(0.12*c-bend*c*c) + 0.001*rng.NormFloat64()
				}
				conc = append(conc, []float64{c})
				scan = append(scan, row)
			}
		}
		set, err := Build(memSheet([]string{"dye"}, grid, conc, scan), Options{Ceiling: 3, Now: fixedNow})
		if err != nil {
			t.Fatal(err)
		}
		c := set.Compounds[0]
		l := c.Linearity
		if curved := bend > 0; hasFlag(c.Flags, reference.FlagCurved) != curved {
			t.Errorf("bend %g: flags %v (Mandel F %g, p %g), want curved %v", bend, c.Flags, l.MandelF, l.MandelP, curved)
		}
		// The absorptivities rest on the linear range only.
		if bend > 0 && (l.RangeHi >= 12 || c.MaxStandard != l.RangeHi || len(c.StandardsLeftOut) == 0) {
			t.Errorf("bend %g: range up to %g, highest standard %g, %d standards left out; want the range cut and the fit within it",
				bend, l.RangeHi, c.MaxStandard, len(c.StandardsLeftOut))
		}
		if bend == 0 && (l.RangeLo != 1 || l.RangeHi != 12) {
			t.Errorf("straight: range %g-%g, want 1-12", l.RangeLo, l.RangeHi)
		}
		// Real curvature bends the line at the wavelengths next to the
		// maximum too, so the hit there is confirmed, not merely noted.
		if b := l.Band; bend > 0 && (b == nil || b.PeakNeighboursTested != 2 || b.PeakNeighboursCurved == 0 || l.CurvedUnconfirmed) {
			t.Errorf("bend %g: band %+v, unconfirmed %v; want both neighbours of the maximum tested and curved there", bend, b, l.CurvedUnconfirmed)
		}
	}
}

// TestBuildPeakOnlyCurvature: a straight calibration whose readings at the
// band maximum alone carry a bowed error pattern (invented: +a (c-1)(12-c)
// on top of noise of SD 0.001, as chance deviations can line up) makes
// Mandel's test fire at the maximum only. That hit is noted but neither
// flags the compound nor cuts its range; the same pattern spread over the
// maximum and its neighbours (as real curvature is) flags it.
func TestBuildPeakOnlyCurvature(t *testing.T) {
	grid := linGrid(450, 5, 21)
	shape := band(grid, 500, 20, 1)
	const jp = 10 // 500 nm, the band maximum
	levels := []float64{1, 2, 4, 6, 8, 10, 12}
	for _, spread := range []int{0, 1} {
		rng := rand.New(rand.NewPCG(3, 3))
		var conc, scan [][]float64
		for _, c := range levels {
			for range 3 {
				row := make([]float64, len(grid))
				for j := range row {
					row[j] = 0.12*c*shape[j] + 0.001*rng.NormFloat64()
					if j >= jp-spread && j <= jp+spread {
						// 0.009 at most, mid-range: raises the maximum,
						// so it stays the band maximum.
						row[j] += 0.0003 * (c - 1) * (12 - c)
					}
				}
				conc = append(conc, []float64{c})
				scan = append(scan, row)
			}
		}
		var notes []string
		set, err := Build(memSheet([]string{"dye"}, grid, conc, scan),
			Options{Ceiling: 3, Now: fixedNow, Warn: func(s string) { notes = append(notes, s) }})
		if err != nil {
			t.Fatal(err)
		}
		c := set.Compounds[0]
		l, b := c.Linearity, c.Linearity.Band
		if c.PeakNM != 500 || b == nil || b.PeakNeighboursTested != 2 {
			t.Fatalf("spread %d: band maximum %g nm, band %+v; want 500 nm with both neighbours tested", spread, c.PeakNM, b)
		}
		// The test itself fires at the maximum (with spread 1 the refit
		// within the cut range then passes it, so only spread 0 shows it).
		if spread == 0 && !(l.MandelP < 1-reference.TestLevel) {
			t.Fatalf("spread %d: Mandel p %g at the maximum, want below %g", spread, l.MandelP, 1-reference.TestLevel)
		}
		joined := strings.Join(notes, "\n")
		if spread == 0 {
			if b.PeakNeighboursCurved != 0 {
				t.Fatalf("spread 0: Mandel fires at %d neighbours of the maximum, want none", b.PeakNeighboursCurved)
			}
			if hasFlag(c.Flags, reference.FlagCurved) || l.Curved || !l.CurvedUnconfirmed {
				t.Errorf("maximum only: flags %v, curved %v, unconfirmed %v; want not flagged, noted", c.Flags, l.Curved, l.CurvedUnconfirmed)
			}
			if l.RangeHi != 12 || len(c.StandardsLeftOut) != 0 || c.MaxStandard != 12 {
				t.Errorf("maximum only: range up to %g, %d standards left out; want every level kept", l.RangeHi, len(c.StandardsLeftOut))
			}
			if !strings.Contains(joined, "not confirmed at neighbouring wavelengths") {
				t.Errorf("maximum only: notes %q; want the unconfirmed curvature noted", notes)
			}
		} else {
			if !hasFlag(c.Flags, reference.FlagCurved) || l.CurvedUnconfirmed || l.RangeHi >= 12 {
				t.Errorf("spread over neighbours: flags %v, unconfirmed %v, range up to %g; want flagged and cut", c.Flags, l.CurvedUnconfirmed, l.RangeHi)
			}
			if strings.Contains(joined, "not confirmed") {
				t.Errorf("spread over neighbours: notes %q; want no unconfirmed note", notes)
			}
		}
	}
}

// TestBuildCurvedRefit: a response straight up to 6 and bending above
// (invented: A = 0.1 g(c) at the band maximum, g(c) = c up to 6 and
// c - 0.02 (c-6)^2 above) is refitted on the standards of its linear
// range: the stored absorptivity is the slope of the straight part, a
// sample within the range comes back, and the left-out standards are
// named. With a second, straight compound in mixed standards, the rows
// in which the curved one is above its range are left out for both.
func TestBuildCurvedRefit(t *testing.T) {
	grid := linGrid(450, 5, 21)
	shapeA := band(grid, 500, 20, 1)
	shapeB := band(grid, 540, 25, 1)
	g := func(c float64) float64 {
		if c <= 6 {
			return c
		}
		return c - 0.02*(c-6)*(c-6)
	}
	const slope = 0.1 // absorbance per unit at the band maximum, straight part
	levels := []float64{1, 2, 3, 4, 5, 6, 10, 14, 18}
	rng := rand.New(rand.NewPCG(5, 5))
	var conc, scan [][]float64
	conc = append(conc, []float64{0, 0}, []float64{0, 0})
	scan = append(scan, make([]float64, len(grid)), make([]float64, len(grid)))
	for _, c := range levels {
		for rep := range 3 {
			// Replicate 0 pure A, 1 pure B, 2 a mixture of both.
			ca, cb := c, 0.0
			switch rep {
			case 1:
				ca, cb = 0, c/2
			case 2:
				cb = 3
			}
			row := make([]float64, len(grid))
			for j := range row {
				row[j] = shapeA[j]*slope*g(ca) + shapeB[j]*0.08*cb + 0.0005*rng.NormFloat64()
			}
			conc = append(conc, []float64{ca, cb})
			scan = append(scan, row)
		}
	}
	var warned []string
	set, err := Build(memSheet([]string{"bent", "straight"}, grid, conc, scan),
		Options{Ceiling: 3, Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	a := set.Compounds[0]
	l := a.Linearity
	if !hasFlag(a.Flags, reference.FlagCurved) || l.RangeHi < 6 || l.RangeHi >= 18 || a.MaxStandard != l.RangeHi {
		t.Fatalf("flags %v, range %g-%g, highest standard %g: want curved, range ending at 6-14 and the fit within it",
			a.Flags, l.RangeLo, l.RangeHi, a.MaxStandard)
	}
	for _, p := range l.Data {
		if p.Used && p.Conc > l.RangeHi {
			t.Errorf("reading at %g above the range %g used", p.Conc, l.RangeHi)
		}
	}
	// The straight part: every standard up to RangeHi lies on A = 0.1 c
	// only when RangeHi is 6; above, g bends by at most 0.02 (RangeHi-6)^2.
	j := 10 // 500 nm, the band maximum of "bent"
	if a.PeakNM != 500 {
		t.Fatalf("band maximum %g nm, want 500", a.PeakNM)
	}
	bias := 0.02 * (l.RangeHi - 6) * (l.RangeHi - 6) / l.RangeHi // relative, at most
	if got := a.Absorptivity[j]; math.Abs(got-slope) > 4*a.SE[j]+bias*slope {
		t.Errorf("absorptivity at 500 nm %.5f ± %.5f, want the straight part's %g", got, a.SE[j], slope)
	}
	// A sample of 4 units (within the range) comes back: least squares of
	// its blank-corrected scan minus the intercept on the absorptivity
	// spectrum of "bent" (alone in the sample).
	num, den := 0.0, 0.0
	for i := range grid {
		v := shapeA[i]*slope*4 - a.Intercept[i]
		num += v * a.Absorptivity[i]
		den += a.Absorptivity[i] * a.Absorptivity[i]
	}
	if c := num / den; math.Abs(c-4) > 0.02*4 {
		t.Errorf("sample of 4 found at %.4f", c)
	}
	// Every row holding "bent" above the range is left out (the mixtures
	// too), and the warning names levels and files.
	want := 0
	for _, c := range conc {
		if c[0] > l.RangeHi {
			want++
		}
	}
	if len(a.StandardsLeftOut) != want {
		t.Errorf("%d standards left out, want %d", len(a.StandardsLeftOut), want)
	}
	all := strings.Join(warned, "\n")
	if !strings.Contains(all, "bent: the absorptivities rest on the standards up to") || !strings.Contains(all, "left out levels") ||
		!strings.Contains(all, "18") || !strings.Contains(all, "(sheet line ") || !strings.Contains(all, " more") {
		t.Errorf("warnings %q", warned)
	}
	if b := set.Compounds[1]; hasFlag(b.Flags, reference.FlagCurved) || math.Abs(b.Absorptivity[18]-0.08*shapeB[18]) > 4*b.SE[18] {
		t.Errorf("straight compound: flags %v, absorptivity at %g nm %g ± %g, want %g", b.Flags, grid[18], b.Absorptivity[18], b.SE[18], 0.08*shapeB[18])
	}
}

// TestBuildNotLinear: a response that bends over every level keeps the
// curved flag and is said to be not quantifiable linearly.
func TestBuildNotLinear(t *testing.T) {
	grid := linGrid(450, 5, 21)
	shape := band(grid, 500, 20, 1)
	rng := rand.New(rand.NewPCG(7, 7))
	var conc, scan [][]float64
	conc = append(conc, []float64{0})
	scan = append(scan, make([]float64, len(grid)))
	for _, c := range []float64{2, 4, 6, 8} {
		for range 4 {
			row := make([]float64, len(grid))
			for j := range row {
				// Strongly saturating: 0.3 c / (1 + 0.15 c).
				row[j] = shape[j]*0.3*c/(1+0.15*c) + 0.0002*rng.NormFloat64()
			}
			conc = append(conc, []float64{c})
			scan = append(scan, row)
		}
	}
	var warned []string
	set, err := Build(memSheet([]string{"dye"}, grid, conc, scan),
		Options{Ceiling: 3, Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if c := set.Compounds[0]; !hasFlag(c.Flags, reference.FlagCurved) || !strings.Contains(strings.Join(warned, "\n"), "cannot be quantified linearly") {
		t.Errorf("flags %v, warnings %q", c.Flags, warned)
	}
}

// TestBuildNarrowScans: a standard or two covering less than the others
// limit the grid; the note names them, their sheet lines and ranges, and
// the range the others share. Many are counted after the first five.
func TestBuildNarrowScans(t *testing.T) {
	wide := linGrid(400, 2, 151) // 400-700 nm
	k := [][]float64{band(wide, 550, 30, 0.1)}
	conc := [][]float64{{0}, {1}, {2}, {3}, {4}, {5}, {6}, {7}, {8}, {9}, {10}}
	narrow := func(sh *Sheet, i int, lo, hi float64) {
		g := linGrid(lo, 2, int((hi-lo)/2)+1)
		sh.Standards[i].Scan = &spectrum.Spectrum{Wavelengths: g, Values: scale(band(g, 550, 30, 0.1), conc[i+1][0])}
	}
	sh := memSheet([]string{"dye"}, wide, conc, synth(conc, k, 0, 0, nil))
	narrow(sh, 3, 450, 650)
	narrow(sh, 6, 420, 700)
	var warned []string
	set, err := Build(sh, Options{Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if set.Grid[0] != 450 || set.Grid[len(set.Grid)-1] != 650 {
		t.Errorf("grid %g-%g nm, want 450-650", set.Grid[0], set.Grid[len(set.Grid)-1])
	}
	want := "the grid is limited to 450-650 nm, the range all scans share, by the scan std-05.csv (sheet line 6, 450-650 nm); the other scans share 420-700 nm"
	if all := strings.Join(warned, "\n"); !strings.Contains(all, want) {
		t.Errorf("warnings %q, want %q", warned, want)
	}
	// Seven narrow scans: five named, two counted.
	sh = memSheet([]string{"dye"}, wide, conc, synth(conc, k, 0, 0, nil))
	for i := 1; i < 8; i++ {
		narrow(sh, i, 450, 700)
	}
	warned = nil
	if _, err := Build(sh, Options{Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }}); err != nil {
		t.Fatal(err)
	}
	if all := strings.Join(warned, "\n"); !strings.Contains(all, "std-07.csv (sheet line 8, 450-700 nm), and 2 more; the other scans share 400-700 nm") {
		t.Errorf("warnings %q", warned)
	}
}

// TestBuildNearlyCollinearDesign: concentrations that rise nearly
// together in every standard are accepted (condition number below the
// refusal limit) with a warning; the pure standards of the other tests
// get none.
func TestBuildNearlyCollinearDesign(t *testing.T) {
	grid := linGrid(400, 5, 41)
	k := trueK(grid)[:2]
	var conc [][]float64
	conc = append(conc, []float64{0, 0})
	for i := 1; i <= 8; i++ {
		// 5 % apart: the eight standards' column-scaled design with its
		// intercept has condition number 48.3 (NumPy 1.24.2 SVD, run by
		// hand; the blank row is not in the fit).
		d := 0.05
		if i%2 == 0 {
			d = -d
		}
		conc = append(conc, []float64{float64(i), float64(i) * (1 + d)})
	}
	rng := rand.New(rand.NewPCG(9, 9))
	var warned []string
	_, err := Build(memSheet(mixNames[:2], grid, conc, synth(conc, k, 0, 0.0005, rng)),
		Options{Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	all := strings.Join(warned, "\n")
	if !strings.Contains(all, "standards.csv: the concentrations of red, yellow and the intercept vary nearly together across the standards (condition number 48.3, above 30)") {
		t.Errorf("no warning of a nearly collinear design in %q", warned)
	}
	conc = [][]float64{{0, 0}, {1, 0}, {2, 0}, {3, 0}, {0, 1}, {0, 2}, {0, 3}}
	warned = nil
	if _, err := Build(memSheet(mixNames[:2], grid, conc, synth(conc, k, 0, 0.0005, rng)),
		Options{Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }}); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(strings.Join(warned, "\n"), "nearly together") {
		t.Errorf("pure standards warned about: %q", warned)
	}
}

func hasFlag(flags []reference.Flag, f reference.Flag) bool {
	for _, x := range flags {
		if x == f {
			return true
		}
	}
	return false
}

// TestBuildCeiling: readings above the ceiling are left out and counted;
// a wavelength where fewer than 3 levels stay under it is unusable.
func TestBuildCeiling(t *testing.T) {
	grid := linGrid(450, 5, 21)
	k := [][]float64{band(grid, 500, 20, 0.5)}
	conc := [][]float64{{0}, {1}, {2}, {3}, {4}, {5}, {6}}
	var warned []string
	set, err := Build(memSheet([]string{"dye"}, grid, conc, synth(conc, k, 0, 0, nil)),
		Options{Ceiling: 1.2, Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	c := set.Compounds[0]
	// At 500 nm only levels 1 and 2 read <= 1.2 (0.5 per unit): unusable.
	j500 := 10
	if c.Usable[j500] {
		t.Errorf("usable at 500 nm with 2 levels under the ceiling")
	}
	// Far out on the band every level is under the ceiling.
	if !c.Usable[0] || c.LeftOut == 0 || !hasFlag(c.Flags, reference.FlagAboveCeiling) {
		t.Errorf("usable[450 nm] %v, left out %d, flags %v", c.Usable[0], c.LeftOut, c.Flags)
	}
	if c.PeakNM == 500 {
		t.Error("the band maximum was taken where the compound is unusable")
	}
	if len(warned) == 0 || !strings.Contains(strings.Join(warned, "\n"), "above the ceiling") {
		t.Errorf("warnings %q do not mention the ceiling", warned)
	}
}

// TestBuildGrids: scans on other grids are interpolated onto the first
// standard's grid within the shared range, and Build says so.
func TestBuildGrids(t *testing.T) {
	fine := linGrid(400, 1, 201)
	coarse := linGrid(390, 2, 111) // 390-610 nm
	k := [][]float64{band(fine, 500, 30, 0.1)}
	conc := [][]float64{{0}, {1}, {2}, {3}, {4}, {5}}
	sh := memSheet([]string{"dye"}, fine, conc, synth(conc, k, 0, 0, nil))
	// Standard 3 on the coarse grid: a straight-line-exact function would
	// survive interpolation; a Gaussian nearly does at 2 nm.
	sh.Standards[2].Scan = &spectrum.Spectrum{Wavelengths: coarse, Values: scale(band(coarse, 500, 30, 0.1), 3)}
	var warned []string
	set, err := Build(sh, Options{Now: fixedNow, Warn: func(m string) { warned = append(warned, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if !spectrum.SameGrid(set.Grid, fine) {
		t.Errorf("grid %g-%g nm (%d points), want the first standard's", set.Grid[0], set.Grid[len(set.Grid)-1], len(set.Grid))
	}
	// The note names the scan it interpolated, with its sheet line.
	if all := strings.Join(warned, "\n"); !strings.Contains(all, "1 of 6 scans was on other wavelength grids") ||
		!strings.Contains(all, ": std-04.csv (sheet line 5)") {
		t.Errorf("interpolation note %q does not name std-04.csv", warned)
	}
	// Window inside both.
	set, err = Build(sh, Options{WindowLo: 450, WindowHi: 550, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	if set.Grid[0] != 450 || set.Grid[len(set.Grid)-1] != 550 || len(set.Grid) != 101 {
		t.Errorf("window grid %g-%g nm, %d points", set.Grid[0], set.Grid[len(set.Grid)-1], len(set.Grid))
	}
}

func scale(v []float64, f float64) []float64 {
	for i := range v {
		v[i] *= f
	}
	return v
}

// TestBuildBlank: the mean of the blank rows (or a separate blank) is
// subtracted, so a through-origin fit of offset data is exact.
func TestBuildBlank(t *testing.T) {
	grid := linGrid(400, 2, 101)
	k := trueK(grid)
	conc := pureDesign()
	scans := synth(conc, k, 0.05, 0, nil) // 0.05 from solvent and cell in every scan
	sh := memSheet(mixNames, grid, conc, scans)
	for _, sep := range []bool{false, true} {
		opt := Options{ThroughOrigin: true, Now: fixedNow}
		if sep {
			opt.Blank = &spectrum.Spectrum{Wavelengths: grid, Values: scans[0], Quantity: spectrum.Absorbance,
				Source: spectrum.Source{File: "blank.csv"}}
		}
		set, err := Build(sh, opt)
		if err != nil {
			t.Fatal(err)
		}
		for q, c := range set.Compounds {
			for j := range grid {
				if d := math.Abs(c.Absorptivity[j] - k[q][j]); d > 1e-13 {
					t.Fatalf("separate blank %v: %s at %g nm: %g, want %g", sep, c.Name, grid[j], c.Absorptivity[j], k[q][j])
				}
			}
		}
		if want := map[bool]string{false: "sheet rows", true: "blank.csv"}[sep]; set.Provenance.Blank != want {
			t.Errorf("provenance blank %q, want %q", set.Provenance.Blank, want)
		}
	}
}

func TestBuildErrors(t *testing.T) {
	grid := linGrid(400, 2, 101)
	k := trueK(grid)
	base := func() [][]float64 { return pureDesign() }
	cases := []struct {
		name string
		conc func() [][]float64
		edit func(sh *Sheet, opt *Options)
		want error
		in   string // the message must name this
	}{
		{"negative", base, func(sh *Sheet, _ *Options) { sh.Standards[3].Conc[1] = -1 }, errConcentration, "standards.csv:7"},
		{"never varies", func() [][]float64 {
			c := base()
			for i := range c {
				c[i][2] = 0
				if allZero(c[i]) {
					c[i][0] = 1
				}
			}
			return c
		}, nil, errNoVariation, "blue"},
		{"same ratio", func() [][]float64 {
			var c [][]float64
			for _, v := range []float64{0, 1, 2, 3, 4, 5, 6} {
				c = append(c, []float64{v, 2 * v, 5 - 0.5*v})
			}
			return c
		}, nil, errDesign, "concentrations of red, yellow, blue and the intercept are linearly dependent"},
		{"nearly same ratio", func() [][]float64 {
			var c [][]float64
			for i, v := range []float64{1, 2, 3, 4, 5, 6, 7} {
				c = append(c, []float64{v, v * (1 + 1e-5*float64(i%2)), float64(i % 3)})
			}
			return c
		}, nil, errDesign, "condition number"},
		{"window", base, func(_ *Sheet, opt *Options) { opt.WindowLo, opt.WindowHi = 380, 550 }, errWindow, "standards.csv:4: scan does not cover the window: std-03.csv covers 400-600 nm"},
		{"too few", func() [][]float64 { return [][]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}, {1, 1, 1}} }, nil, errTooFewStandards, "standards"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			conc := c.conc()
			sh := memSheet(mixNames, grid, conc, synth(conc, k, 0, 0, nil))
			opt := Options{Now: fixedNow}
			if c.edit != nil {
				c.edit(sh, &opt)
			}
			_, err := Build(sh, opt)
			if !errors.Is(err, c.want) {
				t.Fatalf("Build = %v, want %v", err, c.want)
			}
			if !strings.Contains(err.Error(), c.in) {
				t.Errorf("error %q does not name %q", err, c.in)
			}
		})
	}
}

// TestBuildPretreat: a baseline offset that differs from scan to scan is
// removed by zeroing on a region where no compound absorbs, and the step is
// kept in the set for the samples.
func TestBuildPretreat(t *testing.T) {
	grid := linGrid(400, 2, 201) // 400-800 nm; the bands are below 1e-12 per unit above 780 nm
	k := trueK(grid)
	conc := pureDesign()
	scans := synth(conc, k, 0, 0, nil)
	for i := range scans {
		for j := range scans[i] {
			scans[i][j] += 0.003 * float64(i%5) // drift of the baseline
		}
	}
	step, err := baseline.ParseStep("zero:780-800")
	if err != nil {
		t.Fatal(err)
	}
	set, err := Build(memSheet(mixNames, grid, conc, scans), Options{ThroughOrigin: true, Pretreat: []baseline.Step{step}, Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	for q, c := range set.Compounds {
		for j := range grid {
			// Exact data after zeroing: rounding error only.
			if d := math.Abs(c.Absorptivity[j] - k[q][j]); d > 1e-12 {
				t.Fatalf("%s at %g nm: %g, want %g", c.Name, grid[j], c.Absorptivity[j], k[q][j])
			}
		}
	}
	if len(set.Pretreat) != 1 || set.Pretreat[0] != step {
		t.Errorf("pretreat kept as %v", set.Pretreat)
	}
}

// BenchmarkBuild times Build on pure-standard designs of three compounds
// over grids of several sizes.
func BenchmarkBuild(b *testing.B) {
	for _, n := range []int{101, 401, 1601} {
		b.Run(fmt.Sprintf("points=%d", n), func(b *testing.B) {
			grid := linGrid(400, 400/float64(n-1), n)
			conc := pureDesign()
			sh := memSheet(mixNames, grid, conc, synth(conc, trueK(grid), 0.01, 0.001, rand.New(rand.NewPCG(1, 1))))
			for b.Loop() {
				if _, err := Build(sh, Options{Now: fixedNow}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/wavelength")
		})
	}
}

// TestBuildSmoothingNextToCeiling: with a Savitzky-Golay step, a reading
// above the ceiling also spoils the smoothed values next to it. Standards
// whose top levels are clipped (a flat 2.3, as a saturated detector reads)
// must give the same absorptivities as the unclipped standards wherever
// the compound stays usable: noise-free data fit exactly on any subset of
// levels, so only leaked clipped values could make them differ.
func TestBuildSmoothingNextToCeiling(t *testing.T) {
	grid := linGrid(400, 1, 201)
	k := [][]float64{band(grid, 500, 20, 0.5)}
	conc := [][]float64{{0}, {1}, {2}, {3}, {4}, {5}, {6}, {7}, {8}}
	clean := synth(conc, k, 0, 0, nil)
	clipped := make([][]float64, len(clean))
	for i, row := range clean {
		clipped[i] = append([]float64(nil), row...)
		for j, v := range clipped[i] {
			if v > 2 {
				clipped[i][j] = 2.3
			}
		}
	}
	step, err := baseline.ParseStep("sg:11,2,1")
	if err != nil {
		t.Fatal(err)
	}
	opt := Options{Ceiling: 2, Pretreat: []baseline.Step{step}, ThroughOrigin: true, Now: fixedNow}
	want, err := Build(memSheet([]string{"dye"}, grid, conc, clean), opt)
	if err != nil {
		t.Fatal(err)
	}
	got, err := Build(memSheet([]string{"dye"}, grid, conc, clipped), opt)
	if err != nil {
		t.Fatal(err)
	}
	g, w := got.Compounds[0], want.Compounds[0]
	scale := 0.0
	for _, v := range w.Absorptivity {
		scale = max(scale, math.Abs(v))
	}
	checked := 0
	for j := range grid {
		if !g.Usable[j] || !w.Usable[j] {
			continue
		}
		checked++
		if d := math.Abs(g.Absorptivity[j] - w.Absorptivity[j]); d > 1e-9*scale {
			t.Errorf("%g nm: absorptivity %g from clipped standards, %g from clean ones", grid[j], g.Absorptivity[j], w.Absorptivity[j])
		}
	}
	if checked < 100 {
		t.Errorf("only %d wavelengths compared", checked)
	}
}
