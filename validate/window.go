package validate

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"huesolve/baseline"
	"huesolve/internal/pkgerr"
	"huesolve/reference"
	"huesolve/unmix"
	"huesolve/unmix/lsq"
)

// Defaults of the window search.
const (
	// DefaultStepNM is the spacing of candidate window edges.
	DefaultStepNM = 5.0
	// DefaultMinWidthNM is the narrowest window considered; a project
	// choice of the order of one UV-Vis band width.
	DefaultMinWidthNM = 40.0
	// DefaultEquivalent is the relative margin within which predicted
	// errors are not told apart: the noise model they rest on is itself
	// estimated from a handful of standards, and the relative standard
	// error of a standard deviation from ν degrees of freedom is about
	// 1/√(2ν) (0.16 for ν = 20). Among windows whose worst predicted
	// error is within this margin of the smallest, the best conditioned
	// one is recommended if its condition number is smaller by more than
	// the same margin.
	DefaultEquivalent = 0.10
	// edgeSlack is the rounding slack, as a fraction of the edge step,
	// allowed when comparing wavelengths with window edges: edges are
	// built by adding steps and grid wavelengths are read from rounded
	// text, so a point on an edge may miss it by a rounding error.
	edgeSlack = 1e-9
	// MaxWindows is the most candidate windows AdviseWindow tries: a
	// bound on its time and memory whatever the step and widths asked
	// (a project choice: on a 401-point grid 100,000 windows take about
	// 5 s on one core and some 30 MB).
	MaxWindows = 100000
)

// StepTooFineError refuses a window search whose edge step is finer than
// the grid's spacing, so that neighbouring windows would hold the same
// points (and their number grows as 1/step²).
type StepTooFineError struct {
	StepNM, GridNM float64 // the step asked and the grid's smallest spacing
}

func (e *StepTooFineError) Error() string {
	return fmt.Sprintf("validate: a window step of %g nm is finer than the reference grid's spacing of %g nm: windows that differ by less than a grid step hold the same points",
		e.StepNM, e.GridNM)
}

// Unprefixed is the text without the package prefix (pkgerr.Plain).
func (e *StepTooFineError) Unprefixed() string { return strings.TrimPrefix(e.Error(), "validate: ") }

// TooManyWindowsError refuses a window search whose step and widths allow
// more than MaxWindows windows.
type TooManyWindowsError struct {
	Windows int     // windows the search would try
	LoNM    float64 // the range of the edges
	HiNM    float64
}

func (e *TooManyWindowsError) Error() string {
	return fmt.Sprintf("validate: the step and widths make %d windows in %g-%g nm, more than the %d tried at most",
		e.Windows, e.LoNM, e.HiNM, MaxWindows)
}

// Unprefixed is the text without the package prefix (pkgerr.Plain).
func (e *TooManyWindowsError) Unprefixed() string { return strings.TrimPrefix(e.Error(), "validate: ") }

// WindowOptions control AdviseWindow. Zero values mean the documented
// defaults.
type WindowOptions struct {
	// Baseline gives the nuisance columns of the fit.
	Baseline baseline.Model
	// PathCM is the sample path length (0: the set's).
	PathCM float64
	// Sigma, if > 0, replaces the set's noise model by a constant noise
	// SD (absorbance). Otherwise the set's noise model is used as solve
	// uses it, growing as 10^A above unmix.WeightKneeA, at the expected
	// absorbance of a sample at Levels.
	Sigma float64
	// Weighted predicts errors for a fit weighted by the noise model;
	// otherwise for an unweighted fit (whose errors then follow the
	// sandwich form S⁺ Σ S⁺ᵀ).
	Weighted bool
	// Lo, Hi limit the search to part of the grid (both 0: all of it).
	Lo, Hi float64
	// StepNM is the spacing of window edges (0: DefaultStepNM).
	StepNM float64
	// MinWidthNM is the narrowest window (0: DefaultMinWidthNM).
	MinWidthNM float64
	// MaxWidthNM, if > 0, is the widest window considered (to compare
	// windows of limited width, or to keep away from range ends known to
	// be unreliable without naming them).
	MaxWidthNM float64
	// Levels are the concentrations, one per compound, at which relative
	// errors are judged and absorbances checked against the ceiling; a
	// zero entry (or nil Levels) takes the middle of the compound's
	// calibrated range, or 1 when the set does not record it.
	Levels []float64
	// Equivalent is the margin of DefaultEquivalent (0: the default;
	// negative: none, recommend the strict minimum).
	Equivalent float64
}

