package lsq

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"slices"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// same reports whether two Results are equal field for field, NaN
// equal to NaN (every float printed in its shortest exact form).
func same(a, b Result) bool { return fmt.Sprintf("%+v", a) == fmt.Sprintf("%+v", b) }

// TestReweight: Reweight gives what Reset with the same design and the
// new noise levels gives, bit for bit (the whole Result and the
// pseudo-inverse), on a Solver of its own and on one whose factorisation
// a clone shares (the clone keeps the old weights); it allocates nothing
// beyond Reset's steady state; a bad sigma leaves no design.
func TestReweight(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(101, 4)
	other := make([]float64, len(sigma))
	for i := range other {
		other[i] = sigma[len(sigma)-1-i]
	}
	opt := Options{Sigma: sigma, PseudoInverse: true}
	for _, cloned := range []bool{false, true} {
		s, err := NewSolver(x, nonneg, opt)
		if err != nil {
			t.Fatal(err)
		}
		var c *Solver
		if cloned {
			c = s.Clone()
		}
		if err := s.Reweight(other); err != nil {
			t.Fatal(err)
		}
		fresh, err := NewSolver(x, nonneg, Options{Sigma: other, PseudoInverse: true})
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
		if !same(got, want) || s.Cond() != fresh.Cond() {
			t.Errorf("cloned %v: Reweight differs from a new Solver:\n%+v\n%+v", cloned, got, want)
		}
		for j := range nonneg {
			if !reflect.DeepEqual(s.PseudoInverseRow(j), fresh.PseudoInverseRow(j)) {
				t.Errorf("cloned %v: pseudo-inverse row %d differs", cloned, j)
			}
		}
		if cloned {
			old, err := NewSolver(x, nonneg, opt)
			if err != nil {
				t.Fatal(err)
			}
			var a, b Result
			if err := c.Solve(&a, ys[0]); err != nil {
				t.Fatal(err)
			}
			if err := old.Solve(&b, ys[0]); err != nil {
				t.Fatal(err)
			}
			if !same(a, b) {
				t.Error("a clone changed when its origin was reweighted")
			}
		}
	}
	s, err := NewSolver(x, nonneg, opt)
	if err != nil {
		t.Fatal(err)
	}
	var got Result
	opts := [][]float64{sigma, other}
	i := 0
	if a := testing.AllocsPerRun(50, func() {
		if err := s.Reweight(opts[i%2]); err != nil {
			t.Fatal(err)
		}
		if err := s.Solve(&got, ys[i%len(ys)]); err != nil {
			t.Fatal(err)
		}
		_ = s.PseudoInverseRow(0)
		i++
	}); a > 2 {
		t.Errorf("Reweight + Solve allocates %v times per run, want at most 2 (gonum's Dgesvd)", a)
	}
	bad := append([]float64(nil), sigma...)
	bad[3] = 0
	if err := s.Reweight(bad); !errors.Is(err, errNonFinite) {
		t.Fatalf("zero sigma: %v", err)
	}
	if err := s.Solve(&got, ys[0]); !errors.Is(err, errShape) {
		t.Fatalf("Solve after a failed Reweight: %v, want no design", err)
	}
	if err := s.Reweight(sigma); !errors.Is(err, errShape) {
		t.Fatalf("Reweight after a failed Reweight: %v, want no design", err)
	}
}

// TestSolveCoefFinish: SolveCoef then Finish fills the Result that Solve
// fills, bit for bit, also when Finish runs on another Solver factored
// from the same design on a copy (Result.CopyTo); before Finish the
// coefficients, residual, RSS and DoF are already Solve's; Finish of a
// complete Result changes nothing.
func TestSolveCoefFinish(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(101, 8)
	for _, o := range []Options{{}, {Sigma: sigma}} {
		s, err := NewSolver(x, nonneg, o)
		if err != nil {
			t.Fatal(err)
		}
		twin, err := NewSolver(x, nonneg, o)
		if err != nil {
			t.Fatal(err)
		}
		for k, y := range ys {
			var want, got, cp Result
			wantErr := s.Solve(&want, y)
			if err := s.SolveCoef(&got, y); err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(got.Coef, want.Coef) || !reflect.DeepEqual(got.Residual, want.Residual) ||
				!reflect.DeepEqual(got.AtBound, want.AtBound) || got.RSS != want.RSS || got.DoF != want.DoF {
				t.Fatalf("y %d: SolveCoef's coefficients or residual differ from Solve's", k)
			}
			got.CopyTo(&cp)
			if err := s.Finish(&got, y); !errors.Is(err, wantErr) && err != wantErr {
				t.Fatalf("y %d: Finish error %v, Solve's %v", k, err, wantErr)
			}
			if !same(got, want) {
				t.Fatalf("y %d, sigma %v: SolveCoef + Finish differs from Solve:\n%+v\n%+v", k, o.Sigma != nil, got, want)
			}
			if err := twin.Finish(&cp, y); !errors.Is(err, wantErr) && err != wantErr {
				t.Fatalf("y %d: Finish of a copy: error %v, Solve's %v", k, err, wantErr)
			}
			if !same(cp, want) {
				t.Fatalf("y %d: Finish of a copy on a twin Solver differs from Solve", k)
			}
			if err := s.Finish(&got, y); err != nil || !same(got, want) {
				t.Fatalf("y %d: Finish of a complete Result changed it (%v)", k, err)
			}
		}
	}
}

