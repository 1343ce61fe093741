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
// fit in data order: 1.27150897125921, computed exactly from the NIST
// certified fit (not a NIST value; testdata/nist/README.md).
func TestNorrisDurbinWatson(t *testing.T) {
	d := readSTRD(t, "Norris.dat")
	s, err := NewSolver(d.design(), []bool{false, false}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, d.y); err != nil {
		t.Fatal(err)
	}
	const want = 1.27150897125921
	if math.Abs(res.DW-want) > 1e-9*want {
		t.Errorf("Durbin-Watson = %.15g, want %.15g", res.DW, want)
	}
}

// TestDesignCond checks Cond2 on the unscaled NIST designs against values
// computed at high precision (testdata/hilbert/conditioning.md and
// testdata/nist/README.md: "computed here, not NIST values").
func TestDesignCond(t *testing.T) {
	for _, c := range []struct {
		name string
		want float64
		tol  float64
	}{
		{"Longley.dat", 4.859257015e9, 1e-6},
		{"Norris.dat", 855.2233457, 1e-8},
	} {
		d := readSTRD(t, c.name)
		got, err := Cond2(d.design())
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-c.want) > c.tol*c.want {
			t.Errorf("%s: Cond2 = %.10g, want %.10g", c.name, got, c.want)
		}
	}
}
