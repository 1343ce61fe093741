package unmix

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/baseline"
	"huesolve/spectrum"
	"huesolve/unmix/lsq"
)

// The automatic nuisance model (Options.Auto) chooses, per sample, the
// smallest model the data need among nested candidates: from the floor
// (Options.Baseline, with a shift when Options.Shift is set) a forward
// selection adds one term at a time, the next polynomial degree (up to
// autoMaxDegree), the scattering term or a wavelength shift, while the
// best addition passes the extra-sum-of-squares F-test for nested linear
// models,
//
//	F = (RSS_0 - RSS_1) / (RSS_1 / DoF_1),  one added parameter,
//
// with p = P(F(1, DoF_1) > F) below AutoLevel (Draper & Smith, Applied
// Regression Analysis, 3rd ed., Wiley 1998, section 6.1, "extra sum of
// squares" principle; NIST/SEMATECH e-Handbook of Statistical Methods,
// section 4.4.4: both recalled from memory). RSS is what the fit
// minimises: the weighted residual sum of squares sum((r/sigma)^2) in a
// weighted fit, the plain one otherwise; a shifted fit's is divided by
// the interpolation's noise factor (interpNoise), which would otherwise
// lower RSS with no signal at all. The shift enters the model nonlinearly;
// its test uses the linearised model (one parameter), as nonlinear least
// squares does (Draper & Smith, chapter 24). The known concentrations are
// never used: only the sample's own residuals.
//
// Guard against terms that can imitate a compound: a baseline term whose
// addition leaves some compound less than leakLimit of its norm after the
// baseline terms are projected out (the leakage of lsq.Solver.Leakage,
// with every baseline term free) must pass the stricter AutoLevelMimic.
// The shift has its own guard: it is applied only when more than
// shiftSigmas standard errors from zero (fitShift), else its fit equals
// the unshifted one and F is 0.
const (
	// AutoLevel is the significance level of the F-test that adds a
	// term (a project choice: with three terms tried against a clean
	// sample, a term is added by chance in well under 1 % of samples).
	AutoLevel = 1e-3
	// AutoLevelMimic is the stricter level for a term that can imitate
	// a compound (a project choice: "overwhelming" evidence, about five
	// standard errors of a normal statistic).
	AutoLevelMimic = 1e-6
	// autoMaxDegree is the highest polynomial degree the selection adds
	// (quadratic): a cubic baseline over a UV-Vis window trades off with
	// broad bands of the compounds (common practice). A floor of higher
	// degree is kept as given.
	autoMaxDegree = 2
	// autoScoresCap is the room made at once for a sample's scores.
	autoScoresCap = 4
)

// candKey names one candidate model.
type candKey struct {
	degree  int
	scatter bool
	shift   bool
}

// String is the model's name in results: the baseline model's
// command-line name, "+shift" appended when a shift is estimated.
func (k candKey) name(power float64) string {
	s := baseline.Model{Degree: k.degree, Scatter: k.scatter, ScatterPower: power}.String()
	if k.shift {
		s += "+shift"
	}
	return s
}

// autoModel holds the candidate models of Options.Auto, each a fixed
// model of its own, and per candidate the last scan it fitted.
type autoModel struct {
	keys  []candKey
	names []string // keys[i].name(power), made once
	cands []*Model
	mimic []bool // a baseline term of the candidate can imitate a compound
	base  int    // index of the floor
	power float64
	terms []string // baseline terms of all candidates, design order

	// shares[i]: candidate i reads a scan as the floor does (the same
	// work range, window rows, ceiling and pre-treatment), so it takes
	// the floor's reading (rd) instead of reading again.
	shares []bool
	// twin[i] is, for a candidate i with a shift, the candidate without
	// it with the same design (else -1): a shifted fit starts from the
	// unshifted one, which the twin has already made when it was fitted
	// (solveAuto), so the shifted candidate takes it instead of solving
	// again.
	twin []int
	// ext[i] lists the candidates that add one term to candidate i
	// (extensions), made once.
	ext [][]int
	// pre[i], in a weighted fit, is for the floor the candidate that is
	// the floor plus the scattering term (else -1): it is always tried
	// next, and its design extends the floor's by one column at the end
	// of lsq's factor order, so it is fitted first and the floor's
	// factorisation taken from its own (lsq.Solver.ReweightFrom), one QR
	// fewer per sample.
	pre []int

	// Per sample.
	scans []scan
	state []candState
	errs  []error // why a failed candidate failed
	rd    readState
}

