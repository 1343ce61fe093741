package unmix

import (
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"huesolve/baseline"
	"huesolve/reference"
	"huesolve/spectrum"
)

// Invented dyes for the automatic model's tests (not the demo's nor
// internal/synth's): four overlapping Gaussian bands over 350-750 nm.
var autoDyes = [][3]float64{ // peak nm, width nm, absorptivity per mg/L per cm
	{420, 28, 0.045},
	{480, 32, 0.035},
	{545, 30, 0.050},
	{610, 38, 0.040},
}

const autoNoiseAU = 0.002

func autoGrid() []float64 {
	var g []float64
	for l := 350.0; l <= 750; l++ {
		g = append(g, l)
	}
	return g
}

func autoBand(k int, l float64) float64 {
	d := (l - autoDyes[k][0]) / autoDyes[k][1]
	return autoDyes[k][2] * math.Exp(-0.5*d*d)
}

func autoSet() *reference.Set {
	g := autoGrid()
	set := &reference.Set{Schema: reference.SchemaVersion, Grid: g, PathCM: 1, Ceiling: 2}
	set.Noise = make([]float64, len(g))
	for i := range g {
		set.Noise[i] = autoNoiseAU
	}
	for k, nm := range []string{"citrine", "coral", "orchid", "cobalt"} {
		c := reference.Compound{Name: nm, Unit: "mg/L", MaxStandard: 20, MinStandard: 0.5}
		c.Absorptivity = make([]float64, len(g))
		for i, l := range g {
			c.Absorptivity[i] = autoBand(k, l)
		}
		set.Compounds = append(set.Compounds, c)
	}
	return set
}

// autoTrouble is what a sample carries beside its compounds.
type autoTrouble struct {
	offset  float64
	scatter float64 // absorbance of a lambda^-4 background at 550 nm
	shiftNM float64
}

func autoSample(rng *rand.Rand, conc []float64, tr autoTrouble) *spectrum.Spectrum {
	g := autoGrid()
	v := make([]float64, len(g))
	for i, l := range g {
		a := tr.offset + tr.scatter*math.Pow(l/550, -4)
		for k, c := range conc {
			a += c * autoBand(k, l-tr.shiftNM)
		}
		v[i] = a + autoNoiseAU*rng.NormFloat64()
	}
	return &spectrum.Spectrum{Name: "mix", Wavelengths: g, Values: v, Quantity: spectrum.Absorbance,
		Source: spectrum.Source{File: "auto.csv", Column: 2}}
}

// autoRun solves n invented samples of one trouble kind with the model
// opt and returns the RMSE of the concentrations against the truth and
// the fraction of samples whose chosen model satisfies pick (1 for a
// fixed model).
func autoRun(t *testing.T, opt Options, kind string, n int, pick func(string) bool) (rmse, frac float64) {
	t.Helper()
	m, err := NewModel(autoSet(), opt)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(15, uint64(len(kind))))
	var ss float64
	hits := 0
	for range n {
		conc := make([]float64, 4)
		for k := range conc {
			conc[k] = 1 + 9*rng.Float64()
		}
		tr := autoTrouble{offset: 0.02 * (rng.Float64() - 0.5)}
		switch kind {
		case "turbid":
			tr.scatter = 0.05 + 0.15*rng.Float64()
		case "shifted":
			tr.shiftNM = 0.6 + 0.6*rng.Float64()
			if rng.IntN(2) == 0 {
				tr.shiftNM = -tr.shiftNM
			}
		}
		r, err := m.Solve(autoSample(rng, conc, tr), Factors{})
		if err != nil {
			t.Fatal(err)
		}
		for k, a := range r.Amounts {
			d := a.Conc - conc[k]
			ss += d * d
		}
		if !opt.Auto || pick(r.Model) {
			hits++
		}
	}
	return math.Sqrt(ss / float64(4*n)), float64(hits) / float64(n)
}

func fixedModel(t *testing.T, s string, shift bool) Options {
	t.Helper()
	b, err := baseline.ParseModel(s)
	if err != nil {
		t.Fatal(err)
	}
	g := autoGrid()
	// The automatic model's window: the grid less the shift limit at
	// either end, so that fixed and automatic fits use the same points.
	return Options{Baseline: b, Shift: shift, WindowLo: g[0] + DefaultMaxShiftNM, WindowHi: g[len(g)-1] - DefaultMaxShiftNM}
}

