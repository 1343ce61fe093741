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

// publishedTable is the copy of the published Savitzky-Golay tables.
const publishedTable = "../testdata/sg/savitzky-golay.md"

// scipyFixture holds weights and filtered signals from SciPy, made by
// ../testdata/sg/gen_scipy.py.
const scipyFixture = "../testdata/sg/scipy_savgol.txt"

// tableTol bounds |N*c_i - C_i| for the published integer weights C_i:
// the weights come out of a QR least-squares solve with rounding near
// 1e-15 and N is at most 429. Measured worst: 5.7e-14; the bound leaves
// a factor of about 90.
const tableTol = 5e-12

// TestWeightsPublished compares the centre weights with the published
// tables: A. Savitzky & M. J. E. Golay, Anal. Chem. 36 (1964) 1627, with the
// corrections of J. Steinier, Y. Termonia & J. Deltour, Anal. Chem. 44
// (1972) 1906 (testdata/sg/savitzky-golay.md).
func TestWeightsPublished(t *testing.T) {
	f, err := os.Open(publishedTable)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	// Filter names in the table and the (order, deriv) pairs they stand for:
	// each published row serves two orders.
	kinds := map[string][][2]int{
		"smooth, quadratic/cubic":          {{2, 0}, {3, 0}},
		"smooth, quartic/quintic":          {{4, 0}, {5, 0}},
		"1st derivative, linear/quadratic": {{1, 1}, {2, 1}},
		"1st derivative, cubic/quartic":    {{3, 1}, {4, 1}},
		"2nd derivative, quadratic/cubic":  {{2, 2}, {3, 2}},
	}
	seen := map[string]bool{}
	var worst float64
	kind := ""
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		text := sc.Text()
		if !strings.HasPrefix(text, "|") || strings.Contains(text, "---") || strings.Contains(text, "| filter") {
			continue
		}
		cells := strings.Split(strings.TrimSuffix(strings.TrimPrefix(strings.TrimSpace(text), "|"), "|"), "|")
		if len(cells) != 4 {
			t.Fatalf("%s:%d: want 4 cells, got %d", publishedTable, line, len(cells))
		}
		for i := range cells {
			cells[i] = strings.TrimSpace(cells[i])
		}
		if cells[0] != "" {
			kind = cells[0]
		}
		pairs, ok := kinds[kind]
		if !ok {
			t.Fatalf("%s:%d: unknown filter %q", publishedTable, line, kind)
		}
		window, err1 := strconv.Atoi(cells[1])
		norm, err2 := strconv.ParseFloat(cells[3], 64)
		var want []float64
		for c := range strings.SplitSeq(cells[2], ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(c), 64)
			if err != nil {
				t.Fatalf("%s:%d: %v", publishedTable, line, err)
			}
			want = append(want, v)
		}
		if err1 != nil || err2 != nil || len(want) != window {
			t.Fatalf("%s:%d: malformed row", publishedTable, line)
		}
		for _, p := range pairs {
			got, err := SavitzkyGolayWeights(window, p[0], p[1])
			if err != nil {
				t.Fatalf("%s:%d: SavitzkyGolayWeights(%d, %d, %d): %v", publishedTable, line, window, p[0], p[1], err)
			}
			for i := range want {
				// Savitzky & Golay 1964 / Steinier et al. 1972, the row at publishedTable:line.
				what := fmt.Sprintf("%s:%d: SavitzkyGolayWeights(%d, %d, %d)[%d]*%g (published)", publishedTable, line, window, p[0], p[1], i, norm)
				worst = math.Max(worst, near.Abs(t, what, got[i]*norm, want[i], tableTol))
			}
			seen[fmt.Sprintf("%d/%d/%d", window, p[0], p[1])] = true
		}
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	t.Logf("worst |N*c_i - C_i| against the published tables: %.2g", worst)
	// The rows the checks must cover: smoothing 5, 7, 9, 11 points
	// (quadratic/cubic) and first derivative 5 and 7 points.
	for _, key := range []string{"5/2/0", "7/2/0", "9/2/0", "11/2/0", "5/3/0", "7/3/0", "9/3/0", "11/3/0",
		"5/2/1", "7/2/1", "5/3/1", "7/3/1"} {
		if !seen[key] {
			t.Errorf("%s: no row for window/order/deriv %s", publishedTable, key)
		}
	}
}