// Candidate is one window with its predicted figures.
type Candidate struct {
	Lo     float64 `json:"lo_nm"`
	Hi     float64 `json:"hi_nm"`
	Points int     `json:"points"`
	// Dropped counts wavelengths of the window left out because the
	// expected absorbance at Levels is above the set's ceiling.
	Dropped int `json:"dropped"`
	// Cond is the condition number of the design (column-scaled,
	// weighted when asked); Singular marks designs where some compounds
	// cannot be told apart (linearly dependent columns, see
	// Merits.Singular).
	Cond     float64 `json:"condition_number"`
	Singular bool    `json:"singular"`
	// SE is each compound's predicted standard error, in its unit, and
	// RelSE that divided by its level; both are empty when Singular. It
	// includes the calibration's part at the levels when the set records
	// the absorptivities' covariance.
	SE    []float64 `json:"se,omitempty"`
	RelSE []float64 `json:"relative_se,omitempty"`
	// Worst is the largest RelSE and WorstCompound its compound.
	Worst         float64 `json:"worst_relative_se,omitempty"`
	WorstCompound string  `json:"worst_compound,omitempty"`
}

// WindowAdvice is the outcome of AdviseWindow.
type WindowAdvice struct {
	Compounds  []string  `json:"compounds"`
	Units      []string  `json:"units"`
	Levels     []float64 `json:"levels"`
	Baseline   string    `json:"baseline"`
	Weighted   bool      `json:"weighted"`
	PathCM     float64   `json:"path_cm"`
	StepNM     float64   `json:"step_nm"`
	MinWidthNM float64   `json:"min_width_nm"`
	MaxWidthNM float64   `json:"max_width_nm,omitempty"`
	// Equivalent is the margin in use, as a fraction of the smallest
	// worst error (0.1: 10 %); JSON gives it in percent, as
	// equivalent_pct.
	Equivalent float64 `json:"-"`
	// Edges are the candidate window edges (nm).
	Edges []float64 `json:"edges_nm"`
	// Candidates are all windows tried, by Lo then Hi.
	Candidates []Candidate `json:"candidates"`
	// Ranked indexes the candidates that are not singular, by Worst
	// (then Cond).
	Ranked []int `json:"-"`
	// Best indexes the recommended candidate.
	Best int `json:"best"`
}

// MarshalJSON encodes the advice with the margin in percent
// ("equivalent_pct"), like every other percentage in huesolve's JSON.
func (a WindowAdvice) MarshalJSON() ([]byte, error) {
	type plain WindowAdvice // without this method
	return json.Marshal(struct {
		plain
		EquivalentPct float64 `json:"equivalent_pct"`
	}{plain(a), percentOf(a.Equivalent)})
}

// percentOf gives a fraction in percent, rounded to 12 significant digits
// so that a margin given as 7 % (0.07) reads back as 7, not
// 7.000000000000001.
func percentOf(f float64) float64 {
	p, err := strconv.ParseFloat(strconv.FormatFloat(100*f, 'g', 12, 64), 64)
	if err != nil {
		return 100 * f
	}
	return p
}

// errNoWindow: no candidate window determines every compound.
var errNoWindow = pkgerr.New("validate", "no window of the allowed widths tells every compound apart")

// AdviseWindow scans candidate windows [Lo, Hi] with edges every StepNM
// over the usable grid, MinWidthNM <= Hi - Lo (<= MaxWidthNM if set), and
// predicts for each the
// condition number of the design and every compound's standard error at
// its level from the noise model. It recommends the window with the
// smallest worst relative error, unless a window within the Equivalent
// margin of that error has a condition number smaller by more than the
// same margin: then the best conditioned such window (so a band that only
// adds collinearity is left out).
//
// With weights from a correct noise model, adding wavelengths never raises
// the predicted error of a fixed model; the window then matters through
// the points lost above the ceiling, the noise where it is large (in an
// unweighted fit), and the conditioning, which sets how much model errors
// (a small shift, a baseline the polynomial cannot follow) are amplified.
//
// Cost: one thin SVD of the (points × columns) design per window, O(m k²)
// with m points and k columns; for W windows, O(W m k²). With 400
// wavelengths at 1 nm, 5 nm edges and a 40 nm minimum width, W is about
// 2800 and m about 150 on average.
//
// Errors: those of FiguresOfMerit for the set and noise model, a bad
// option, or errNoWindow when every candidate is singular.
func AdviseWindow(set *reference.Set, opt WindowOptions) (*WindowAdvice, error) {
	return AdviseWindowContext(context.Background(), set, opt)
}