// readState is a scan as read (Model.read, Model.noise) before any fit:
// the absorbance on the scan's own grid and on the work grid, the mask of
// rows at or below the ceiling and the noise model. The candidates of the
// automatic model read alike; the floor reads and the others copy.
type readState struct {
	filled                  bool
	abs, raw, net, blk, sig []float64
	rows                    []int
	key                     []byte
	dropped, darkPts        int
	darkNM                  float64
	gridOK                  []float64
}

// save keeps the scan as m read it in rd: views of m's storage when m
// estimates no shift (nothing then writes that storage again before
// the next scan), else copies (a shifted fit reads the scan again at
// other shifts into the same storage).
func (rd *readState) save(m *Model, sc *scan) {
	if !m.opt.Shift {
		rd.abs, rd.raw, rd.net, rd.blk, rd.sig = m.buf.abs, sc.raw, sc.net, sc.blk, sc.sig
		rd.rows, rd.key = sc.rows, sc.key
	} else {
		rd.abs = append(rd.abs[:0], m.buf.abs...)
		rd.raw = append(rd.raw[:0], sc.raw...)
		rd.net = append(rd.net[:0], sc.net...)
		rd.blk = append(rd.blk[:0], sc.blk...)
		rd.sig = append(rd.sig[:0], sc.sig...)
		rd.rows = append(rd.rows[:0], sc.rows...)
		rd.key = append(rd.key[:0], sc.key...)
	}
	rd.dropped, rd.darkPts, rd.darkNM = sc.dropped, sc.darkPts, sc.darkNM
	rd.gridOK = m.buf.gridOK
	rd.filled = true
}

// restore gives m the scan as read in rd: what read and noise would have
// given. A model without a shift only reads it, so it takes views of rd;
// one with a shift reads the scan again at other shifts, so it takes a
// copy in its own storage.
func (rd *readState) restore(m *Model, sc *scan) {
	b := &m.buf
	if rd.gridOK != nil {
		b.gridOK = rd.gridOK
	}
	sc.dropped, sc.darkPts, sc.darkNM = rd.dropped, rd.darkPts, rd.darkNM
	if !m.opt.Shift {
		sc.raw, sc.net, sc.blk, sc.sig, sc.rows, sc.key = rd.raw, rd.net, rd.blk, rd.sig, rd.rows, rd.key
		return
	}
	b.abs = append(b.abs[:0], rd.abs...)
	b.raw = append(b.raw[:0], rd.raw...)
	b.net = append(b.net[:0], rd.net...)
	b.blk = append(b.blk[:0], rd.blk...)
	b.sig = append(b.sig[:0], rd.sig...)
	b.rows = append(b.rows[:0], rd.rows...)
	b.key = append(b.key[:0], rd.key...)
	sc.raw, sc.net, sc.blk, sc.sig, sc.rows, sc.key = b.raw, b.net, b.blk, b.sig, b.rows, b.key
}

// twinOf returns the candidate that is candidate i without its shift and
// has the same design and reading, or -1.
func (a *autoModel) twinOf(i int) int {
	k := a.keys[i]
	if !k.shift {
		return -1
	}
	for j, e := range a.keys {
		if e.degree != k.degree || e.scatter != k.scatter || e.shift || !a.shares[i] || !a.shares[j] {
			continue
		}
		x, y := a.cands[i].sh, a.cands[j].sh
		if !slices.Equal(x.nonneg, y.nonneg) || !slices.EqualFunc(x.cols, y.cols, slices.Equal) {
			continue
		}
		return j
	}
	return -1
}

