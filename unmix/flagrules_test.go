package unmix

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// asPercentT turns an absorbance spectrum into %T.
func asPercentT(s *spectrum.Spectrum) *spectrum.Spectrum {
	pt := s.Clone()
	pt.Quantity = spectrum.PercentT
	for i, a := range s.Values {
		pt.Values[i] = 100 * math.Pow(10, -a)
	}
	return pt
}

// TestDarkReadingForcesDilute: one reading at 0 %T (or below) inside the
// window cannot be turned into absorbance; the sample is not fitted
// silently but flagged sat and dilute, with the wavelength named. A dark
// reading outside the window does not touch the fit.
func TestDarkReadingForcesDilute(t *testing.T) {
	base := asPercentT(mixture{conc: []float64{5, 3, 2, 8}, noise: testNoise, seed: 21}.spectrum())
	for _, v := range []float64{0, -0.4} {
		s := base.Clone()
		s.Values[200] = v // 600 nm
		s.Values[220] = v // 620 nm
		r := mustSolve(t, mustModel(t, testSet(4), Options{}), s, Factors{})
		if !slices.Contains(r.Flags, FlagSaturated) || !slices.Contains(r.Flags, FlagDilute) || !r.Flagged() {
			t.Errorf("%g %%T at 600 nm: flags %v, want sat and dilute", v, r.Flags)
		}
		if r.DarkNM != 600 || r.DarkPoints != 2 || r.Dropped != 2 {
			t.Errorf("%g %%T: dark at %g nm, %d dark points, %d dropped; want 600, 2, 2", v, r.DarkNM, r.DarkPoints, r.Dropped)
		}
		if !(r.SuggestDilution >= 1.5) {
			t.Errorf("%g %%T: suggested dilution %g", v, r.SuggestDilution)
		}
	}
	s := base.Clone()
	s.Values[10] = 0 // 410 nm, outside 450-750
	r := mustSolve(t, mustModel(t, testSet(4), Options{WindowLo: 450, WindowHi: 750}), s, Factors{})
	if len(r.Flags) != 0 || r.DarkPoints != 0 {
		t.Errorf("0 %%T outside the window: flags %v, dark points %d", r.Flags, r.DarkPoints)
	}
}

// TestOverLinearRange: a result above the top of the stated linear range
// is flagged over even when it is below the highest standard, and the
// suggested dilution brings it back into the range.
func TestOverLinearRange(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	s := mixture{conc: truth, noise: testNoise, seed: 22}.spectrum()
	r := mustSolve(t, mustModel(t, testSet(4), Options{}), s, Factors{})
	if r.Amounts[3].HasFlag(FlagOverRange) || r.SuggestDilution != 0 {
		t.Errorf("8 mg/L under a 20 mg/L top standard: flags %v, dilution %g", r.Amounts[3].Flags, r.SuggestDilution)
	}
	set := testSet(4)
	set.Compounds[3].Linearity.RangeHi = 5 // the line bends above 5 mg/L
	r = mustSolve(t, mustModel(t, set, Options{}), s, Factors{})
	if !r.Amounts[3].HasFlag(FlagOverRange) {
		t.Errorf("8 mg/L above a linear range ending at 5: flags %v", r.Amounts[3].Flags)
	}
	if r.SuggestDilution != 2 { // 8/5 = 1.6 -> 2
		t.Errorf("suggested dilution %g, want 2", r.SuggestDilution)
	}
	// A range ending above the highest standard does not widen it.
	set.Compounds[3].Linearity.RangeHi = 50
	set.Compounds[3].MaxStandard = 6
	r = mustSolve(t, mustModel(t, set, Options{}), s, Factors{})
	if !r.Amounts[3].HasFlag(FlagOverRange) {
		t.Errorf("8 mg/L above a top standard of 6: flags %v", r.Amounts[3].Flags)
	}
}

