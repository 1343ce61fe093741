package unmix

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"sync"
	"testing"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// TestRecoveryWithinIntervals solves many noisy replicates of a known
// mixture: the 95 % intervals must hold the true concentrations in about
// 95 % of them (binomial: 400 draws give 0.95 +- 0.033 at three standard
// deviations), and no estimate may be more than 5 SE off.
func TestRecoveryWithinIntervals(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	for _, weighted := range []bool{false, true} {
		m := mustModel(t, testSet(4), Options{Weighted: weighted})
		const reps = 400
		hits := make([]int, len(truth))
		var r Result
		for i := range reps {
			s := mixture{conc: truth, offset: 0.02, noise: testNoise, seed: uint64(i)}.spectrum()
			if err := m.SolveTo(&r, s, Factors{}); err != nil {
				t.Fatal(err)
			}
			for k, a := range r.Amounts {
				if a.Lo <= truth[k] && truth[k] <= a.Hi {
					hits[k]++
				}
				if d := math.Abs(a.Conc - truth[k]); d > 5*a.SE {
					t.Errorf("weighted=%v rep %d %s = %g +- %g, want %g", weighted, i, a.Compound, a.Conc, a.SE, truth[k])
				}
			}
			if r.Flagged() {
				t.Errorf("weighted=%v rep %d flagged %v", weighted, i, r.Flags)
			}
		}
		for k, h := range hits {
			if f := float64(h) / reps; f < 0.917 || f > 0.983 {
				t.Errorf("weighted=%v %s: interval coverage %.3f, want 0.95 +- 0.033", weighted, testNames[k], f)
			}
		}
	}
}

// TestAbsentCompoundHeldAtZero finds a noise draw where ordinary least
// squares (gonum's QR solve, independent of this package) gives the absent
// compound a negative concentration, and checks that the model reports
// exactly 0, flags it, and shows the same unconstrained estimate.
func TestAbsentCompoundHeldAtZero(t *testing.T) {
	set := testSet(4)
	m := mustModel(t, set, Options{})
	truth := []float64{5, 3, 0, 8}
	const absent = 2
	for seed := range uint64(50) {
		s := mixture{conc: truth, offset: 0.02, noise: testNoise, seed: seed}.spectrum()
		// Ordinary least squares on [eps_k * path, 1].
		n := len(s.Values)
		x := mat.NewDense(n, 5, nil)
		for i := range n {
			for k := range 4 {
				x.Set(i, k, set.Compounds[k].Absorptivity[i]*set.PathCM)
			}
			x.Set(i, 4, 1)
		}
		var ols mat.VecDense
		if err := ols.SolveVec(x, mat.NewVecDense(n, s.Values)); err != nil {
			t.Fatal(err)
		}
		if ols.AtVec(absent) >= 0 {
			continue
		}
		r := mustSolve(t, m, s, Factors{})
		a := r.Amounts[absent]
		if a.Conc != 0 || a.SE != 0 || a.Lo != 0 {
			t.Errorf("seed %d: absent compound = %g +- %g [%g, %g], want exactly 0", seed, a.Conc, a.SE, a.Lo, a.Hi)
		}
		if !a.HasFlag(FlagZero) {
			t.Errorf("seed %d: flags %v, want %q", seed, a.Flags, FlagZero)
		}
		if math.Abs(a.Free-ols.AtVec(absent)) > 1e-9 {
			t.Errorf("seed %d: unconstrained estimate %g, gonum OLS %g", seed, a.Free, ols.AtVec(absent))
		}
		if !(a.Hi > 0 && a.Hi < a.LOQ) {
			t.Errorf("seed %d: upper bound %g should lie in (0, LOQ %g)", seed, a.Hi, a.LOQ)
		}
		for k, c := range truth {
			if k != absent && math.Abs(r.Amounts[k].Conc-c) > 5*r.Amounts[k].SE {
				t.Errorf("seed %d: %s = %g +- %g, want %g", seed, r.Amounts[k].Compound, r.Amounts[k].Conc, r.Amounts[k].SE, c)
			}
		}
		return
	}
	t.Fatal("no seed gave a negative OLS estimate")
}