// TestWeightsInvariants checks the moment conditions that define the
// weights (stated with the published tables): at every evaluation offset
// t, including the edge rows, the d-th derivative weights applied to u^j,
// u = q/m, give the d-th derivative of u^j with respect to the sample
// index at t, for every j <= order. Windows and orders reach well beyond
// the tables (up to window 51, order 50).
func TestWeightsInvariants(t *testing.T) {
	refused := 0
	defer func() {
		// Derivatives of order 50 on 51 points have weights near 1e12.
		if refused == 0 {
			t.Error("no filter was refused for its noise gain")
		}
	}()
	for _, w := range []int{3, 5, 9, 25, 51} {
		for o := 0; o < w; o++ {
			if o > 8 && o != w-1 && o != w/2 {
				continue
			}
			for d := 0; d <= 2 && d <= o; d++ {
				f, err := newSavitzkyGolay(w, o, d)
				if err != nil {
					// Only near-interpolating derivative filters may be
					// refused, for their noise gain.
					if d > 0 && o > w/2 && errors.Is(err, errStep) {
						refused++
						continue
					}
					t.Fatalf("newSavitzkyGolay(%d, %d, %d): %v", w, o, d, err)
				}
				m := w / 2
				for pos := -m; pos <= m; pos++ {
					c := f.WeightsAt(pos)
					ut := float64(pos) / float64(m)
					for j := 0; j <= o; j++ {
						var s, scale float64
						for i, ci := range c {
							x := math.Pow(float64(i-m)/float64(m), float64(j))
							s += ci * x
							scale += math.Abs(ci * x)
						}
						want := 0.0
						if j >= d {
							want = math.Pow(ut, float64(j-d)) / math.Pow(float64(m), float64(d))
							for k := j - d + 1; k <= j; k++ {
								want *= float64(k)
							}
						}
						if math.Abs(s-want) > 1e-10*math.Max(1, scale) {
							t.Errorf("window %d order %d deriv %d offset %d: moment %d = %g, want %g", w, o, d, pos, j, s, want)
						}
					}
				}
			}
		}
	}
}

// scipyRecord is one line of the SciPy fixture.
type scipyRecord struct {
	line    int
	kind    string
	w, o, d int
	h       float64
	vals    []float64
}

func readSciPy(t *testing.T) []scipyRecord {
	t.Helper()
	f, err := os.Open(scipyFixture)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var recs []scipyRecord
	sc := bufio.NewScanner(f)
	sc.Buffer(nil, 1<<20)
	for line := 1; sc.Scan(); line++ {
		fs := strings.Fields(sc.Text())
		if len(fs) == 0 || strings.HasPrefix(fs[0], "#") {
			continue
		}
		r := scipyRecord{line: line, kind: fs[0]}
		var nums []float64
		for _, s := range fs[1:] {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("%s:%d: %v", scipyFixture, line, err)
			}
			nums = append(nums, v)
		}
		switch r.kind {
		case "weights", "filter":
			r.w, r.o, r.d, r.vals = int(nums[0]), int(nums[1]), int(nums[2]), nums[3:]
		case "signal":
			r.h, r.vals = nums[0], nums[1:]
		default:
			t.Fatalf("%s:%d: unknown record %q", scipyFixture, line, r.kind)
		}
		recs = append(recs, r)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return recs
}

// scipyWeightsTol and scipyFilterTol bound the difference from SciPy
// relative to the largest magnitude compared (near.RelSlice): both sides
// solve the same least-squares problem in double precision (SciPy by
// lstsq), windows up to 31 and orders up to 6. Measured worst: weights
// 2.5e-10, filtered signals 2.5e-10; the bounds leave a factor of 4 (the
// Vandermonde systems of the largest windows and orders lose about six
// digits on one side or the other).
const (
	scipyWeightsTol = 1e-9
	scipyFilterTol  = 1e-9
)

