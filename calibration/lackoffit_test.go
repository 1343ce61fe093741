package calibration

import (
	"math"
	"testing"
)

// TestLackOfFitRepeats: the lack-of-fit test gives the same bits on every
// call, whatever order Go's maps hand out the replicate groups in, so a
// set built twice from the same standards is the same file.
func TestLackOfFitRepeats(t *testing.T) {
	var x, y []float64
	for i, c := range []float64{1, 2, 3, 5, 7, 11, 13, 17} {
		for r := range 3 {
			// Invented readings with replicate scatter of differing sizes,
			// so the pure-error sum depends on the order of its terms.
			x = append(x, c)
			y = append(y, 0.1*c+1e-3*math.Sin(float64(7*i+r))*float64(1+i*i))
		}
	}
	f0, err := fitPoly(x, y, 1)
	if err != nil {
		t.Fatal(err)
	}
	wantF, wantP := lackOfFit(x, y, f0.rss)
	for range 200 {
		f, p := lackOfFit(x, y, f0.rss)
		if math.Float64bits(f) != math.Float64bits(wantF) || math.Float64bits(p) != math.Float64bits(wantP) {
			t.Fatalf("lack of fit F %v p %v, earlier F %v p %v", f, p, wantF, wantP)
		}
	}
}