// TestBaselineAbsorbed adds an offset and a slope: with a linear baseline
// the concentrations are recovered and the fitted baseline curve matches
// what was added; with no baseline the fit is flagged.
func TestBaselineAbsorbed(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	mx := mixture{conc: truth, offset: 0.08, slope: -2e-4, noise: testNoise, seed: 3}
	lin, _ := baseline.ParseModel("linear")
	m := mustModel(t, testSet(4), Options{Baseline: lin, KeepCurves: true})
	r := mustSolve(t, m, mx.spectrum(), Factors{})
	for k, a := range r.Amounts {
		if math.Abs(a.Conc-truth[k]) > 4*a.SE {
			t.Errorf("%s = %g +- %g, want %g", a.Compound, a.Conc, a.SE, truth[k])
		}
	}
	for i, l := range r.Grid {
		want := mx.offset + mx.slope*(l-600)
		if d := math.Abs(r.BaselineCurve[i] - want); d > 3e-3 {
			t.Fatalf("baseline at %g nm = %g, want %g", l, r.BaselineCurve[i], want)
		}
	}
	if r.Flagged() {
		t.Errorf("flags %v", r.Flags)
	}
	none, _ := baseline.ParseModel("none")
	r = mustSolve(t, mustModel(t, testSet(4), Options{Baseline: none}), mx.spectrum(), Factors{})
	if !slices.Contains(r.Flags, FlagMisfit) || !slices.Contains(r.Flags, FlagPattern) {
		t.Errorf("no baseline terms: flags %v, want %q and %q", r.Flags, FlagMisfit, FlagPattern)
	}
}

// TestShiftEstimated moves the sample's bands by a known amount.
func TestShiftEstimated(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	for _, shift := range []float64{1, -1, 0.4, -2.2} {
		mx := mixture{conc: truth, offset: 0.01, shift: shift, noise: testNoise, seed: 5}
		m := mustModel(t, testSet(4), Options{Shift: true})
		r := mustSolve(t, m, mx.spectrum(), Factors{})
		if math.Abs(r.ShiftNM-shift) > 0.2 {
			t.Errorf("shift %g nm: estimated %g nm", shift, r.ShiftNM)
		}
		if !slices.Contains(r.Flags, FlagShift) || slices.Contains(r.Flags, FlagPattern) || slices.Contains(r.Flags, FlagMisfit) {
			t.Errorf("shift %g nm: flags %v", shift, r.Flags)
		}
		for k, a := range r.Amounts {
			if math.Abs(a.Conc-truth[k]) > 0.02*truth[k] {
				t.Errorf("shift %g nm: %s = %g, want %g", shift, a.Compound, a.Conc, truth[k])
			}
		}
		// Without estimating it, a 1 nm shift shows in the residual.
		if math.Abs(shift) >= 1 {
			r = mustSolve(t, mustModel(t, testSet(4), Options{}), mx.spectrum(), Factors{})
			if !slices.Contains(r.Flags, FlagPattern) {
				t.Errorf("shift %g nm not estimated: flags %v, want %q", shift, r.Flags, FlagPattern)
			}
		}
	}
	// A shift beyond the limit is held at the limit and flagged.
	mx := mixture{conc: truth, shift: 2.5, noise: testNoise, seed: 6}
	r := mustSolve(t, mustModel(t, testSet(4), Options{Shift: true, MaxShiftNM: 1}), mx.spectrum(), Factors{})
	if r.ShiftNM != 1 || !slices.Contains(r.Flags, FlagShiftMax) {
		t.Errorf("shift 2.5 nm, limit 1: estimated %g, flags %v", r.ShiftNM, r.Flags)
	}
}

// TestMissingCompound puts a band in the sample that no reference has.
func TestMissingCompound(t *testing.T) {
	mx := mixture{conc: []float64{5, 3, 2, 8}, extra: []band{{Peak: 470, Width: 15, Height: 0.15}}, noise: testNoise, seed: 8}
	r := mustSolve(t, mustModel(t, testSet(4), Options{}), mx.spectrum(), Factors{})
	if !slices.Contains(r.Flags, FlagMisfit) && !slices.Contains(r.Flags, FlagPattern) {
		t.Errorf("unknown band at 470 nm: flags %v, want %q or %q", r.Flags, FlagMisfit, FlagPattern)
	}
	if !r.Flagged() {
		t.Error("sample not counted as flagged")
	}
}