// AdviseWindowContext is AdviseWindow stopping when ctx is done, between
// windows: the error then wraps ctx.Err() and says how many windows had
// been tried. The search is refused before it starts (*StepTooFineError)
// when the step is finer than the smallest spacing of the set's grid in
// the search range, and (*TooManyWindowsError) when the step and widths
// allow more than MaxWindows windows.
func AdviseWindowContext(ctx context.Context, set *reference.Set, opt WindowOptions) (*WindowAdvice, error) {
	if err := checkSet(set); err != nil {
		return nil, err
	}
	ws, adv, err := newWindowSearch(set, opt)
	if err != nil {
		return nil, err
	}
	if err := ws.rows(); err != nil {
		return nil, err
	}
	if err := ws.checkStep(); err != nil {
		return nil, err
	}
	adv.Edges = ws.edges()
	if n := ws.count(adv.Edges); n > MaxWindows {
		return nil, &TooManyWindowsError{Windows: n, LoNM: adv.Edges[0], HiNM: adv.Edges[len(adv.Edges)-1]}
	}
	if len(ws.wl) == 0 {
		return nil, fmt.Errorf("%w: every wavelength is above the ceiling at the levels", errWindow)
	}
	if err := opt.Baseline.Check(ws.wl); err != nil {
		return nil, pkgerr.Errorf("validate", "baseline model: %w", err)
	}
	if err := ws.candidates(ctx, adv); err != nil {
		return nil, err
	}
	if err := rankWindows(adv); err != nil {
		lo0, hi0 := set.Grid[ws.all[0]], set.Grid[ws.all[len(ws.all)-1]]
		return nil, fmt.Errorf("%w (%d windows of %g nm or more in %g-%g nm tried)", err, len(adv.Candidates), ws.minW, lo0, hi0)
	}
	return adv, nil
}

// windowSearch is the state of one AdviseWindow: the settings with
// defaults applied and the rows the windows are cut from.
type windowSearch struct {
	set              *reference.Set
	opt              WindowOptions
	path, step, minW float64
	maxW             float64
	levels           []float64
	all              []int     // usable grid points in the search range
	above            []bool    // per all: above the ceiling at the levels
	keep             []int     // the points of all not above
	wl               []float64 // their wavelengths
	sigma            []float64 // per grid point: the noise model at the levels (kept points only)
	// calv is, per grid point (kept points only), the variance the
	// calibration's error adds to a sample at the levels (Set.CalVar at
	// the sample's path); nil when the set records no covariance.
	calv []float64
}

// newWindowSearch applies the defaults of opt and checks them; it returns
// the search and the advice with its settings filled in.
func newWindowSearch(set *reference.Set, opt WindowOptions) (*windowSearch, *WindowAdvice, error) {
	ws := &windowSearch{set: set, opt: opt, path: opt.PathCM, step: opt.StepNM, minW: opt.MinWidthNM, maxW: opt.MaxWidthNM}
	if ws.path == 0 {
		ws.path = set.PathCM
	}
	if !(ws.path > 0) || math.IsInf(ws.path, 0) {
		return nil, nil, pkgerr.Errorf("validate", "path length %g cm is not a positive number", ws.path)
	}
	if ws.step == 0 {
		ws.step = DefaultStepNM
	}
	if ws.minW == 0 {
		ws.minW = DefaultMinWidthNM
	}
	eq := opt.Equivalent
	switch {
	case eq == 0:
		eq = DefaultEquivalent
	case eq < 0:
		eq = 0
	}
	step, minW, maxW := ws.step, ws.minW, ws.maxW
	if !(step > 0) || math.IsInf(step, 0) || !(minW > 0) || math.IsInf(minW, 0) || math.IsNaN(eq) || math.IsInf(eq, 0) {
		return nil, nil, pkgerr.Errorf("validate", "window step %g nm, minimum width %g nm and margin %g must be positive and finite", step, minW, eq)
	}
	if maxW < 0 || math.IsNaN(maxW) || (maxW > 0 && maxW < minW) {
		return nil, nil, pkgerr.Errorf("validate", "maximum window width %g nm must be positive and at least the minimum %g nm", maxW, minW)
	}
	levels, err := windowLevels(set, opt.Levels)
	if err != nil {
		return nil, nil, err
	}
	ws.levels = levels
	adv := &WindowAdvice{
		Levels: levels, Baseline: opt.Baseline.String(), Weighted: opt.Weighted, PathCM: ws.path,
		StepNM: step, MinWidthNM: minW, MaxWidthNM: maxW, Equivalent: eq, Best: -1,
	}
	for _, c := range set.Compounds {
		adv.Compounds = append(adv.Compounds, c.Name)
		adv.Units = append(adv.Units, c.Unit)
	}
	return ws, adv, nil
}