// TestSciPy compares weights and filtered signals, edges included, with
// scipy.signal.savgol_coeffs and savgol_filter(mode="interp") from SciPy
// 1.10.1 (testdata/sg/scipy_savgol.txt, made by gen_scipy.py).
func TestSciPy(t *testing.T) {
	recs := readSciPy(t)
	var signal scipyRecord
	nw, nf := 0, 0
	var worstW, worstF float64
	for _, r := range recs {
		switch r.kind {
		case "signal":
			signal = r
		case "weights":
			nw++
			got, err := SavitzkyGolayWeights(r.w, r.o, r.d)
			if err != nil {
				t.Fatalf("%s:%d: %v", scipyFixture, r.line, err)
			}
			// scipy.signal.savgol_coeffs, the record at scipyFixture:line.
			what := fmt.Sprintf("%s:%d: weights(%d, %d, %d) (SciPy savgol_coeffs)", scipyFixture, r.line, r.w, r.o, r.d)
			worstW = math.Max(worstW, near.RelSlice(t, what, got, r.vals, scipyWeightsTol))
		case "filter":
			nf++
			if signal.vals == nil {
				t.Fatalf("%s:%d: filter before signal", scipyFixture, r.line)
			}
			wl := make([]float64, len(signal.vals))
			for i := range wl {
				wl[i] = 400 + signal.h*float64(i)
			}
			got, err := Step{Kind: kindSG, Window: r.w, Order: r.o, Deriv: r.d}.Apply(wl, signal.vals)
			if err != nil {
				t.Fatalf("%s:%d: %v", scipyFixture, r.line, err)
			}
			// scipy.signal.savgol_filter(mode="interp"), the record at scipyFixture:line.
			what := fmt.Sprintf("%s:%d: filter(%d, %d, %d) (SciPy savgol_filter)", scipyFixture, r.line, r.w, r.o, r.d)
			worstF = math.Max(worstF, near.RelSlice(t, what, got, r.vals, scipyFilterTol))
		}
	}
	if nw < 50 || nf < 5 {
		t.Fatalf("%s: only %d weight and %d filter records", scipyFixture, nw, nf)
	}
	t.Logf("worst difference from SciPy relative to the largest value: weights %.2g, filtered signals %.2g", worstW, worstF)
}

// compareRel fails if any |got-want| exceeds tol times the largest |want|
// (at least 1).
func compareRel(t *testing.T, what string, got, want []float64, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: %d values, want %d", what, len(got), len(want))
		return
	}
	scale := 1.0
	for _, v := range want {
		scale = math.Max(scale, math.Abs(v))
	}
	for i := range got {
		if !(math.Abs(got[i]-want[i]) <= tol*scale) { // NaN fails
			t.Errorf("%s[%d] = %.15g, want %.15g", what, i, got[i], want[i])
			return
		}
	}
}

// polyTol bounds the relative error of a polynomial passed through a
// filter of equal or higher order, including the edge rule; the
// polynomials below are of order 1 on the grid, so this is rounding.
const polyTol = 1e-9

// poly evaluates Σ a_j u^j and its first two derivatives in u.
func poly(a []float64, u float64) (v, d1, d2 float64) {
	for j := len(a) - 1; j >= 0; j-- {
		d2 = d2*u + 2*d1
		d1 = d1*u + v
		v = v*u + a[j]
	}
	return v, d1, d2
}

// TestPolynomialExact: a polynomial of degree <= order is reproduced
// exactly, edges included, and its first and second derivatives per nm
// come out exact (the defining property of least-squares polynomial
// filters, Savitzky & Golay 1964). Grids run up and down.
func TestPolynomialExact(t *testing.T) {
	// Coefficients in u = (λ - 450)/50 so that all terms matter.
	coef := []float64{0.4, -0.3, 0.25, 0.15, -0.1, 0.05}
	grids := map[string][]float64{}
	up := make([]float64, 61)
	down := make([]float64, 61)
	for i := range up {
		up[i] = 420 + 0.5*float64(i)
		down[i] = 480 - 1.0*float64(i)
	}
	grids["up 0.5 nm"], grids["down 1 nm"] = up, down
	for gname, wl := range grids {
		for _, w := range []int{5, 7, 11, 21} {
			for o := 1; o < w && o <= 5; o++ {
				for deg := 0; deg <= o; deg++ {
					a := coef[:deg+1]
					y := make([]float64, len(wl))
					want := [3][]float64{make([]float64, len(wl)), make([]float64, len(wl)), make([]float64, len(wl))}
					for i, l := range wl {
						v, d1, d2 := poly(a, (l-450)/50)
						y[i] = v
						want[0][i], want[1][i], want[2][i] = v, d1/50, d2/2500
					}
					for d := 0; d <= 2 && d <= o; d++ {
						got, err := Step{Kind: kindSG, Window: w, Order: o, Deriv: d}.Apply(wl, y)
						if err != nil {
							t.Fatal(err)
						}
						compareRel(t, fmt.Sprintf("%s: sg:%d,%d,%d of degree %d", gname, w, o, d, deg), got, want[d], polyTol)
					}
				}
			}
		}
	}
}