// TestSaturation scans a sample whose strongest band reads above the
// ceiling: the points are dropped, the sample is flagged with a dilution
// that brings the band below the ceiling, and the concentrations still
// come from the points that remain.
func TestSaturation(t *testing.T) {
	truth := []float64{5, 3, 2, 35} // teal peaks at 0.08*35 = 2.8 AU
	mx := mixture{conc: truth, noise: testNoise, seed: 9}
	s := mx.spectrum()
	peak := floats.Max(s.Values)
	r := mustSolve(t, mustModel(t, testSet(4), Options{}), s, Factors{})
	if r.Dropped == 0 || !slices.Contains(r.Flags, FlagSaturated) || !slices.Contains(r.Flags, FlagDilute) {
		t.Fatalf("peak %.2f AU: dropped %d, flags %v", peak, r.Dropped, r.Flags)
	}
	if r.Points+r.Dropped != 401 {
		t.Errorf("points %d + dropped %d != 401", r.Points, r.Dropped)
	}
	if d := r.SuggestDilution; !(peak/d < 2) || d > 3*peak/2 {
		t.Errorf("suggested dilution %g for a %.2f AU peak and ceiling 2", d, peak)
	}
	for k, a := range r.Amounts {
		if math.Abs(a.Conc-truth[k]) > 5*a.SE {
			t.Errorf("%s = %g +- %g, want %g", a.Compound, a.Conc, a.SE, truth[k])
		}
	}
	if !r.Amounts[3].HasFlag(FlagOverRange) {
		t.Errorf("35 mg/L above the 20 mg/L standard: flags %v", r.Amounts[3].Flags)
	}

	// In %T with readings of zero (too dark): the same points count as
	// saturated instead of failing the sample.
	pt := s.Clone()
	pt.Quantity = spectrum.PercentT
	for i, a := range s.Values {
		pt.Values[i] = 100 * math.Pow(10, -a)
		if a > 2.5 {
			pt.Values[i] = 0
		}
	}
	r2 := mustSolve(t, mustModel(t, testSet(4), Options{}), pt, Factors{})
	if r2.Dropped != r.Dropped {
		t.Errorf("%%T with zeros: dropped %d, want %d", r2.Dropped, r.Dropped)
	}
	for k := range truth {
		if d := math.Abs(r2.Amounts[k].Conc - r.Amounts[k].Conc); d > 1e-9 {
			t.Errorf("%%T vs absorbance: %s differs by %g", testNames[k], d)
		}
	}

	// So dark that nothing can be fitted: an error saying to dilute.
	dark := mixture{conc: []float64{200, 200, 200, 200}, seed: 1}.spectrum()
	_, err := mustModel(t, testSet(4), Options{}).Solve(dark, Factors{})
	if !errors.Is(err, errTooDark) || !strings.Contains(err.Error(), "dilute") {
		t.Errorf("dark sample: err %v, want errTooDark with a dilution", err)
	}
}

// TestFactors: dilution multiplies, path divides, and both apply to the
// standard errors and limits.
func TestFactors(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	m := mustModel(t, testSet(4), Options{})
	base := mustSolve(t, m, mixture{conc: truth, noise: testNoise, seed: 2}.spectrum(), Factors{})
	// The same cell absorbance read as a 5x dilution scanned at 0.5 cm:
	// the original sample holds 5 * (1/0.5) = 10 times the fitted amount.
	r := mustSolve(t, m, mixture{conc: truth, noise: testNoise, seed: 2}.spectrum(), Factors{Dilution: 5, PathCM: 0.5})
	for k := range truth {
		b, a := base.Amounts[k], r.Amounts[k]
		for _, p := range [][2]float64{{a.Conc, b.Conc}, {a.SE, b.SE}, {a.LOD, b.LOD}, {a.Hi, b.Hi}} {
			if math.Abs(p[0]-10*p[1]) > 1e-9*math.Abs(p[0]) {
				t.Errorf("%s: %g, want 10 x %g", a.Compound, p[0], p[1])
			}
		}
	}
	if r.Dilution != 5 || r.PathCM != 0.5 {
		t.Errorf("factors recorded as %g, %g", r.Dilution, r.PathCM)
	}
	for _, f := range []Factors{{Dilution: -1}, {PathCM: math.NaN()}, {Dilution: math.Inf(1)}} {
		if _, err := m.Solve(mixture{conc: truth}.spectrum(), f); !errors.Is(err, ErrFactor) {
			t.Errorf("factors %+v: err %v, want ErrFactor", f, err)
		}
	}
}