// rows finds the usable points of the search range, those above the
// ceiling at the levels, and the noise model at the others.
func (ws *windowSearch) rows() error {
	set := ws.set
	ws.all = usableRows(set, ws.opt.Lo, ws.opt.Hi)
	if len(ws.all) < 2 {
		return fmt.Errorf("%w: %d", errWindow, len(ws.all))
	}
	ws.above = make([]bool, len(ws.all))
	var absorb []float64
	for r, i := range ws.all {
		var a float64
		for k, c := range set.Compounds {
			a += ws.path * c.Absorptivity[i] * ws.levels[k]
		}
		ws.above[r] = set.Ceiling > 0 && a > set.Ceiling
		if !ws.above[r] {
			ws.keep = append(ws.keep, i)
			ws.wl = append(ws.wl, set.Grid[i])
			absorb = append(absorb, a)
		}
	}
	if len(ws.keep) == 0 {
		return nil
	}
	sigma, err := noiseRows(set, ws.keep, ws.opt.Sigma, absorb)
	if err != nil {
		return err
	}
	ws.sigma = make([]float64, len(set.Grid))
	for r, i := range ws.keep {
		ws.sigma[i] = sigma[r]
	}
	if set.CovUsable() {
		// The columns are eps * path: the covariance of the set's (at
		// its own path) scaled by (path / set path)^2.
		f := ws.path / set.PathCM
		ws.calv = make([]float64, len(set.Grid))
		for _, i := range ws.keep {
			ws.calv[i] = f * f * set.CalVar(i, ws.levels)
		}
	}
	return nil
}

// checkStep refuses a step finer than the smallest spacing of the usable
// grid points (*StepTooFineError): windows whose edges differ by less hold
// the same points, and their number grows as 1/step².
func (ws *windowSearch) checkStep() error {
	g := ws.set.Grid
	spacing := math.Inf(1)
	for r := 1; r < len(ws.all); r++ {
		spacing = min(spacing, g[ws.all[r]]-g[ws.all[r-1]])
	}
	if ws.step < spacing*(1-edgeSlack) {
		return &StepTooFineError{StepNM: ws.step, GridNM: spacing}
	}
	return nil
}

// count is the number of windows between two edges of the allowed widths
// (some of them may then hold too few points to be tried).
func (ws *windowSearch) count(edges []float64) int {
	slack := edgeSlack * ws.step
	n := 0
	for a, lo := range edges {
		b0 := sort.SearchFloat64s(edges, lo+ws.minW-slack)
		b0 = max(b0, a+1)
		b1 := len(edges)
		if ws.maxW > 0 {
			b1 = sort.Search(len(edges), func(i int) bool { return edges[i] > lo+ws.maxW+slack })
		}
		n += max(b1-b0, 0)
	}
	return n
}

// edges are the candidate window edges: every step from the first usable
// point, and the last usable point.
func (ws *windowSearch) edges() []float64 {
	lo0, hi0 := ws.set.Grid[ws.all[0]], ws.set.Grid[ws.all[len(ws.all)-1]]
	step := ws.step
	var edges []float64
	for k := 0; ; k++ {
		e := lo0 + float64(k)*step
		if e > hi0+edgeSlack*step {
			break
		}
		edges = append(edges, e)
	}
	if last := edges[len(edges)-1]; hi0-last > edgeSlack*step {
		edges = append(edges, hi0)
	}
	return edges
}

