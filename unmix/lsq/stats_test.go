package lsq

import (
	"errors"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"huesolve/internal/near"
)

// coverageDesign: two overlapping non-negative bands and a free offset on
// n rows (invented data for a statistical check).
func coverageDesign(n int) *mat.Dense {
	x := mat.NewDense(n, 3, nil)
	for i := range n {
		l := float64(i) / float64(n-1)
		x.Set(i, 0, math.Exp(-0.5*math.Pow((l-0.4)/0.15, 2)))
		x.Set(i, 1, math.Exp(-0.5*math.Pow((l-0.6)/0.15, 2)))
		x.Set(i, 2, 1)
	}
	return x
}

// TestCoverage: with known Gaussian noise, the 95 % intervals must cover
// the true coefficients in about 95 % of trials (the definition of a
// confidence interval; Student t from gonum distuv when the noise level is
// estimated, the normal quantile when it is known). The binomial SD of the
// coverage over 4000 trials is 0.0034; the tolerance is 0.015 (over four
// SDs), and the seed is fixed.
func TestCoverage(t *testing.T) {
	const (
		n      = 25
		trials = 4000
		tol    = 0.015
	)
	x := coverageDesign(n)
	truth := []float64{0.8, 0.5, 0.1}
	sigma := make([]float64, n)
	for i := range sigma {
		sigma[i] = 0.01 * (1 + float64(i%5)) // heteroscedastic, known
	}
	for _, c := range []struct {
		name string
		opt  Options
	}{
		{"unweighted, noise estimated (t)", Options{}},
		{"weighted, noise known (normal)", Options{Sigma: sigma}},
		{"weighted, scaled (t)", Options{Sigma: sigma, scaleSE: true}},
	} {
		t.Run(c.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, 7))
			s, err := NewSolver(x, []bool{true, true, false}, c.opt)
			if err != nil {
				t.Fatal(err)
			}
			var res Result
			y := make([]float64, n)
			covered := make([]int, 3)
			est := make([][]float64, 3)
			var se2 [3]float64
			for range trials {
				for i := range n {
					y[i] = rng.NormFloat64() * sigma[i]
					for j, b := range truth {
						y[i] += x.At(i, j) * b
					}
				}
				if err := s.Solve(&res, y); err != nil {
					t.Fatal(err)
				}
				for j, b := range truth {
					if res.AtBound[j] {
						t.Fatalf("coefficient %d at the bound; the test needs interior truths", j)
					}
					if res.lo[j] <= b && b <= res.hi[j] {
						covered[j]++
					}
					est[j] = append(est[j], res.Coef[j])
					se2[j] += res.SE[j] * res.SE[j]
				}
			}
			for j := range truth {
				cov := float64(covered[j]) / trials
				t.Logf("coefficient %d: coverage %.4f", j, cov)
				if math.Abs(cov-Confidence) > tol {
					t.Errorf("coverage of coefficient %d = %.4f, want %.2f ± %.3f", j, cov, Confidence, tol)
				}
				// Mean reported variance against the spread of estimates.
				emp := stat.Variance(est[j], nil)
				if r := se2[j] / trials / emp; math.Abs(r-1) > 0.1 {
					t.Errorf("coefficient %d: mean SE^2 / empirical variance = %.3f", j, r)
				}
			}
		})
	}
}