// TestDetectionLimit checks the limits against the net analyte signal
// computed independently (gonum least squares): SEN_k = ||s_k*||,
// s_k* = s_k - S_-k S_-k+ s_k, LOD = 3.3 sigma / SEN (Lorber, Anal. Chem.
// 58 (1986) 1167; ICH Q2 for the factors 3.3 and 10).
func TestDetectionLimit(t *testing.T) {
	set := testSet(4)
	m := mustModel(t, set, Options{})
	// A blank sample: absorbance near 0, so sigma = noise * sqrt(1.01).
	r := mustSolve(t, m, mixture{conc: []float64{0, 0, 0, 0}, noise: 1e-4, seed: 4}.spectrum(), Factors{})
	sigma := testNoise * math.Sqrt(1+math.Pow(10, -2*WeightKneeA))
	n := len(set.Grid)
	for k := range 4 {
		others := mat.NewDense(n, 4, nil)
		sk := mat.NewVecDense(n, nil)
		for i := range n {
			c := 0
			for j := range 4 {
				if j == k {
					sk.SetVec(i, set.Compounds[j].Absorptivity[i])
					continue
				}
				others.Set(i, c, set.Compounds[j].Absorptivity[i])
				c++
			}
			others.Set(i, 3, 1) // offset
		}
		var b, proj, nas mat.VecDense
		if err := b.SolveVec(others, sk); err != nil {
			t.Fatal(err)
		}
		proj.MulVec(others, &b)
		nas.SubVec(sk, &proj)
		sen := mat.Norm(&nas, 2)
		want := LODFactor * sigma / sen
		got := r.Amounts[k].LOD
		if math.Abs(got-want) > 2e-3*want {
			t.Errorf("%s: LOD %g, NAS gives %g", testNames[k], got, want)
		}
		if q := r.Amounts[k].LOQ / got; math.Abs(q-LOQFactor/LODFactor) > 1e-12 {
			t.Errorf("%s: LOQ/LOD = %g", testNames[k], q)
		}
	}
}

// TestBlankSubtracted: a blank with its own offset and slope is removed.
func TestBlankSubtracted(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	blank := mixture{conc: []float64{0, 0, 0, 0}, offset: 0.05, slope: 1e-4, seed: 11}.spectrum()
	s := mixture{conc: truth, offset: 0.05, slope: 1e-4, noise: testNoise, seed: 12}.spectrum()
	none, _ := baseline.ParseModel("none")
	r := mustSolve(t, mustModel(t, testSet(4), Options{Baseline: none, Blank: blank}), s, Factors{})
	for k, a := range r.Amounts {
		if math.Abs(a.Conc-truth[k]) > 4*a.SE {
			t.Errorf("%s = %g +- %g, want %g", a.Compound, a.Conc, a.SE, truth[k])
		}
	}
	if r.Flagged() {
		t.Errorf("flags %v", r.Flags)
	}
}

// TestGridAndCoverage: a scan on another grid is interpolated; one that
// does not cover the window is refused naming both ranges.
func TestGridAndCoverage(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	m := mustModel(t, testSet(4), Options{WindowLo: 420, WindowHi: 760})
	fine := mixture{conc: truth, noise: testNoise, seed: 13, grid: gridNM(380, 820, 0.5)}.spectrum()
	r := mustSolve(t, m, fine, Factors{})
	if r.Points != 341 {
		t.Errorf("points %d, want 341 (420-760 nm at 1 nm)", r.Points)
	}
	for k, a := range r.Amounts {
		if math.Abs(a.Conc-truth[k]) > 5*a.SE {
			t.Errorf("%s = %g +- %g, want %g", a.Compound, a.Conc, a.SE, truth[k])
		}
	}
	short := mixture{conc: truth, grid: gridNM(450, 800, 1)}.spectrum()
	_, err := m.Solve(short, Factors{})
	if !errors.Is(err, ErrCoverage) || !strings.Contains(err.Error(), "450-800 nm") || !strings.Contains(err.Error(), "420-760 nm") {
		t.Errorf("short scan: %v", err)
	}
	// The window is the cause: the message says so and gives both ranges,
	// not the wording of a scan that falls short.
	if _, err := NewModel(testSet(4), Options{WindowLo: 350, WindowHi: 700}); !errors.Is(err, ErrCoverage) ||
		!strings.Contains(err.Error(), "window 350-700 nm lies partly outside the reference grid 400-800 nm") || strings.Contains(err.Error(), "scan") {
		t.Errorf("window outside the grid: %v", err)
	}
	if _, err := NewModel(testSet(4), Options{WindowLo: 200, WindowHi: 300}); !errors.Is(err, ErrCoverage) ||
		!strings.Contains(err.Error(), "window 200-300 nm lies outside the reference grid 400-800 nm") {
		t.Errorf("window wholly outside the grid: %v", err)
	}
}

