package baseline

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"huesolve/internal/pkgerr"
)

// Step kinds.
const (
	kindZero = "zero" // subtract the mean over a wavelength region
	kindALS  = "als"  // subtract an asymmetric least squares background
	kindSG   = "sg"   // Savitzky-Golay smoothing or derivative
)

// Errors returned by ParseStep and Apply. They are wrapped with the step
// and the details; test with errors.Is.
var (
	// errStep: the step's kind or parameters are invalid.
	errStep = pkgerr.New("baseline", "invalid pre-treatment")
	// errData: the spectrum cannot be treated (lengths differ, too few
	// points, a value is NaN or infinite, the grid is not monotonic).
	errData = pkgerr.New("baseline", "spectrum cannot be treated")
	// errEmptyRegion: a zeroing region holds no grid points.
	errEmptyRegion = pkgerr.New("baseline", "zeroing region holds no grid points")
	// ErrUnevenGrid: a Savitzky-Golay step met a grid whose spacing is
	// not constant within gridTolerance.
	ErrUnevenGrid = pkgerr.New("baseline", "wavelength grid is not evenly spaced")
	// errNoConvergence: the asymmetric least squares weights did not
	// settle within the iteration cap.
	errNoConvergence = pkgerr.New("baseline", "asymmetric least squares did not converge")
)

// regionSlack widens a zeroing region on both sides (nm). It bounds the
// rounding error of grid wavelengths computed as start + i*step, so that a
// region written as "700-750" keeps the points 700 and 750 of such a grid.
const regionSlack = 1e-6

// Step is one pre-treatment. Kind is "zero", "als" or "sg"; the other
// fields are its parameters, and fields a kind does not use must be
// zero. Steps are saved in reference sets so that samples get exactly the
// treatment their references got.
type Step struct {
	Kind   string  `json:"kind"`
	Lo     float64 `json:"lo_nm,omitempty"`  // zero: region start
	Hi     float64 `json:"hi_nm,omitempty"`  // zero: region end
	Lambda float64 `json:"lambda,omitempty"` // als: smoothness
	P      float64 `json:"p,omitempty"`      // als: asymmetry
	Window int     `json:"window,omitempty"` // sg: odd number of points
	Order  int     `json:"order,omitempty"`  // sg: polynomial order
	Deriv  int     `json:"deriv,omitempty"`  // sg: 0 smooth, 1 or 2 derivative
}

// ParseStep reads the command-line form: "zero:LO-HI", "als:LAMBDA,P",
// "sg:WINDOW,ORDER[,DERIV]". Case and spaces around the parts are
// ignored. The parameters are checked as by Step.check, and a
// Savitzky-Golay filter must also be one newSavitzkyGolay accepts;
// errors wrap errStep and quote the input.
func ParseStep(s string) (Step, error) {
	kind, args, ok := strings.Cut(strings.TrimSpace(s), ":")
	kind = strings.ToLower(strings.TrimSpace(kind))
	args = strings.TrimSpace(args)
	if !ok || args == "" {
		return Step{}, fmt.Errorf("%w %q: want zero:LO-HI, als:LAMBDA,P or sg:WINDOW,ORDER[,DERIV]", errStep, s)
	}
	var st Step
	switch kind {
	case kindZero:
		// The separator is a '-' that is neither the first character nor
		// an exponent sign, so "1e-05-2" and "-5-10" split correctly.
		cut := -1
		for i := 1; i < len(args); i++ {
			if args[i] == '-' && args[i-1] != 'e' && args[i-1] != 'E' {
				cut = i
				break
			}
		}
		if cut < 0 {
			return Step{}, fmt.Errorf("%w %q: want zero:LO-HI (nm)", errStep, s)
		}
		lo, err1 := parseFloat(args[:cut])
		hi, err2 := parseFloat(args[cut+1:])
		if err := errors.Join(err1, err2); err != nil {
			return Step{}, fmt.Errorf("%w %q: %w", errStep, s, err)
		}
		st = Step{Kind: kindZero, Lo: lo, Hi: hi}
	case kindALS:
		f := strings.Split(args, ",")
		if len(f) != 2 {
			return Step{}, fmt.Errorf("%w %q: want als:LAMBDA,P", errStep, s)
		}
		lambda, err1 := parseFloat(f[0])
		p, err2 := parseFloat(f[1])
		if err := errors.Join(err1, err2); err != nil {
			return Step{}, fmt.Errorf("%w %q: %w", errStep, s, err)
		}
		st = Step{Kind: kindALS, Lambda: lambda, P: p}
	case kindSG:
		f := strings.Split(args, ",")
		if len(f) != 2 && len(f) != 3 {
			return Step{}, fmt.Errorf("%w %q: want sg:WINDOW,ORDER[,DERIV]", errStep, s)
		}
		var v [3]int
		for i, a := range f {
			n, err := strconv.Atoi(strings.TrimSpace(a))
			if err != nil {
				return Step{}, fmt.Errorf("%w %q: %q is not a whole number", errStep, s, strings.TrimSpace(a))
			}
			v[i] = n
		}
		st = Step{Kind: kindSG, Window: v[0], Order: v[1], Deriv: v[2]}
	default:
		return Step{}, fmt.Errorf("%w %q: unknown kind %q (want zero, als or sg)", errStep, s, kind)
	}
	if bad := st.problem(); bad != "" {
		// Quoting the input once; Check would name the step again.
		return Step{}, fmt.Errorf("%w %q: %s", errStep, s, bad)
	}
	if st.Kind == kindSG {
		// Refuse filters whose weights cannot be used (see
		// newSavitzkyGolay) now rather than at the first spectrum.
		if _, err := newSavitzkyGolay(st.Window, st.Order, st.Deriv); err != nil {
			return Step{}, fmt.Errorf("%w (in %q)", err, s)
		}
	}
	return st, nil
}