// TestAutoChoosesTerms checks the automatic nuisance model (the
// extra-sum-of-squares F-test for nested linear models, Draper & Smith,
// Applied Regression Analysis, 3rd ed., section 6.1, at AutoLevel) on 60
// invented mixtures per kind with known truth: clean samples keep the
// offset in >= 95 % and lose at most 5 % RMSE against the fixed offset;
// turbid samples get the scattering term and shifted ones the shift in
// >= 90 %, with an RMSE within 20 % of the fixed model with the true
// terms and far below the fixed offset's.
func TestAutoChoosesTerms(t *testing.T) {
	const n = 60
	auto := Options{Auto: true}
	has := func(term string) func(string) bool {
		return func(m string) bool { return strings.Contains(m, term) }
	}
	cases := []struct {
		kind  string
		pick  func(string) bool
		truth Options
	}{
		{"clean", func(m string) bool { return m == "offset" }, fixedModel(t, "offset", false)},
		{"turbid", has("scatter"), fixedModel(t, "offset+scatter", false)},
		{"shifted", has("shift"), fixedModel(t, "offset", true)},
	}
	for _, c := range cases {
		ra, frac := autoRun(t, auto, c.kind, n, c.pick)
		rt, _ := autoRun(t, c.truth, c.kind, n, nil)
		ro, _ := autoRun(t, fixedModel(t, "offset", false), c.kind, n, nil)
		t.Logf("%s: auto RMSE %.4g (right model chosen in %.0f %%), true fixed model %.4g, fixed offset %.4g", c.kind, ra, 100*frac, rt, ro)
		switch c.kind {
		case "clean":
			if frac < 0.95 {
				t.Errorf("clean: offset chosen in %.0f %% of samples, want >= 95 %%", 100*frac)
			}
			if ra > 1.05*rt {
				t.Errorf("clean: auto RMSE %.4g more than 5 %% above the fixed offset's %.4g", ra, rt)
			}
		default:
			if frac < 0.90 {
				t.Errorf("%s: the right term chosen in %.0f %% of samples, want >= 90 %%", c.kind, 100*frac)
			}
			if ra > 1.2*rt {
				t.Errorf("%s: auto RMSE %.4g more than 20 %% above the true model's %.4g", c.kind, ra, rt)
			}
			if ra > ro/3 {
				t.Errorf("%s: auto RMSE %.4g not far below the fixed offset's %.4g", c.kind, ra, ro)
			}
		}
	}
}

// TestAutoScores checks what the result says of the selection: the
// floor is scored without a test, each tried extension names the model it
// was tested against, exactly one candidate is chosen, and it is the
// result's model.
func TestAutoScores(t *testing.T) {
	m, err := NewModel(autoSet(), Options{Auto: true})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	r, err := m.Solve(autoSample(rng, []float64{2, 3, 4, 5}, autoTrouble{scatter: 0.1}), Factors{})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.ModelScores) < 4 || r.ModelScores[0].Model != "offset" || r.ModelScores[0].F != nil {
		t.Fatalf("scores %+v: want the floor offset first, untested, then its extensions", r.ModelScores)
	}
	chosen := ""
	for _, s := range r.ModelScores[1:] {
		if s.Against == "" || s.F == nil || s.P == nil || !(s.Level > 0) {
			t.Errorf("extension %+v lacks its test", s)
		}
		if s.Chosen {
			if chosen != "" {
				t.Errorf("two candidates chosen: %s and %s", chosen, s.Model)
			}
			chosen = s.Model
		}
	}
	if chosen != r.Model || !strings.Contains(chosen, "scatter") {
		t.Errorf("chosen %q, result's model %q: want the same, with the scattering term", chosen, r.Model)
	}
	if _, ok := r.Baseline["scatter"]; !ok {
		t.Errorf("baseline %v lacks the chosen scattering term", r.Baseline)
	}
	if terms := m.BaselineTerms(); len(terms) != 4 {
		t.Errorf("terms %v: want offset, slope, curve2, scatter", terms)
	}
	// A clone chooses the same.
	r2, err := m.Clone().Solve(autoSample(rand.New(rand.NewPCG(3, 4)), []float64{2, 3, 4, 5}, autoTrouble{scatter: 0.1}), Factors{})
	if err != nil {
		t.Fatal(err)
	}
	if r2.Model != r.Model || r2.Amounts[0].Conc != r.Amounts[0].Conc {
		t.Errorf("clone gave %s %g, model %s %g", r2.Model, r2.Amounts[0].Conc, r.Model, r.Amounts[0].Conc)
	}
}