// readsAlike reports whether models m and o read a scan alike: the same
// grid, work range, window rows, ceiling, pre-treatment reach and blank.
func readsAlike(m, o *Model) bool {
	a, b := m.sh, o.sh
	return a.set == b.set && a.wlo == b.wlo && a.whi == b.whi && a.lo == b.lo && a.hi == b.hi &&
		a.ceiling == b.ceiling && a.reach == b.reach && slices.Equal(a.rows0, b.rows0) &&
		slices.Equal(a.noise, b.noise) && slices.Equal(a.blank0, b.blank0) &&
		slices.Equal(a.blankA, b.blankA) && slices.Equal(a.blankWL, b.blankWL)
}

// candState is what one sample's selection knows of a candidate.
type candState int

const (
	candUntried candState = iota
	candFitted
	candFailed
)

// ModelScore is what one candidate of the automatic nuisance model scored
// on a sample (Result.ModelScores): the fit's residual sum of squares and
// degrees of freedom, and, for a candidate tried against the model chosen
// at the step before (Against), the F statistic of the added term, its
// p-value and the level it had to pass.
type ModelScore struct {
	Model   string  `json:"model"`
	Against string  `json:"against,omitempty"`
	RSS     float64 `json:"rss"`
	DoF     int     `json:"dof"`
	// F and P are left out for the floor, which is not tested.
	F      *float64 `json:"f,omitempty"`
	P      *float64 `json:"p,omitempty"`
	Level  float64  `json:"level,omitempty"`
	Chosen bool     `json:"chosen,omitempty"`
	// Screened: a shift tried on the fit without it and scored by the
	// drop in RSS that its linearisation (the shift's derivative column)
	// gives, which did not pass; it was not fitted (see solveAuto).
	Screened bool `json:"screened,omitempty"`
	// Error says why the candidate could not be fitted (it is then not
	// tested), e.g. a scan that does not reach far enough for the shift.
	Error string `json:"error,omitempty"`
}

// autoWindow returns the window of the candidates: the options' window,
// kept clear of the grid's ends by the shift limit, so that every
// candidate, with or without a shift, fits the same points and their
// residual sums compare.
func (sh *shared) autoWindow() (lo, hi float64) {
	g := sh.grid
	lo, hi = sh.opt.WindowLo, sh.opt.WindowHi
	if lo == 0 && hi == 0 {
		lo, hi = g[0], g[len(g)-1]
	}
	return math.Max(lo, g[0]+sh.opt.MaxShiftNM), math.Min(hi, g[len(g)-1]-sh.opt.MaxShiftNM)
}

// newAuto builds the candidates of Options.Auto. The floor must build (its
// error is returned); a larger candidate that cannot (a design that
// becomes singular) is left out.
func newAuto(opt Options, build func(Options) (*Model, error)) (*Model, error) {
	floor := opt.Baseline
	power := floor.ScatterPower // 0: the default power
	a := &autoModel{power: power, base: -1}
	maxDeg := max(floor.Degree, autoMaxDegree)
	for deg := floor.Degree; deg <= maxDeg; deg++ {
		for _, sc := range []bool{false, true} {
			if floor.Scatter && !sc {
				continue
			}
			for _, sf := range []bool{false, true} {
				if opt.Shift && !sf {
					continue
				}
				k := candKey{degree: deg, scatter: sc, shift: sf}
				o := opt
				o.Auto = false
				o.Baseline = baseline.Model{Degree: deg, Scatter: sc}
				if sc {
					o.Baseline.ScatterPower = power
				}
				o.Shift = sf
				m, err := build(o)
				first := len(a.keys) == 0
				if err != nil {
					if first {
						return nil, err
					}
					continue
				}
				if first {
					a.base = 0
				}
				a.keys = append(a.keys, k)
				a.cands = append(a.cands, m)
			}
		}
	}
	top := a.cands[0]
	for i, m := range a.cands {
		a.mimic = append(a.mimic, m.sh.mimics())
		if len(m.sh.names) > len(top.sh.names) {
			top = a.cands[i]
		}
	}
	a.terms = top.BaselineTerms()
	for i, m := range a.cands {
		a.shares = append(a.shares, readsAlike(m, a.cands[a.base]))
		a.names = append(a.names, a.keys[i].name(power))
		a.twin = append(a.twin, a.twinOf(i))
	}
	for i := range a.cands {
		a.ext = append(a.ext, a.extensions(i))
		a.pre = append(a.pre, -1)
	}
	if opt.Weighted {
		a.pre[a.base] = a.extendedBy(a.base)
	}
	a.link()
	a.scans = make([]scan, len(a.cands))
	a.state = make([]candState, len(a.cands))
	a.errs = make([]error, len(a.cands))
	b := a.cands[a.base]
	m := &Model{set: b.set, opt: opt, sh: b.sh, auto: a}
	m.init(b.sh.base)
	return m, nil
}

