package baseline

import (
	"encoding/json"
	"errors"
	"math"
	"testing"
)

func TestParseStep(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want Step
		str  string
		err  bool
	}{
		{in: "zero:700-750", want: Step{Kind: kindZero, Lo: 700, Hi: 750}, str: "zero:700-750"},
		{in: " ZERO : 700.5 - 750 ", want: Step{Kind: kindZero, Lo: 700.5, Hi: 750}, str: "zero:700.5-750"},
		{in: "zero:600-600", want: Step{Kind: kindZero, Lo: 600, Hi: 600}, str: "zero:600-600"},
		{in: "zero:1e-05-2", want: Step{Kind: kindZero, Lo: 1e-5, Hi: 2}, str: "zero:1e-05-2"},
		{in: "als:1e5,0.01", want: Step{Kind: kindALS, Lambda: 1e5, P: 0.01}, str: "als:100000,0.01"},
		{in: "sg:11,2", want: Step{Kind: kindSG, Window: 11, Order: 2}, str: "sg:11,2"},
		{in: "sg:7,3,1", want: Step{Kind: kindSG, Window: 7, Order: 3, Deriv: 1}, str: "sg:7,3,1"},
		{in: "sg:9,4,2", want: Step{Kind: kindSG, Window: 9, Order: 4, Deriv: 2}, str: "sg:9,4,2"},
		{in: "sg:5,2,0", want: Step{Kind: kindSG, Window: 5, Order: 2}, str: "sg:5,2"},
		{in: "", err: true},
		{in: "zero", err: true},
		{in: "zero:", err: true},
		{in: "zero:750-700", err: true},
		{in: "zero:700", err: true},
		{in: "zero:a-b", err: true},
		{in: "zero:NaN-700", err: true},
		{in: "als:1e5", err: true},
		{in: "als:0,0.01", err: true},
		{in: "als:-1,0.01", err: true},
		{in: "als:1e5,0", err: true},
		{in: "als:1e5,1", err: true},
		{in: "als:Inf,0.5", err: true},
		{in: "sg:4,2", err: true},
		{in: "sg:1,0", err: true},
		{in: "sg:5,5", err: true},
		{in: "sg:5,-1", err: true},
		{in: "sg:5,1,2", err: true},
		{in: "sg:7,4,3", err: true},
		{in: "sg:5,2,1,0", err: true},
		{in: "sg:5.0,2", err: true},
		{in: "sg:51,50,1", err: true}, // noise gain near 1e12
		{in: "sg:1003,2", err: true},
		{in: "sg:99999999999,2", err: true},
		{in: "sg:51,50", want: Step{Kind: kindSG, Window: 51, Order: 50}, str: "sg:51,50"},
		{in: "smooth:5,2", err: true},
	} {
		t.Run(tc.in, func(t *testing.T) {
			got, err := ParseStep(tc.in)
			if tc.err {
				if !errors.Is(err, errStep) {
					t.Errorf("ParseStep(%q) = %+v, %v; want errStep", tc.in, got, err)
				}
				return
			}
			if err != nil || got != tc.want {
				t.Fatalf("ParseStep(%q) = %+v, %v; want %+v", tc.in, got, err, tc.want)
			}
			if s := got.String(); s != tc.str {
				t.Errorf("String() = %q, want %q", s, tc.str)
			}
		})
	}
}

func TestStepCheckStrayFields(t *testing.T) {
	for _, s := range []Step{
		{Kind: kindZero, Lo: 1, Hi: 2, Window: 5},
		{Kind: kindALS, Lambda: 10, P: 0.1, Lo: 3},
		{Kind: kindSG, Window: 5, Order: 2, P: 0.1},
		{Kind: "Zero", Lo: 1, Hi: 2},
		{},
	} {
		if err := s.check(); !errors.Is(err, errStep) {
			t.Errorf("%+v.Check() = %v, want errStep", s, err)
		}
		if _, err := s.Apply([]float64{1, 2, 3}, []float64{1, 2, 3}); !errors.Is(err, errStep) {
			t.Errorf("%+v.Apply = %v, want errStep", s, err)
		}
	}
}

// TestZero: the mean over the region, ends included, is subtracted from
// every point (definition of region zeroing).
func TestZero(t *testing.T) {
	// A grid accumulated in steps of 50/6 nm from 600 nm, so that point
	// 18 lands just above 750 nm (750.00000000000068) by rounding.
	wl := make([]float64, 61)
	y := make([]float64, len(wl))
	wl[0] = 600
	for i := range wl {
		if i > 0 {
			wl[i] = wl[i-1] + 50.0/6
		}
		y[i] = 0.01 * float64(i)
	}
	if wl[18] <= 750 {
		t.Fatalf("grid point 18 = %.17g, want just above 750", wl[18])
	}
	// Points 12 (700 nm) to 18 (750 nm): mean of 0.12 .. 0.18 = 0.15.
	got, err := Step{Kind: kindZero, Lo: 700, Hi: 750}.Apply(wl, y)
	if err != nil {
		t.Fatal(err)
	}
	for i := range y {
		if want := y[i] - 0.15; math.Abs(got[i]-want) > 1e-12 {
			t.Fatalf("at %g nm: %g, want %g", wl[i], got[i], want)
		}
	}
	if y[0] != 0 {
		t.Error("Apply changed its input")
	}
	_, err = Step{Kind: kindZero, Lo: 1200, Hi: 1300}.Apply(wl, y)
	if !errors.Is(err, errEmptyRegion) {
		t.Errorf("region outside the grid: %v, want errEmptyRegion", err)
	}
	_, err = Step{Kind: kindZero, Lo: 701, Hi: 707}.Apply(wl, y)
	if !errors.Is(err, errEmptyRegion) {
		t.Errorf("region between two points: %v, want errEmptyRegion", err)
	}
}