// parseFloat parses a finite number.
func parseFloat(s string) (float64, error) {
	s = strings.TrimSpace(s)
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a finite number", s)
	}
	return v, nil
}

// String is the inverse of ParseStep. Numbers are written in the
// shortest form that reads back exactly.
func (s Step) String() string {
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	switch s.Kind {
	case kindZero:
		return "zero:" + g(s.Lo) + "-" + g(s.Hi)
	case kindALS:
		return "als:" + g(s.Lambda) + "," + g(s.P)
	case kindSG:
		str := fmt.Sprintf("sg:%d,%d", s.Window, s.Order)
		if s.Deriv != 0 {
			str += fmt.Sprintf(",%d", s.Deriv)
		}
		return str
	}
	return fmt.Sprintf("%s:?", s.Kind)
}

// check reports whether the step's parameters are valid:
//
//	zero: LO and HI finite, LO <= HI
//	als:  LAMBDA finite and > 0, 0 < P < 1
//	sg:   WINDOW odd, 3..1001, 0 <= ORDER < WINDOW, 0 <= DERIV <= min(2, ORDER)
//
// and that the fields the kind does not use are zero. Errors wrap
// errStep.
func (s Step) check() error {
	if bad := s.problem(); bad != "" {
		return fmt.Errorf("%w %s: %s", errStep, s, bad)
	}
	return nil
}

// Check reports whether s is a step ParseStep would accept: its
// parameters valid (see check) and, for Savitzky-Golay, weights that can
// be used. It is the check for steps read from a file (a reference set's
// pre-treatment). Errors wrap errStep.
func (s Step) Check() error {
	if err := s.check(); err != nil {
		return err
	}
	if s.Kind == kindSG {
		if _, err := newSavitzkyGolay(s.Window, s.Order, s.Deriv); err != nil {
			return fmt.Errorf("%w (in %s)", err, s)
		}
	}
	return nil
}

// problem says what check finds wrong with s ("" when nothing).
func (s Step) problem() string {
	fin := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	var bad string
	switch s.Kind {
	case kindZero:
		switch {
		case !fin(s.Lo) || !fin(s.Hi):
			bad = "region limits must be finite"
		case s.Lo > s.Hi:
			bad = fmt.Sprintf("region start %g nm is above its end %g nm", s.Lo, s.Hi)
		case s.Lambda != 0 || s.P != 0 || s.Window != 0 || s.Order != 0 || s.Deriv != 0:
			bad = "zeroing takes only a region"
		}
	case kindALS:
		switch {
		case !fin(s.Lambda) || s.Lambda <= 0:
			bad = fmt.Sprintf("smoothness %g must be positive", s.Lambda)
		case !fin(s.P) || s.P <= 0 || s.P >= 1:
			bad = fmt.Sprintf("asymmetry %g must lie strictly between 0 and 1", s.P)
		case s.Lo != 0 || s.Hi != 0 || s.Window != 0 || s.Order != 0 || s.Deriv != 0:
			bad = "asymmetric least squares takes only smoothness and asymmetry"
		}
	case kindSG:
		bad = checkSG(s.Window, s.Order, s.Deriv)
		if bad == "" && (s.Lo != 0 || s.Hi != 0 || s.Lambda != 0 || s.P != 0) {
			bad = "Savitzky-Golay takes only window, order and derivative"
		}
	default:
		bad = fmt.Sprintf("unknown kind %q (want zero, als or sg)", s.Kind)
	}
	return bad
}

// maxWindow bounds a Savitzky-Golay window. The filter keeps window²
// weights (8 MB at this size); wider windows have no use on spectra of a
// few thousand points and would let a typing error exhaust memory.
const maxWindow = 1001