// mimics reports whether the model's baseline terms, all taken as free in
// sign, leave some compound less than leakLimit of its norm on the usable
// window rows (lsq.Solver.Leakage): a term that can imitate a compound.
func (sh *shared) mimics() bool {
	if len(sh.cols) == sh.ncomp {
		return false
	}
	leak, err := sh.leakAllFree()
	if err != nil {
		return true // dependent columns: the terms reproduce a compound
	}
	for _, v := range leak {
		if v < leakLimit {
			return true
		}
	}
	return false
}

// leakAllFree returns each compound's leakage (lsq.Solver.Leakage) on the
// usable window rows with every nuisance column (baseline terms and
// interferents) free in sign; an error when the columns are dependent.
func (sh *shared) leakAllFree() ([]float64, error) {
	nn := make([]bool, len(sh.cols))
	for k := range sh.ncomp {
		nn[k] = true
	}
	s, err := lsq.NewSolver(sh.design.matrix(sh.rows0), nn, lsq.Options{})
	if err != nil {
		return nil, err
	}
	return s.Leakage()[:sh.ncomp], nil
}

// clone gives a copy of the candidates with fresh scratch storage.
func (a *autoModel) clone() *autoModel {
	// Only the fields fixed when the model was made are copied, one by
	// one: the per-sample ones (scans, state, rd) may be being written by
	// a worker solving with a, so a copy of the whole struct would read
	// them while they change (a data race).
	c := &autoModel{
		keys: a.keys, names: a.names, mimic: a.mimic, base: a.base, power: a.power,
		terms: a.terms, shares: a.shares, twin: a.twin, ext: a.ext, pre: a.pre,
		cands: make([]*Model, len(a.cands)),
		scans: make([]scan, len(a.cands)),
		state: make([]candState, len(a.cands)),
		errs:  make([]error, len(a.cands)),
	}
	for i, m := range a.cands {
		c.cands[i] = m.Clone()
	}
	c.link()
	return c
}

// extendedBy returns the candidate that is candidate i plus the
// scattering term, reading the scan alike and with i's design columns
// first (so that its design extends i's by one column, non-negative,
// last in lsq's factor order), or -1.
func (a *autoModel) extendedBy(i int) int {
	k := a.keys[i]
	if k.scatter || !a.shares[i] {
		return -1
	}
	x := a.cands[i].sh
	for j, e := range a.keys {
		if e.degree != k.degree || e.shift != k.shift || !e.scatter || !a.shares[j] {
			continue
		}
		y := a.cands[j].sh
		p := len(x.cols)
		if len(y.cols) != p+1 || !y.nonneg[p] || !slices.Equal(x.nonneg, y.nonneg[:p]) ||
			!slices.EqualFunc(x.cols, y.cols[:p], slices.Equal) || !slices.Equal(x.rows0, y.rows0) {
			continue
		}
		return j
	}
	return -1
}