// TestDesignFlags: two nearly equal compounds make an ill-conditioned
// design; a featureless compound is imitated by a cubic baseline.
func TestDesignFlags(t *testing.T) {
	set := testSet(2)
	set.Compounds[1].Absorptivity = append([]float64(nil), set.Compounds[0].Absorptivity...)
	for i, l := range set.Grid {
		set.Compounds[1].Absorptivity[i] = bandsAt([]band{{Peak: 432, Width: 25, Height: 0.05}}, l)
	}
	r := mustSolve(t, mustModel(t, set, Options{}), mixture{conc: []float64{5}, noise: testNoise, seed: 1}.spectrum(), Factors{})
	if !slices.Contains(r.Flags, FlagIllCond) {
		t.Errorf("bands 2 nm apart: cond %g, flags %v", r.Cond, r.Flags)
	}

	flat := testSet(2)
	for i, l := range flat.Grid {
		flat.Compounds[1].Absorptivity[i] = 0.01 * math.Exp(-(l-600)/300)
	}
	cubic, _ := baseline.ParseModel("cubic")
	m := mustModel(t, flat, Options{Baseline: cubic})
	r = mustSolve(t, m, mixture{conc: []float64{5}, noise: testNoise, seed: 1}.spectrum(), Factors{})
	if lk := m.sh.base.leak[:m.sh.ncomp]; !r.Amounts[1].HasFlag(FlagMimic) || !(lk[1] < 0.01) {
		t.Errorf("featureless compound under a cubic baseline: leakage %v, flags %v", lk, r.Amounts[1].Flags)
	}
	none, _ := baseline.ParseModel("none")
	r = mustSolve(t, mustModel(t, flat, Options{Baseline: none}), mixture{conc: []float64{5}, noise: testNoise, seed: 1}.spectrum(), Factors{})
	if r.Amounts[0].HasFlag(FlagMimic) || r.Amounts[1].HasFlag(FlagMimic) {
		t.Errorf("no baseline terms, yet flags %v / %v", r.Amounts[0].Flags, r.Amounts[1].Flags)
	}
}

// TestReuseAndClones: a Result reused gives the same answer, and clones
// on several goroutines agree with one model run serially.
func TestReuseAndClones(t *testing.T) {
	m := mustModel(t, testSet(4), Options{Shift: true})
	var ss []*spectrum.Spectrum
	for i := range 40 {
		mx := mixture{conc: []float64{5, 3, 2, 8}, shift: 0.3, noise: testNoise, seed: uint64(i)}
		if i%5 == 0 {
			mx.conc = []float64{5, 3, 2, 32} // some with a mask
		}
		ss = append(ss, mx.spectrum())
	}
	want := make([]*Result, len(ss))
	for i, s := range ss {
		want[i] = mustSolve(t, m, s, Factors{})
	}
	var r Result
	for _, i := range []int{3, 5, 3} {
		if err := m.SolveTo(&r, ss[i], Factors{}); err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(&r, want[i]) {
			t.Fatalf("reused result for sample %d differs", i)
		}
	}
	got := make([]*Result, len(ss))
	var wg sync.WaitGroup
	for w := range 4 {
		c := m.Clone()
		wg.Go(func() {
			for i := w; i < len(ss); i += 4 {
				r, err := c.Solve(ss[i], Factors{})
				if err != nil {
					t.Error(err)
					return
				}
				got[i] = r
			}
		})
	}
	wg.Wait()
	for i := range ss {
		if !reflect.DeepEqual(got[i], want[i]) {
			t.Errorf("clone result %d differs", i)
		}
	}
}

