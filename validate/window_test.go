package validate

import (
	"context"
	"encoding/json"
	"errors"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"huesolve/baseline"
)

// The advisor must pick the window that avoids a band where two compounds
// are indistinguishable. A and B share a strong band at 450 nm (same shape
// and height: they cannot be told apart there) and have weak bands of
// their own at 590 and 650 nm (invented test data). Windows are limited
// to 150 nm, so a window covers either the strong shared band or the weak
// distinct ones; only the latter determine A and B. In the control case
// B's strong band moves to 480 nm, and the strong bands become the best
// window.
func TestAdviseWindowAvoidsIndistinguishableBand(t *testing.T) {
	g := grid(400, 700, 1)
	for _, control := range []bool{false, true} {
		bBand := 450.0
		if control {
			bBand = 480
		}
		a := add(gauss(g, 450, 20, 1), 1, gauss(g, 590, 15, 0.3))
		b := add(gauss(g, bBand, 20, 1), 1, gauss(g, 650, 15, 0.3))
		set := memSet(g, []string{"A", "B"}, [][]float64{a, b}, 0.001)
		for _, bl := range []baseline.Model{noBaseline, {Degree: 0}} {
			adv, err := AdviseWindow(set, WindowOptions{Baseline: bl, MaxWidthNM: 150})
			if err != nil {
				t.Fatal(err)
			}
			best := adv.Candidates[adv.Best]
			t.Logf("control %v %s: best %g-%g nm cond %.3g worst relative SE %.4g; %d windows",
				control, bl, best.Lo, best.Hi, best.Cond, best.Worst, len(adv.Candidates))
			if best.Hi-best.Lo > 150 {
				t.Errorf("width %g > 150", best.Hi-best.Lo)
			}
			if !control && (best.Lo < 500 || best.Hi < 655) {
				t.Errorf("%s: recommended %g-%g nm, want it clear of the shared band and covering the 590 and 650 nm peaks", bl, best.Lo, best.Hi)
			}
			if control && best.Lo > 460 {
				t.Errorf("control %s: recommended %g-%g nm, want the strong distinct bands at 450 and 480 nm", bl, best.Lo, best.Hi)
			}
			if control {
				continue
			}
			// Windows confined to the shared band cannot separate A and B.
			for _, c := range adv.Candidates {
				if c.Hi <= 500 && !c.Singular && c.Worst < 1 {
					t.Errorf("%s: window %g-%g nm inside the shared band has worst relative SE %g, want huge or singular", bl, c.Lo, c.Hi, c.Worst)
				}
			}
		}
	}
}

// The window advisor's standard errors come from one SVD of the whole
// design; FiguresOfMerit gets them from a projection per compound. The two
// routes must agree.
func TestAdviseWindowAgreesWithMerits(t *testing.T) {
	g := grid(400, 600, 2)
	a := gauss(g, 470, 25, 1)
	b := gauss(g, 520, 30, 0.7)
	set := memSet(g, []string{"a", "b"}, [][]float64{a, b}, 0)
	for i := range g {
		set.Noise[i] = 0.001 * (1 + float64(i%7)/3)
	}
	for _, weighted := range []bool{false, true} {
		model := baseline.Model{Degree: 1}
		// Levels near zero: the noise model at A = 0, as in the merits.
		adv, err := AdviseWindow(set, WindowOptions{Baseline: model, Weighted: weighted, StepNM: 20, MinWidthNM: 60, Levels: []float64{1e-9, 1e-9}})
		if err != nil {
			t.Fatal(err)
		}
		checked := 0
		for _, c := range adv.Candidates {
			m, err := FiguresOfMerit(set, MeritOptions{WindowLo: c.Lo, WindowHi: c.Hi, Baseline: model, Weighted: weighted})
			if err != nil {
				t.Fatal(err)
			}
			if m.Points != c.Points {
				t.Fatalf("%g-%g: points %d vs %d", c.Lo, c.Hi, m.Points, c.Points)
			}
			if !scalar.EqualWithinRel(m.Cond, c.Cond, 1e-8) {
				t.Errorf("weighted %v %g-%g: cond %g, merits %g", weighted, c.Lo, c.Hi, c.Cond, m.Cond)
			}
			for n := range c.SE {
				if !m.Compounds[n].Quantifiable {
					continue
				}
				if !scalar.EqualWithinRel(c.SE[n], m.Compounds[n].SE, 1e-8) {
					t.Errorf("weighted %v %g-%g: SE(%s) %.10g, merits %.10g", weighted, c.Lo, c.Hi, m.Compounds[n].Compound, c.SE[n], m.Compounds[n].SE)
				}
			}
			checked++
		}
		if checked < 10 {
			t.Errorf("only %d candidates", checked)
		}
	}
}