// link points each candidate with a pre to that candidate's model
// (Model.wfrom), in these clones.
func (a *autoModel) link() {
	for i, j := range a.pre {
		if j >= 0 {
			a.cands[i].wfrom = a.cands[j]
		}
	}
}

// extensions returns the candidates that add one term to candidate i:
// the next degree, the scattering term or the shift.
func (a *autoModel) extensions(i int) []int {
	k := a.keys[i]
	var out []int
	for j, e := range a.keys {
		if e.degree < k.degree || k.scatter && !e.scatter || k.shift && !e.shift {
			continue
		}
		added := e.degree - k.degree
		if e.scatter && !k.scatter {
			added++
		}
		if e.shift && !k.shift {
			added++
		}
		if added == 1 {
			out = append(out, j)
		}
	}
	return out
}

// objective returns the residual sum of squares the fit of sc minimised
// (weighted by the noise model in a weighted fit; a shifted fit's divided
// by the interpolation's noise factor) and its degrees of freedom (one
// fewer for an applied shift).
func (m *Model) objective(sc *scan) (rss float64, dof int) {
	if m.opt.Weighted {
		for i, e := range sc.res.Residual[:len(sc.d.rows)] {
			e /= sc.sig[sc.d.rows[i]]
			rss += e * e
		}
	} else {
		rss = sc.res.RSS // the same sum, in the same order
	}
	dof = sc.res.DoF
	if sc.shift != 0 {
		rss /= sc.interpVar
		dof--
	}
	return rss, dof
}

// fTest returns the extra-sum-of-squares F statistic of one added
// parameter and its p-value: P(F(1, dof1) > F). A fit that is not better
// (F <= 0) or has no degrees of freedom left scores F = 0, p = 1.
func fTest(rss0, rss1 float64, dof1 int) (f, p float64) {
	if dof1 <= 0 || !(rss1 > 0) || !(rss0 > rss1) {
		return 0, 1
	}
	f = (rss0 - rss1) / (rss1 / float64(dof1))
	return f, fSurvival(f, float64(dof1))
}

// fSurvival is P(F(1, d2) > f), computed through Student's t (F(1, d2) is
// the square of t(d2)) so that small p-values keep their precision:
// 2 * P(t > sqrt(f)).
func fSurvival(f, d2 float64) float64 {
	return 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: d2}.Survival(math.Sqrt(f))
}

// screen tests adding the shift (candidate e, candidate cur without it)
// on cur's fit alone: the drop in RSS from the shift's derivative column
// g, <Mg, r>^2 / <Mg, Mg> (shiftStep), is the extra sum of squares of the
// linearised shift, the first step of its Gauss-Newton estimate. When
// that does not pass the level, ms is filled as screened and screen
// returns true: the shift's iterations and refits are spared. Otherwise
// the candidate is fitted and tested on its own RSS.
func (a *autoModel) screen(cur, e int, rss0 float64, ms *ModelScore, stat func(f, p float64) (*float64, *float64)) bool {
	kc, ke := a.keys[cur], a.keys[e]
	mc, me := a.cands[cur], a.cands[e]
	if kc.shift || !ke.shift || mc.sh.lo != me.sh.lo || mc.sh.hi != me.sh.hi {
		return false
	}
	sc := &a.scans[cur]
	_, dof0 := mc.objective(sc)
	num, den := mc.shiftStep(sc, me.sh.dcols)
	drop := 0.0
	if den > 0 {
		drop = num * num / den
	}
	ms.RSS, ms.DoF = rss0-drop, dof0-1
	f, p := fTest(rss0, ms.RSS, ms.DoF)
	if p < ms.Level {
		return false
	}
	ms.F, ms.P = stat(f, p)
	ms.Screened = true
	return true
}