// TestPretreatment: the set's pre-treatment is applied to samples, which
// must then cover the whole reference grid.
func TestPretreatment(t *testing.T) {
	set := testSet(4)
	st, err := baseline.ParseStep("sg:11,3")
	if err != nil {
		t.Fatal(err)
	}
	set.Pretreat = []baseline.Step{st}
	for k := range set.Compounds {
		a, err := st.Apply(set.Grid, set.Compounds[k].Absorptivity)
		if err != nil {
			t.Fatal(err)
		}
		set.Compounds[k].Absorptivity = a
	}
	truth := []float64{5, 3, 2, 8}
	m := mustModel(t, set, Options{WindowLo: 450, WindowHi: 750})
	r := mustSolve(t, m, mixture{conc: truth, noise: testNoise, seed: 14}.spectrum(), Factors{})
	for k, a := range r.Amounts {
		if math.Abs(a.Conc-truth[k]) > 5*a.SE {
			t.Errorf("%s = %g +- %g, want %g", a.Compound, a.Conc, a.SE, truth[k])
		}
	}
	_, err = m.Solve(mixture{conc: truth, grid: gridNM(420, 780, 1)}.spectrum(), Factors{})
	if !errors.Is(err, ErrCoverage) {
		t.Errorf("partial scan with pre-treatment: %v", err)
	}
}

// TestBadSets: inconsistent reference sets are refused with errSet.
func TestBadSets(t *testing.T) {
	for name, edit := range map[string]func(s *reference.Set){
		"no compounds": func(s *reference.Set) { s.Compounds = nil },
		"short noise":  func(s *reference.Set) { s.Noise = s.Noise[1:] },
		"NaN eps":      func(s *reference.Set) { s.Compounds[0].Absorptivity[7] = math.NaN() },
		"zero path":    func(s *reference.Set) { s.PathCM = 0 },
		"twice":        func(s *reference.Set) { s.Compounds[1].Name = s.Compounds[0].Name },
	} {
		s := testSet(2)
		edit(s)
		if _, err := NewModel(s, Options{}); !errors.Is(err, errSet) {
			t.Errorf("%s: err %v, want errSet", name, err)
		}
	}
}

// TestOptionCombinations: weights, shift, a blank, a window and a mask
// together still recover a shifted, partly saturated sample.
func TestOptionCombinations(t *testing.T) {
	truth := []float64{5, 3, 2, 27} // teal peaks at 2.16 AU: a few points dropped
	blank := mixture{conc: []float64{0, 0, 0, 0}, offset: 0.04, seed: 21}.spectrum()
	mx := mixture{conc: truth, offset: 0.04, shift: 0.8, noise: testNoise, seed: 22}
	lin, _ := baseline.ParseModel("linear")
	for _, weighted := range []bool{false, true} {
		m := mustModel(t, testSet(4), Options{Weighted: weighted, Shift: true, Blank: blank, Baseline: lin, WindowLo: 410, WindowHi: 780, KeepCurves: true})
		r := mustSolve(t, m, mx.spectrum(), Factors{Dilution: 2})
		if r.Dropped == 0 || math.Abs(r.ShiftNM-0.8) > 0.2 {
			t.Errorf("weighted=%v: dropped %d, shift %g", weighted, r.Dropped, r.ShiftNM)
		}
		for k, a := range r.Amounts {
			if math.Abs(a.Conc-2*truth[k]) > 0.02*2*truth[k] {
				t.Errorf("weighted=%v: %s = %g, want %g", weighted, a.Compound, a.Conc, 2*truth[k])
			}
		}
		if len(r.Grid) != r.Points || len(r.Contributions) != 4 || len(r.Noise) != r.Points {
			t.Errorf("weighted=%v: curves of %d points for %d used", weighted, len(r.Grid), r.Points)
		}
		for i := range r.Grid {
			sum := r.BaselineCurve[i]
			for _, c := range r.Contributions {
				sum += c[i]
			}
			if math.Abs(sum-r.Fitted[i]) > 1e-9 || math.Abs(r.Measured[i]-r.Fitted[i]-r.Residual[i]) > 1e-9 {
				t.Fatalf("weighted=%v: curves do not add up at %g nm", weighted, r.Grid[i])
			}
		}
	}
}

// TestGrowthTable: the tabulated noise growth matches the formula.
func TestGrowthTable(t *testing.T) {
	m := mustModel(t, testSet(1), Options{})
	worst := 0.0
	for a := 0.0; a <= m.sh.ceiling; a += 0.0007 {
		worst = math.Max(worst, math.Abs(m.sh.growth(a)/reference.NoiseGrowth(a)-1))
	}
	if worst > 1e-6 {
		t.Errorf("tabulated noise growth off by %g relative", worst)
	}
}