// TestSuggestDilution: the larger of the factor that brings the highest
// band below the ceiling and the one that brings each concentration in
// the cell into its calibrated range.
func TestSuggestDilution(t *testing.T) {
	for _, c := range []struct {
		ceilF, over float64
		dilute      bool
		want        float64
	}{
		{1.4, 0, true, 1.5},  // ceiling alone
		{1.4, 4, true, 4},    // 80 mg/L found, top standard 20: 4x reaches it
		{1.4, 2.9, true, 3},  // 58/20
		{2.6, 2.1, true, 3},  // ceiling wins (strictly above 2.6)
		{0.5, 1.6, false, 2}, // over alone
		{0.5, 1, false, 0},   // at the top standard: nothing to suggest
		// Off scale (amounts overflowed, as with a path of 4e-324 cm):
		// no factor can be named, so none is suggested.
		{1.4, math.Inf(1), true, 0},
		{0.5, math.Inf(1), false, 0},
		{math.Inf(1), 2, true, 0},
		{math.NaN(), 0, true, 0},
		{0.5, 3e9, false, 0}, // beyond maxNiceFactor
	} {
		if got := suggestDilution(c.ceilF, c.over, c.dilute); got != c.want {
			t.Errorf("suggestDilution(%g, %g, %v) = %g, want %g", c.ceilF, c.over, c.dilute, got, c.want)
		}
	}
	// Through a solve: teal at 35 mg/L peaks at 2.8 AU (ceiling factor
	// 1.5) and is 1.75 times its 20 mg/L top standard: 2x.
	truth := []float64{5, 3, 2, 35}
	r := mustSolve(t, mustModel(t, testSet(4), Options{}), mixture{conc: truth, noise: testNoise, seed: 9}.spectrum(), Factors{})
	if !slices.Contains(r.Flags, FlagDilute) || r.SuggestDilution != 2 {
		t.Errorf("teal 35 mg/L: flags %v, dilution %g, want dilute 2", r.Flags, r.SuggestDilution)
	}
}

// TestSmoothingNoPattern: with Savitzky-Golay smoothing in the reference
// set's pre-treatment, white noise in a sample comes out of the filter
// correlated, so a correct fit reads a Durbin-Watson far below 2; it is
// reported but does not raise FlagPattern.
func TestSmoothingNoPattern(t *testing.T) {
	set := smoothedSet(t, "sg:11,2")
	m := mustModel(t, set, Options{WindowLo: 450, WindowHi: 750})
	if m.DurbinWatsonFlagged() {
		t.Error("DurbinWatsonFlagged with sg pre-treatment")
	}
	r := mustSolve(t, m, mixture{conc: []float64{5, 3, 2, 8}, noise: testNoise, seed: 23}.spectrum(), Factors{})
	if !(r.DW < patternDW) {
		t.Fatalf("smoothed residual DW %g: the case does not test the rule", r.DW)
	}
	if slices.Contains(r.Flags, FlagPattern) {
		t.Errorf("DW %.2f after smoothing flagged pattern", r.DW)
	}
	if !mustModel(t, testSet(4), Options{}).DurbinWatsonFlagged() {
		t.Error("DurbinWatsonFlagged false without pre-treatment")
	}
}

// TestShiftSE: the shift's standard error agrees with the scatter of the
// estimates over noise draws, the compounds' standard errors take in the
// shift's uncertainty, and a determined shift is flagged only from
// shiftNoteNM on.
func TestShiftSE(t *testing.T) {
	m := mustModel(t, testSet(4), Options{Shift: true})
	var est, ses, conc, cses []float64
	for seed := range uint64(40) {
		// A true shift of 0.6 nm is always told apart from zero at this
		// noise, so every estimate is kept and the scatter is not cut.
		s := mixture{conc: []float64{5, 3, 2, 8}, shift: 0.6, noise: 4 * testNoise, seed: 100 + seed}.spectrum()
		r := mustSolve(t, m, s, Factors{})
		est = append(est, r.ShiftNM)
		ses = append(ses, r.ShiftSE)
		conc = append(conc, r.Amounts[0].Conc)
		cses = append(cses, r.Amounts[0].SE)
		if !slices.Contains(r.Flags, FlagShift) {
			t.Errorf("seed %d: shift %g +- %g not flagged: %v", seed, r.ShiftNM, r.ShiftSE, r.Flags)
		}
	}
	// 40 draws: the sample SD has a relative standard error of
	// 1/sqrt(2*39), about 11 %; the tolerance of 35 % is three of those
	// (a false alarm near 0.3 % of seeds).
	for _, c := range []struct {
		what    string
		est, se []float64
	}{{"shift", est, ses}, {"first compound", conc, cses}} {
		sd, se := stat.StdDev(c.est, nil), stat.Mean(c.se, nil)
		if !(se > 0) || math.Abs(sd/se-1) > 0.35 {
			t.Errorf("%s: SD of 40 estimates %g, mean SE %g", c.what, sd, se)
		}
	}
	// A true shift of 0.07 nm (below shiftNoteNM) is estimated but not
	// flagged; 0.5 and 1 nm are, within 0.05 nm.
	for _, c := range []struct {
		shift float64
		flag  bool
	}{{0.07, false}, {0.5, true}, {1, true}} {
		r := mustSolve(t, m, mixture{conc: []float64{5, 3, 2, 8}, shift: c.shift, noise: testNoise, seed: 3}.spectrum(), Factors{})
		if slices.Contains(r.Flags, FlagShift) != c.flag || slices.Contains(r.Flags, FlagShiftMax) || math.Abs(r.ShiftNM-c.shift) > 0.05 {
			t.Errorf("shift %g nm: estimated %g +- %g, flags %v", c.shift, r.ShiftNM, r.ShiftSE, r.Flags)
		}
	}
}

