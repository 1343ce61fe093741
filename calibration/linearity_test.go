package calibration

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
	"huesolve/reference"
)

// readNorris reads testdata/reference/Norris.dat (NIST StRD, columns y x).
func readNorris(t *testing.T) (x, y []float64) {
	t.Helper()
	f, err := os.Open("../testdata/reference/Norris.dat")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		s := strings.TrimSpace(sc.Text())
		if s == "" || strings.HasPrefix(s, "#") {
			continue
		}
		fs := strings.Fields(s)
		yv, err1 := strconv.ParseFloat(fs[0], 64)
		xv, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("Norris.dat:%d: bad line %q", line, s)
		}
		x, y = append(x, xv), append(y, yv)
	}
	if len(x) != 36 {
		t.Fatalf("Norris.dat: %d observations, want 36", len(x))
	}
	return x, y
}

// fixture is testdata/reference/linearity.txt, made by gen-linearity.py
// with NumPy and SciPy (Debian python3-scipy).
type fixture struct {
	data  map[string][2][]float64
	value map[string]float64 // "set name"
}

func readFixture(t *testing.T) fixture {
	t.Helper()
	f, err := os.Open("../testdata/reference/linearity.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	fx := fixture{data: map[string][2][]float64{}, value: map[string]float64{}}
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		fs := strings.Fields(sc.Text())
		if len(fs) == 0 || strings.HasPrefix(fs[0], "#") {
			continue
		}
		num := func(s string) float64 {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("linearity.txt:%d: %v", line, err)
			}
			return v
		}
		switch fs[0] {
		case "data":
			d := fx.data[fs[1]]
			d[0], d[1] = append(d[0], num(fs[2])), append(d[1], num(fs[3]))
			fx.data[fs[1]] = d
		case "value":
			fx.value[fs[1]+" "+fs[2]] = num(fs[3])
		default:
			t.Fatalf("linearity.txt:%d: unknown line", line)
		}
	}
	return fx
}

func points(x, y []float64) []reference.Point {
	p := make([]reference.Point, len(x))
	for i := range x {
		p[i] = reference.Point{Conc: x[i], Absorbance: y[i], Used: true}
	}
	return p
}

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// TestLineNorris treats NIST StRD Norris as a one-compound calibration:
// x the concentration, y the absorbance.
func TestLineNorris(t *testing.T) {
	x, y := readNorris(t)
	lin, err := lineTest(points(x, y), 0)
	if err != nil {
		t.Fatal(err)
	}
	// Certified values, NIST StRD Norris (testdata/reference/Norris.dat
	// header); 9 significant digits.
	const tol = 1e-9
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"slope", lin.Slope, 1.00211681802045},
		{"intercept", lin.Intercept, -0.262323073774029},
		{"slope SD", lin.SlopeSE, 0.429796848199937e-03},
		{"intercept SD", lin.InterceptSE, 0.232818234301152},
		{"residual SD", lin.ResidualSD, 0.884796396144373},
		{"R2", lin.R2, 0.999993745883712},
	} {
		if e := relErr(c.got, c.want); e > tol {
			t.Errorf("Norris %s = %.15g, want %.15g (relative error %.2g)", c.name, c.got, c.want, e)
		}
	}
	if lin.Levels != 35 || lin.Points != 36 {
		t.Errorf("Norris levels, points = %d, %d; want 35, 36 (x = 0.3 is replicated)", lin.Levels, lin.Points)
	}
}

// TestLineTests checks the Mandel and lack-of-fit statistics against
// SciPy (testdata/reference/linearity.txt, gen-linearity.py), and that
// Mandel's test flags the curved set and passes the straight one.
func TestLineTests(t *testing.T) {
	fx := readFixture(t)
	nx, ny := readNorris(t)
	sets := map[string][2][]float64{"norris": {nx, ny}, "straight": fx.data["straight"], "curved": fx.data["curved"]}
	for _, name := range []string{"norris", "straight", "curved"} {
		t.Run(name, func(t *testing.T) {
			d := sets[name]
			lin, err := lineTest(points(d[0], d[1]), 0)
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range []struct {
				key string
				got float64
				tol float64
			}{
				{"slope", lin.Slope, 1e-10},
				{"intercept", lin.Intercept, 1e-9},
				{"slope_se", lin.SlopeSE, 1e-9},
				{"intercept_se", lin.InterceptSE, 1e-9},
				{"residual_sd", lin.ResidualSD, 1e-9},
				{"r2", lin.R2, 1e-12},
				// The test statistics are differences of residual sums of
				// squares, so they carry fewer correct digits.
				{"mandel_f", lin.MandelF, 1e-6},
				{"mandel_p", lin.MandelP, 1e-6},
				{"lof_f", lin.LackOfFitF, 1e-6},
				{"lof_p", lin.LackOfFitP, 1e-6},
			} {
				want, ok := fx.value[name+" "+c.key]
				if !ok {
					t.Fatalf("linearity.txt has no %s %s", name, c.key)
				}
				// p-values far in the tail are compared absolutely: gonum's
				// F survival function keeps about 1e-16 absolute accuracy.
				if e := relErr(c.got, want); e > c.tol && !(strings.HasSuffix(c.key, "_p") && math.Abs(c.got-want) < 1e-15) {
					t.Errorf("%s %s = %.15g, want %.15g from SciPy (relative error %.2g, tolerance %g)", name, c.key, c.got, want, e, c.tol)
				}
			}
			wantCurved := name == "curved"
			if lin.Curved != wantCurved {
				t.Errorf("%s: curved = %v, want %v (Mandel F %g, p %g)", name, lin.Curved, wantCurved, lin.MandelF, lin.MandelP)
			}
			maxX := 0.0
			for _, v := range d[0] {
				maxX = max(maxX, v)
			}
			if wantCurved && lin.RangeHi >= maxX {
				t.Errorf("curved: linear range ends at %g, want it cut below the top level %g", lin.RangeHi, maxX)
			}
			if !wantCurved && lin.RangeHi != maxX {
				t.Errorf("%s: linear range ends at %g, want the top level %g", name, lin.RangeHi, maxX)
			}
		})
	}
}

// TestMandelCritical checks that the p < 1 - TestLevel rule is the same as
// comparing PG with the 99 % point of F(1, N-3), taken from SciPy
// (stats.f.ppf, linearity.txt), as ISO 8466-1 prescribes the comparison.
func TestMandelCritical(t *testing.T) {
	fx := readFixture(t)
	for _, dof := range []int{18, 33} {
		want := fx.value[fmt.Sprintf("crit f99_1_%d", dof)]
		got := distuv.F{D1: 1, D2: float64(dof)}.Quantile(reference.TestLevel)
		if e := relErr(got, want); e > 1e-8 {
			t.Errorf("F(1, %d) at %g = %.12g, want %.12g from SciPy", dof, reference.TestLevel, got, want)
		}
	}
}

func TestLineTooFew(t *testing.T) {
	_, err := lineTest(points([]float64{1, 1, 1}, []float64{0.1, 0.11, 0.1}), 0)
	if err == nil {
		t.Fatal("line through one level: no error")
	}
}
