package unmix

import (
	"errors"
	"strings"
	"testing"

	"huesolve/baseline"
)

// WindowFor: the largest window within the model's that a scan covering
// lo-hi fits, on reference grid points, inward by the shift limit with
// --shift; none with a pre-treatment (it needs the whole grid) or when
// too little is covered. A scan short of the grid is refused with that
// window as its hint.
func TestWindowFor(t *testing.T) {
	set := testSet(4) // 400-800 nm, 1 nm
	m := mustModel(t, set, Options{})
	if lo, hi, ok := m.WindowFor(400.5, 790); !ok || lo != 401 || hi != 790 {
		t.Errorf("plain: %g-%g %v, want 401-790", lo, hi, ok)
	}
	if _, _, ok := m.WindowFor(795, 797); ok {
		t.Error("3 points: a window offered")
	}
	ms := mustModel(t, set, Options{Shift: true, MaxShiftNM: 2})
	if lo, hi, ok := ms.WindowFor(401, 800); !ok || lo != 403 || hi != 798 {
		t.Errorf("shift: %g-%g %v, want 403-798", lo, hi, ok)
	}
	mw := mustModel(t, set, Options{WindowLo: 450, WindowHi: 700})
	if lo, hi, ok := mw.WindowFor(430, 690.5); !ok || lo != 450 || hi != 690 {
		t.Errorf("within the window: %g-%g %v, want 450-690", lo, hi, ok)
	}
	s := mixture{conc: []float64{1, 1, 1, 1}, noise: testNoise, seed: 3}.spectrum()
	s.Wavelengths, s.Values = s.Wavelengths[2:], s.Values[2:]
	_, err := m.Solve(s, Factors{})
	var ce *CoverageError
	if !errors.As(err, &ce) || !errors.Is(err, ErrCoverage) || !strings.Contains(err.Error(), "--window 402-800 would fit this scan") {
		t.Errorf("short scan: %v", err)
	}
	st, err := baseline.ParseStep("sg:11,2")
	if err != nil {
		t.Fatal(err)
	}
	pre := testSet(4)
	pre.Pretreat = []baseline.Step{st}
	mp := mustModel(t, pre, Options{})
	if _, _, ok := mp.WindowFor(401, 800); ok {
		t.Error("pre-treatment: a window offered")
	}
	if _, err := mp.Solve(s, Factors{}); err == nil || !strings.Contains(err.Error(), "no --window can help") {
		t.Errorf("pre-treatment, short scan: %v", err)
	}
}
