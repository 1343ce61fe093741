package validate

import (
	"errors"
	"math"
	"testing"
)

// TestSVDFailureIsError: a design holding an Inf (which the input checks
// should never let through) becomes NaN once scaled, and the SVD fails or
// gives NaN singular values; the factorizing helpers return errSVD
// instead of panicking or reporting garbage.
func TestSVDFailureIsError(t *testing.T) {
	cols := [][]float64{{1, 2, 3, 4}, {1, math.Inf(1), 0, 1}}
	var p projector
	if err := p.reset(4, cols, nil); !errors.Is(err, errSVD) {
		t.Errorf("projector.reset with Inf: %v, want errSVD", err)
	}
	if _, _, err := condScaled(4, [][]float64{{1, 2, 3, 4}, {1, 2, math.Inf(1), 4}}, nil); !errors.Is(err, errSVD) {
		t.Errorf("condScaled with Inf: %v, want errSVD", err)
	}
	// Finite columns still factor.
	if err := p.reset(4, [][]float64{{1, 2, 3, 4}, {1, 0, 0, 1}}, nil); err != nil || p.rank != 2 {
		t.Errorf("projector.reset on finite columns: rank %d, %v", p.rank, err)
	}
	if c, sing, err := condScaled(4, [][]float64{{1, 0, 0, 0}, {0, 1, 0, 0}}, nil); err != nil || sing || math.Abs(c-1) > 1e-12 {
		t.Errorf("condScaled of orthonormal columns = %g, %v, %v, want 1", c, sing, err)
	}
}
