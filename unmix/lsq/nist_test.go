package lsq

import (
	"bufio"
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// strd is a NIST StRD linear regression data set read from testdata/nist.
type strd struct {
	y        []float64
	x        [][]float64 // predictors by row
	coef, sd []float64   // certified
	resSD    float64     // certified residual standard deviation
	r2       float64     // certified R-squared
}

var (
	reCoef  = regexp.MustCompile(`B(\d+)\s*=\s*(\S+)\s+sd(?:\(B\d+\))?\s*=\s*(\S+)`)
	reResSD = regexp.MustCompile(`Residual standard deviation\s*=\s*(\S+)`)
	reR2    = regexp.MustCompile(`R-squared\s*=\s*(\S+)`)
)

// readSTRD reads a data set and its certified values from the header.
func readSTRD(t *testing.T, name string) *strd {
	t.Helper()
	path := "../../testdata/nist/" + name
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	d := &strd{}
	num := func(line int, s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%s:%d: %v", path, line, err)
		}
		return v
	}
	sc := bufio.NewScanner(fh)
	for line := 1; sc.Scan(); line++ {
		txt := sc.Text()
		if strings.HasPrefix(txt, "#") {
			if m := reCoef.FindStringSubmatch(txt); m != nil {
				k, _ := strconv.Atoi(m[1])
				if k != len(d.coef) {
					t.Fatalf("%s:%d: coefficient B%d out of order", path, line, k)
				}
				d.coef = append(d.coef, num(line, m[2]))
				d.sd = append(d.sd, num(line, m[3]))
			}
			if m := reResSD.FindStringSubmatch(txt); m != nil {
				d.resSD = num(line, m[1])
			}
			if m := reR2.FindStringSubmatch(txt); m != nil {
				d.r2 = num(line, m[1])
			}
			continue
		}
		f := strings.Fields(txt)
		if len(f) == 0 {
			continue
		}
		d.y = append(d.y, num(line, f[0]))
		var row []float64
		for _, s := range f[1:] {
			row = append(row, num(line, s))
		}
		d.x = append(d.x, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(d.coef) == 0 || d.resSD == 0 || d.r2 == 0 || len(d.y) == 0 {
		t.Fatalf("%s: certified values or data missing", path)
	}
	return d
}

// design returns [1, x1, ..., xk].
func (d *strd) design() *mat.Dense {
	n, k := len(d.y), len(d.x[0])
	x := mat.NewDense(n, k+1, nil)
	for i, row := range d.x {
		x.Set(i, 0, 1)
		for j, v := range row {
			x.Set(i, j+1, v)
		}
	}
	return x
}

// lre is the log relative error -log10(|got - want| / |want|), capped at
// 15 for exact agreement (NIST StRD scoring).
func lre(got, want float64) float64 {
	if got == want {
		return 15
	}
	return math.Min(15, -math.Log10(math.Abs(got-want)/math.Abs(want)))
}

// minLRE is the number of correct significant digits demanded of every
// certified value.
const minLRE = 7

// TestNISTLinear fits the NIST StRD linear least-squares data sets with
// every coefficient free, which must reproduce ordinary least squares.
// Source: NIST/ITL Statistical Reference Datasets, Linear Least Squares
// Regression, certified values in the headers of testdata/nist/*.dat.
func TestNISTLinear(t *testing.T) {
	for _, name := range []string{"Longley.dat", "Norris.dat"} {
		t.Run(name, func(t *testing.T) {
			d := readSTRD(t, name)
			x := d.design()
			_, p := x.Dims()
			if p != len(d.coef) {
				t.Fatalf("%d columns, %d certified coefficients", p, len(d.coef))
			}
			s, err := NewSolver(x, make([]bool, p), Options{})
			if err != nil {
				t.Fatal(err)
			}
			var res Result
			for pass := range 2 { // reuse the Result: same answer
				if err := s.Solve(&res, d.y); err != nil {
					t.Fatal(err)
				}
				for j := range p {
					if l := lre(res.Coef[j], d.coef[j]); l < minLRE {
						t.Errorf("pass %d: B%d = %.15g, want %.15g (NIST certified): LRE %.1f", pass, j, res.Coef[j], d.coef[j], l)
					}
					if l := lre(res.SE[j], d.sd[j]); l < minLRE {
						t.Errorf("pass %d: sd(B%d) = %.15g, want %.15g (NIST certified): LRE %.1f", pass, j, res.SE[j], d.sd[j], l)
					}
					if res.AtBound[j] {
						t.Errorf("free column %d marked at bound", j)
					}
				}
				if got := math.Sqrt(res.RSS / float64(res.DoF)); lre(got, d.resSD) < minLRE {
					t.Errorf("residual SD = %.15g, want %.15g (NIST certified)", got, d.resSD)
				}
				if lre(res.R2, d.r2) < minLRE {
					t.Errorf("R2 = %.15g, want %.15g (NIST certified)", res.R2, d.r2)
				}
				if res.DoF != len(d.y)-p {
					t.Errorf("DoF = %d, want %d", res.DoF, len(d.y)-p)
				}
				if res.Status != Converged || res.KKT > KKTTol {
					t.Errorf("status %v, KKT %g", res.Status, res.KKT)
				}
			}
			lo := 15.0
			for j := range p {
				lo = math.Min(lo, math.Min(lre(res.Coef[j], d.coef[j]), lre(res.SE[j], d.sd[j])))
			}
			t.Logf("%s: smallest LRE over coefficients and SDs %.1f; KKT %.2g; Cond (scaled) %.4g", name, lo, res.KKT, s.Cond())
		})
	}
}

// TestNorrisDurbinWatson checks the Durbin-Watson statistic of the Norris
// fit in data order against the one computed here from the NIST certified
// coefficients B0, B1 and the data: residuals e_i = y_i - B0 - B1 x_i,
// DW = sum (e_i - e_(i-1))^2 / sum e_i^2 (Durbin & Watson 1950). The
// certified coefficients have 15 digits, so the reference DW is good to
// far better than the 1e-9 asked.
func TestNorrisDurbinWatson(t *testing.T) {
	d := readSTRD(t, "Norris.dat")
	var num, den, prev float64
	for i, y := range d.y {
		e := y - d.coef[0] - d.coef[1]*d.x[i][0]
		if i > 0 {
			num += (e - prev) * (e - prev)
		}
		den += e * e
		prev = e
	}
	want := num / den
	s, err := NewSolver(d.design(), []bool{false, false}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, d.y); err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.DW-want) > 1e-9*want {
		t.Errorf("Durbin-Watson = %.15g, want %.15g", res.DW, want)
	}
}

// designCond reads testdata/nist/cond.csv: the 2-norm condition numbers of
// the NIST designs [1, x1, ..., xk] (not NIST values). Source: mpmath
// (Debian's python3-mpmath) at 50 digits, written by
// testdata/nist/gen_cond.py (cd testdata/nist && /usr/bin/python3
// gen_cond.py > cond.csv), which also records numpy.linalg.cond beside
// them.
func designCond(t *testing.T) map[string]float64 {
	t.Helper()
	const path = "../../testdata/nist/cond.csv"
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]float64{}
	for i, line := range strings.Split(strings.TrimSpace(string(b)), "\n")[1:] {
		f := strings.Split(line, ",")
		if len(f) != 3 {
			t.Fatalf("%s:%d: want 3 fields, got %q", path, i+2, line)
		}
		v, err := strconv.ParseFloat(f[1], 64)
		if err != nil {
			t.Fatalf("%s:%d: %v", path, i+2, err)
		}
		out[f[0]] = v
	}
	return out
}

// TestDesignCond checks Cond2 on the unscaled NIST designs against the
// values of designCond. Longley's design (cond2 near 4.9e9) is resolved
// by a double-precision SVD only to about 1e-16 * cond2 relative.
func TestDesignCond(t *testing.T) {
	table := designCond(t)
	for _, c := range []struct {
		name string
		tol  float64
	}{
		{"Longley.dat", 1e-6},
		{"Norris.dat", 1e-12},
	} {
		want, ok := table[c.name]
		if !ok {
			t.Fatalf("no condition number for %s", c.name)
		}
		d := readSTRD(t, c.name)
		got, err := Cond2(d.design())
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-want) > c.tol*want {
			t.Errorf("%s: Cond2 = %.15g, want %.15g", c.name, got, want)
		}
	}
}
