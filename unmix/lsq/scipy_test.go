package lsq

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"testing"

	"gonum.org/v1/gonum/mat"

	"huesolve/internal/near"
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
	const (
		// scipyCoefTol bounds max_j |x_j - x_scipy_j| / max_j |x_scipy_j|.
		// Measured worst over the fixture: 4.1e-13; the bound leaves a
		// factor of about 100.
		scipyCoefTol = 5e-11
		// scipyRNormTol bounds the relative difference of the residual
		// norms. Measured worst: 1.3e-14; a factor of about 100.
		scipyRNormTol = 1e-12
	)
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
	var worstCoef, worstRNorm float64
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
			// scipy.optimize.nnls, testdata/scipy/nnls_fixture.json.
			d := near.RelSlice(t, fmt.Sprintf("coefficients (SciPy nnls; cond %.3g)", pr.Cond), res.Coef, pr.X, scipyCoefTol)
			worstCoef = math.Max(worstCoef, d)
			for j, w := range pr.X {
				if w == 0 && pr.Nonneg[j] {
					zeros++
					if !res.AtBound[j] {
						t.Errorf("coefficient %d = %g, SciPy holds it at 0", j, res.Coef[j])
					}
				}
			}
			d = near.Rel(t, "residual norm (SciPy nnls)", math.Sqrt(res.RSS), pr.RNorm, scipyRNormTol)
			worstRNorm = math.Max(worstRNorm, d)
		})
	}
	t.Logf("worst relative difference from SciPy: coefficients %.2g, residual norm %.2g", worstCoef, worstRNorm)
	if zeros < 50 {
		t.Errorf("only %d coefficients held at zero across the fixture", zeros)
	}
}