// TestCalibrationError simulates the whole chain: pure standards with
// noise give the absorptivities (least squares through the origin, per
// wavelength), a noisy sample is solved against them, 1500 times. The
// spread of the results must match the reported standard error. The
// absorptivities' own error adds sigma^2 sum c_k^2/Q_k (S'S)^-1 to the
// variance (first-order propagation of the absorptivities' error through
// the classical least-squares solve; common practice), here a factor 1.45;
// it also adds the same sigma^2 sum c_k^2/Q_k to every residual point, so
// the residual-scaled standard error (unweighted) and the Birge ratio
// sqrt(chi-square) (weighted) already carry it and no separate term may
// be added (adding one overstates the SE 1.2-fold, which this test
// catches). The SD of 1500 values has a relative standard error of
// 1/sqrt(2*1499) = 1.8 %; the tolerance is 6 %.
func TestCalibrationError(t *testing.T) {
	const (
		sigma = 0.002
		reps  = 1500
		tol   = 0.06
	)
	g := gridNM(400, 700, 3)
	levels := []float64{2, 4, 6, 8, 10}
	truth := []float64{8, 6}
	rng := rand.New(rand.NewPCG(3, 4))
	var stds []reference.Standard
	for k := range 2 {
		for _, c := range levels {
			conc := make([]float64, 2)
			conc[k] = c
			stds = append(stds, reference.Standard{Conc: conc})
		}
	}
	none, _ := baseline.ParseModel("none")
	for _, weighted := range []bool{false, true} {
		var got [2][]float64
		var se [2]float64
		for range reps {
			set := &reference.Set{Grid: g, PathCM: 1, Ceiling: 2, Noise: make([]float64, len(g)),
				Provenance: reference.Provenance{Standards: stds}}
			for k := range 2 {
				eps := make([]float64, len(g))
				for i, l := range g {
					num, q := 0.0, 0.0
					for _, c := range levels {
						a := c*bandsAt(testBands[k+1], l) + sigma*rng.NormFloat64()
						num += c * a
						q += c * c
					}
					eps[i] = num / q
				}
				set.Compounds = append(set.Compounds, reference.Compound{Name: testNames[k], Absorptivity: eps})
			}
			for i := range g {
				set.Noise[i] = sigma
			}
			m := mustModel(t, set, Options{Baseline: none, Weighted: weighted})
			s := &spectrum.Spectrum{Wavelengths: g, Quantity: spectrum.Absorbance, Values: make([]float64, len(g))}
			for i, l := range g {
				s.Values[i] = truth[0]*bandsAt(testBands[1], l) + truth[1]*bandsAt(testBands[2], l) + sigma*rng.NormFloat64()
			}
			r := mustSolve(t, m, s, Factors{})
			for k := range 2 {
				got[k] = append(got[k], r.Amounts[k].Conc)
				se[k] += r.Amounts[k].SE / reps
			}
		}
		for k := range 2 {
			sd := stat.StdDev(got[k], nil)
			if math.Abs(se[k]/sd-1) > tol {
				t.Errorf("weighted=%v %s: mean reported SE %.4g, SD of %d results %.4g", weighted, testNames[k], se[k], reps, sd)
			}
		}
	}
}

// TestPathLengthBeerLambert: by A = eps b c (Beer-Lambert, definition), a
// sample scanned in a 2 cm cell reads twice the absorbance of its 1 cm
// scan; given its path length it solves to the same concentration.
func TestPathLengthBeerLambert(t *testing.T) {
	truth := []float64{5, 3, 2, 8}
	m := mustModel(t, testSet(4), Options{})
	one := mixture{conc: truth, noise: testNoise, seed: 7}.spectrum()
	two := one.Clone()
	for i := range two.Values {
		two.Values[i] *= 2
	}
	r1 := mustSolve(t, m, one, Factors{PathCM: 1})
	r2 := mustSolve(t, m, two, Factors{PathCM: 2})
	for k := range truth {
		a, b := r1.Amounts[k], r2.Amounts[k]
		if math.Abs(a.Conc-b.Conc) > 1e-9*math.Abs(a.Conc) || math.Abs(a.SE-b.SE) > 1e-9*a.SE {
			t.Errorf("%s: 1 cm %g ± %g, 2 cm %g ± %g, want equal", a.Compound, a.Conc, a.SE, b.Conc, b.SE)
		}
	}
	// Without the path length the 2 cm scan reads as twice as concentrated.
	r3 := mustSolve(t, m, two, Factors{})
	if c := r3.Amounts[0].Conc / r1.Amounts[0].Conc; math.Abs(c-2) > 1e-9 {
		t.Errorf("2 cm scan taken as 1 cm: ratio %g, want 2", c)
	}
}

