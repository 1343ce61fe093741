package lsq

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// scipyFixture is testdata/scipy/nnls_fixture.json, written by
// testdata/scipy/gen_nnls.py with Debian's python3-scipy.
type scipyFixture struct {
	Source       string `json:"source"`
	ScipyVersion string `json:"scipy_version"`
	Problems     []struct {
		Name   string    `json:"name"`
		Rows   int       `json:"rows"`
		Cols   int       `json:"cols"`
		Nonneg []bool    `json:"nonneg"`
		Cond   float64   `json:"cond"`
		A      []float64 `json:"a"`
		Y      []float64 `json:"y"`
		X      []float64 `json:"x"`
		RNorm  float64   `json:"rnorm"`
	} `json:"problems"`
}

// TestSciPyNNLS compares the solver with scipy.optimize.nnls (SciPy 1.10,
// the Lawson-Hanson Fortran code; free columns by projection, cross-checked
// with lsq_linear bvls) on the committed fixture.
func TestSciPyNNLS(t *testing.T) {
	const path = "../../testdata/scipy/nnls_fixture.json"
	// scipyTol bounds max_j |x_j - x_scipy_j| / max_j |x_scipy_j|, and the
	// relative difference of the residual norms.
	const scipyTol = 1e-9
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var fx scipyFixture
	if err := json.Unmarshal(data, &fx); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if fx.ScipyVersion == "" || len(fx.Problems) < 50 {
		t.Fatalf("%s: version %q, %d problems", path, fx.ScipyVersion, len(fx.Problems))
	}
	t.Logf("fixture from SciPy %s: %d problems", fx.ScipyVersion, len(fx.Problems))
	var res Result
	zeros := 0
	for _, pr := range fx.Problems {
		t.Run(pr.Name, func(t *testing.T) {
			x := mat.NewDense(pr.Rows, pr.Cols, pr.A)
			s, err := NewSolver(x, pr.Nonneg, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if err := s.Solve(&res, pr.Y); err != nil {
				t.Fatal(err)
			}
			var scale, diff float64
			for j, w := range pr.X {
				scale = math.Max(scale, math.Abs(w))
				diff = math.Max(diff, math.Abs(res.Coef[j]-w))
				if w == 0 && pr.Nonneg[j] {
					zeros++
					if !res.AtBound[j] {
						t.Errorf("coefficient %d = %g, SciPy holds it at 0", j, res.Coef[j])
					}
				}
			}
			if diff > scipyTol*scale {
				t.Errorf("coef %v\nwant %v (SciPy): max difference %.3g relative (cond %.3g)", res.Coef, pr.X, diff/scale, pr.Cond)
			}
			if rn := math.Sqrt(res.RSS); math.Abs(rn-pr.RNorm) > scipyTol*pr.RNorm {
				t.Errorf("||r|| = %.15g, want %.15g (SciPy)", rn, pr.RNorm)
			}
		})
	}
	if zeros < 50 {
		t.Errorf("only %d coefficients held at zero across the fixture", zeros)
	}
}