func TestApplyDataErrors(t *testing.T) {
	st := Step{Kind: kindZero, Lo: 1, Hi: 2}
	for _, tc := range []struct {
		name  string
		wl, y []float64
	}{
		{"lengths", []float64{1, 2}, []float64{1}},
		{"empty", nil, nil},
		{"NaN value", []float64{1, 2}, []float64{1, math.NaN()}},
		{"Inf wavelength", []float64{1, math.Inf(1)}, []float64{1, 2}},
	} {
		if _, err := st.Apply(tc.wl, tc.y); !errors.Is(err, errData) {
			t.Errorf("%s: %v, want errData", tc.name, err)
		}
	}
	// Finite input whose second derivative per nm overflows.
	tiny := []float64{0, 1e-300, 2e-300, 3e-300, 4e-300}
	if _, err := (Step{Kind: kindSG, Window: 5, Order: 2, Deriv: 2}).Apply(tiny, []float64{1, 0, 1, 0, 1}); !errors.Is(err, errData) {
		t.Errorf("overflowing derivative: %v, want errData", err)
	}
	als := Step{Kind: kindALS, Lambda: 10, P: 0.01}
	if _, err := als.Apply([]float64{1, 3, 2, 4}, []float64{1, 2, 3, 4}); !errors.Is(err, errData) {
		t.Errorf("ALS on an unsorted grid: %v, want errData", err)
	}
}

// TestApplyAll: steps run in order, a derivative after zeroing equals the
// derivative alone (the constant drops out), and the input is untouched.
func TestApplyAll(t *testing.T) {
	wl := make([]float64, 40)
	y := make([]float64, len(wl))
	for i := range wl {
		wl[i] = 500 + 2*float64(i)
		y[i] = 0.3 + math.Sin(wl[i]/15)
	}
	orig := append([]float64(nil), y...)
	zero := Step{Kind: kindZero, Lo: 560, Hi: 570}
	deriv := Step{Kind: kindSG, Window: 7, Order: 3, Deriv: 1}
	both, err := ApplyAll([]Step{zero, deriv}, wl, y)
	if err != nil {
		t.Fatal(err)
	}
	alone, err := deriv.Apply(wl, y)
	if err != nil {
		t.Fatal(err)
	}
	compareRel(t, "zero then derivative", both, alone, 1e-12)
	none, err := ApplyAll(nil, wl, y)
	if err != nil {
		t.Fatal(err)
	}
	none[0] = 99
	for i := range y {
		if y[i] != orig[i] {
			t.Fatalf("input changed at %d", i)
		}
	}
	if _, err := ApplyAll([]Step{zero, {Kind: kindZero, Lo: 0, Hi: 1}}, wl, y); !errors.Is(err, errEmptyRegion) {
		t.Errorf("second step failing: %v, want errEmptyRegion", err)
	}
}

func FuzzParseStep(f *testing.F) {
	for _, s := range []string{"zero:700-750", "zero:1e-05-2", "zero:-5--2", "als:1e5,0.01", "sg:11,2", "sg:7,3,1", "sg:9,4,2", "zero:", "als:1,1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		st, err := ParseStep(s)
		if err != nil {
			return
		}
		back, err := ParseStep(st.String())
		if err != nil || back != st {
			t.Fatalf("ParseStep(%q) = %+v; its String %q reads back as %+v, %v", s, st, st.String(), back, err)
		}
	})
}

func FuzzParseModel(f *testing.F) {
	for _, s := range []string{"none", "offset", "linear", "quadratic", "cubic", "offset+scatter", "none+scatter=2.5", "cubic+scatter=1e-3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		m, err := ParseModel(s)
		if err != nil {
			return
		}
		back, err := ParseModel(m.String())
		if err != nil || back != m {
			t.Fatalf("ParseModel(%q) = %+v; its String %q reads back as %+v, %v", s, m, m.String(), back, err)
		}
		if err := m.Check([]float64{200, 500, 900}); err != nil {
			t.Fatalf("ParseModel(%q) accepted a model Check rejects: %v", s, err)
		}
	})
}

// TestStepJSON: steps survive the JSON of a saved reference set.
func TestStepJSON(t *testing.T) {
	in := []Step{
		{Kind: kindZero, Lo: 700, Hi: 750},
		{Kind: kindALS, Lambda: 1e5, P: 0.01},
		{Kind: kindSG, Window: 11, Order: 3, Deriv: 2},
	}
	data, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	var out []Step
	if err := json.Unmarshal(data, &out); err != nil {
		t.Fatal(err)
	}
	if len(out) != len(in) {
		t.Fatalf("%s read back as %+v", data, out)
	}
	for i := range in {
		if out[i] != in[i] {
			t.Errorf("%s: step %d read back as %+v, want %+v", data, i, out[i], in[i])
		}
	}
}