// TestPolynomialTooHigh shows the exactness test can fail: a filter of
// order 2 does not reproduce a quartic (its error at the edges and centre
// is of the size of the quartic term).
func TestPolynomialTooHigh(t *testing.T) {
	wl := make([]float64, 41)
	y := make([]float64, 41)
	for i := range wl {
		wl[i] = 500 + float64(i)
		u := (wl[i] - 520) / 20
		y[i] = u * u * u * u
	}
	got, err := Step{Kind: kindSG, Window: 11, Order: 2}.Apply(wl, y)
	if err != nil {
		t.Fatal(err)
	}
	var worst float64
	for i := range y {
		worst = math.Max(worst, math.Abs(got[i]-y[i]))
	}
	if worst < 1e-3 {
		t.Errorf("order-2 filter reproduced a quartic to %g", worst)
	}
}

func TestSGErrors(t *testing.T) {
	even := func(n int) []float64 {
		wl := make([]float64, n)
		for i := range wl {
			wl[i] = 300 + float64(i)
		}
		return wl
	}
	uneven := even(20)
	uneven[10] += 0.01 // 1 % of the step, above gridTolerance
	slightly := even(20)
	slightly[10] += 0.0001 // rounding, below gridTolerance
	unsorted := even(20)
	unsorted[5], unsorted[6] = unsorted[6], unsorted[5]
	for _, tc := range []struct {
		name string
		step Step
		wl   []float64
		want error
	}{
		{"uneven", Step{Kind: kindSG, Window: 5, Order: 2, Deriv: 1}, uneven, ErrUnevenGrid},
		{"rounded grid", Step{Kind: kindSG, Window: 5, Order: 2, Deriv: 1}, slightly, nil},
		{"short", Step{Kind: kindSG, Window: 21, Order: 2}, even(20), errData},
		{"unsorted", Step{Kind: kindSG, Window: 5, Order: 2}, unsorted, errData},
		{"even window", Step{Kind: kindSG, Window: 6, Order: 2}, even(20), errStep},
		{"order too high", Step{Kind: kindSG, Window: 5, Order: 5}, even(20), errStep},
		{"deriv above order", Step{Kind: kindSG, Window: 5, Order: 1, Deriv: 2}, even(20), errStep},
		{"deriv 3", Step{Kind: kindSG, Window: 7, Order: 4, Deriv: 3}, even(20), errStep},
	} {
		t.Run(tc.name, func(t *testing.T) {
			y := make([]float64, len(tc.wl))
			_, err := tc.step.Apply(tc.wl, y)
			if !errors.Is(err, tc.want) || (tc.want == nil) != (err == nil) {
				t.Errorf("Apply = %v, want %v", err, tc.want)
			}
		})
	}
}

// TestFilterReuse: a filter gives the same answer twice and does not
// touch its input.
func TestFilterReuse(t *testing.T) {
	f, err := newSavitzkyGolay(9, 3, 1)
	if err != nil {
		t.Fatal(err)
	}
	y := make([]float64, 30)
	for i := range y {
		y[i] = math.Sin(float64(i) / 3)
	}
	orig := append([]float64(nil), y...)
	a, b := make([]float64, 30), make([]float64, 30)
	if err := f.FilterTo(a, y, 0.5); err != nil {
		t.Fatal(err)
	}
	if err := f.FilterTo(b, y, 0.5); err != nil {
		t.Fatal(err)
	}
	for i := range a {
		if a[i] != b[i] || y[i] != orig[i] {
			t.Fatalf("point %d: %g then %g (input %g, was %g)", i, a[i], b[i], y[i], orig[i])
		}
	}
	if err := f.FilterTo(a, y, 0); !errors.Is(err, errData) {
		t.Errorf("FilterTo with step 0 = %v, want errData", err)
	}
}
