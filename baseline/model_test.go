package baseline

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"huesolve/internal/near"
)

func TestParseModel(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want Model
		str  string
		err  bool
	}{
		{in: "none", want: Model{Degree: -1}, str: "none"},
		{in: "offset", want: Model{Degree: 0}, str: "offset"},
		{in: "linear", want: Model{Degree: 1}, str: "linear"},
		{in: "quadratic", want: Model{Degree: 2}, str: "quadratic"},
		{in: " Cubic ", want: Model{Degree: 3}, str: "cubic"},
		{in: "offset+scatter", want: Model{Degree: 0, Scatter: true, ScatterPower: 4}, str: "offset+scatter"},
		{in: "none+scatter=2.5", want: Model{Degree: -1, Scatter: true, ScatterPower: 2.5}, str: "none+scatter=2.5"},
		{in: "linear + scatter = 4", want: Model{Degree: 1, Scatter: true, ScatterPower: 4}, str: "linear+scatter"},
		{in: "", err: true},
		{in: "quartic", err: true},
		{in: "offset+slope", err: true},
		{in: "offset+scatter=", err: true},
		{in: "offset+scatter=0", err: true},
		{in: "offset+scatter=-4", err: true},
		{in: "offset+scatter=NaN", err: true},
		{in: "offset+scatter=Inf", err: true},
		{in: "offset+scatter=9", err: true},
		{in: "offset+scatter+scatter", err: true},
		{in: "scatter", err: true},
	} {
		t.Run(tc.in, func(t *testing.T) {
			got, err := ParseModel(tc.in)
			if tc.err {
				if !errors.Is(err, errModel) {
					t.Errorf("ParseModel(%q) = %+v, %v; want errModel", tc.in, got, err)
				}
				return
			}
			if err != nil || got != tc.want {
				t.Fatalf("ParseModel(%q) = %+v, %v; want %+v", tc.in, got, err, tc.want)
			}
			if s := got.String(); s != tc.str {
				t.Errorf("String() = %q, want %q", s, tc.str)
			}
		})
	}
	// The zero value is an offset; power 0 means the default.
	if s := (Model{Scatter: true}).String(); s != "offset+scatter" {
		t.Errorf("Model{Scatter: true}.String() = %q", s)
	}
	if s := (Model{Degree: 7}).String(); s != "degree(7)" {
		t.Errorf("Model{Degree: 7}.String() = %q", s)
	}
}

// TestColumnsValues checks the columns at the ends and the middle of the
// range against the Legendre values P_n(1) = 1, P_n(-1) = (-1)^n,
// P2(0) = -1/2, P3(0) = 0 (Abramowitz & Stegun, Handbook of Mathematical
// Functions, 22.2.10 and Table 22.9, recalled from memory) and the
// scattering column against its definition (λ/c)^-P.
func TestColumnsValues(t *testing.T) {
	wl := []float64{200, 300, 400, 500, 600} // c = 400, h = 200
	m := Model{Degree: 3, Scatter: true, ScatterPower: 4}
	cols, nonneg, names, err := m.Columns(wl)
	if err != nil {
		t.Fatal(err)
	}
	wantNames := []string{"offset", "slope", "curve2", "curve3", "scatter"}
	wantNonneg := []bool{false, false, false, false, true}
	if len(cols) != 5 || m.NumColumns() != 5 {
		t.Fatalf("%d columns (NumColumns %d), want 5", len(cols), m.NumColumns())
	}
	for j := range wantNames {
		if names[j] != wantNames[j] || nonneg[j] != wantNonneg[j] {
			t.Errorf("column %d: %q nonneg %v, want %q %v", j, names[j], nonneg[j], wantNames[j], wantNonneg[j])
		}
	}
	want := [][]float64{
		{1, 1, 1, 1, 1},
		{-1, -0.5, 0, 0.5, 1},
		{1, -0.125, -0.5, -0.125, 1},              // (3t²-1)/2 at t = ±0.5: -0.125
		{-1, 0.4375, 0, -0.4375, 1},               // (5t³-3t)/2 at t = -0.5: 0.4375
		{16, 256.0 / 81, 1, 0.4096, 256.0 / 1296}, // (λ/400)^-4
	}
	// columnTol bounds |column - want| relative to |want|, and
	// columnZeroTol absolutely where want is 0: the Legendre values are
	// exact in binary and the scattering column is one power. Measured:
	// exact agreement; the bounds allow a few units in the last place
	// (fused multiply-add on other architectures).
	const (
		columnTol     = 1e-15
		columnZeroTol = 1e-16
	)
	worst := 0.0
	for j := range want {
		for i := range wl {
			// Abramowitz & Stegun 22.2.10 / Table 22.9 (Legendre rows);
			// the definition (λ/c)^-P (scattering row).
			what := fmt.Sprintf("%s at %g nm", names[j], wl[i])
			if want[j][i] == 0 {
				worst = math.Max(worst, near.Abs(t, what, cols[j][i], 0, columnZeroTol))
				continue
			}
			worst = math.Max(worst, near.Rel(t, what, cols[j][i], want[j][i], columnTol))
		}
	}
	t.Logf("worst relative difference %.2g", worst)
	// Fewer terms are a prefix; "none" gives nothing.
	if c, _, n, err := (Model{Degree: 1}).Columns(wl); err != nil || len(c) != 2 || n[1] != "slope" {
		t.Errorf("linear: %d columns %v", len(c), n)
	}
	if c, _, _, err := (Model{Degree: -1}).Columns(wl); err != nil || len(c) != 0 {
		t.Errorf("none: %d columns", len(c))
	}
	// A one-point grid: t = 0, scatter 1.
	c, _, _, err := (Model{Degree: 3, Scatter: true}).Columns([]float64{450})
	if err != nil {
		t.Fatal(err)
	}
	if c[1][0] != 0 || c[2][0] != -0.5 || c[3][0] != 0 || c[4][0] != 1 {
		t.Errorf("one point: %v", c)
	}
}

