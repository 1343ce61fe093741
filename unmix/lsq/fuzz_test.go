package lsq

import (
	"encoding/binary"
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestSolveAllocs: a Solve reusing its Result allocates nothing.
func TestSolveAllocs(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(401, 8)
	for _, opt := range []Options{{}, {Sigma: sigma}} {
		s, err := NewSolver(x, nonneg, opt)
		if err != nil {
			t.Fatal(err)
		}
		var res Result
		for _, y := range ys { // warm up: sizes the Result, caches quantiles
			if err := s.Solve(&res, y); err != nil {
				t.Fatal(err)
			}
		}
		i := 0
		if a := testing.AllocsPerRun(200, func() {
			if err := s.Solve(&res, ys[i%len(ys)]); err != nil {
				t.Fatal(err)
			}
			i++
		}); a != 0 {
			t.Errorf("Solve allocates %v times per call", a)
		}
	}
}

// FuzzSolve builds a small design and y from arbitrary bytes: NewSolver
// and Solve must never panic, and an accepted solve must be finite and
// feasible with its certificate.
func FuzzSolve(f *testing.F) {
	f.Add([]byte{3, 2, 1, 0x10, 0x20, 0x30, 0x40, 0x50, 0x60, 0x70, 0x80, 0x90})
	f.Add([]byte{5, 3, 5, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25})
	f.Add([]byte{2, 2, 0, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 3 {
			return
		}
		n := 1 + int(data[0])%12
		p := 1 + int(data[1])%6
		mask := data[2]
		data = data[3:]
		next := func() float64 {
			if len(data) < 2 {
				return 0
			}
			v := int16(binary.LittleEndian.Uint16(data))
			data = data[2:]
			return float64(v) / 256
		}
		x := mat.NewDense(n, p, nil)
		for i := range n {
			for j := range p {
				x.Set(i, j, next())
			}
		}
		nonneg := make([]bool, p)
		for j := range p {
			nonneg[j] = mask&(1<<j) != 0
		}
		y := make([]float64, n)
		for i := range y {
			y[i] = next()
		}
		s, err := NewSolver(x, nonneg, Options{})
		if err != nil {
			if !errors.Is(err, ErrRankDeficient) {
				t.Fatalf("NewSolver: unexpected error %v", err)
			}
			return
		}
		var res Result
		err = s.Solve(&res, y)
		if err != nil && !errors.Is(err, ErrNoConvergence) && !errors.Is(err, ErrInaccurate) {
			t.Fatalf("Solve: unexpected error %v", err)
		}
		for j, b := range res.Coef {
			if math.IsNaN(b) || math.IsInf(b, 0) || (nonneg[j] && b < 0) {
				t.Fatalf("coef[%d] = %v", j, b)
			}
			if math.IsInf(res.SE[j], 0) || res.SE[j] < 0 {
				t.Fatalf("SE[%d] = %v", j, res.SE[j])
			}
		}
		if err == nil && !(res.KKT <= KKTTol) {
			t.Fatalf("KKT %g accepted", res.KKT)
		}
	})
}
