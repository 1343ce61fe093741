package baseline

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/floats"

	"huesolve/internal/pkgerr"
)

// defaultScatterPower is the exponent of the scattering term when none is
// given: λ^-4, Rayleigh scattering by particles much smaller than the
// wavelength (common practice).
const defaultScatterPower = 4

// maxScatterPower bounds the user-set scattering exponent. Physical
// turbidity exponents lie between about 0 and 4 (common practice); the
// bound only guards the column against overflow and typing errors.
const maxScatterPower = 8

// errModel reports an invalid [Model]: a degree outside -1..3, a
// scattering power that is not positive and finite, or a grid the
// columns cannot be built on.
var errModel = pkgerr.New("baseline", "invalid model")

// Model chooses the nuisance columns added to a fit.
//
// The zero value is a constant offset. See the package documentation for
// the columns' definitions.
type Model struct {
	// Degree of the polynomial in wavelength: -1 none, 0 offset,
	// 1 linear, 2 quadratic, 3 cubic.
	Degree int `json:"degree"`
	// Scatter adds a column proportional to wavelength^-ScatterPower,
	// constrained non-negative. ScatterPower 0 means
	// defaultScatterPower.
	Scatter      bool    `json:"scatter"`
	ScatterPower float64 `json:"scatter_power,omitempty"`
}

// degreeNames are the command-line names of the polynomial degrees -1..3.
var degreeNames = [...]string{"none", "offset", "linear", "quadratic", "cubic"}

// columnNames are the names of the polynomial columns, by degree.
var columnNames = [...]string{"offset", "slope", "curve2", "curve3"}

// ParseModel reads the command-line form: "none", "offset", "linear",
// "quadratic", "cubic", optionally followed by "+scatter" or
// "+scatter=P" (P the power, default 4). Case and surrounding spaces are
// ignored. The returned model has ScatterPower set whenever Scatter is.
// Errors wrap errModel and quote the input.
func ParseModel(s string) (Model, error) {
	in := strings.ToLower(strings.TrimSpace(s))
	base, rest, hasPlus := strings.Cut(in, "+")
	base = strings.TrimSpace(base)
	m := Model{Degree: -2}
	for i, name := range degreeNames {
		if base == name {
			m.Degree = i - 1
		}
	}
	if m.Degree == -2 {
		return Model{}, fmt.Errorf("%w %q: want none, offset, linear, quadratic or cubic, optionally +scatter or +scatter=POWER", errModel, s)
	}
	if !hasPlus {
		return m, nil
	}
	term, val, hasVal := strings.Cut(strings.TrimSpace(rest), "=")
	if strings.TrimSpace(term) != "scatter" {
		return Model{}, fmt.Errorf("%w %q: unknown term %q after '+' (want scatter or scatter=POWER)", errModel, s, strings.TrimSpace(rest))
	}
	m.Scatter = true
	m.ScatterPower = defaultScatterPower
	if hasVal {
		p, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil {
			return Model{}, fmt.Errorf("%w %q: scattering power %q is not a number", errModel, s, val)
		}
		if p == 0 {
			return Model{}, fmt.Errorf("%w %q: scattering power must be positive", errModel, s)
		}
		m.ScatterPower = p
	}
	if err := m.checkParams(); err != nil {
		return Model{}, fmt.Errorf("%w (in %q)", err, s)
	}
	return m, nil
}

// String is the inverse of ParseModel. An invalid degree is written as
// "degree(N)", which ParseModel rejects.
func (m Model) String() string {
	var b strings.Builder
	if m.Degree >= -1 && m.Degree <= 3 {
		b.WriteString(degreeNames[m.Degree+1])
	} else {
		fmt.Fprintf(&b, "degree(%d)", m.Degree)
	}
	if m.Scatter {
		b.WriteString("+scatter")
		if p := m.power(); p != defaultScatterPower {
			b.WriteString("=" + strconv.FormatFloat(p, 'g', -1, 64))
		}
	}
	return b.String()
}

