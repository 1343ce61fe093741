package calibration

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"huesolve/internal/near"
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

// minLRENorris is the number of correct significant digits (LRE,
// near.LRE: NIST StRD scoring) demanded of the Norris line's certified
// values, here and in TestBuildNorris. Measured worst: 12.2 in both; the
// bound leaves about one digit.
const minLRENorris = 11.0

// TestLineNorris treats NIST StRD Norris as a one-compound calibration:
// x the concentration, y the absorbance.
func TestLineNorris(t *testing.T) {
	x, y := readNorris(t)
	lin, err := lineTest(points(x, y), 0)
	if err != nil {
		t.Fatal(err)
	}
	// Certified values, NIST StRD Norris (testdata/reference/Norris.dat
	// header), at least minLRENorris correct digits.
	lo := near.MaxLRE + 0.0
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
		lo = math.Min(lo, near.MinLRE(t, "Norris "+c.name+" (NIST certified)", c.got, c.want, minLRENorris))
	}
	t.Logf("smallest LRE over the NIST certified values: %.1f", lo)
	if lin.Levels != 35 || lin.Points != 36 {
		t.Errorf("Norris levels, points = %d, %d; want 35, 36 (x = 0.3 is replicated)", lin.Levels, lin.Points)
	}
}

// Relative tolerances of the calibration line and its tests against
// SciPy/NumPy (testdata/reference/linearity.txt), worst over the Norris,
// straight and curved sets. Each leaves a factor of about 100 over the
// measured worst case.
const (
	lineSlopeTol      = 1e-13 // measured 5.1e-16
	lineInterceptTol  = 1e-10 // measured 7.9e-13
	lineSETol         = 1e-9  // measured 1.2e-11 (slope and intercept SE)
	lineResidualSDTol = 1e-12 // measured 1.8e-14
	lineR2Tol         = 1e-14 // measured 2.2e-16 (one unit in the last place; a factor of 45)
	// The test statistics are differences of residual sums of squares,
	// so they carry fewer correct digits.
	mandelTol = 1e-10 // measured 1.4e-12 (F), 1.6e-12 (p)
	lofTol    = 3e-11 // measured 2.4e-13 (F), 3.3e-14 (p)
)

// pAbsTol bounds |p - p_SciPy| for the p-values far in the tail, where a
// relative bound is meaningless: gonum's F survival function keeps about
// 1e-16 absolute accuracy.
const pAbsTol = 1e-15