func TestAdviseWindowErrors(t *testing.T) {
	g := grid(400, 700, 1)
	a := gauss(g, 500, 30, 1)
	set := memSet(g, []string{"A", "A2"}, [][]float64{a, a}, 0.001)
	if _, err := AdviseWindow(set, WindowOptions{Baseline: noBaseline}); !errors.Is(err, errNoWindow) {
		t.Errorf("duplicate compounds: err = %v, want errNoWindow", err)
	}
	set = memSet(g, []string{"A"}, [][]float64{a}, 0.001)
	for _, opt := range []WindowOptions{{StepNM: -1}, {MinWidthNM: -5}, {Levels: []float64{1, 2}}, {Levels: []float64{-1}}, {PathCM: -2}} {
		if _, err := AdviseWindow(set, opt); err == nil {
			t.Errorf("%+v: no error", opt)
		}
	}
	// Levels so high that everything is above the ceiling.
	if _, err := AdviseWindow(set, WindowOptions{Levels: []float64{1e15}}); !errors.Is(err, errWindow) {
		t.Errorf("all saturated: err = %v, want errWindow", err)
	}
}

// BenchmarkAdviseWindow: 400 wavelengths at 1 nm, 4 compounds, offset
// baseline, 5 nm edges, 40 nm minimum width.
func BenchmarkAdviseWindow(b *testing.B) {
	g := grid(300, 699, 1)
	var sp [][]float64
	for k, c := range []float64{380, 450, 520, 600} {
		sp = append(sp, gauss(g, c, 30+5*float64(k), 1))
	}
	set := memSet(g, []string{"a", "b", "c", "d"}, sp, 0.001)
	for _, weighted := range []bool{false, true} {
		name := "unweighted"
		if weighted {
			name = "weighted"
		}
		b.Run(name, func(b *testing.B) {
			var n int
			for b.Loop() {
				adv, err := AdviseWindow(set, WindowOptions{Baseline: baseline.Model{Degree: 0}, Weighted: weighted})
				if err != nil {
					b.Fatal(err)
				}
				n = len(adv.Candidates)
			}
			b.ReportMetric(float64(n), "windows")
		})
	}
}

