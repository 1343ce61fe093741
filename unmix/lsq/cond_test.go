package lsq

import (
	"bufio"
	"errors"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"huesolve/internal/near"
)

// hilbertTable reads the "| n | cond2(H_n) |" rows of
// testdata/hilbert/conditioning.md. Source: mpmath (Debian's
// python3-mpmath), the singular values of the exact matrix at 60 digits,
// written by testdata/hilbert/gen_cond.py
// (cd testdata/hilbert && /usr/bin/python3 gen_cond.py > conditioning.md).
func hilbertTable(t *testing.T) map[int]float64 {
	const path = "../../testdata/hilbert/conditioning.md"
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	out := map[int]float64{}
	sc := bufio.NewScanner(fh)
	for line := 1; sc.Scan(); line++ {
		f := strings.Split(sc.Text(), "|")
		if len(f) != 4 {
			continue
		}
		n, err := strconv.Atoi(strings.TrimSpace(f[1]))
		if err != nil {
			continue
		}
		v, err := strconv.ParseFloat(strings.Fields(f[2])[0], 64)
		if err != nil {
			t.Fatalf("%s:%d: %v", path, line, err)
		}
		out[n] = v
	}
	return out
}

func hilbert(n int) *mat.Dense {
	h := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			h.Set(i, j, 1/float64(i+j+1))
		}
	}
	return h
}

// The relative tolerance of cond2(H_n) against mpmath is hilbertRound +
// hilbertEps * eps * cond2: the table rounds to 15 significant digits
// (5e-16 relative), and a double-precision SVD gets cond2 to about
// eps * cond2 relative. Measured worst: 0.084 eps * cond2 (H_3, 9.8e-15
// relative); the bound leaves a factor of about 10.
const (
	hilbertRound = 1e-15
	hilbertEps   = 1.0
)

// TestHilbertCond checks cond2 (QR, then SVD of R) against the 2-norm
// condition numbers of Hilbert matrices of order 3 to 8 in
// testdata/hilbert/conditioning.md.
func TestHilbertCond(t *testing.T) {
	table := hilbertTable(t)
	for n := 3; n <= 8; n++ {
		want, ok := table[n]
		if !ok {
			t.Fatalf("no table value for n = %d", n)
		}
		got, err := cond2(hilbert(n))
		if err != nil {
			t.Fatal(err)
		}
		tol := hilbertRound + hilbertEps*0x1p-52*want
		// mpmath at 60 digits, testdata/hilbert/conditioning.md.
		d := near.Rel(t, fmt.Sprintf("cond2(H_%d) (mpmath)", n), got, want, tol)
		t.Logf("cond2(H_%d): relative difference %.2g, %.2g of the bound", n, d, d/tol)
	}
	// H_12 (cond2 1.7e16 in the table) is beyond double precision: the
	// Solver must refuse it as rank deficient.
	if _, ok := table[12]; !ok {
		t.Fatal("no table value for n = 12")
	}
	_, err := NewSolver(hilbert(12), make([]bool, 12), Options{})
	if !errors.Is(err, ErrRankDeficient) {
		t.Errorf("H_12: %v, want ErrRankDeficient", err)
	}
	t.Log(err)
}

// TestSolverCondScaled: Solver.Cond is cond2 of the weighted design with
// unit-norm columns; with unit columns and no weights it equals cond2.
func TestSolverCondScaled(t *testing.T) {
	h := hilbert(6)
	sigma := []float64{1, 2, 0.5, 1, 3, 1}
	s, err := NewSolver(h, make([]bool, 6), Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	scaled := mat.NewDense(6, 6, nil)
	for j := range 6 {
		var nrm float64
		for i := range 6 {
			v := h.At(i, j) / sigma[i]
			nrm += v * v
		}
		nrm = math.Sqrt(nrm)
		for i := range 6 {
			scaled.Set(i, j, h.At(i, j)/sigma[i]/nrm)
		}
	}
	want, err := cond2(scaled)
	if err != nil {
		t.Fatal(err)
	}
	if got := s.Cond(); math.Abs(got-want) > 1e-8*want {
		t.Errorf("Cond = %.12g, want %.12g", got, want)
	}
	// Units do not change it.
	h2 := mat.DenseCopyOf(h)
	for i := range 6 {
		h2.Set(i, 2, 1e5*h2.At(i, 2))
	}
	s2, err := NewSolver(h2, make([]bool, 6), Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(s2.Cond()-s.Cond()) > 1e-8*s.Cond() {
		t.Errorf("Cond changed with a column's unit: %g vs %g", s2.Cond(), s.Cond())
	}
}

// TestLeakage checks the leakage against its definition computed
// independently with gonum, ||x_k - proj_free x_k|| / ||x_k|| (least
// squares by mat.QR).
func TestLeakage(t *testing.T) {
	const n = 30
	x := mat.NewDense(n, 4, nil)
	for i := range n {
		l := float64(i) / (n - 1)
		x.Set(i, 0, math.Exp(-0.5*math.Pow((l-0.4)/0.15, 2)))
		x.Set(i, 1, math.Exp(-0.5*math.Pow((l-0.55)/0.2, 2)))
		x.Set(i, 2, 1)
		x.Set(i, 3, l)
	}
	nonneg := []bool{true, true, false, false}
	s, err := NewSolver(x, nonneg, Options{})
	if err != nil {
		t.Fatal(err)
	}
	leak := s.Leakage()
	explained := func(j int, others []int) float64 {
		sub := mat.NewDense(n, len(others), nil)
		for c, k := range others {
			for i := range n {
				sub.Set(i, c, x.At(i, k))
			}
		}
		var qr mat.QR
		qr.Factorize(sub)
		var b, fit mat.VecDense
		col := mat.VecDenseCopyOf(x.ColView(j))
		if err := qr.SolveVecTo(&b, false, col); err != nil {
			t.Fatal(err)
		}
		fit.MulVec(sub, &b)
		fit.SubVec(col, &fit)
		return mat.Dot(&fit, &fit) / mat.Dot(col, col) // unexplained fraction
	}
	for j := range 4 {
		want := 1.0
		if nonneg[j] {
			want = math.Sqrt(explained(j, []int{2, 3}))
		}
		if math.Abs(leak[j]-want) > 1e-12 {
			t.Errorf("Leakage[%d] = %.12g, want %.12g", j, leak[j], want)
		}
	}
}
