package baseline

import (
	"bufio"
	"errors"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"huesolve/internal/near"
)

// alsFixture holds a synthetic spectrum with a known background and its
// ALS backgrounds computed with SciPy's sparse solver (made by
// testdata/gen_als.py).
const alsFixture = "testdata/als_scipy.txt"

type alsCase struct {
	line      int
	lambda, p float64
	iter      int
	z         []float64
}

func readALS(t *testing.T) (x, background, y []float64, cases []alsCase) {
	t.Helper()
	f, err := os.Open(alsFixture)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(nil, 1<<20)
	for line := 1; sc.Scan(); line++ {
		fs := strings.Fields(sc.Text())
		if len(fs) == 0 || strings.HasPrefix(fs[0], "#") {
			continue
		}
		var v []float64
		for _, s := range fs[1:] {
			n, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("%s:%d: %v", alsFixture, line, err)
			}
			v = append(v, n)
		}
		switch fs[0] {
		case "x":
			x = v
		case "background":
			background = v
		case "y":
			y = v
		case "als":
			cases = append(cases, alsCase{line: line, lambda: v[0], p: v[1], iter: int(v[2]), z: v[3:]})
		default:
			t.Fatalf("%s:%d: unknown record %q", alsFixture, line, fs[0])
		}
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(x) == 0 || len(x) != len(y) || len(x) != len(background) || len(cases) == 0 {
		t.Fatalf("%s: incomplete fixture", alsFixture)
	}
	return x, background, y, cases
}

// alsSciPyTol bounds the difference from SciPy's sparse LU solution,
// relative to the largest background value. The system's condition
// number reaches about 16*lambda/min(w) = 1.6e10 for lambda 1e6 and p
// 0.001, which allows errors near 1e-6 in either solver. Measured worst:
// 1.9e-8; the bound leaves a factor of about 50.
const alsSciPyTol = 1e-6

// TestALSSciPy: the banded Cholesky solution and the iteration count
// equal those of the same algorithm solved with scipy.sparse.linalg.spsolve
// (SciPy 1.10.1, testdata/gen_als.py), for three (lambda, p) settings.
func TestALSSciPy(t *testing.T) {
	_, _, y, cases := readALS(t)
	var worst float64
	for _, c := range cases {
		z, it, err := alsBackground(nil, y, c.lambda, c.p)
		if err != nil {
			t.Fatalf("%s:%d: %v", alsFixture, c.line, err)
		}
		if it != c.iter {
			t.Errorf("%s:%d: %d iterations, SciPy took %d", alsFixture, c.line, it, c.iter)
		}
		// scipy.sparse.linalg.spsolve, the record at alsFixture:line.
		what := fmt.Sprintf("%s:%d: ALS background (lambda %g, p %g; SciPy spsolve)", alsFixture, c.line, c.lambda, c.p)
		worst = math.Max(worst, near.RelSlice(t, what, z, c.z, alsSciPyTol))
	}
	t.Logf("worst difference from SciPy relative to the largest background value: %.2g", worst)
}

// Recovery tolerances for lambda 1e5, p 0.01 on the synthetic spectrum
// (tallest band 1.0 absorbance, noise sd 0.002). Measured: max 0.0195 at
// the short-wavelength end, where the background curves most and the
// smoother has one side only; 0.0069 more than 25 points from either end;
// RMS 0.0054 (the asymmetric weights put the estimate near the lower edge
// of the noise, about 2 sd below the truth).
const (
	alsRecoveryMax = 0.025 // bounds max |z - background| over all points
	alsRecoveryIn  = 0.01  // bounds it more than 25 points from the ends
	alsRecoveryRMS = 0.01  // bounds the root mean square of z - background
)

// TestALSRecovery: ALS recovers the known smooth background under four
// synthetic Gaussian bands (heights 0.3 to 1.0, noise sd 0.002) within the
// stated tolerances, and Apply leaves the bands on a flat zero line.
func TestALSRecovery(t *testing.T) {
	x, background, y, _ := readALS(t)
	z, _, err := alsBackground(nil, y, 1e5, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	var worst, at, inner, ss float64
	for i := range z {
		d := math.Abs(z[i] - background[i])
		ss += d * d
		if d > worst {
			worst, at = d, x[i]
		}
		if i >= 25 && i < len(z)-25 {
			inner = math.Max(inner, d)
		}
	}
	rms := math.Sqrt(ss / float64(len(z)))
	t.Logf("|z - background|: max %.4g at %g nm, max inside %.4g, RMS %.4g", worst, at, inner, rms)
	if worst > alsRecoveryMax || inner > alsRecoveryIn || rms > alsRecoveryRMS {
		t.Errorf("|z - background|: max %.4g, inside %.4g, RMS %.4g; want <= %g, %g, %g",
			worst, inner, rms, alsRecoveryMax, alsRecoveryIn, alsRecoveryRMS)
	}
	treated, err := Step{Kind: kindALS, Lambda: 1e5, P: 0.01}.Apply(x, y)
	if err != nil {
		t.Fatal(err)
	}
	for i := range treated {
		if d := treated[i] - (y[i] - z[i]); d != 0 {
			t.Fatalf("Apply at %g nm = %g, want y - z = %g", x[i], treated[i], y[i]-z[i])
		}
	}
	// Without the correction the background is 0.15..0.44, far above the
	// tolerance: the comparison above can fail.
	if floatsMin(background) < 10*alsRecoveryRMS {
		t.Fatal("fixture background too small to test recovery")
	}
}

func floatsMin(v []float64) float64 {
	m := math.Inf(1)
	for _, x := range v {
		m = math.Min(m, x)
	}
	return m
}

func TestALSErrors(t *testing.T) {
	y := []float64{1, 2, 3, 4, 5}
	for _, tc := range []struct {
		name      string
		y         []float64
		lambda, p float64
		want      error
	}{
		{"two points", []float64{1, 2}, 10, 0.01, errData},
		{"lambda 0", y, 0, 0.01, errStep},
		{"p 1", y, 10, 1, errStep},
		{"NaN", []float64{1, math.NaN(), 3}, 10, 0.01, errData},
		{"ok", y, 10, 0.01, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := alsBackground(nil, tc.y, tc.lambda, tc.p)
			if !errors.Is(err, tc.want) || (tc.want == nil) != (err == nil) {
				t.Errorf("alsBackground = %v, want %v", err, tc.want)
			}
		})
	}
	// lambda far too large for the data: the condition estimate (about
	// 10 lambda/p for these 500 points) exceeds alsCondLimit.
	_, _, yy, _ := readALS(t)
	if _, _, err := alsBackground(nil, yy, 1e13, 0.01); !errors.Is(err, errData) {
		t.Errorf("lambda 1e13: %v, want errData (ill-conditioned)", err)
	}
	if _, _, err := alsBackground(nil, yy, 1e9, 0.001); err != nil {
		t.Errorf("lambda 1e9, p 0.001: %v", err)
	}
	// The cap: the fixture case needs 6 passes, so 2 must fail and still
	// hand back the estimate.
	z2, it, err := alsBaseline(nil, yy, 1e5, 0.01, 2)
	if !errors.Is(err, errNoConvergence) || it != 2 || len(z2) != len(yy) {
		t.Errorf("cap 2: %d passes, %d values, %v; want errNoConvergence after 2", it, len(z2), err)
	}
	// A straight line is its own background for any lambda: the second
	// differences vanish, so z = y solves the system with zero residual.
	line := []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6}
	z, _, err := alsBackground(nil, line, 1e4, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	compareRel(t, "ALS of a line", z, line, 1e-9)
}