// condLimit bounds the 2-norm condition number of the column-scaled
// cubic+scatter design on a 190..1100 nm grid (measured 5.7; the cubic
// Legendre columns alone 1.01; the raw powers 1, λ, λ², λ³ of wavelength
// in nm, also column-scaled, 205).
const condLimit = 10

// TestColumnsConditioning: the Legendre columns on scaled wavelength keep
// the design well conditioned where raw powers of wavelength do not.
func TestColumnsConditioning(t *testing.T) {
	var wl []float64
	for l := 190.0; l <= 1100; l += 1 {
		wl = append(wl, l)
	}
	cols, _, _, err := Model{Degree: 3, Scatter: true}.Columns(wl)
	if err != nil {
		t.Fatal(err)
	}
	build := func(cols [][]float64) *mat.Dense {
		x := mat.NewDense(len(wl), len(cols), nil)
		for j, c := range cols {
			norm := math.Sqrt(dot(c, c))
			for i, v := range c {
				x.Set(i, j, v/norm)
			}
		}
		return x
	}
	got := mat.Cond(build(cols), 2)
	raw := make([][]float64, 4)
	for j := range raw {
		raw[j] = make([]float64, len(wl))
		for i, l := range wl {
			raw[j][i] = math.Pow(l, float64(j))
		}
	}
	rawCond := mat.Cond(build(raw), 2)
	poly, _, _, err := Model{Degree: 3}.Columns(wl)
	if err != nil {
		t.Fatal(err)
	}
	polyCond := mat.Cond(build(poly), 2)
	t.Logf("condition: Legendre+scatter %.3g, Legendre %.3g, raw powers %.3g", got, polyCond, rawCond)
	if got > condLimit {
		t.Errorf("condition number %.3g, want <= %d", got, condLimit)
	}
	if rawCond < 10*polyCond {
		t.Errorf("raw powers condition %.3g not far above Legendre %.3g", rawCond, polyCond)
	}
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func TestModelCheck(t *testing.T) {
	for _, tc := range []struct {
		name string
		m    Model
		wl   []float64
		ok   bool
	}{
		{"fine", Model{Degree: 2, Scatter: true}, []float64{300, 400}, true},
		{"empty", Model{}, nil, false},
		{"NaN", Model{}, []float64{300, math.NaN()}, false},
		{"zero wavelength with scatter", Model{Scatter: true}, []float64{0, 400}, false},
		{"zero wavelength without scatter", Model{}, []float64{0, 400}, true},
		{"degree 4", Model{Degree: 4}, []float64{300}, false},
		{"degree -2", Model{Degree: -2}, []float64{300}, false},
		{"negative power", Model{Scatter: true, ScatterPower: -1}, []float64{300}, false},
		{"overflow", Model{Scatter: true, ScatterPower: 8}, []float64{1e-300, 500}, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.m.Check(tc.wl)
			if (err == nil) != tc.ok || (err != nil && !errors.Is(err, errModel)) {
				t.Errorf("Check = %v, want ok %v", err, tc.ok)
			}
		})
	}
	for _, tc := range []struct {
		name string
		m    Model
		wl   []float64
	}{
		{"negative wavelength", Model{Scatter: true}, []float64{-1, 400}},
		{"degree out of range on no grid", Model{Degree: 4}, nil},
	} {
		cols, nonneg, names, err := tc.m.Columns(tc.wl)
		if !errors.Is(err, errModel) || cols != nil || nonneg != nil || names != nil {
			t.Errorf("%s: Columns = %d columns, error %v; want none and errModel", tc.name, len(cols), err)
		}
	}
}