// candidates evaluates every window between two edges of the allowed
// widths that keeps more points than columns into adv.Candidates.
func (ws *windowSearch) candidates(ctx context.Context, adv *WindowAdvice) error {
	set, step := ws.set, ws.step
	ncol := len(set.Compounds) + ws.opt.Baseline.NumColumns()
	work := newWindowWork(len(ws.keep), ncol)
	for a, lo := range adv.Edges {
		for b := a + 1; b < len(adv.Edges); b++ {
			if err := ctx.Err(); err != nil {
				return pkgerr.Errorf("validate", "window search stopped after %d windows: %w", len(adv.Candidates), err)
			}
			hi := adv.Edges[b]
			if hi-lo < ws.minW-edgeSlack*step {
				continue
			}
			if ws.maxW > 0 && hi-lo > ws.maxW+edgeSlack*step {
				break
			}
			// Points of the window: wavelengths within [lo, hi] (up to edgeSlack).
			r0 := sort.SearchFloat64s(ws.wl, lo-edgeSlack*step)
			r1 := sort.SearchFloat64s(ws.wl, hi+edgeSlack*step)
			if r1-r0 < ncol+1 {
				continue
			}
			cand := Candidate{Lo: lo, Hi: hi, Points: r1 - r0}
			for r, i := range ws.all {
				if ws.above[r] && set.Grid[i] >= lo-edgeSlack*step && set.Grid[i] <= hi+edgeSlack*step {
					cand.Dropped++
				}
			}
			if err := work.evaluate(&cand, ws, ws.keep[r0:r1]); err != nil {
				return pkgerr.Errorf("validate", "window %g-%g nm: %w", lo, hi, err)
			}
			if !cand.Singular {
				for k := range cand.SE {
					cand.RelSE = append(cand.RelSE, cand.SE[k]/ws.levels[k])
				}
				w := floats.MaxIdx(cand.RelSE)
				cand.Worst, cand.WorstCompound = cand.RelSE[w], set.Compounds[w].Name
			}
			adv.Candidates = append(adv.Candidates, cand)
		}
	}
	return nil
}

// rankWindows ranks the candidates that are not singular and picks the
// recommended one; errNoWindow when every candidate is singular.
func rankWindows(adv *WindowAdvice) error {
	for i, c := range adv.Candidates {
		if !c.Singular {
			adv.Ranked = append(adv.Ranked, i)
		}
	}
	if len(adv.Ranked) == 0 {
		return errNoWindow
	}
	sort.SliceStable(adv.Ranked, func(i, j int) bool {
		a, b := adv.Candidates[adv.Ranked[i]], adv.Candidates[adv.Ranked[j]]
		if a.Worst != b.Worst {
			return a.Worst < b.Worst
		}
		return a.Cond < b.Cond
	})
	// Among windows within the margin of the smallest worst error, a
	// better conditioned one is preferred only when it improves the
	// condition number by more than the same margin.
	eq := adv.Equivalent
	first := adv.Candidates[adv.Ranked[0]]
	limit := first.Worst * (1 + eq)
	adv.Best = adv.Ranked[0]
	for _, i := range adv.Ranked {
		c := adv.Candidates[i]
		if c.Worst > limit {
			break
		}
		if c.Cond*(1+eq) < first.Cond && c.Cond < adv.Candidates[adv.Best].Cond {
			adv.Best = i
		}
	}
	return nil
}

// windowLevels fills in default levels and checks given ones.
func windowLevels(set *reference.Set, given []float64) ([]float64, error) {
	n := len(set.Compounds)
	if given != nil && len(given) != n {
		return nil, pkgerr.Errorf("validate", "%d levels for %d compounds", len(given), n)
	}
	out := make([]float64, n)
	for k, c := range set.Compounds {
		if given != nil && given[k] != 0 {
			v := given[k]
			if !(v > 0) || math.IsInf(v, 0) {
				return nil, pkgerr.Errorf("validate", "level %g of %s is not a positive number", v, c.Name)
			}
			out[k] = v
			continue
		}
		out[k] = 1
		if c.MaxStandard > 0 && !math.IsInf(c.MaxStandard, 0) {
			out[k] = (c.MinStandard + c.MaxStandard) / 2
		}
	}
	return out, nil
}

// windowWork is the reusable workspace of one window evaluation.
type windowWork struct {
	buf  []float64
	norm []float64
	svd  mat.SVD
	u, v mat.Dense
	h    []float64
	g    []float64
	rows []int
}

