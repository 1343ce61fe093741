package lsq_test

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"huesolve/unmix/lsq"
)

// A mixture of two overlapping bands on a sloping baseline (invented,
// noise-free data, with a small unmodelled dip). Columns 0 and 1 are
// amounts and must be non-negative; columns 2 and 3 (offset, slope) are
// free. The second band is absent, and the dip would pull its
// unconstrained estimate below zero (to -0.0029): the fit holds it at the
// bound.
func Example() {
	const n = 51
	x := mat.NewDense(n, 4, nil)
	y := make([]float64, n)
	for i := range n {
		l := float64(i) / (n - 1)
		a := math.Exp(-0.5 * math.Pow((l-0.40)/0.10, 2))
		b := math.Exp(-0.5 * math.Pow((l-0.55)/0.12, 2))
		x.SetRow(i, []float64{a, b, 1, l - 0.5})
		y[i] = 0.75*a + 0.02 + 0.01*(l-0.5) - 0.004*math.Exp(-0.5*math.Pow((l-0.6)/0.05, 2))
	}
	s, err := lsq.NewSolver(x, []bool{true, true, false, false}, lsq.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	var res lsq.Result
	if err := s.Solve(&res, y); err != nil {
		fmt.Println(err)
		return
	}
	for j, name := range []string{"band A", "band B", "offset", "slope"} {
		fmt.Printf("%-6s %8.5f ± %.5f  at bound: %v\n", name, res.Coef[j], res.SE[j], res.AtBound[j])
	}
	fmt.Printf("status %v, KKT below tolerance: %v, DoF %d\n", res.Status, res.KKT <= lsq.KKTTol, res.DoF)
	fmt.Printf("condition number %.1f (warning above %g)\n", s.Cond(), lsq.CondWarn)
	// Output:
	// band A  0.75017 ± 0.00047  at bound: false
	// band B  0.00000 ± 0.00000  at bound: true
	// offset  0.01947 ± 0.00019  at bound: false
	// slope   0.00948 ± 0.00054  at bound: false
	// status converged, KKT below tolerance: true, DoF 48
	// condition number 2.7 (warning above 30)
}
