package baseline

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// GridTolerance bounds the unevenness of a grid that Savitzky-Golay
// accepts: every step may differ from the mean step by at most this
// fraction of it. A relative spacing error e moves a derivative by about
// e relative, so 1e-3 keeps the error from the grid below 0.1 % while
// still accepting wavelengths written with rounding (for example 0.1 nm
// steps printed to 4 decimals).
const GridTolerance = 1e-3

// SavitzkyGolay is a Savitzky-Golay filter (A. Savitzky & M. J. E. Golay,
// Anal. Chem. 36 (1964) 1627; corrections by J. Steinier, Y. Termonia &
// J. Deltour, Anal. Chem. 44 (1972) 1906): a polynomial of degree Order
// fitted by least squares to Window consecutive points, evaluated (or
// differentiated Deriv times) at the window's centre. The weights are
// computed once by NewSavitzkyGolay; a filter may be used for many
// spectra and by several goroutines at once.
type SavitzkyGolay struct {
	window, order, deriv int
	// weights holds Window rows of Window weights: row m+q evaluates the
	// polynomial fitted to the window at offset q (-m..m) from its centre,
	// per sample step.
	weights []float64
}

// NewSavitzkyGolay computes the filter's weights. window must be odd and
// at least 3, 0 <= order < window, and deriv 0 (smoothing), 1 or 2 and
// at most order; otherwise the error wraps [ErrStep].
//
// The weights are found by least squares with a QR factorisation of the
// window's Vandermonde matrix in the scaled offset x = q/m (m =
// window/2), never through the normal equations. If that matrix is too
// ill-conditioned (very high orders) the error wraps [ErrStep].
func NewSavitzkyGolay(window, order, deriv int) (*SavitzkyGolay, error) {
	if bad := checkSG(window, order, deriv); bad != "" {
		return nil, fmt.Errorf("%w: Savitzky-Golay: %s", ErrStep, bad)
	}
	m := window / 2
	k := order + 1
	v := mat.NewDense(window, k, nil)
	for i := range window {
		x := float64(i-m) / float64(m)
		p := 1.0
		for j := range k {
			v.Set(i, j, p)
			p *= x
		}
	}
	var qr mat.QR
	qr.Factorize(v)
	// pinv (k x window) maps the window's values to the polynomial's
	// coefficients in x.
	var pinv mat.Dense
	if err := qr.SolveTo(&pinv, false, eye(window)); err != nil {
		var c mat.Condition
		if errors.As(err, &c) {
			return nil, fmt.Errorf("%w: Savitzky-Golay: order %d is too high to fit %d points reliably (condition %.3g)", ErrStep, order, window, float64(c))
		}
		return nil, fmt.Errorf("baseline: Savitzky-Golay: %w", err)
	}
	f := &SavitzkyGolay{window: window, order: order, deriv: deriv, weights: make([]float64, window*window)}
	g := make([]float64, k)
	for q := -m; q <= m; q++ {
		// g[j] is the deriv-th derivative of x^j with respect to the
		// sample index at offset q: j!/(j-d)! x^(j-d) / m^d.
		x := float64(q) / float64(m)
		for j := range k {
			g[j] = 0
			if j < deriv {
				continue
			}
			c := math.Pow(x, float64(j-deriv)) / math.Pow(float64(m), float64(deriv))
			for t := j - deriv + 1; t <= j; t++ {
				c *= float64(t)
			}
			g[j] = c
		}
		row := f.weights[(q+m)*window : (q+m+1)*window]
		for i := range window {
			var s float64
			for j := range k {
				s += g[j] * pinv.At(j, i)
			}
			row[i] = s
		}
	}
	return f, nil
}

// eye is the n x n identity.
func eye(n int) *mat.Dense {
	d := mat.NewDense(n, n, nil)
	for i := range n {
		d.Set(i, i, 1)
	}
	return d
}

// Window returns the filter's window, order and derivative.
func (f *SavitzkyGolay) Window() (window, order, deriv int) { return f.window, f.order, f.deriv }

