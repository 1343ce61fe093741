package spectrum

import (
	"bufio"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"huesolve/internal/near"
)

func TestCheckGrid(t *testing.T) {
	for _, c := range []struct {
		wl []float64
		ok bool
	}{
		{[]float64{1, 2, 3}, true},
		{[]float64{}, true},
		{[]float64{1, 1}, false},
		{[]float64{2, 1}, false},
		{[]float64{1, math.NaN()}, false},
		{[]float64{math.Inf(-1), 1}, false},
	} {
		err := checkGrid(c.wl)
		if (err == nil) != c.ok || (err != nil && !errors.Is(err, errGrid)) {
			t.Errorf("checkGrid(%v) = %v", c.wl, err)
		}
	}
}

func TestResampleLinear(t *testing.T) {
	s := &Spectrum{Wavelengths: []float64{400, 402, 404}, Values: []float64{1, 3, 2}, Source: Source{File: "f.csv"}}
	r, err := s.Resample([]float64{400, 401, 402, 403.5, 404})
	// Linear interpolation worked by hand: 401 -> (1+3)/2, 403.5 -> 3 - 0.75*1.
	if err != nil || !equalFloats(r.Values, []float64{1, 2, 3, 2.25, 2}) {
		t.Errorf("Resample = %v, %v", r, err)
	}
	for _, grid := range [][]float64{{399, 400}, {400, 404.001}} {
		_, err := s.Resample(grid)
		if !errors.Is(err, errOutOfRange) || !strings.Contains(err.Error(), "400-404 nm") || !strings.Contains(err.Error(), "f.csv") {
			t.Errorf("Resample(%v) = %v, want an out-of-range error naming both ranges", grid, err)
		}
	}
	// A rounding error past the end is not extrapolation.
	if r, err := s.Resample([]float64{400 - 1e-12, 404 + 1e-12}); err != nil || r.Values[0] != 1 || r.Values[1] != 2 {
		t.Errorf("slack: %v %v", r, err)
	}
	if _, err := s.Resample([]float64{402, 401}); !errors.Is(err, errGrid) {
		t.Errorf("descending target: %v", err)
	}
}

// TestResampleCubic compares the cubic resamplers with SciPy's
// CubicSpline(bc_type="natural") and PchipInterpolator, tabulated in
// testdata/spectra/interp-scipy.csv by gen-interp.py (SciPy 1.10.1).
func TestResampleCubic(t *testing.T) {
	path := filepath.Join(specDir, "interp-scipy.csv")
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var nodesX, nodesY, q, nat, pch []float64
	sc := bufio.NewScanner(f)
	line := 0
	parse := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%s:%d: %v", path, line, err)
		}
		return v
	}
	for sc.Scan() {
		line++
		l := sc.Text()
		switch {
		case strings.HasPrefix(l, "# nodes x: "):
			for _, w := range strings.Fields(l[len("# nodes x: "):]) {
				nodesX = append(nodesX, parse(w))
			}
		case strings.HasPrefix(l, "# nodes y: "):
			for _, w := range strings.Fields(l[len("# nodes y: "):]) {
				nodesY = append(nodesY, parse(w))
			}
		case strings.HasPrefix(l, "#"), strings.HasPrefix(l, "wavelength"):
		default:
			p := strings.Split(l, ",")
			q = append(q, parse(p[0]))
			nat = append(nat, parse(p[1]))
			pch = append(pch, parse(p[2]))
		}
	}
	s := &Spectrum{Wavelengths: nodesX, Values: nodesY}
	// cubicTol bounds |value - SciPy| (absolute, values of order 1).
	// Both are direct formulas or a tridiagonal solve, so only rounding
	// separates them. Measured worst: 2.4e-15 (natural), 1.1e-16
	// (monotone); the bound leaves a factor of about 100.
	const cubicTol = 2.5e-13
	worst := map[Interpolation]float64{}
	for _, c := range []struct {
		m    Interpolation
		want []float64
	}{{NaturalCubic, nat}, {MonotoneCubic, pch}} {
		r, err := s.ResampleWith(q, c.m)
		if err != nil {
			t.Fatal(err)
		}
		for i := range q {
			// SciPy CubicSpline / PchipInterpolator, interp-scipy.csv.
			d := near.Abs(t, fmt.Sprintf("%v at %g (SciPy, %s)", c.m, q[i], path), r.Values[i], c.want[i], cubicTol)
			worst[c.m] = math.Max(worst[c.m], d)
		}
	}
	t.Logf("worst difference from SciPy: natural %.2g, monotone %.2g", worst[NaturalCubic], worst[MonotoneCubic])
	// The monotone cubic stays within neighbouring values on the flat run
	// 415-421 nm; the natural spline does not (it rings).
	r, _ := s.ResampleWith([]float64{416, 417, 418, 419}, MonotoneCubic)
	for _, v := range r.Values {
		if v != 0.4 {
			t.Errorf("monotone on a flat run: %v", r.Values)
		}
	}
}

func TestSameGridAndCommonRange(t *testing.T) {
	a := []float64{400, 401, 402}
	if !SameGrid(a, []float64{400, 401 + 1e-12, 402}) || SameGrid(a, []float64{400, 401.1, 402}) || SameGrid(a, a[:2]) {
		t.Error("SameGrid")
	}
	ss := []*Spectrum{
		{Wavelengths: []float64{400, 500}, Values: []float64{0, 0}},
		{Wavelengths: []float64{450, 600}, Values: []float64{0, 0}},
	}
	lo, hi, err := CommonRange(ss)
	if err != nil || lo != 450 || hi != 500 {
		t.Errorf("CommonRange = %g, %g, %v", lo, hi, err)
	}
	ss[1].Wavelengths = []float64{500, 600}
	if _, _, err := CommonRange(ss); !errors.Is(err, errOutOfRange) {
		t.Errorf("disjoint: %v", err)
	}
	if _, _, err := CommonRange([]*Spectrum{{}}); !errors.Is(err, ErrEmpty) {
		t.Errorf("empty spectrum: %v", err)
	}
}

func ExampleSpectrum_ResampleWith() {
	// A coarse scan (5 nm steps) of a band put onto a 2.5 nm grid. The
	// monotone values agree with SciPy 1.10 PchipInterpolator.
	s := &Spectrum{Wavelengths: []float64{400, 405, 410, 415, 420}, Values: []float64{0.1, 0.6, 1.0, 0.6, 0.1}}
	grid := []float64{405, 407.5, 410, 412.5}
	for _, m := range []Interpolation{Linear, MonotoneCubic} {
		r, err := s.ResampleWith(grid, m)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-8v %.4f\n", m, r.Values)
	}
	// Output:
	// linear   [0.6000 0.8000 1.0000 0.8000]
	// monotone [0.6000 0.8556 1.0000 0.8556]
}