// power is the effective scattering exponent.
func (m Model) power() float64 {
	if m.ScatterPower == 0 {
		return defaultScatterPower
	}
	return m.ScatterPower
}

// checkParams checks the model without a grid.
func (m Model) checkParams() error {
	if m.Degree < -1 || m.Degree > 3 {
		return fmt.Errorf("%w: polynomial degree %d outside -1..3", errModel, m.Degree)
	}
	if m.Scatter {
		p := m.power()
		if math.IsNaN(p) || p <= 0 || p > maxScatterPower {
			return fmt.Errorf("%w: scattering power %g outside (0, %d]", errModel, p, maxScatterPower)
		}
	}
	return nil
}

// NumColumns is the number of columns Columns returns.
func (m Model) NumColumns() int {
	n := m.Degree + 1
	if n < 0 {
		n = 0
	}
	if m.Scatter {
		n++
	}
	return n
}

// Check reports whether Columns can be built on the grid wl (nm): the
// model's parameters must be valid, wl non-empty and finite, and, with
// the scattering term, every wavelength positive. Errors wrap errModel.
func (m Model) Check(wl []float64) error {
	if err := m.checkParams(); err != nil {
		return err
	}
	if len(wl) == 0 {
		return fmt.Errorf("%w: empty wavelength grid", errModel)
	}
	for i, v := range wl {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: wavelength %d is %v", errModel, i, v)
		}
		if m.Scatter && v <= 0 {
			return fmt.Errorf("%w: scattering term needs positive wavelengths, point %d is %g nm", errModel, i, v)
		}
	}
	if m.Scatter {
		lo, hi := floats.Min(wl), floats.Max(wl)
		if v := math.Pow(lo/((lo+hi)/2), -m.power()); math.IsInf(v, 0) {
			return fmt.Errorf("%w: scattering term overflows at %g nm", errModel, lo)
		}
	}
	return nil
}

// Columns returns the nuisance columns on the wavelength grid wl (nm),
// whether each is constrained non-negative, and a short name for each
// ("offset", "slope", "curve2", "curve3", "scatter"), in that order.
//
// With c the middle and h the half-width of wl's range and t = (λ-c)/h,
// the polynomial columns are the Legendre polynomials
//
//	offset = 1, slope = t, curve2 = (3t² - 1)/2, curve3 = (5t³ - 3t)/2
//
// (t = 0 if all wavelengths are equal), and scatter = (λ/c)^-P. The
// polynomial columns are free in sign, the scattering column is
// non-negative. Each column is a new slice of len(wl).
//
// Columns returns the error of m.Check(wl) (of the model's own
// parameters for an empty wl), wrapping errModel, and no columns.
func (m Model) Columns(wl []float64) (cols [][]float64, nonneg []bool, names []string, err error) {
	if len(wl) > 0 {
		err = m.Check(wl)
	} else {
		err = m.checkParams()
	}
	if err != nil {
		return nil, nil, nil, err
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range wl {
		lo = math.Min(lo, v)
		hi = math.Max(hi, v)
	}
	c, h := (lo+hi)/2, (hi-lo)/2
	for d := 0; d <= m.Degree; d++ {
		col := make([]float64, len(wl))
		for i, v := range wl {
			t := 0.0
			if h > 0 {
				t = (v - c) / h
			}
			col[i] = legendre(d, t)
		}
		cols = append(cols, col)
		nonneg = append(nonneg, false)
		names = append(names, columnNames[d])
	}
	if m.Scatter {
		p := m.power()
		col := make([]float64, len(wl))
		for i, v := range wl {
			col[i] = math.Pow(v/c, -p)
		}
		cols = append(cols, col)
		nonneg = append(nonneg, true)
		names = append(names, "scatter")
	}
	return cols, nonneg, names, nil
}

// legendre is the Legendre polynomial of degree d <= 3 at t.
func legendre(d int, t float64) float64 {
	switch d {
	case 0:
		return 1
	case 1:
		return t
	case 2:
		return (3*t*t - 1) / 2
	default:
		return (5*t*t*t - 3*t) / 2
	}
}