// TestLazyConcurrent: clones on several goroutines that ask at once for
// what is made on first use (the pseudo-inverse, the KKT gradient rows
// of Finish) all get what a Solver that made them at once gives (run
// with -race, the CI race pass, to check the locking).
func TestLazyConcurrent(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(20001, 1)
	opt := Options{Sigma: sigma, PseudoInverse: true}
	ref, err := NewSolver(x, nonneg, opt)
	if err != nil {
		t.Fatal(err)
	}
	var want Result
	if err := ref.Solve(&want, ys[0]); err != nil {
		t.Fatal(err)
	}
	wantRow := ref.PseudoInverseRow(2)
	s, err := NewSolver(x, nonneg, opt)
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	start := make(chan struct{})
	for range 8 {
		c := s.Clone()
		wg.Go(func() {
			<-start
			var got Result
			if err := c.Solve(&got, ys[0]); err != nil {
				t.Error(err)
				return
			}
			if !same(got, want) || !reflect.DeepEqual(c.PseudoInverseRow(2), wantRow) {
				t.Error("a clone's lazily made products differ")
			}
		})
	}
	close(start)
	wg.Wait()
}

// TestReweightFrom: a design whose columns are the first columns of a
// larger one (one more non-negative column, last in factor order),
// factored with the larger one's QR, gives what it gives on its own, bit
// for bit; with other weights, other columns or the extra column free
// (not last in factor order) the larger one is not used and the answer
// is still its own.
func TestReweightFrom(t *testing.T) {
	x, nonneg, ys, sigma := benchDesign(151, 4)
	n, p := x.Dims()
	wide := mat.NewDense(n, p+1, nil)
	for i := range n {
		for j := range p {
			wide.Set(i, j, x.At(i, j))
		}
		wide.Set(i, p, math.Exp(-float64(i)/40)) // a decaying background (invented)
	}
	other := make([]float64, n)
	for i := range other {
		other[i] = sigma[n-1-i]
	}
	shifted := mat.DenseCopyOf(x)
	shifted.Set(3, 0, x.At(3, 0)*1.5)
	for _, c := range []struct {
		name      string
		lastFree  bool
		srcSigma  []float64
		small     *mat.Dense
		wantTaken bool
	}{
		{"prefix", false, sigma, x, true},
		{"other weights", false, other, x, false},
		{"other columns", false, sigma, shifted, false},
		{"extra column free", true, sigma, x, false},
	} {
		nnWide := append(slices.Clone(nonneg), !c.lastFree)
		big, err := NewSolver(wide, nnWide, Options{Sigma: c.srcSigma, PseudoInverse: true})
		if err != nil {
			t.Fatal(err)
		}
		s, err := NewSolver(c.small, nonneg, Options{Sigma: other, PseudoInverse: true})
		if err != nil {
			t.Fatal(err)
		}
		taken, err := s.ReweightFrom(big, sigma)
		if err != nil || taken != c.wantTaken {
			t.Fatalf("%s: taken %v (%v), want %v", c.name, taken, err, c.wantTaken)
		}
		fresh, err := NewSolver(c.small, nonneg, Options{Sigma: sigma, PseudoInverse: true})
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
		if !same(got, want) || s.Cond() != fresh.Cond() || !reflect.DeepEqual(s.PseudoInverseRow(1), fresh.PseudoInverseRow(1)) {
			t.Errorf("%s: differs from a new Solver:\n%+v\n%+v", c.name, got, want)
		}
	}
}