// TestWeightedEqualsScaledRows: weighting rows by 1/sigma^2 is the same as
// ordinary least squares on rows divided by sigma (definition of weighted
// least squares).
func TestWeightedEqualsScaledRows(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	const n = 40
	x := coverageDesign(n)
	sigma := make([]float64, n)
	y := make([]float64, n)
	xs := mat.NewDense(n, 3, nil)
	ys := make([]float64, n)
	for i := range n {
		sigma[i] = math.Pow(10, rng.Float64()*2-3)
		y[i] = 0.7*x.At(i, 0) + 0.02*x.At(i, 1) - 0.05 + sigma[i]*rng.NormFloat64()
		for j := range 3 {
			xs.Set(i, j, x.At(i, j)/sigma[i])
		}
		ys[i] = y[i] / sigma[i]
	}
	nonneg := []bool{true, true, false}
	sw, err := NewSolver(x, nonneg, Options{Sigma: sigma, scaleSE: true})
	if err != nil {
		t.Fatal(err)
	}
	su, err := NewSolver(xs, nonneg, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var rw, ru Result
	if err := sw.Solve(&rw, y); err != nil {
		t.Fatal(err)
	}
	if err := su.Solve(&ru, ys); err != nil {
		t.Fatal(err)
	}
	for j := range 3 {
		if math.Abs(rw.Coef[j]-ru.Coef[j]) > 1e-10*math.Max(1, math.Abs(ru.Coef[j])) {
			t.Errorf("coef[%d] weighted %.15g, scaled rows %.15g", j, rw.Coef[j], ru.Coef[j])
		}
		if math.Abs(rw.SE[j]-ru.SE[j]) > 1e-9*ru.SE[j] {
			t.Errorf("SE[%d] weighted %.15g, scaled rows %.15g", j, rw.SE[j], ru.SE[j])
		}
		if rw.AtBound[j] != ru.AtBound[j] {
			t.Errorf("AtBound[%d] differs", j)
		}
	}
	if math.Abs(rw.wrss-ru.RSS) > 1e-10*ru.RSS || math.Abs(rw.chiSqRed-ru.RSS/float64(ru.DoF)) > 1e-10*rw.chiSqRed {
		t.Errorf("weighted wrss %g chi2 %g, scaled RSS %g", rw.wrss, rw.chiSqRed, ru.RSS)
	}
	if !math.IsNaN(ru.chiSqRed) {
		t.Errorf("chiSqRed without Sigma = %g, want NaN", ru.chiSqRed)
	}
}

// TestDiagnostics checks the residual statistics against their
// definitions, computed directly.
func TestDiagnostics(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	const n = 60
	x := coverageDesign(n)
	y := make([]float64, n)
	for i := range n {
		y[i] = 0.3*x.At(i, 0) + 0.4*x.At(i, 1) + 0.01*rng.NormFloat64()
	}
	y[40] += 0.2 // a spike: the worst band must hold row 40
	sigma := make([]float64, n)
	for i := range sigma {
		sigma[i] = 0.01
	}
	s, err := NewSolver(x, []bool{true, true, false}, Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, y); err != nil {
		t.Fatal(err)
	}
	var rss, tss, dw, mean float64
	for _, v := range y {
		mean += v / n
	}
	for i, r := range res.Residual {
		fit := 0.0
		for j := range 3 {
			fit += x.At(i, j) * res.Coef[j]
		}
		if math.Abs(r-(y[i]-fit)) > 1e-15 {
			t.Fatalf("residual %d = %g, want %g", i, r, y[i]-fit)
		}
		rss += r * r
		tss += (y[i] - mean) * (y[i] - mean)
		if i > 0 {
			d := r - res.Residual[i-1]
			dw += d * d
		}
	}
	near := func(name string, got, want float64) {
		if math.Abs(got-want) > 1e-12*math.Abs(want) {
			t.Errorf("%s = %.15g, want %.15g", name, got, want)
		}
	}
	near("RSS", res.RSS, rss)
	near("RMS", res.RMS, math.Sqrt(rss/n))
	near("R2", res.R2, 1-rss/tss)
	near("DW", res.DW, dw/rss) // equal weights: weighted DW = unweighted
	near("chiSqRed", res.chiSqRed, rss/1e-4/float64(n-3))
	if w := bandWidth(n); res.worstHi-res.worstLo+1 != w || res.worstLo > 40 || res.worstHi < 40 {
		t.Errorf("worst band %d..%d (width %d), want one holding row 40", res.worstLo, res.worstHi, w)
	}
}

// TestIterLimit: a cap too low for the problem gives ErrNoConvergence and
// a feasible point with Status IterLimit.
func TestIterLimit(t *testing.T) {
	const n = 30
	x := mat.NewDense(n, 5, nil)
	y := make([]float64, n)
	for i := range n {
		l := float64(i) / (n - 1)
		for j := range 5 {
			v := math.Exp(-0.5 * math.Pow((l-0.2*float64(j)-0.1)/0.15, 2))
			x.Set(i, j, v)
			y[i] += v
		}
	}
	s, err := NewSolver(x, []bool{true, true, true, true, true}, Options{maxIter: 2})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	err = s.Solve(&res, y)
	if !errors.Is(err, ErrNoConvergence) || res.Status != IterLimit || res.iterations != 2 {
		t.Fatalf("err %v, status %v, iterations %d", err, res.Status, res.iterations)
	}
	for j, b := range res.Coef {
		if b < 0 || math.IsNaN(b) {
			t.Errorf("coef[%d] = %g is not feasible", j, b)
		}
	}
	// The default cap solves it.
	s, _ = NewSolver(x, []bool{true, true, true, true, true}, Options{})
	if err := s.Solve(&res, y); err != nil || res.Status != Converged {
		t.Fatalf("default cap: %v %v", err, res.Status)
	}
	for j, b := range res.Coef {
		if math.Abs(b-1) > 1e-12 {
			t.Errorf("coef[%d] = %.15g, want 1", j, b)
		}
	}
}

// TestZeroY: y = 0 gives b = 0, every coefficient at the bound, and no
// NaN but the documented ones.
func TestZeroY(t *testing.T) {
	x := coverageDesign(10)
	s, err := NewSolver(x, []bool{true, true, false}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, make([]float64, 10)); err != nil {
		t.Fatal(err)
	}
	for j := range 3 {
		if res.Coef[j] != 0 || math.IsNaN(res.SE[j]) {
			t.Errorf("coef[%d] = %g, SE %g", j, res.Coef[j], res.SE[j])
		}
	}
	if res.KKT != 0 || res.RSS != 0 || !math.IsNaN(res.DW) || !math.IsNaN(res.R2) {
		t.Errorf("KKT %g RSS %g DW %g R2 %g", res.KKT, res.RSS, res.DW, res.R2)
	}
}

// TestCloneConcurrent: clones in worker goroutines give bit-for-bit the
// answers of one Solver used sequentially (determinism), and reusing a
// Result gives the same answer.
func TestCloneConcurrent(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(101, 64)
	s, err := NewSolver(x, nonneg, Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	want := make([]Result, len(ys))
	for i, y := range ys {
		if err := s.Solve(&want[i], y); err != nil {
			t.Fatal(err)
		}
	}
	var wg sync.WaitGroup
	errs := make(chan string, 4*len(ys))
	for w := range 4 {
		c := s.Clone()
		wg.Add(1)
		go func() {
			defer wg.Done()
			var res Result
			for k := range ys {
				i := (k + 16*w) % len(ys)
				if err := c.Solve(&res, ys[i]); err != nil {
					errs <- err.Error()
					return
				}
				for j := range res.Coef {
					if res.Coef[j] != want[i].Coef[j] || res.SE[j] != want[i].SE[j] {
						errs <- "clone differs"
						return
					}
				}
				if res.DW != want[i].DW || res.KKT != want[i].KKT {
					errs <- "clone statistics differ"
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
}

// TestLackOfFit: white noise at the stated level passes; a missing
// component gives structured, excessive residuals. The chi-square limit
// is checked against the upper 1 % point of chi-square with 20 degrees of
// freedom, chi2Upper1pct20. Source: SciPy 1.10.1 (Debian's
// python3-scipy), produced by
//
//	/usr/bin/python3 -c "import scipy.stats as s; print(repr(s.chi2.ppf(0.99, 20)))"
//
// which prints 37.56623478662507.
func TestLackOfFit(t *testing.T) {
	const n = 23
	x := coverageDesign(n)
	rng := rand.New(rand.NewPCG(11, 11))
	sigma := make([]float64, n)
	y := make([]float64, n)
	missing := make([]float64, n)
	for i := range n {
		sigma[i] = 1e-3
		l := float64(i) / (n - 1)
		y[i] = 0.5*x.At(i, 0) + 0.3*x.At(i, 1) + 1e-3*rng.NormFloat64()
		missing[i] = y[i] + 0.05*math.Exp(-0.5*math.Pow((l-0.8)/0.05, 2))
	}
	s, err := NewSolver(x, []bool{true, true, false}, Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, y); err != nil {
		t.Fatal(err)
	}
	lf := res.lackOfFit()
	const chi2Upper1pct20 = 37.56623478662507
	// chi2LimitTol bounds the relative difference from SciPy's quantile.
	// Measured: 5.7e-16; the bound leaves a factor of about 175.
	const chi2LimitTol = 1e-13
	d := near.Rel(t, "20 x chi-square limit for 20 DoF (SciPy chi2.ppf(0.99, 20))", lf.chiSqLimit*20, chi2Upper1pct20, chi2LimitTol)
	t.Logf("chi-square limit: relative difference %.2g", d)
	if lf.structured || lf.excess {
		t.Errorf("white noise: %+v (DW %g, chi2 %g)", lf, res.DW, res.chiSqRed)
	}
	if err := s.Solve(&res, missing); err != nil {
		t.Fatal(err)
	}
	lf = res.lackOfFit()
	if !lf.excess || !lf.structured || !(res.DW < DWSevere || res.chiSqRed > ChiSqSevere) {
		t.Errorf("missing component: %+v (DW %g, chi2 %g)", lf, res.DW, res.chiSqRed)
	}
	if res.worstHi < 16 {
		t.Errorf("worst band %d..%d, want it near row 18", res.worstLo, res.worstHi)
	}
}

// TestCertificateCatchesEarlyStop: with a stopping tolerance far too loose
// the active-set iteration stops before the optimum; the KKT residual
// recomputed from the original data must expose it (Status Inaccurate,
// ErrInaccurate), while the answer stays feasible.
func TestCertificateCatchesEarlyStop(t *testing.T) {
	x := coverageDesign(30)
	y := make([]float64, 30)
	for i := range y {
		y[i] = 0.5*x.At(i, 0) + 0.1*x.At(i, 1) + 0.01
	}
	s, err := NewSolver(x, []bool{true, true, false}, Options{tol: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	err = s.Solve(&res, y)
	if !errors.Is(err, ErrInaccurate) || res.Status != Inaccurate || res.KKT <= KKTTol {
		t.Fatalf("err %v, status %v, KKT %g", err, res.Status, res.KKT)
	}
	for j, b := range res.Coef[:2] {
		if b < 0 {
			t.Errorf("coef[%d] = %g", j, b)
		}
	}
}