// checkSG checks Savitzky-Golay parameters; it returns "" if they are
// valid and a description of the fault otherwise.
func checkSG(window, order, deriv int) string {
	switch {
	case window < 3 || window%2 == 0 || window > maxWindow:
		return fmt.Sprintf("window %d must be odd, from 3 to %d", window, maxWindow)
	case order < 0 || order >= window:
		return fmt.Sprintf("order %d must lie in 0..%d (below the window)", order, window-1)
	case deriv < 0 || deriv > 2:
		return fmt.Sprintf("derivative %d must be 0, 1 or 2", deriv)
	case deriv > order:
		return fmt.Sprintf("derivative %d of a polynomial of order %d is zero", deriv, order)
	}
	return ""
}

// Apply returns the treated values of y on grid wl (nm) in a new slice.
//
// wl and y must have the same, non-zero length and hold finite values.
// ALS and Savitzky-Golay also need a strictly monotonic grid (increasing
// or decreasing), ALS at least 3 points and Savitzky-Golay at least
// WINDOW points on an even grid (within gridTolerance). Zeroing fails
// with errEmptyRegion if no grid point lies in its region; ALS fails with
// errNoConvergence if its weights keep changing. Savitzky-Golay
// derivatives are per nm, with the sign of the grid's direction taken
// into account. A result that overflows (values near the float64 limit,
// or a derivative on a grid of absurdly small step) fails with errData.
// Errors name the step; no partial result is returned.
func (s Step) Apply(wl, y []float64) ([]float64, error) {
	if err := s.check(); err != nil {
		return nil, err
	}
	if err := checkData(wl, y); err != nil {
		return nil, fmt.Errorf("%s: %w", s, err)
	}
	var out []float64
	var err error
	switch s.Kind {
	case kindZero:
		out, err = zeroRegion(wl, y, s.Lo, s.Hi)
	case kindALS:
		out, err = alsSubtract(wl, y, s.Lambda, s.P)
	case kindSG:
		out, err = sgApply(wl, y, s.Window, s.Order, s.Deriv)
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", s, err)
	}
	for i, v := range out {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s: %w: result overflows at %g nm (point %d)", s, errData, wl[i], i)
		}
	}
	return out, nil
}

// checkData checks that wl and y have equal non-zero lengths and finite
// values.
func checkData(wl, y []float64) error {
	if len(wl) != len(y) {
		return fmt.Errorf("%w: %d wavelengths but %d values", errData, len(wl), len(y))
	}
	if len(wl) == 0 {
		return fmt.Errorf("%w: empty spectrum", errData)
	}
	for i := range wl {
		if math.IsNaN(wl[i]) || math.IsInf(wl[i], 0) {
			return fmt.Errorf("%w: wavelength at point %d is %v", errData, i, wl[i])
		}
		if math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return fmt.Errorf("%w: value at %g nm (point %d) is %v", errData, wl[i], i, y[i])
		}
	}
	return nil
}

// checkMonotonic checks that wl is strictly increasing or strictly
// decreasing.
func checkMonotonic(wl []float64) error {
	if len(wl) < 2 {
		return nil
	}
	up := wl[1] > wl[0]
	for i := 1; i < len(wl); i++ {
		if (up && wl[i] <= wl[i-1]) || (!up && wl[i] >= wl[i-1]) {
			return fmt.Errorf("%w: wavelengths not strictly monotonic at point %d (%g nm after %g nm)", errData, i, wl[i], wl[i-1])
		}
	}
	return nil
}

// zeroRegion subtracts the mean of y over lo <= wl <= hi (widened by
// regionSlack).
func zeroRegion(wl, y []float64, lo, hi float64) ([]float64, error) {
	var sum float64
	var n int
	for i, v := range wl {
		if v >= lo-regionSlack && v <= hi+regionSlack {
			sum += y[i]
			n++
		}
	}
	if n == 0 {
		return nil, fmt.Errorf("%w (grid %g..%g nm)", errEmptyRegion, wl[0], wl[len(wl)-1])
	}
	mean := sum / float64(n)
	out := make([]float64, len(y))
	for i, v := range y {
		out[i] = v - mean
	}
	return out, nil
}

// ApplyAll applies steps in order and returns the result in a new slice
// (a copy of y when there are no steps). It stops at the first error.
func ApplyAll(steps []Step, wl, y []float64) ([]float64, error) {
	out := y
	for _, s := range steps {
		var err error
		if out, err = s.Apply(wl, out); err != nil {
			return nil, err
		}
	}
	if len(steps) == 0 {
		out = append([]float64(nil), y...)
	}
	return out, nil
}

// Reach is how many grid points either side of a reading the steps can
// carry it: the sum of the Savitzky-Golay half-windows, since the filters
// run one after another. A reading left out of a fit (above the ceiling,
// say) also spoils the treated values within Reach points of it.
// Zeroing shifts every point by one mean and asymmetric least squares
// spreads a reading over the whole baseline; neither is counted here.
func Reach(steps []Step) int {
	r := 0
	for _, st := range steps {
		if st.Kind == kindSG {
			r += st.Window / 2
		}
	}
	return r
}
