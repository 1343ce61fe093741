package baseline

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// gridTolerance bounds the unevenness of a grid that Savitzky-Golay
// accepts: every step may differ from the mean step by at most this
// fraction of it. A relative spacing error e moves a derivative by about
// e relative, so 1e-3 keeps the error from the grid below 0.1 % while
// still accepting wavelengths written with rounding (for example 0.1 nm
// steps printed to 4 decimals).
const gridTolerance = 1e-3

// sgMaxNoiseGain bounds the white-noise gain sqrt(Σ c_i²) of every row of
// a Savitzky-Golay filter's weights (per sample step). Derivative weights
// of fits whose order approaches the window grow without limit (about
// 1e12 for the first derivative of order 50 on 51 points); measured
// rounding in the weights' defining moments stays below 1e-11 relative
// up to this gain and reaches 1e-5 at 1e12. A filter that multiplies
// noise by a million leaves nothing of a spectrum, so such filters are
// refused rather than computed inaccurately.
const sgMaxNoiseGain = 1e6

// savitzkyGolay is a Savitzky-Golay filter (A. Savitzky & M. J. E. Golay,
// Anal. Chem. 36 (1964) 1627; corrections by J. Steinier, Y. Termonia &
// J. Deltour, Anal. Chem. 44 (1972) 1906): a polynomial of degree order
// fitted by least squares to window consecutive points, evaluated (or
// differentiated deriv times) at the window's centre. The weights are
// computed once by newSavitzkyGolay; a filter may be used for many
// spectra and by several goroutines at once.
type savitzkyGolay struct {
	window, order, deriv int
	// weights holds Window rows of Window weights: row m+q evaluates the
	// polynomial fitted to the window at offset q (-m..m) from its centre,
	// per sample step.
	weights []float64
}

// newSavitzkyGolay computes the filter's weights. window must be odd and
// at least 3, 0 <= order < window, and deriv 0 (smoothing), 1 or 2 and
// at most order; otherwise the error wraps errStep.
//
// The least-squares fit is done in the basis of polynomials orthonormal
// on the window's points (the discrete orthogonal or Gram polynomials of
// the scaled offset x = q/m, m = window/2), built by the Stieltjes
// three-term recurrence with re-orthogonalisation of their values. In
// that basis the fit is a projection, so the weights are
//
//	c_t(i) = Σ_(k=0..order) q_k(x_i) q_k^(deriv)(x_t) / m^deriv
//
// with the first and second derivatives of q_k carried along the same
// recurrence.
// The basis is orthonormal whatever the window and order, so no normal
// equations are formed and no ill-conditioned Vandermonde matrix is
// solved. At orders close to the window the derivative weights themselves
// grow large, as differentiating a high-degree fit amplifies noise; a
// filter whose weights would multiply white noise by more than a million
// (sgMaxNoiseGain) is refused with an error wrapping errStep.
func newSavitzkyGolay(window, order, deriv int) (*savitzkyGolay, error) {
	if bad := checkSG(window, order, deriv); bad != "" {
		return nil, fmt.Errorf("%w: Savitzky-Golay: %s", errStep, bad)
	}
	m := window / 2
	x := make([]float64, window)
	for i := range x {
		x[i] = float64(i-m) / float64(m)
	}
	// Row k of qm, d1m, d2m holds the values and the first and second
	// derivatives in x of the k-th orthonormal polynomial at the window's
	// points; q, d1, d2 are views of those rows.
	qm := mat.NewDense(order+1, window, nil)
	d1m := mat.NewDense(order+1, window, nil)
	d2m := mat.NewDense(order+1, window, nil)
	q, d1, d2 := rowViews(qm), rowViews(d1m), rowViews(d2m)
	for i := range q[0] {
		q[0][i] = 1 / math.Sqrt(float64(window))
	}
	var beta float64 // β_k, the previous normalisation
	for k := 0; k < order; k++ {
		v := q[k+1]
		for i := range v {
			v[i] = x[i] * q[k][i]
		}
		a := floats.Dot(v, q[k])
		floats.AddScaled(v, -a, q[k])
		if k > 0 {
			floats.AddScaled(v, -beta, q[k-1])
		}
		// Re-orthogonalise against all earlier polynomials: removes the
		// rounding the recurrence would otherwise accumulate.
		for j := 0; j <= k; j++ {
			floats.AddScaled(v, -floats.Dot(v, q[j]), q[j])
		}
		next := floats.Norm(v, 2)
		floats.Scale(1/next, v)
		for i := range window {
			// Differentiate β_(k+1) q_(k+1) = (x - a) q_k - β_k q_(k-1).
			t1 := q[k][i] + (x[i]-a)*d1[k][i]
			t2 := 2*d1[k][i] + (x[i]-a)*d2[k][i]
			if k > 0 {
				t1 -= beta * d1[k-1][i]
				t2 -= beta * d2[k-1][i]
			}
			d1[k+1][i] = t1 / next
			d2[k+1][i] = t2 / next
		}
		beta = next
	}
	dv := []*mat.Dense{qm, d1m, d2m}[deriv]
	f := &savitzkyGolay{window: window, order: order, deriv: deriv, weights: make([]float64, window*window)}
	wm := mat.NewDense(window, window, f.weights)
	wm.Mul(dv.T(), qm)
	wm.Scale(1/math.Pow(float64(m), float64(deriv)), wm)
	for t := range window {
		if g := floats.Norm(wm.RawRowView(t), 2); !(g <= sgMaxNoiseGain) {
			return nil, fmt.Errorf("%w: Savitzky-Golay: order %d on %d points gives derivative weights that amplify noise %.2g times (limit %g); lower the order or widen the window", errStep, order, window, g, float64(sgMaxNoiseGain))
		}
	}
	return f, nil
}