// The margin rule: A and B share a band at 450 nm (height 0.6, width
// 20 nm) and have their own at 590 and 650 nm (invented test data). Taking
// in the shared band lowers the predicted errors a little (it pins the sum
// A + B) but makes the design worse conditioned. The strict minimum takes
// the whole grid; with the default 10 % margin the advisor keeps to the
// bands that tell A and B apart, at a worst error within the margin and a
// condition number lower by more than it.
func TestAdviseWindowMarginPrefersConditioning(t *testing.T) {
	g := grid(400, 700, 1)
	a := add(gauss(g, 450, 20, 0.6), 1, gauss(g, 590, 15, 1))
	b := add(gauss(g, 450, 20, 0.6), 1, gauss(g, 650, 15, 1))
	set := memSet(g, []string{"A", "B"}, [][]float64{a, b}, 0.001)
	def, err := AdviseWindow(set, WindowOptions{Baseline: noBaseline})
	if err != nil {
		t.Fatal(err)
	}
	strict, err := AdviseWindow(set, WindowOptions{Baseline: noBaseline, Equivalent: -1})
	if err != nil {
		t.Fatal(err)
	}
	d, s := def.Candidates[def.Best], strict.Candidates[strict.Best]
	t.Logf("margin 10 %%: %g-%g nm cond %.3g worst %.4g; strict: %g-%g nm cond %.3g worst %.4g", d.Lo, d.Hi, d.Cond, d.Worst, s.Lo, s.Hi, s.Cond, s.Worst)
	if s.Lo > 420 {
		t.Errorf("strict minimum %g-%g nm, want it to take in the shared band", s.Lo, s.Hi)
	}
	if d.Lo < 480 {
		t.Errorf("with the margin: %g-%g nm, want it clear of the shared band", d.Lo, d.Hi)
	}
	if d.Worst > 1.1*s.Worst || d.Cond*1.1 > s.Cond {
		t.Errorf("with the margin: worst %g (strict %g), cond %g (strict %g): outside the rule", d.Worst, s.Worst, d.Cond, s.Cond)
	}
}

// The JSON form gives the margin in percent, as the --equivalent flag
// takes it, and keeps the other fields.
func TestWindowAdviceJSONMarginInPercent(t *testing.T) {
	for _, c := range []struct {
		frac float64
		want string
	}{{0.1, `"equivalent_pct":10`}, {0.07, `"equivalent_pct":7`}, {0, `"equivalent_pct":0`}} {
		b, err := json.Marshal(&WindowAdvice{StepNM: 5, Equivalent: c.frac, Best: 3})
		if err != nil {
			t.Fatal(err)
		}
		s := string(b)
		if !strings.Contains(s, c.want) || !strings.Contains(s, `"step_nm":5`) || !strings.Contains(s, `"best":3`) ||
			strings.Contains(s, `"equivalent":`) || strings.Contains(s, `"Equivalent"`) {
			t.Errorf("margin %g: %s, want %s and the other fields", c.frac, s, c.want)
		}
	}
}

// TestAdviseWindowBounded: a step finer than the grid is refused naming
// both (before, --step 0.001 ran for hours: the windows grow as 1/step²),
// a step and widths that make more than MaxWindows windows are refused
// before any is tried, and a search stopped by its context says how far
// it got and wraps the context's error.
func TestAdviseWindowBounded(t *testing.T) {
	g := grid(300, 800, 1)
	set := memSet(g, []string{"A", "B"}, [][]float64{gauss(g, 450, 30, 1), gauss(g, 600, 40, 1)}, 0.001)
	var fine *StepTooFineError
	if _, err := AdviseWindow(set, WindowOptions{StepNM: 0.001}); !errors.As(err, &fine) || fine.StepNM != 0.001 || fine.GridNM != 1 {
		t.Errorf("step 0.001 on a 1 nm grid: %v, want StepTooFineError naming 0.001 and 1 nm", err)
	}
	// 501 edges at 1 nm with no minimum width to speak of: about
	// 501·500/2 = 125,250 windows, above MaxWindows.
	var many *TooManyWindowsError
	if _, err := AdviseWindow(set, WindowOptions{StepNM: 1, MinWidthNM: 1}); !errors.As(err, &many) || many.Windows <= MaxWindows || many.Windows > 501*500/2 {
		t.Errorf("1 nm steps from 1 nm widths: %v, want TooManyWindowsError", err)
	}
	// The same with a widest window of 100 nm is within the bound.
	if adv, err := AdviseWindow(set, WindowOptions{StepNM: 5, MinWidthNM: 40, MaxWidthNM: 100}); err != nil || len(adv.Candidates) == 0 {
		t.Errorf("bounded search: %v", err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := AdviseWindowContext(ctx, set, WindowOptions{}); !errors.Is(err, context.Canceled) || !strings.Contains(err.Error(), "stopped after 0 windows") {
		t.Errorf("cancelled search: %v, want context.Canceled after 0 windows", err)
	}
}