// TestShiftUndetermined: a nearly blank sample has nothing to measure a
// shift on; the estimate wanders to the limit with a huge standard error.
// It must not be applied (shift 0, same amounts as without --shift's
// estimate) nor flagged shift or shift-max. An unshifted mixture's
// amounts with the shift estimated stay within one standard error of
// those without.
func TestShiftUndetermined(t *testing.T) {
	m := mustModel(t, testSet(4), Options{Shift: true})
	plain := mustModel(t, testSet(4), Options{WindowLo: m.sh.grid[m.sh.lo], WindowHi: m.sh.grid[m.sh.hi-1]})
	for seed := range uint64(10) {
		for _, conc := range [][]float64{{0.002, 0, 0.001, 0}, {5, 3, 2, 8}} {
			s := mixture{conc: conc, noise: testNoise, seed: 200 + seed}.spectrum()
			r := mustSolve(t, m, s, Factors{})
			if slices.Contains(r.Flags, FlagShift) || slices.Contains(r.Flags, FlagShiftMax) {
				t.Errorf("seed %d, %v: shift %g +- %g flagged %v", seed, conc, r.ShiftNM, r.ShiftSE, r.Flags)
			}
			if conc[0] < 1 && r.ShiftNM != 0 {
				t.Errorf("seed %d, nearly blank: shift %g +- %g applied", seed, r.ShiftNM, r.ShiftSE)
			}
			p := mustSolve(t, plain, s, Factors{})
			for k, a := range r.Amounts {
				if d := math.Abs(a.Conc - p.Amounts[k].Conc); d > math.Max(a.SE, 1e-12) && !(r.ShiftNM == 0 && d < 1e-9) {
					t.Errorf("seed %d, %v: %s %g with the shift estimated, %g without (SE %g)", seed, conc, a.Compound, a.Conc, p.Amounts[k].Conc, a.SE)
				}
			}
		}
	}
}

// TestSmoothingSaturation: with a Savitzky-Golay derivative in the set's
// pre-treatment, the points beside a reading above the ceiling are
// computed from the held (clipped) value; they are left out with it, so
// a saturated sample is still recovered, and counted as dropped.
func TestSmoothingSaturation(t *testing.T) {
	set := smoothedSet(t, "sg:11,2,1")
	m := mustModel(t, set, Options{WindowLo: 450, WindowHi: 750})
	conc := []float64{5, 3, 2, 8}
	for k := range conc {
		conc[k] *= 8
	}
	s := mixture{conc: conc, noise: testNoise, seed: 31}.spectrum()
	over := 0
	for i, l := range s.Wavelengths {
		if l >= 450 && l <= 750 && s.Values[i] > set.Ceiling {
			over++
		}
	}
	r := mustSolve(t, m, s, Factors{})
	if over == 0 || !slices.Contains(r.Flags, FlagSaturated) {
		t.Fatalf("%d points above the ceiling, flags %v: the case does not test the rule", over, r.Flags)
	}
	// Window 11: 5 neighbours either side of each run above the ceiling.
	if r.Dropped < over+5 {
		t.Errorf("%d points above the ceiling, %d dropped: the neighbours were kept", over, r.Dropped)
	}
	for k, a := range r.Amounts {
		if math.Abs(a.Conc-conc[k]) > 4*a.SE+1e-9 {
			t.Errorf("%s: %g +- %g, truth %g", a.Compound, a.Conc, a.SE, conc[k])
		}
	}
}

// smoothedSet is testSet(4) with the pre-treatment spec applied to its
// absorptivities and recorded in the set, as calibrate would leave it.
func smoothedSet(t *testing.T, spec string) *reference.Set {
	t.Helper()
	set := testSet(4)
	st, err := baseline.ParseStep(spec)
	if err != nil {
		t.Fatal(err)
	}
	set.Pretreat = []baseline.Step{st}
	for k := range set.Compounds {
		if set.Compounds[k].Absorptivity, err = st.Apply(set.Grid, set.Compounds[k].Absorptivity); err != nil {
			t.Fatal(err)
		}
	}
	return set
}
