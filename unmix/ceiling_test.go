package unmix

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// ceilingSample is an invented mixture of autoSet's dyes, coral so
// concentrated that its band's true height is A = 3, read by an invented
// detector whose stray light caps what it can tell: where the true
// absorbance is above 2.4 the reading is noise around A = 2 (sd 0.15), so
// about half of those readings fall below the ceiling of 2 although the
// truth there is 2.4-3. Elsewhere the reading is the truth plus the
// usual noise.
func ceilingSample(rng *rand.Rand, conc []float64) *spectrum.Spectrum {
	g := autoGrid()
	v := make([]float64, len(g))
	for i, l := range g {
		a := 0.005
		for k, c := range conc {
			a += c * autoBand(k, l)
		}
		if a > 2.4 {
			v[i] = 2 + 0.15*rng.NormFloat64()
		} else {
			v[i] = a + autoNoiseAU*rng.NormFloat64()
		}
	}
	return &spectrum.Spectrum{Name: "dark", Wavelengths: g, Values: v, Quantity: spectrum.Absorbance,
		Source: spectrum.Source{File: "dark.csv", Column: 2}}
}

// TestPredictedAboveCeilingLeftOut: points that read below the ceiling
// but that the fit predicts above it are left out (settleCeiling), so a
// band whose true height is above the ceiling gives the right
// concentrations although some of its readings dip below the ceiling.
// Kept, those readings (about 2 where the truth is 2.4-3) pull coral's
// amount down by several per cent; left out, coral comes back within
// 0.5 % of the truth and every compound within 4.5 standard errors, with the fixed model and the automatic one,
// plain and weighted, and with an interferent fitted beside them.
func TestPredictedAboveCeilingLeftOut(t *testing.T) {
	haze, err := NewInterferent(&spectrum.Spectrum{Wavelengths: autoGrid(), Values: func() []float64 {
		v := make([]float64, len(autoGrid()))
		for i, l := range autoGrid() {
			d := (l - 660) / 40
			v[i] = 0.1 * math.Exp(-0.5*d*d)
		}
		return v
	}(), Quantity: spectrum.Absorbance}, "haze.csv")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		opt  Options
	}{
		{"offset", fixedModel(t, "offset", false)},
		{"auto", Options{Auto: true}},
		{"auto weighted", Options{Auto: true, Weighted: true}},
		{"offset shift", fixedModel(t, "offset", true)},
		{"offset interferent", func() Options { o := fixedModel(t, "offset", false); o.Interferents = []Interferent{haze}; return o }()},
	}
	const (
		tol  = 0.005 // coral's relative error
		zTol = 4.5   // any compound's error in standard errors (100 amounts: 4.5 SE by chance in about 1 in 1,000 runs)
	)
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m := mustModel(t, autoSet(), tc.opt)
			rng := rand.New(rand.NewPCG(5, 1))
			worst, worstZ := 0.0, 0.0 // coral's relative error; every compound's error over its SE
			for range 20 {
				conc := []float64{4 + 4*rng.Float64(), 5 + 4*rng.Float64(), 60, 3 + 4*rng.Float64()}
				s := ceilingSample(rng, conc)
				read := 0 // points read above the ceiling in the window
				for i, l := range s.Wavelengths {
					if l >= m.Window()[0] && l <= m.Window()[len(m.Window())-1] && s.Values[i] > 2 {
						read++
					}
				}
				r := mustSolve(t, m, s, Factors{})
				for k, a := range r.Amounts {
					worstZ = math.Max(worstZ, math.Abs(a.Conc-conc[k])/a.SE)
				}
				worst = math.Max(worst, math.Abs(r.Amounts[2].Conc-conc[2])/conc[2])
				if r.Dropped <= read {
					t.Errorf("%d points dropped, no more than the %d read above the ceiling", r.Dropped, read)
				}
				if !slices.Contains(r.Flags, FlagSaturated) {
					t.Errorf("flags %v lack sat", r.Flags)
				}
			}
			t.Logf("coral: worst relative error %.4g; worst error over SE %.3g", worst, worstZ)
			if worst > tol || worstZ > zTol {
				t.Errorf("coral's worst relative error %.4g (want <= %g), worst error over its SE %.3g (want <= %g)", worst, tol, worstZ, zTol)
			}
		})
	}
}

// TestSettleCeilingCycle: when the rows predicted above the ceiling do
// not settle but cycle ({0}, then {1}, then {0} again), settleCeiling
// leaves out every row predicted above in any round ({0, 1}) and fits
// once more; when they settle, it stops at the fixed set.
func TestSettleCeilingCycle(t *testing.T) {
	m := &Model{sh: &shared{ceiling: 1, cols: [][]float64{{1, 0}, {0, 1}}}}
	// fake returns a fit on two rows (those not in extra) whose
	// prediction is 2 (above the ceiling) on the rows in over, else 0.
	fake := func(extra, over []int) *scan {
		sc := &scan{raw: []float64{0.5, 0.5}, blk: []float64{0, 0}, d: &design{}, res: &lsq.Result{Coef: []float64{0, 0}}}
		for r := range 2 {
			pred := 0.0
			if slices.Contains(over, r) {
				pred = 2
			}
			sc.res.Coef[r] = pred
			if !slices.Contains(extra, r) {
				sc.d.rows = append(sc.d.rows, r)
				sc.res.Residual = append(sc.res.Residual, 0.5-pred)
			}
		}
		return sc
	}
	for _, tc := range []struct {
		name  string
		next  map[string][]int // rows predicted over for each set left out
		calls []string         // the sets fit is called with, in order
	}{
		{"cycle", map[string][]int{"[0]": {1}, "[1]": {0}, "[0 1]": {0, 1}}, []string{"[0]", "[1]", "[0 1]"}},
		{"settles", map[string][]int{"[0]": {0, 1}, "[0 1]": {0, 1}}, []string{"[0]", "[0 1]"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var calls []string
			fit := func(extra []int) (*Model, *scan, error) {
				key := fmt.Sprint(extra)
				calls = append(calls, key)
				return m, fake(extra, tc.next[key]), nil
			}
			_, sc, err := settleCeiling(m, fake(nil, []int{0}), fit)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(calls, tc.calls) {
				t.Errorf("fits with %v left out, want %v", calls, tc.calls)
			}
			if got := fmt.Sprint(sc.d.rows); got != "[]" {
				t.Errorf("last fit's rows %s, want none (both left out)", got)
			}
		})
	}
}