// TestAutoShiftScreened: on a clean sample the shift is scored on the fit
// without it (its linearised drop in RSS, which the full fit would not
// beat by much) and not fitted; on a shifted one it passes the screen and
// is fitted.
func TestAutoShiftScreened(t *testing.T) {
	m, err := NewModel(autoSet(), Options{Auto: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		shift    float64
		screened bool
	}{{0, true}, {0.8, false}} {
		r, err := m.Solve(autoSample(rand.New(rand.NewPCG(5, 6)), []float64{4, 3, 6, 2}, autoTrouble{shiftNM: c.shift}), Factors{})
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, s := range r.ModelScores {
			if s.Model == "offset+shift" {
				found = true
				if s.Screened != c.screened || s.Screened && s.Chosen {
					t.Errorf("shift %g nm: %+v, want screened %v", c.shift, s, c.screened)
				}
			}
		}
		if !found {
			t.Errorf("shift %g nm: the shift was not tried: %+v", c.shift, r.ModelScores)
		}
		if c.shift != 0 && r.Model != "offset+shift" {
			t.Errorf("shift %g nm: model %s", c.shift, r.Model)
		}
	}
}

// TestAutoReusedResultBaseline: a Result reused from a sample whose
// chosen model had more baseline terms (the batch runner reuses one per
// worker) holds only the terms of the next sample's own model, so that
// no coefficient of an earlier sample is reported for it.
func TestAutoReusedResultBaseline(t *testing.T) {
	m := mustModel(t, autoSet(), Options{Auto: true})
	rng := rand.New(rand.NewPCG(7, 7))
	conc := []float64{4, 6, 3, 5}
	var r Result
	if err := m.SolveTo(&r, autoSample(rng, conc, autoTrouble{offset: 0.01, scatter: 0.2}), Factors{}); err != nil {
		t.Fatal(err)
	}
	if _, ok := r.Baseline["scatter"]; !ok {
		t.Fatalf("turbid sample: model %s, baseline %v; want the scattering term", r.Model, r.Baseline)
	}
	if err := m.SolveTo(&r, autoSample(rng, conc, autoTrouble{offset: 0.01}), Factors{}); err != nil {
		t.Fatal(err)
	}
	if r.Model != "offset" || len(r.Baseline) != 1 {
		t.Errorf("clean sample after a turbid one: model %s, baseline %v; want offset alone", r.Model, r.Baseline)
	}
}

// TestAutoSharingBitForBit: the automatic model shares work among its
// candidates (one reading of the scan, a shifted candidate's first fit
// taken from its unshifted twin, one reused weighted design); the chosen
// candidate's result must equal, bit for bit, the same model fitted on its
// own as a fixed model, plain and weighted, on clean, turbid and shifted
// samples.
func TestAutoSharingBitForBit(t *testing.T) {
	for _, weighted := range []bool{false, true} {
		auto := mustModel(t, autoSet(), Options{Auto: true, Weighted: weighted})
		fixed := map[string]*Model{}
		rng := rand.New(rand.NewPCG(3, 9))
		var r Result // reused, as the batch runner does
		for i := range 24 {
			tr := autoTrouble{offset: 0.01}
			switch i % 3 {
			case 1:
				tr.scatter = 0.15
			case 2:
				tr.shiftNM = 0.8
			}
			s := autoSample(rng, []float64{2 + float64(i%5), 5, 3, 6}, tr)
			if err := auto.SolveTo(&r, s, Factors{}); err != nil {
				t.Fatal(err)
			}
			name, shift := strings.CutSuffix(r.Model, "+shift")
			fm := fixed[r.Model]
			if fm == nil {
				opt := fixedModel(t, name, shift)
				opt.Weighted = weighted
				fm = mustModel(t, autoSet(), opt)
				fixed[r.Model] = fm
			}
			want := mustSolve(t, fm, s, Factors{})
			for k, a := range r.Amounts {
				w := want.Amounts[k]
				if a.Conc != w.Conc || a.SE != w.SE || a.LOD != w.LOD || a.Free != w.Free {
					t.Errorf("weighted %v, sample %d (%s), %s: auto %v ± %v (LOD %v), alone %v ± %v (LOD %v)",
						weighted, i, r.Model, a.Compound, a.Conc, a.SE, a.LOD, w.Conc, w.SE, w.LOD)
				}
			}
			if r.RMS != want.RMS || r.ShiftNM != want.ShiftNM || r.ChiSqRed != want.ChiSqRed {
				t.Errorf("weighted %v, sample %d (%s): auto rms %v shift %v chi2 %v, alone %v %v %v",
					weighted, i, r.Model, r.RMS, r.ShiftNM, r.ChiSqRed, want.RMS, want.ShiftNM, want.ChiSqRed)
			}
		}
		if len(fixed) < 3 {
			t.Errorf("weighted %v: models chosen %d, want the offset, scattering and shift all chosen", weighted, len(fixed))
		}
	}
}

// TestAutoCloneWhileSolving: a worker may clone the model (batch's
// workers each take a Clone) while another solves with it. Clone reads
// only what is fixed when the model is made, so under the race detector
// (.ci/run runs go test -race) this reports nothing; before, Clone copied
// the whole per-sample state that the solving goroutine writes. The
// clones must also solve alike.
func TestAutoCloneWhileSolving(t *testing.T) {
	m, err := NewModel(autoSet(), Options{Auto: true})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	s := autoSample(rng, []float64{2, 3, 4, 5}, autoTrouble{scatter: 0.05})
	done := make(chan error)
	go func() {
		for range 20 {
			if _, err := m.Solve(s, Factors{}); err != nil {
				done <- err
				return
			}
		}
		done <- nil
	}()
	var clones []*Model
	for range 20 {
		clones = append(clones, m.Clone())
	}
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	want, err := m.Solve(s, Factors{})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range clones {
		got, err := c.Solve(s, Factors{})
		if err != nil || got.Model != want.Model || !reflect.DeepEqual(got.Amounts, want.Amounts) {
			t.Fatalf("clone: %v, model %q amounts %+v; want %q %+v", err, got.Model, got.Amounts, want.Model, want.Amounts)
		}
	}
}