// WeightsAt returns the weights that evaluate the polynomial fitted to a
// window at offset q (-m..m, m = window/2) from the window's centre,
// listed from the window's first point, per sample step (a second
// derivative includes the factor 2!). WeightsAt(0) are the classic
// convolution weights; the others serve the edges. It panics if q is out
// of range.
func (f *SavitzkyGolay) WeightsAt(q int) []float64 {
	m := f.window / 2
	if q < -m || q > m {
		panic(fmt.Sprintf("baseline: Savitzky-Golay offset %d outside -%d..%d", q, m, m))
	}
	return append([]float64(nil), f.weights[(q+m)*f.window:(q+m+1)*f.window]...)
}

// FilterTo writes the filtered y to dst, which must have len(y). step is
// the signed spacing of the (even) grid, in the unit the derivative is
// wanted per; derivatives are divided by step^deriv, and step is not used
// for smoothing.
//
// Point j with m <= j < n-m gets the centred window. The first m points
// are evaluated on the polynomial fitted to the first window points, the
// last m on the one fitted to the last window points, so a polynomial of
// degree <= order is reproduced exactly at every point.
//
// Errors (nothing written): len(y) < window, or a derivative with step 0
// or non-finite, wrap [ErrData]. FilterTo panics if len(dst) != len(y).
func (f *SavitzkyGolay) FilterTo(dst, y []float64, step float64) error {
	n, w, m := len(y), f.window, f.window/2
	if len(dst) != n {
		panic("baseline: Savitzky-Golay destination length mismatch")
	}
	if n < w {
		return fmt.Errorf("%w: Savitzky-Golay window of %d points is longer than the spectrum (%d points)", ErrData, w, n)
	}
	scale := 1.0
	if f.deriv > 0 {
		if step == 0 || math.IsNaN(step) || math.IsInf(step, 0) {
			return fmt.Errorf("%w: Savitzky-Golay derivative needs a finite non-zero step, got %g", ErrData, step)
		}
		scale = 1 / math.Pow(step, float64(f.deriv))
	}
	dot := func(row []float64, seg []float64) float64 {
		var s float64
		for i, c := range row {
			s += c * seg[i]
		}
		return s * scale
	}
	centre := f.weights[m*w : (m+1)*w]
	for j := m; j < n-m; j++ {
		dst[j] = dot(centre, y[j-m:j+m+1])
	}
	for j := range m {
		dst[j] = dot(f.weights[j*w:(j+1)*w], y[:w])
		dst[n-1-j] = dot(f.weights[(w-1-j)*w:(w-j)*w], y[n-w:])
	}
	return nil
}

// SavitzkyGolayWeights returns the convolution weights of a
// Savitzky-Golay filter at the window's centre, listed from offset -m to
// m (m = window/2): the filtered value at point j is Σ c_i y_(j+i). A
// derivative is per sample step (divide by step^deriv for spacing step)
// and the second derivative includes the factor 2!. Errors are those of
// [NewSavitzkyGolay].
func SavitzkyGolayWeights(window, order, deriv int) ([]float64, error) {
	f, err := NewSavitzkyGolay(window, order, deriv)
	if err != nil {
		return nil, err
	}
	return f.WeightsAt(0), nil
}

// evenStep returns the mean step of wl and checks that every step is
// within GridTolerance of it.
func evenStep(wl []float64) (float64, error) {
	n := len(wl)
	if n < 2 {
		return 0, fmt.Errorf("%w: a grid of %d point has no step", ErrData, n)
	}
	h := (wl[n-1] - wl[0]) / float64(n-1)
	for i := 1; i < n; i++ {
		if d := wl[i] - wl[i-1]; math.Abs(d-h) > GridTolerance*math.Abs(h) {
			return 0, fmt.Errorf("%w: step %g nm between points %d and %d (%g nm) differs from the mean step %g nm by more than %g; resample to an even grid first", ErrUnevenGrid, d, i-1, i, wl[i-1], h, GridTolerance)
		}
	}
	return h, nil
}

// sgApply filters y on grid wl.
func sgApply(wl, y []float64, window, order, deriv int) ([]float64, error) {
	if err := checkMonotonic(wl); err != nil {
		return nil, err
	}
	if len(y) < window {
		return nil, fmt.Errorf("%w: Savitzky-Golay window of %d points is longer than the spectrum (%d points)", ErrData, window, len(y))
	}
	h, err := evenStep(wl)
	if err != nil {
		return nil, err
	}
	f, err := NewSavitzkyGolay(window, order, deriv)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(y))
	if err := f.FilterTo(out, y, h); err != nil {
		return nil, err
	}
	return out, nil
}
