package near

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// fakeTB records the failures a check reports instead of failing the test.
type fakeTB struct {
	testing.TB
	errs []string
}

func (f *fakeTB) Helper() {}

func (f *fakeTB) Errorf(format string, args ...any) {
	f.errs = append(f.errs, fmt.Sprintf(format, args...))
}

var (
	nan  = math.NaN()
	inf  = math.Inf(1)
	ninf = math.Inf(-1)
)

func TestScalarChecks(t *testing.T) {
	type check func(tb testing.TB, what string, got, want, tol float64) float64
	checks := map[string]check{"Rel": Rel, "Abs": Abs, "MinLRE": MinLRE}
	for _, c := range []struct {
		check     string
		got, want float64
		tol       float64
		fail      bool
	}{
		{"Rel", 1 + 1e-10, 1, 1e-9, false},
		{"Rel", 1 + 1e-8, 1, 1e-9, true},
		{"Rel", -2, -2, 0, false},
		{"Rel", 1e-300, 0, 1e-9, true}, // relative to zero: only zero agrees
		{"Rel", 0, 0, 0, false},
		{"Rel", nan, 1, 1e-9, true},
		{"Rel", nan, 1, inf, true}, // even with no tolerance at all
		{"Rel", inf, 1, 1e-9, true},
		{"Rel", ninf, 1, 1e-9, true},
		{"Rel", 1, nan, 1e-9, true}, // a NaN in the fixture is not a pass
		{"Rel", 1, inf, 1e-9, true},
		{"Rel", nan, nan, 0, false}, // want NaN explicitly, got NaN
		{"Rel", inf, inf, 0, false},
		{"Rel", ninf, inf, 1, true},
		{"Rel", nan, inf, 1, true},
		{"Abs", 1.5, 1, 0.5, false},
		{"Abs", 1.5 + 1e-9, 1, 0.5, true},
		{"Abs", nan, 0, 1e300, true},
		{"Abs", inf, 0, inf, true},
		{"Abs", 0, nan, 1, true},
		{"Abs", nan, nan, 0, false},
		{"Abs", ninf, ninf, 0, false},
		{"MinLRE", 1.0000001, 1, 6.9, false},
		{"MinLRE", 1.0000001, 1, 7.1, true},
		{"MinLRE", 3, 3, MaxLRE, false},
		{"MinLRE", nan, 3, 0.5, true},
		{"MinLRE", inf, 3, 0.5, true},
		{"MinLRE", 3, nan, 0.5, true},
		{"MinLRE", nan, nan, MaxLRE, false},
	} {
		tb := &fakeTB{}
		checks[c.check](tb, "the value", c.got, c.want, c.tol)
		if failed := len(tb.errs) > 0; failed != c.fail {
			t.Errorf("%s(got %g, want %g, %g): failed %v, want %v (%q)", c.check, c.got, c.want, c.tol, failed, c.fail, tb.errs)
		}
		for _, e := range tb.errs {
			if !strings.Contains(e, "the value") {
				t.Errorf("%s: failure %q does not name what was compared", c.check, e)
			}
		}
	}
}

func TestLRE(t *testing.T) {
	for _, c := range []struct{ got, want, lre float64 }{
		{1, 1, MaxLRE},
		{1.001, 1, 3},
		{-0.999, -1, 3},
		{1e-5, 0, 5}, // want zero: -log10|got|
		{2, 1, 0},
		{100, 1, 0}, // no negative digits
		{nan, 1, 0},
		{inf, 1, 0},
		{1, nan, 0},
		{nan, nan, MaxLRE},
		{1 + 1e-17, 1, MaxLRE},
	} {
		if got := LRE(c.got, c.want); math.Abs(got-c.lre) > 1e-9 || math.IsNaN(got) {
			t.Errorf("LRE(%g, %g) = %g, want %g", c.got, c.want, got, c.lre)
		}
	}
}

func TestRelSlice(t *testing.T) {
	for _, c := range []struct {
		name      string
		got, want []float64
		tol       float64
		fail      bool
		worst     float64
	}{
		{"exact", []float64{1, 0, -2}, []float64{1, 0, -2}, 0, false, 0},
		{"scaled by the largest", []float64{2, 1e-10}, []float64{2, 0}, 1e-10, false, 5e-11},
		{"out of tolerance", []float64{2, 1e-9}, []float64{2, 0}, 1e-10, true, 5e-10},
		{"NaN", []float64{1, nan}, []float64{1, 0}, 1, true, inf},
		{"Inf", []float64{inf, 1}, []float64{1, 1}, 1, true, inf},
		{"NaN wanted", []float64{nan, 1}, []float64{nan, 1}, 0, false, 0},
		{"NaN in want", []float64{1, 1}, []float64{nan, 1}, 1, true, inf},
		{"length", []float64{1}, []float64{1, 1}, 1, true, inf},
		{"all zero wanted", []float64{0, 1e-300}, []float64{0, 0}, 1, true, inf},
		{"empty", nil, nil, 0, false, 0},
	} {
		tb := &fakeTB{}
		w := RelSlice(tb, "the vector", c.got, c.want, c.tol)
		if failed := len(tb.errs) > 0; failed != c.fail {
			t.Errorf("%s: failed %v, want %v (%q)", c.name, failed, c.fail, tb.errs)
		}
		if math.Abs(w-c.worst) > 1e-12*math.Max(1, c.worst) && w != c.worst {
			t.Errorf("%s: worst %g, want %g", c.name, w, c.worst)
		}
		for _, e := range tb.errs {
			if !strings.Contains(e, "the vector") {
				t.Errorf("%s: failure %q does not name what was compared", c.name, e)
			}
		}
	}
}

func TestDiffs(t *testing.T) {
	for _, c := range []struct{ got, want, rel, abs float64 }{
		{3, 2, 0.5, 1},
		{nan, 2, inf, inf},
		{nan, nan, 0, 0},
		{1, 0, inf, 1},
	} {
		if r, a := RelDiff(c.got, c.want), AbsDiff(c.got, c.want); r != c.rel || a != c.abs {
			t.Errorf("RelDiff, AbsDiff(%g, %g) = %g, %g; want %g, %g", c.got, c.want, r, a, c.rel, c.abs)
		}
	}
}