func newWindowWork(maxRows, ncol int) *windowWork {
	return &windowWork{
		buf:  make([]float64, maxRows*ncol),
		norm: make([]float64, ncol),
		h:    make([]float64, ncol),
		g:    make([]float64, maxRows),
	}
}

// evaluate fills c.Cond, c.Singular and c.SE for the window [c.Lo, c.Hi]
// fitted on the grid points keep (those of the window not above the
// ceiling); errSVD when the factorization fails. The design is solve's,
// unmix.NewDesign on the window (baseline terms over the whole window),
// on those points.
//
// With X the design (weighted by 1/σ when weighted), D its column norms
// and X D⁻¹ = U S Vᵀ, the coefficient of compound n is c_n = g·y / d_n with
// g = U S⁻¹ Vᵀ e_n, so its variance is Σ g_i² σ_i² / d_n² (unweighted) or
// ||S⁻¹ Vᵀ e_n||² / d_n² (weighted: whitened noise has unit variance).
// When the set records the absorptivities' covariance, the calibration's
// error adds v_i at each reading (v = s.calv, at the levels; see package
// unmix, calerr.go), and the variance is Σ g_i² (σ_i² + v_i) / d_n²
// (unweighted) or Σ g_i² (1 + v_i/σ_i²) / d_n² (weighted), as solve
// reports for a sample at the levels.
func (ws *windowWork) evaluate(c *Candidate, s *windowSearch, keep []int) error {
	set, weighted := s.set, s.opt.Weighted
	slack := edgeSlack * s.step
	i0 := sort.SearchFloat64s(set.Grid, c.Lo-slack)
	i1 := sort.SearchFloat64s(set.Grid, c.Hi+slack)
	ud, err := unmix.NewDesign(set, i0, i1, s.opt.Baseline, s.path)
	if err != nil {
		return err
	}
	rows := ws.rows[:0]
	for _, i := range keep {
		rows = append(rows, i-i0)
	}
	ws.rows = rows
	m, ncol := len(rows), len(ud.Cols)
	x := mat.NewDense(m, ncol, ws.buf[:m*ncol])
	for r, w := range rows {
		row := x.RawRowView(r)
		for j, col := range ud.Cols {
			row[j] = col[w]
		}
		if weighted {
			floats.Scale(1/s.sigma[i0+w], row)
		}
	}
	norm := ws.norm[:ncol]
	for j := range norm {
		norm[j] = 0
	}
	for r := 0; r < m; r++ {
		for j, v := range x.RawRowView(r) {
			norm[j] += v * v
		}
	}
	for j := range norm {
		norm[j] = math.Sqrt(norm[j])
		if !(norm[j] > 0) {
			c.Cond, c.Singular = maxCond, true
			return nil
		}
	}
	for r := 0; r < m; r++ {
		floats.Div(x.RawRowView(r), norm)
	}
	withU := !weighted || s.calv != nil
	kind := mat.SVDThinV
	if withU {
		kind = mat.SVDThin
	}
	if !ws.svd.Factorize(x, kind) {
		return errSVD
	}
	sv := ws.svd.Values(nil)
	if !finiteSV(sv) {
		return errSVD
	}
	c.Cond, c.Singular = clampCond(sv[0], sv[len(sv)-1], lsq.RankTol(m, ncol))
	if c.Singular {
		return nil
	}
	ws.v.Reset()
	ws.svd.VTo(&ws.v)
	if withU {
		ws.u.Reset()
		ws.svd.UTo(&ws.u)
	}
	h := ws.h[:ncol]
	c.SE = make([]float64, len(set.Compounds))
	for n := range set.Compounds {
		for k, s := range sv {
			h[k] = ws.v.At(n, k) / s
		}
		if weighted && s.calv == nil {
			c.SE[n] = floats.Norm(h, 2) / norm[n]
			continue
		}
		var vsum float64
		for r := 0; r < m; r++ {
			gi := floats.Dot(ws.u.RawRowView(r), h)
			sr := s.sigma[keep[r]]
			var cv float64
			if s.calv != nil {
				cv = s.calv[keep[r]]
			}
			if weighted {
				vsum += gi * gi * (1 + cv/(sr*sr))
			} else {
				vsum += gi * gi * (sr*sr + cv)
			}
		}
		c.SE[n] = math.Sqrt(vsum) / norm[n]
	}
	return nil
}