// solveAuto chooses the sample's nuisance model by forward selection among
// the candidates and fills dst with the chosen candidate's result,
// Result.Model and Result.ModelScores. Points the chosen fit predicts
// above the ceiling are left out and the choice made again on the rest
// (settleCeiling), so that every candidate is scored on the same points.
func (m *Model) solveAuto(dst *Result, s *spectrum.Spectrum, f Factors) error {
	a := m.auto
	a.rd.filled = false
	// A sample is usually scored on the floor and its three extensions:
	// room for those at once, more when needed.
	scores := dst.ModelScores[:0]
	if cap(scores) == 0 {
		scores = make([]ModelScore, 0, autoScoresCap)
	}
	cur, scores, err := a.choose(s, f, nil, scores)
	if err != nil {
		return err
	}
	c, sc := a.cands[cur], &a.scans[cur]
	if c.overCeiling(sc) {
		c, sc, err = settleCeiling(c, sc, func(extra []int) (*Model, *scan, error) {
			var err error
			cur, scores, err = a.choose(s, f, extra, scores[:0])
			return a.cands[cur], &a.scans[cur], err
		})
		if err != nil {
			return err
		}
	}
	c.fill(dst, sc)
	dst.Model = a.names[cur]
	dst.ModelScores = scores
	return nil
}

// choose runs the forward selection for one sample with the window rows
// extra left out (besides those read above the ceiling): it returns the
// chosen candidate and the scores, appended to scores.
func (a *autoModel) choose(s *spectrum.Spectrum, f Factors, extra []int, scores []ModelScore) (int, []ModelScore, error) {
	clear(a.state)
	// The F and p values the scores point to share backing arrays (a
	// pointer into an array that append has outgrown stays valid).
	fp := make([]float64, 0, 2*autoScoresCap)
	stat := func(f, p float64) (*float64, *float64) {
		fp = append(fp, f, p)
		return &fp[len(fp)-2], &fp[len(fp)-1]
	}
	try := func(i int) error {
		switch a.state[i] {
		case candFitted:
			return nil
		case candFailed:
			return a.errs[i]
		}
		var rd *readState
		if a.shares[i] {
			rd = &a.rd
		}
		var from *scan
		if t := a.twin[i]; t >= 0 && a.state[t] == candFitted {
			from = &a.scans[t]
		}
		sc, err := a.cands[i].runShared(s, f, rd, from, extra)
		if err != nil {
			a.state[i], a.errs[i] = candFailed, err
			return err
		}
		a.scans[i], a.state[i] = sc, candFitted
		return nil
	}
	cur := a.base
	if j := a.pre[cur]; j >= 0 {
		// Fitted first for its factorisation (see pre); a failure is
		// the floor's to find on its own, and reported when j is tried.
		_ = try(j)
	}
	if err := try(cur); err != nil {
		return cur, scores, err
	}
	rss0, dof0 := a.cands[cur].objective(&a.scans[cur])
	scores = append(scores, ModelScore{Model: a.names[cur], RSS: rss0, DoF: dof0})
	chosen := 0
	for {
		best, bestP := -1, math.Inf(1)
		for _, e := range a.ext[cur] {
			ms := ModelScore{Model: a.names[e], Against: a.names[cur], Level: AutoLevel}
			if a.screen(cur, e, rss0, &ms, stat) {
				scores = append(scores, ms)
				continue
			}
			if err := try(e); err != nil {
				ms.Error = fmt.Sprint(err)
				scores = append(scores, ms)
				continue
			}
			ms.RSS, ms.DoF = a.cands[e].objective(&a.scans[e])
			if a.mimic[e] && !a.mimic[cur] {
				ms.Level = AutoLevelMimic
			}
			fv, p := fTest(rss0, ms.RSS, ms.DoF)
			ms.F, ms.P = stat(fv, p)
			scores = append(scores, ms)
			if p < ms.Level && p < bestP {
				best, bestP = e, p
				chosen = len(scores) - 1
			}
		}
		if best < 0 {
			break
		}
		cur = best
		rss0 = scores[chosen].RSS
	}
	scores[chosen].Chosen = true
	return cur, scores, nil
}