// rowViews returns views of the rows of a.
func rowViews(a *mat.Dense) [][]float64 {
	r, _ := a.Dims()
	rows := make([][]float64, r)
	for i := range rows {
		rows[i] = a.RawRowView(i)
	}
	return rows
}

// Window returns the filter's window, order and derivative.
func (f *savitzkyGolay) Window() (window, order, deriv int) { return f.window, f.order, f.deriv }

// WeightsAt returns the weights that evaluate the polynomial fitted to a
// window at offset q (-m..m, m = window/2) from the window's centre,
// listed from the window's first point, per sample step (a second
// derivative includes the factor 2!). WeightsAt(0) are the classic
// convolution weights; the others serve the edges. It panics if q is out
// of range.
func (f *savitzkyGolay) WeightsAt(q int) []float64 {
	m := f.window / 2
	if q < -m || q > m {
		panic(fmt.Sprintf("baseline: Savitzky-Golay offset %d outside -%d..%d", q, m, m))
	}
	return append([]float64(nil), f.weights[(q+m)*f.window:(q+m+1)*f.window]...)
}

// FilterTo writes the filtered y to dst, which must have len(y) and must
// not overlap y. step is
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
// or non-finite, wrap errData. FilterTo panics if len(dst) != len(y).
func (f *savitzkyGolay) FilterTo(dst, y []float64, step float64) error {
	n, w, m := len(y), f.window, f.window/2
	if len(dst) != n {
		panic("baseline: Savitzky-Golay destination length mismatch")
	}
	if n < w {
		return fmt.Errorf("%w: Savitzky-Golay window of %d points is longer than the spectrum (%d points)", errData, w, n)
	}
	scale := 1.0
	if f.deriv > 0 {
		if step == 0 || math.IsNaN(step) || math.IsInf(step, 0) {
			return fmt.Errorf("%w: Savitzky-Golay derivative needs a finite non-zero step, got %g", errData, step)
		}
		scale = 1 / math.Pow(step, float64(f.deriv))
	}
	dot := func(row []float64, seg []float64) float64 { return floats.Dot(row, seg) * scale }
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
// and the second derivative includes the factor 2!. window must be odd
// and at least 3, 0 <= order < window, and deriv 0 (smoothing), 1 or 2
// and at most order; derivative weights that would multiply white noise
// by more than a million are refused.
func SavitzkyGolayWeights(window, order, deriv int) ([]float64, error) {
	f, err := newSavitzkyGolay(window, order, deriv)
	if err != nil {
		return nil, err
	}
	return f.WeightsAt(0), nil
}

// evenStep returns the mean step of wl and checks that every step is
// within gridTolerance of it.
func evenStep(wl []float64) (float64, error) {
	n := len(wl)
	if n < 2 {
		return 0, fmt.Errorf("%w: a grid of %d point has no step", errData, n)
	}
	h := (wl[n-1] - wl[0]) / float64(n-1)
	for i := 1; i < n; i++ {
		if d := wl[i] - wl[i-1]; math.Abs(d-h) > gridTolerance*math.Abs(h) {
			return 0, fmt.Errorf("%w: step %g nm between points %d and %d (%g nm) differs from the mean step %g nm by more than %g; resample to an even grid first", ErrUnevenGrid, d, i-1, i, wl[i-1], h, gridTolerance)
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
		return nil, fmt.Errorf("%w: Savitzky-Golay window of %d points is longer than the spectrum (%d points)", errData, window, len(y))
	}
	h, err := evenStep(wl)
	if err != nil {
		return nil, err
	}
	f, err := newSavitzkyGolay(window, order, deriv)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(y))
	if err := f.FilterTo(out, y, h); err != nil {
		return nil, err
	}
	return out, nil
}