// TestLineTests checks the Mandel and lack-of-fit statistics against
// SciPy (testdata/reference/linearity.txt, gen-linearity.py), and that
// Mandel's test flags the curved set and passes the straight one.
func TestLineTests(t *testing.T) {
	fx := readFixture(t)
	nx, ny := readNorris(t)
	sets := map[string][2][]float64{"norris": {nx, ny}, "straight": fx.data["straight"], "curved": fx.data["curved"]}
	worst := map[string]float64{}
	defer func() { t.Logf("worst relative difference from SciPy: %v", worst) }()
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
				{"slope", lin.Slope, lineSlopeTol},
				{"intercept", lin.Intercept, lineInterceptTol},
				{"slope_se", lin.SlopeSE, lineSETol},
				{"intercept_se", lin.InterceptSE, lineSETol},
				{"residual_sd", lin.ResidualSD, lineResidualSDTol},
				{"r2", lin.R2, lineR2Tol},
				{"mandel_f", lin.MandelF, mandelTol},
				{"mandel_p", lin.MandelP, mandelTol},
				{"lof_f", lin.LackOfFitF, lofTol},
				{"lof_p", lin.LackOfFitP, lofTol},
			} {
				want, ok := fx.value[name+" "+c.key]
				if !ok {
					t.Fatalf("linearity.txt has no %s %s", name, c.key)
				}
				// SciPy (linearity.txt, gen-linearity.py). p-values far
				// in the tail are compared absolutely: gonum's F survival
				// function keeps about 1e-16 absolute accuracy.
				what := fmt.Sprintf("%s %s (SciPy)", name, c.key)
				if strings.HasSuffix(c.key, "_p") && near.AbsDiff(c.got, want) <= pAbsTol {
					near.Abs(t, what, c.got, want, pAbsTol)
					continue
				}
				e := near.Rel(t, what, c.got, want, c.tol)
				worst[c.key] = math.Max(worst[c.key], e)
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

// mandelStraddle is the relative distance either side of the SciPy
// critical value at which TestMandelCritical puts Mandel's statistic: far
// above the agreement of the statistic with SciPy (mandelTol) and of the
// bisection (mandelSolveTol), small enough that a rule at another level
// or another quantile would decide at least one side differently.
const mandelStraddle = 1e-6

// mandelSolveTol bounds the relative distance of the bisected Mandel
// statistic from its target: the bisection runs to adjacent floats, so
// this only guards against a statistic that jumps; it is far inside
// mandelStraddle.
const mandelSolveTol = 1e-10

// mandelLevelTol bounds the relative difference of Mandel's p-value at
// the SciPy critical value from 1 - TestLevel. Measured: 1.9e-13
// (F(1, 33)); the bound leaves a factor of about 100.
const mandelLevelTol = 2e-11

// TestMandelCritical checks the project's decision from Mandel's test
// (lineTest's Curved, p < 1 - TestLevel) against the 99 % point of
// F(1, N-3) from SciPy (stats.f.ppf, testdata/reference/linearity.txt,
// gen-linearity.py), the comparison ISO 8466-1 prescribes: data whose
// statistic PG lies just below the critical value must pass as straight,
// data just above it must be flagged curved, and at the critical value
// the p-value must be 1 - TestLevel. The data are the straight set
// (N = 21) and Norris (N = 36) with a growing quadratic term added.
func TestMandelCritical(t *testing.T) {
	fx := readFixture(t)
	nx, ny := readNorris(t)
	for _, c := range []struct {
		name string
		x, y []float64
	}{
		{"straight", fx.data["straight"][0], fx.data["straight"][1]},
		{"norris", nx, ny},
	} {
		t.Run(c.name, func(t *testing.T) {
			dof := len(c.x) - 3
			key := fmt.Sprintf("crit f99_1_%d", dof)
			crit, ok := fx.value[key]
			if !ok {
				t.Fatalf("linearity.txt has no %s", key)
			}
			xmax, ymax := 0.0, 0.0
			for i, v := range c.x {
				xmax, ymax = max(xmax, math.Abs(v)), max(ymax, math.Abs(c.y[i]))
			}
			// at fits the line to y + a (x/xmax)^2.
			at := func(a float64) reference.Linearity {
				y := make([]float64, len(c.y))
				for i, v := range c.x {
					y[i] = c.y[i] + a*(v/xmax)*(v/xmax)
				}
				lin, err := lineTest(points(c.x, y), 0)
				if err != nil {
					t.Fatal(err)
				}
				return lin
			}
			lo, hi := 0.0, 1e-6*ymax
			if f := at(lo).MandelF; !(f < crit*(1-mandelStraddle)) {
				t.Fatalf("the data alone give Mandel's F %g, want it below %g", f, crit)
			}
			for at(hi).MandelF < 2*crit {
				if hi *= 2; hi > 1e300 {
					t.Fatalf("no quadratic term makes Mandel's F reach %g", 2*crit)
				}
			}
			// solve bisects for the term that puts F at target.
			solve := func(target float64) reference.Linearity {
				a, b := lo, hi
				for range 200 {
					m := (a + b) / 2
					if f := at(m).MandelF; f < target {
						a = m
					} else {
						b = m
					}
				}
				lin := at(b)
				near.Rel(t, fmt.Sprintf("Mandel's F bisected to %.17g", target), lin.MandelF, target, mandelSolveTol)
				return lin
			}
			below, above := solve(crit*(1-mandelStraddle)), solve(crit*(1+mandelStraddle))
			if below.Curved || below.CurvedUnconfirmed {
				t.Errorf("F = %.12g just below the SciPy F(1, %d) 99 %% point %.12g: flagged curved (p %g)", below.MandelF, dof, crit, below.MandelP)
			}
			if !above.Curved {
				t.Errorf("F = %.12g just above the SciPy F(1, %d) 99 %% point %.12g: not flagged curved (p %g)", above.MandelF, dof, crit, above.MandelP)
			}
			at99 := solve(crit)
			d := near.Rel(t, fmt.Sprintf("Mandel's p at the SciPy F(1, %d) 99 %% point", dof), at99.MandelP, 1-reference.TestLevel, mandelLevelTol)
			t.Logf("F(1, %d) 99 %% point %.15g (SciPy): p there %.15g, relative difference from %g %.2g", dof, crit, at99.MandelP, 1-reference.TestLevel, d)
		})
	}
}

func TestLineTooFew(t *testing.T) {
	_, err := lineTest(points([]float64{1, 1, 1}, []float64{0.1, 0.11, 0.1}), 0)
	if err == nil {
		t.Fatal("line through one level: no error")
	}
}
