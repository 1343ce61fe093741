package lsq

import (
	"encoding/binary"
	"errors"
	"math"
	"reflect"
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

// TestReset: Reset gives the answer of a new Solver bit for bit, leaves
// clones made before it on the old design, allocates (almost) nothing in
// steady state, and leaves a Solver without a design after a failure.
func TestReset(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(101, 4)
	other := make([]float64, len(sigma))
	for i := range other {
		other[i] = sigma[len(sigma)-1-i]
	}
	s, err := NewSolver(x, nonneg, Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	var before, clone Result
	if err := s.Solve(&before, ys[0]); err != nil {
		t.Fatal(err)
	}
	c := s.Clone()
	if err := s.Reset(x, nonneg, Options{Sigma: other}); err != nil {
		t.Fatal(err)
	}
	if err := c.Solve(&clone, ys[0]); err != nil {
		t.Fatal(err)
	}
	for j := range before.Coef {
		if clone.Coef[j] != before.Coef[j] {
			t.Fatalf("clone changed by Reset of its origin")
		}
	}
	fresh, err := NewSolver(x, nonneg, Options{Sigma: other})
	if err != nil {
		t.Fatal(err)
	}
	var got, want Result
	if err := s.Solve(&got, ys[1]); err != nil {
		t.Fatal(err)
	}
	if err := fresh.Solve(&want, ys[1]); err != nil {
		t.Fatal(err)
	}
	for j := range want.Coef {
		if got.Coef[j] != want.Coef[j] || got.SE[j] != want.SE[j] {
			t.Errorf("Reset coef[%d] %v ± %v, NewSolver %v ± %v", j, got.Coef[j], got.SE[j], want.Coef[j], want.SE[j])
		}
	}
	if s.Cond() != fresh.Cond() {
		t.Errorf("Reset Cond %v, NewSolver %v", s.Cond(), fresh.Cond())
	}
	// Steady state: Reset + Solve without allocation (s is no longer shared).
	s = &Solver{}
	opts := []Options{{Sigma: sigma}, {Sigma: other}}
	for _, o := range opts {
		if err := s.Reset(x, nonneg, o); err != nil {
			t.Fatal(err)
		}
		if err := s.Solve(&got, ys[2]); err != nil {
			t.Fatal(err)
		}
	}
	i := 0
	if a := testing.AllocsPerRun(50, func() {
		if err := s.Reset(x, nonneg, opts[i%2]); err != nil {
			t.Fatal(err)
		}
		if err := s.Solve(&got, ys[i%len(ys)]); err != nil {
			t.Fatal(err)
		}
		i++
	}); a > 2 {
		// gonum's Dgesvd sorts the singular values through sort.Reverse
		// (lapack/gonum Dlasrt): two small allocations per Reset that this
		// package cannot avoid; nothing else may allocate.
		t.Errorf("Reset + Solve allocates %v times, want at most 2", a)
	}
	bad := append([]float64(nil), sigma...)
	bad[3] = -1
	if err := s.Reset(x, nonneg, Options{Sigma: bad}); !errors.Is(err, errNonFinite) {
		t.Fatalf("Reset with a negative sigma: %v", err)
	}
	if err := s.Solve(&got, ys[0]); !errors.Is(err, errShape) {
		t.Errorf("Solve after a failed Reset: %v", err)
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

// TestResultCopyTo: a copy equals the original field for field and shares
// no storage with it, and a reused destination is overwritten whole.
func TestResultCopyTo(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(101, 4)
	s, err := NewSolver(x, nonneg, Options{Sigma: sigma})
	if err != nil {
		t.Fatal(err)
	}
	var a, b, dst Result
	if err := s.Solve(&a, ys[0]); err != nil {
		t.Fatal(err)
	}
	if err := s.Solve(&b, ys[1]); err != nil {
		t.Fatal(err)
	}
	b.CopyTo(&dst) // storage to reuse
	a.CopyTo(&dst)
	if !reflect.DeepEqual(a, dst) {
		t.Fatalf("copy differs:\n%+v\n%+v", a, dst)
	}
	dst.Coef[0]++
	dst.Residual[0]++
	dst.lo[0]++
	if reflect.DeepEqual(a, dst) {
		t.Fatal("copy shares storage with the original")
	}
}
