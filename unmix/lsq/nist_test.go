package lsq

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"huesolve/internal/near"
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

// Correct significant digits (LRE, near.LRE: NIST StRD scoring) demanded
// of every certified value (coefficients, their SDs, residual SD, R²).
// Measured worst over both passes: Longley 10.9 (cond2 of the design
// 4.9e9), Norris 12.5; each bound leaves about one digit for other BLAS
// builds.
const (
	minLRELongley = 10.0
	minLRENorris  = 11.5
)

// TestNISTLinear fits the NIST StRD linear least-squares data sets with
// every coefficient free, which must reproduce ordinary least squares.
// Source: NIST/ITL Statistical Reference Datasets, Linear Least Squares
// Regression, certified values in the headers of testdata/nist/*.dat.
func TestNISTLinear(t *testing.T) {
	for _, c := range []struct {
		name   string
		minLRE float64
	}{{"Longley.dat", minLRELongley}, {"Norris.dat", minLRENorris}} {
		t.Run(c.name, func(t *testing.T) {
			d := readSTRD(t, c.name)
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
			lo := near.MaxLRE + 0.0
			for pass := range 2 { // reuse the Result: same answer
				if err := s.Solve(&res, d.y); err != nil {
					t.Fatal(err)
				}
				// NIST StRD certified values (header of testdata/nist/<name>).
				check := func(what string, got, want float64) {
					t.Helper()
					lo = math.Min(lo, near.MinLRE(t, fmt.Sprintf("%s pass %d: %s (NIST certified)", c.name, pass, what), got, want, c.minLRE))
				}
				for j := range p {
					check(fmt.Sprintf("B%d", j), res.Coef[j], d.coef[j])
					check(fmt.Sprintf("sd(B%d)", j), res.SE[j], d.sd[j])
					if res.AtBound[j] {
						t.Errorf("free column %d marked at bound", j)
					}
				}
				check("residual SD", math.Sqrt(res.RSS/float64(res.DoF)), d.resSD)
				check("R-squared", res.R2, d.r2)
				if res.DoF != len(d.y)-p {
					t.Errorf("DoF = %d, want %d", res.DoF, len(d.y)-p)
				}
				if res.Status != Converged || res.KKT > KKTTol {
					t.Errorf("status %v, KKT %g", res.Status, res.KKT)
				}
			}
			t.Logf("%s: smallest LRE over the certified values %.1f (bound %.1f); KKT %.2g; Cond (scaled) %.4g", c.name, lo, c.minLRE, res.KKT, s.Cond())
		})
	}
}

// TestNorrisDurbinWatson checks the Durbin-Watson statistic of the Norris
// fit in data order against the one computed here from the NIST certified
// coefficients B0, B1 and the data: residuals e_i = y_i - B0 - B1 x_i,
// DW = sum (e_i - e_(i-1))^2 / sum e_i^2 (Durbin & Watson 1950). The
// certified coefficients have 15 digits, so the reference DW is good to
// far better than dwTol.
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
	// dwTol bounds the relative difference from the DW of the NIST
	// certified fit. Measured: 1.3e-12; the bound leaves a factor of
	// about 80.
	const dwTol = 1e-10
	d2 := near.Rel(t, "Norris Durbin-Watson (from the NIST StRD certified coefficients)", res.DW, want, dwTol)
	t.Logf("Durbin-Watson %.15g, relative difference %.2g", res.DW, d2)
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

// Relative tolerances of cond2 against mpmath. A double-precision SVD
// resolves cond2 only to about 1e-16 * cond2 relative: 5e-7 for
// Longley's design (cond2 near 4.9e9), 1e-13 for Norris (855).
// Measured: Longley 2.9e-14, Norris 6.6e-16; the bounds leave a factor
// of about 100 and stay within what the SVD guarantees for Norris.
const (
	condTolLongley = 3e-12
	condTolNorris  = 1e-13
)

// TestDesignCond checks cond2 on the unscaled NIST designs against the
// values of designCond. Longley's design (cond2 near 4.9e9) is resolved
// by a double-precision SVD only to about 1e-16 * cond2 relative.
func TestDesignCond(t *testing.T) {
	table := designCond(t)
	for _, c := range []struct {
		name string
		tol  float64
	}{
		{"Longley.dat", condTolLongley},
		{"Norris.dat", condTolNorris},
	} {
		want, ok := table[c.name]
		if !ok {
			t.Fatalf("no condition number for %s", c.name)
		}
		d := readSTRD(t, c.name)
		got, err := cond2(d.design())
		if err != nil {
			t.Fatal(err)
		}
		// mpmath at 50 digits, testdata/nist/cond.csv (see designCond).
		rd := near.Rel(t, c.name+": cond2 of the design (mpmath)", got, want, c.tol)
		t.Logf("%s: cond2 %.15g, relative difference %.2g", c.name, got, rd)
	}
}
