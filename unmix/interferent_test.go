package unmix

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"huesolve/baseline"
	"huesolve/spectrum"
)

// autoInterferent is an invented coloured impurity overlapping the
// second and third dyes: a band at 515 nm, 1.0 at its peak in its own scan.
func autoInterferent(l float64) float64 {
	d := (l - 515) / 35
	return math.Exp(-0.5 * d * d)
}

func interferentScan(lo, hi float64) *spectrum.Spectrum {
	var wl, v []float64
	for l := lo; l <= hi; l++ {
		wl = append(wl, l)
		v = append(v, autoInterferent(l))
	}
	return &spectrum.Spectrum{Name: "impurity", Wavelengths: wl, Values: v, Quantity: spectrum.Absorbance,
		Source: spectrum.Source{File: "impurity.csv", Column: 2}}
}

// TestInterferentRemovesBias: 60 invented mixtures holding an impurity
// (0.1-0.4 of its scan) come out, with the impurity's scan given, within
// 25 % of the RMSE of the same mixtures without the impurity fitted on the
// same design (the bias is gone; the extra column's own cost in variance,
// which depends on the overlap, is logged against the design without it),
// and its amount is found; without the scan they are flagged.
func TestInterferentRemovesBias(t *testing.T) {
	it, err := NewInterferent(interferentScan(340, 760), "")
	if err != nil {
		t.Fatal(err)
	}
	with, err := NewModel(autoSet(), Options{Interferents: []Interferent{it}})
	if err != nil {
		t.Fatal(err)
	}
	without, err := NewModel(autoSet(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := with.Interferents(); !slices.Equal(got, []string{"impurity"}) {
		t.Fatalf("interferents %v", got)
	}
	rng := rand.New(rand.NewPCG(16, 1))
	var ssWith, ssClean, ssSame, ssBlind float64
	flagged := 0
	const n = 60
	for range n {
		conc := make([]float64, 4)
		for k := range conc {
			conc[k] = 1 + 9*rng.Float64()
		}
		amt := 0.1 + 0.3*rng.Float64()
		seed := rng.Uint64()
		clean := autoSample(rand.New(rand.NewPCG(seed, 2)), conc, autoTrouble{})
		dirty := autoSample(rand.New(rand.NewPCG(seed, 2)), conc, autoTrouble{})
		for i, l := range dirty.Wavelengths {
			dirty.Values[i] += amt * autoInterferent(l)
		}
		rw, err := with.Solve(dirty, Factors{})
		if err != nil {
			t.Fatal(err)
		}
		rc, err := without.Solve(clean, Factors{})
		if err != nil {
			t.Fatal(err)
		}
		rs, err := with.Solve(clean, Factors{})
		if err != nil {
			t.Fatal(err)
		}
		rb, err := without.Solve(dirty, Factors{})
		if err != nil {
			t.Fatal(err)
		}
		for k := range conc {
			ssWith += sq(rw.Amounts[k].Conc - conc[k])
			ssClean += sq(rc.Amounts[k].Conc - conc[k])
			ssSame += sq(rs.Amounts[k].Conc - conc[k])
			ssBlind += sq(rb.Amounts[k].Conc - conc[k])
		}
		if got := rw.Interferents[0].Amount; math.Abs(got-amt) > 0.02*amt+4*rw.Interferents[0].SE {
			t.Errorf("impurity amount %g ± %g, put in %g", got, rw.Interferents[0].SE, amt)
		}
		if slices.Contains(rb.Flags, FlagMisfit) || slices.Contains(rb.Flags, FlagPattern) {
			flagged++
		}
	}
	rmse := func(ss float64) float64 { return math.Sqrt(ss / (4 * n)) }
	t.Logf("RMSE with the impurity's scan %.4g; clean samples on the same design %.4g, without the impurity's column %.4g; impurity not given %.4g; flagged without it %d of %d",
		rmse(ssWith), rmse(ssSame), rmse(ssClean), rmse(ssBlind), flagged, n)
	if rmse(ssWith) > 1.25*rmse(ssSame) {
		t.Errorf("RMSE with the scan %.4g more than 25 %% above the clean samples' %.4g", rmse(ssWith), rmse(ssSame))
	}
	if flagged < n*9/10 {
		t.Errorf("without the scan only %d of %d samples flagged", flagged, n)
	}
}

func sq(x float64) float64 { return x * x }

// TestInterferentRefused: a scan that does not cover the window, and one
// that is a copy of a compound, are refused naming the interferent (and
// the compound).
func TestInterferentRefused(t *testing.T) {
	short, err := NewInterferent(interferentScan(400, 760), "short.csv")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := NewModel(autoSet(), Options{Interferents: []Interferent{short}}); err == nil || !strings.Contains(err.Error(), "short.csv") {
		t.Errorf("short scan: %v", err)
	}
	set := autoSet()
	cp := &spectrum.Spectrum{Wavelengths: set.Grid, Values: slices.Clone(set.Compounds[2].Absorptivity), Quantity: spectrum.Absorbance}
	dup, err := NewInterferent(cp, "copy.csv")
	if err != nil {
		t.Fatal(err)
	}
	_, err = NewModel(set, Options{Interferents: []Interferent{dup}})
	if err == nil || !strings.Contains(err.Error(), "copy.csv") || !strings.Contains(err.Error(), "orchid") {
		t.Errorf("copy of a compound: %v", err)
	}
}

// TestInterferentSingularRefused: an interferent that is a combination of
// compounds, or of a compound and the offset, makes the design singular
// (no pair of columns alike, so the near-copy check alone lets it
// through); it is refused naming the interferent and what it duplicates.
// One well apart from them is accepted.
func TestInterferentSingularRefused(t *testing.T) {
	set := autoSet()
	g := set.Grid
	mk := func(name string, f func(i int) float64) Interferent {
		v := make([]float64, len(g))
		for i := range g {
			v[i] = f(i)
		}
		it, err := NewInterferent(&spectrum.Spectrum{Wavelengths: g, Values: v, Quantity: spectrum.Absorbance}, name)
		if err != nil {
			t.Fatal(err)
		}
		return it
	}
	ab := func(k, i int) float64 { return set.Compounds[k].Absorptivity[i] }
	cases := []struct {
		name string
		it   Interferent
		opt  Options
		want []string
	}{
		{"two compounds", mk("mix.csv", func(i int) float64 { return 2*ab(0, i) + 3*ab(3, i) }), fixedModel(t, "none", false),
			[]string{"mix.csv", "compound citrine", "compound cobalt", "duplicates"}},
		{"compound and offset", mk("base.csv", func(i int) float64 { return 5*ab(1, i) + 0.2 }), fixedModel(t, "offset", false),
			[]string{"base.csv", "compound coral", "the baseline terms"}},
		{"flat, with the automatic model", mk("flat.csv", func(int) float64 { return 0.3 }), Options{Auto: true},
			[]string{"flat.csv", "the baseline terms"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			c.opt.Interferents = []Interferent{c.it}
			_, err := NewModel(set, c.opt)
			if err == nil {
				t.Fatal("accepted")
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q lacks %q", err, w)
				}
			}
			if strings.Contains(err.Error(), "orchid") {
				t.Errorf("error %q names orchid, which the interferent does not hold", err)
			}
		})
	}
	ok := mk("haze.csv", func(i int) float64 { return autoInterferent(g[i]) })
	if _, err := NewModel(set, Options{Auto: true, Interferents: []Interferent{ok}}); err != nil {
		t.Errorf("an interferent apart from the compounds: %v", err)
	}
}

// TestStoredInterferents: interferents a reference set stores are fitted
// in every model of the set, before those given, as if given; a given
// one with a stored one's name is refused naming it.
func TestStoredInterferents(t *testing.T) {
	it, err := NewInterferent(interferentScan(350, 750), "impurity.csv")
	if err != nil {
		t.Fatal(err)
	}
	given := mustModel(t, autoSet(), Options{Auto: true, Interferents: []Interferent{it}})
	set := autoSet()
	set.Interferents = append(set.Interferents, it.ToStored("scans/impurity.csv", strings.Repeat("ab", 32)))
	stored := mustModel(t, set, Options{Auto: true})
	if got := stored.Interferents(); !slices.Equal(got, []string{"impurity.csv"}) {
		t.Fatalf("stored model's interferents %q", got)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for range 5 {
		conc := []float64{2 + rng.Float64(), 3, 4, 5}
		s := autoSample(rng, conc, autoTrouble{})
		for i, l := range s.Wavelengths {
			s.Values[i] += 0.3 * autoInterferent(l)
		}
		a, b := mustSolve(t, given, s, Factors{}), mustSolve(t, stored, s, Factors{})
		if a.Interferents[0] != b.Interferents[0] || a.Amounts[0].Conc != b.Amounts[0].Conc {
			t.Errorf("given %+v %g, stored %+v %g: want the same fit", a.Interferents[0], a.Amounts[0].Conc, b.Interferents[0], b.Amounts[0].Conc)
		}
	}
	if _, err := NewModel(set, Options{Interferents: []Interferent{it}}); err == nil || !strings.Contains(err.Error(), "impurity.csv is given twice") {
		t.Errorf("the stored interferent given again: %v", err)
	}
}

// TestInterferentPretreated: with a pre-treated reference set (a
// Savitzky-Golay first derivative: the set's absorptivities are of
// derivative spectra, as calibrate makes them), the impurity's scan is
// pre-treated as the samples are before it enters the design. Raw, its
// shape beside derivative absorptivities fitted something else; now the
// mixtures holding the impurity come out within 25 % of the RMSE of the
// same mixtures without it (as TestInterferentRemovesBias asks without
// pre-treatment), and its amount is found. A scan that does not cover
// the set's whole grid is refused, naming the pre-treatment.
func TestInterferentPretreated(t *testing.T) {
	steps := []baseline.Step{{Kind: "sg", Window: 11, Order: 2, Deriv: 1}}
	set := autoSet()
	set.Pretreat = steps
	for k := range set.Compounds {
		c := &set.Compounds[k]
		d, err := baseline.ApplyAll(steps, set.Grid, c.Absorptivity)
		if err != nil {
			t.Fatal(err)
		}
		c.Absorptivity = d
	}
	it, err := NewInterferent(interferentScan(340, 760), "")
	if err != nil {
		t.Fatal(err)
	}
	m, err := NewModel(set, Options{Interferents: []Interferent{it}})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(17, 1))
	var ssDirty, ssClean float64
	const n = 40
	for range n {
		conc := make([]float64, 4)
		for k := range conc {
			conc[k] = 1 + 9*rng.Float64()
		}
		amt := 0.1 + 0.3*rng.Float64()
		seed := rng.Uint64()
		clean := autoSample(rand.New(rand.NewPCG(seed, 2)), conc, autoTrouble{})
		dirty := autoSample(rand.New(rand.NewPCG(seed, 2)), conc, autoTrouble{})
		for i, l := range dirty.Wavelengths {
			dirty.Values[i] += amt * autoInterferent(l)
		}
		rd, err := m.Solve(dirty, Factors{})
		if err != nil {
			t.Fatal(err)
		}
		rc, err := m.Solve(clean, Factors{})
		if err != nil {
			t.Fatal(err)
		}
		for k := range conc {
			ssDirty += sq(rd.Amounts[k].Conc - conc[k])
			ssClean += sq(rc.Amounts[k].Conc - conc[k])
		}
		if got := rd.Interferents[0].Amount; math.Abs(got-amt) > 0.05*amt+4*rd.Interferents[0].SE {
			t.Errorf("impurity amount %g ± %g, put in %g", got, rd.Interferents[0].SE, amt)
		}
	}
	rmse := func(ss float64) float64 { return math.Sqrt(ss / (4 * n)) }
	t.Logf("RMSE with the impurity %.4g, without %.4g", rmse(ssDirty), rmse(ssClean))
	if rmse(ssDirty) > 1.25*rmse(ssClean) {
		t.Errorf("RMSE with the impurity %.4g more than 25 %% above the clean samples' %.4g", rmse(ssDirty), rmse(ssClean))
	}
	short, err := NewInterferent(interferentScan(400, 700), "")
	if err != nil {
		t.Fatal(err)
	}
	_, err = NewModel(set, Options{Interferents: []Interferent{short}, WindowLo: 450, WindowHi: 650})
	if err == nil || !strings.Contains(err.Error(), "pre-treatment (") || !strings.Contains(err.Error(), "impurity") {
		t.Errorf("a scan short of the pre-treated set's grid: %v", err)
	}
}