// TestSaturationGaps: with curves kept, the points above the ceiling are
// one saturated gap, spanning exactly the wavelengths that read above it,
// and no curve point lies inside it.
func TestSaturationGaps(t *testing.T) {
	mx := mixture{conc: []float64{5, 3, 2, 35}, noise: testNoise, seed: 9}
	s := mx.spectrum()
	r := mustSolve(t, mustModel(t, testSet(4), Options{KeepCurves: true}), s, Factors{})
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, a := range s.Values {
		if a > 2 {
			lo, hi = math.Min(lo, s.Wavelengths[i]), math.Max(hi, s.Wavelengths[i])
		}
	}
	if len(r.Gaps) != 1 || !r.Gaps[0].Saturated || r.Gaps[0].LoNM != lo || r.Gaps[0].HiNM != hi {
		t.Fatalf("gaps %+v, want one saturated gap %g-%g nm", r.Gaps, lo, hi)
	}
	for _, l := range r.Grid {
		if l >= lo && l <= hi {
			t.Errorf("curve point at %g nm inside the gap", l)
		}
	}
	r = mustSolve(t, mustModel(t, testSet(4), Options{KeepCurves: true}), mixture{conc: []float64{5, 3, 2, 8}, seed: 9}.spectrum(), Factors{})
	if len(r.Gaps) != 0 {
		t.Errorf("no point above the ceiling: gaps %+v", r.Gaps)
	}
}

// TestGaps groups left-out rows into runs, telling saturated rows (usable
// but not fitted) from rows no compound is calibrated at.
func TestGaps(t *testing.T) {
	wl := []float64{400, 401, 402, 403, 404, 405, 406, 407}
	rows0 := []int{0, 1, 2, 3, 5, 6} // 4 and 7 not calibrated
	rows := []int{0, 3, 6}           // 1, 2 and 5 above the ceiling
	got := gaps(nil, wl, rows, rows0)
	want := []Gap{{401, 402, true}, {404, 404, false}, {405, 405, true}, {407, 407, false}}
	if len(got) != len(want) {
		t.Fatalf("gaps %+v, want %+v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("gap %d = %+v, want %+v", i, got[i], want[i])
		}
	}
}

// TestWeightedReuse: a weighted model that refactorises only the weights
// when a sample keeps the rows of the one before (lsq.Solver.Reweight)
// gives each sample what a new model gives it, bit for bit, through
// changing masks and a sample refused in between.
func TestWeightedReuse(t *testing.T) {
	for _, opt := range []Options{{Weighted: true}, {Weighted: true, Auto: true}} {
		m := mustModel(t, testSet(4), opt)
		var r Result
		for i, c := range []float64{8, 8, 32, 32, 8, 400, 32, 8, 8} {
			s := mixture{conc: []float64{5, 3, 2, c}, offset: 0.01, noise: testNoise, seed: uint64(i)}.spectrum()
			err := m.SolveTo(&r, s, Factors{})
			want, wantErr := mustModel(t, testSet(4), opt).Solve(s, Factors{})
			if (err != nil) != (wantErr != nil) {
				t.Fatalf("auto %v, sample %d: error %v, a new model's %v", opt.Auto, i, err, wantErr)
			}
			if err != nil {
				continue
			}
			if fmt.Sprintf("%+v", scoresDeref(r)) != fmt.Sprintf("%+v", scoresDeref(*want)) {
				t.Fatalf("auto %v, sample %d: result differs from a new model's:\n%+v\n%+v", opt.Auto, i, r, *want)
			}
		}
	}
}

// scoresDeref returns r's fields as text with the model scores' F and P
// given by value, so that two results compare by what they hold.
func scoresDeref(r Result) string {
	sc := r.ModelScores
	r.ModelScores = nil
	s := fmt.Sprintf("%+v", r)
	for _, m := range sc {
		f, p := math.NaN(), math.NaN()
		if m.F != nil {
			f, p = *m.F, *m.P
		}
		m.F, m.P = nil, nil
		s += fmt.Sprintf(" %+v f=%v p=%v", m, f, p)
	}
	return s
}
