package lsq

import (
	"errors"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestOLSGoesNegative: two overlapping bands with an absent second
// component and noise that pulls its OLS estimate below zero. Ordinary
// least squares (gonum mat.QR, the unconstrained reference) reports a
// negative amount; the non-negative fit holds it at zero and is a
// KKT point: the gradient of the held column is <= 0.
func TestOLSGoesNegative(t *testing.T) {
	const n = 41
	x := mat.NewDense(n, 3, nil)
	y := make([]float64, n)
	for i := range n {
		l := float64(i)
		a := math.Exp(-0.5 * math.Pow((l-15)/5, 2))
		b := math.Exp(-0.5 * math.Pow((l-22)/6, 2))
		x.Set(i, 0, a)
		x.Set(i, 1, b)
		x.Set(i, 2, 1) // free offset
		// Only the first component, an offset, and a dip where the second
		// band sits (an unmodelled, deterministic perturbation).
		y[i] = 0.8*a + 0.05 - 0.02*math.Exp(-0.5*math.Pow((l-24)/3, 2))
	}
	var qr mat.QR
	qr.Factorize(x)
	var ols mat.VecDense
	if err := qr.SolveVecTo(&ols, false, mat.NewVecDense(n, y)); err != nil {
		t.Fatal(err)
	}
	if ols.AtVec(1) >= 0 {
		t.Fatalf("test premise: OLS coefficient of the second band = %g, want negative", ols.AtVec(1))
	}
	s, err := NewSolver(x, []bool{true, true, false}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, y); err != nil {
		t.Fatal(err)
	}
	// The unconstrained estimate reported beside it is the OLS one, with
	// the OLS standard error sqrt(s^2 [(X'X)^-1]_jj), with (X'X)^-1 =
	// R^-1 R^-T from gonum's QR (mat.QR, mat.TriDense.InverseTri).
	for j := range 3 {
		if w := ols.AtVec(j); math.Abs(res.Unconstrained[j]-w) > 1e-10*math.Abs(w) {
			t.Errorf("Unconstrained[%d] = %.15g, want OLS %.15g", j, res.Unconstrained[j], w)
		}
	}
	var qrx mat.QR
	qrx.Factorize(x)
	var rd mat.Dense
	qrx.RTo(&rd)
	rx := mat.NewTriDense(3, mat.Upper, nil)
	for i := range 3 {
		for j := i; j < 3; j++ {
			rx.SetTri(i, j, rd.At(i, j))
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(rx); err != nil {
		t.Fatal(err)
	}
	var inv mat.Dense
	inv.Mul(&rinv, rinv.T())
	var fitted mat.VecDense
	fitted.MulVec(x, &ols)
	var rssOLS float64
	for i := range n {
		d := y[i] - fitted.AtVec(i)
		rssOLS += d * d
	}
	for j := range 3 {
		w := math.Sqrt(rssOLS / float64(n-3) * inv.At(j, j))
		if math.Abs(res.unconstrainedSE[j]-w) > 1e-8*w {
			t.Errorf("unconstrainedSE[%d] = %.15g, want %.15g", j, res.unconstrainedSE[j], w)
		}
	}
	if res.Coef[1] != 0 || !res.AtBound[1] || res.SE[1] != 0 {
		t.Errorf("NNLS second coefficient %g (at bound %v, SE %g), want exactly 0 at the bound with SE 0",
			res.Coef[1], res.AtBound[1], res.SE[1])
	}
	if res.Coef[0] <= 0 || res.AtBound[0] || res.AtBound[2] {
		t.Errorf("coef %v, at bound %v", res.Coef, res.AtBound)
	}
	if res.KKT > KKTTol {
		t.Errorf("KKT = %g", res.KKT)
	}
	if g := s.ws.g[1]; g > 0 {
		t.Errorf("gradient of the held column = %g, want <= 0", g)
	}
	// Held at zero, the first coefficient and offset are the OLS fit on
	// the remaining columns.
	sub := mat.NewDense(n, 2, nil)
	for i := range n {
		sub.Set(i, 0, x.At(i, 0))
		sub.Set(i, 1, x.At(i, 2))
	}
	qr.Factorize(sub)
	var sol mat.VecDense
	if err := qr.SolveVecTo(&sol, false, mat.NewVecDense(n, y)); err != nil {
		t.Fatal(err)
	}
	for c, j := range []int{0, 2} {
		if math.Abs(res.Coef[j]-sol.AtVec(c)) > 1e-12*math.Abs(sol.AtVec(c)) {
			t.Errorf("coef[%d] = %.16g, want %.16g", j, res.Coef[j], sol.AtVec(c))
		}
	}
	if res.DoF != n-2 {
		t.Errorf("DoF = %d, want %d", res.DoF, n-2)
	}
}

func TestRankDeficient(t *testing.T) {
	const n = 20
	mk := func(f func(i, j int) float64, p int) *mat.Dense {
		x := mat.NewDense(n, p, nil)
		for i := range n {
			for j := range p {
				x.Set(i, j, f(i, j))
			}
		}
		return x
	}
	cases := []struct {
		name string
		x    *mat.Dense
		want []int
	}{
		{"duplicate", mk(func(i, j int) float64 {
			switch j {
			case 0:
				return 1
			case 1, 3:
				return math.Sin(float64(i))
			}
			return float64(i * i)
		}, 4), []int{1, 3}},
		{"scaled duplicate", mk(func(i, j int) float64 {
			switch j {
			case 2:
				return 1e6 * math.Cos(float64(i))
			case 0:
				return math.Cos(float64(i))
			}
			return float64(i)
		}, 3), []int{0, 2}},
		{"zero column", mk(func(i, j int) float64 {
			if j == 1 {
				return 0
			}
			return float64(i + j)
		}, 2), []int{1}},
		{"combination", mk(func(i, j int) float64 {
			switch j {
			case 0:
				return 1
			case 1:
				return float64(i)
			case 2:
				return math.Sqrt(float64(i))
			}
			return 3 - 2*float64(i)
		}, 4), []int{0, 1, 3}},
		{"wide", mat.NewDense(2, 3, []float64{1, 2, 3, 4, 5, 7}), []int{0, 1, 2}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, p := c.x.Dims()
			s, err := NewSolver(c.x, make([]bool, p), Options{})
			if s != nil || !errors.Is(err, ErrRankDeficient) {
				t.Fatalf("NewSolver = %v, %v; want ErrRankDeficient", s, err)
			}
			var re *rankError
			if !errors.As(err, &re) {
				t.Fatalf("error %T is not a *rankError", err)
			}
			if !slices.Equal(re.Columns, c.want) {
				t.Errorf("columns %v, want %v (%v)", re.Columns, c.want, err)
			}
			t.Log(err)
		})
	}
}

func TestBadInput(t *testing.T) {
	x := mat.NewDense(3, 1, []float64{1, 2, 3})
	if _, err := NewSolver(x, []bool{true, false}, Options{}); !errors.Is(err, errShape) {
		t.Errorf("flags mismatch: %v", err)
	}
	if _, err := NewSolver(x, []bool{true}, Options{Sigma: []float64{1, 0, 1}}); !errors.Is(err, errNonFinite) {
		t.Errorf("zero sigma: %v", err)
	}
	if _, err := NewSolver(mat.NewDense(3, 1, []float64{1, math.NaN(), 3}), []bool{true}, Options{}); !errors.Is(err, errNonFinite) {
		t.Errorf("NaN design: %v", err)
	}
	s, err := NewSolver(x, []bool{true}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var res Result
	if err := s.Solve(&res, []float64{1, 2}); !errors.Is(err, errShape) {
		t.Errorf("short y: %v", err)
	}
	err = s.Solve(&res, []float64{1, math.Inf(1), 2})
	if !errors.Is(err, errNonFinite) || err.Error() != "lsq: row 1 of y is +Inf: lsq: non-finite value" {
		t.Errorf("Inf in y: %v", err)
	}
}
