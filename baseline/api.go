// Package baseline gives the fit its nuisance terms (offset, polynomial in
// wavelength, a scattering power law) and the pre-treatments applied to
// spectra before fitting (zeroing on a reference region, asymmetric least
// squares background, Savitzky-Golay smoothing and derivatives).
package baseline

import "errors"

var errTODO = errors.New("baseline: not yet written")

// Model chooses the nuisance columns added to a fit.
type Model struct {
	// Degree of the polynomial in wavelength: -1 none, 0 offset,
	// 1 linear, 2 quadratic, 3 cubic.
	Degree int `json:"degree"`
	// Scatter adds a column proportional to wavelength^-ScatterPower,
	// constrained non-negative.
	Scatter      bool    `json:"scatter"`
	ScatterPower float64 `json:"scatter_power,omitempty"`
}

// ParseModel reads the command-line form: "none", "offset", "linear",
// "quadratic", "cubic", optionally followed by "+scatter" or
// "+scatter=P" (P the power, default 4).
func ParseModel(s string) (Model, error) { return Model{}, errTODO }

// String is the inverse of ParseModel.
func (m Model) String() string { return "" }

// Columns returns the nuisance columns on the wavelength grid wl (nm),
// whether each is constrained non-negative, and a short name for each
// ("offset", "slope", "curve2", "curve3", "scatter"), in that order.
func (m Model) Columns(wl []float64) (cols [][]float64, nonneg []bool, names []string) {
	return nil, nil, nil
}

// Step is one pre-treatment. Kind is "zero", "als" or "sg"; the other
// fields are its parameters. Steps are saved in reference sets so that
// samples get exactly the treatment their references got.
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
// "sg:WINDOW,ORDER[,DERIV]".
func ParseStep(s string) (Step, error) { return Step{}, errTODO }

// String is the inverse of ParseStep.
func (s Step) String() string { return "" }

// Apply returns the treated values of y on grid wl (nm) in a new slice.
func (s Step) Apply(wl, y []float64) ([]float64, error) { return nil, errTODO }

// ApplyAll applies steps in order.
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
