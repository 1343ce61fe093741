package calibration

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/reference"
)

const (
	// OutlierLevel is the family-wise significance level of the outlier
	// test on one calibration line: the Bonferroni-corrected limit makes
	// the chance that any standard of a clean line is flagged at most
	// this. 1 %, the level of the project's other line tests
	// (reference.TestLevel), so a refusal is rare on good standards.
	OutlierLevel = 1 - reference.TestLevel
	// DefaultMinR2 is the least R² of a calibration line at the band
	// maximum before the compound is flagged poor-fit: R² >= 0.995 is
	// common practice for UV-Vis calibration lines.
	DefaultMinR2 = 0.995
	// DefaultMaxRelSD is the largest relative residual standard
	// deviation of a calibration line (the method's relative standard
	// deviation V_x0 = (s_y / b) / mean x, DIN 38402-51 and ISO 8466-1;
	// recalled from memory) before the compound is flagged poor-fit: 5 %
	// is common practice for UV-Vis calibration.
	DefaultMaxRelSD = 0.05
	// leverageTol bounds how close to 1 a reading's leverage may come for
	// its studentized residual to be computed: at h = 1 the line passes
	// through the reading whatever it is (a level read once, far from the
	// others, with too few readings), so the residual says nothing.
	leverageTol = 1e-9
)

// outlier is one standard found outlying on a calibration line: its fit
// row, its externally studentized residual and the limit it passed.
type outlier struct {
	row   int
	t     float64
	limit float64
	n     int // readings in the line
	// falls marks a reading above the linear range that reads lower than
	// the line at the top of the range (see [falling]); t and limit are
	// then NaN, got is its absorbance, top the highest concentration the
	// line was fitted to and want the line's value there.
	falls          bool
	got, top, want float64
}

// studentized returns the externally studentized residuals (Belsley, Kuh
// & Welsch 1980, Regression Diagnostics, RSTUDENT) of the straight line
// y = a + b x fitted to (x, y) by least squares:
//
//	t_i = e_i / (s_(i) sqrt(1 - h_i)),
//	s_(i)^2 = (RSS - e_i^2 / (1 - h_i)) / (n - 3),
//	h_i = 1/n + (x_i - mean x)^2 / Sxx,
//
// where s_(i) is the residual SD of the line fitted without reading i.
// A reading with leverage within leverageTol of 1 gets NaN; one that the
// other readings fit exactly while it does not gets ±Inf. Needs n >= 4.
func studentized(x, y []float64) ([]float64, error) {
	n := len(x)
	if n < 4 {
		return nil, fmt.Errorf("%w: %d readings; the outlier test needs 4", errTooFewStandards, n)
	}
	f, err := fitPoly(x, y, 1)
	if err != nil {
		return nil, err
	}
	mx := 0.0
	for _, v := range x {
		mx += v
	}
	mx /= float64(n)
	sxx := 0.0
	for _, v := range x {
		sxx += (v - mx) * (v - mx)
	}
	t := make([]float64, n)
	// Rounding floor of the residual sum of squares: an exact line's RSS
	// is not zero in floating point.
	floor := exactFitTol * tss(y)
	for i := range n {
		e := y[i] - f.coef[0] - f.coef[1]*x[i]
		h := 1/float64(n) + (x[i]-mx)*(x[i]-mx)/sxx
		if 1-h < leverageTol {
			t[i] = math.NaN()
			continue
		}
		s2 := (f.rss - e*e/(1-h)) / float64(n-3)
		if s2*float64(n-3) <= floor {
			switch {
			case e*e <= floor:
				t[i] = 0
			default:
				t[i] = math.Copysign(math.Inf(1), e)
			}
			continue
		}
		t[i] = e / math.Sqrt(s2*(1-h))
	}
	return t, nil
}

// bonferroniLimit is the two-sided limit of |t| for n studentized
// residuals at family-wise level alpha: the t quantile at 1 - alpha/(2n)
// with n - 3 degrees of freedom (the Bonferroni outlier test; Weisberg,
// Applied Linear Regression, 1985, sec. 5.3; recalled from memory).
func bonferroniLimit(n int, alpha float64) float64 {
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 3)}.Quantile(1 - alpha/(2*float64(n)))
}

// outliers finds the standards outlying on a calibration line: the used
// readings of pts (rows[i] the fit row behind pts[i]) whose externally
// studentized residual exceeds the Bonferroni limit at OutlierLevel. None
// when the line has fewer than 4 used readings. Largest |t| first.
func outliers(pts []reference.Point, rows []int) []outlier {
	var x, y []float64
	var who []int
	for i, p := range pts {
		if p.Used {
			x = append(x, p.Conc)
			y = append(y, p.Absorbance)
			who = append(who, rows[i])
		}
	}
	t, err := studentized(x, y)
	if err != nil {
		return nil
	}
	limit := bonferroniLimit(len(x), OutlierLevel)
	var out []outlier
	for i, v := range t {
		if math.Abs(v) > limit {
			out = append(out, outlier{row: who[i], t: v, limit: limit, n: len(x)})
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return math.Abs(out[a].t) > math.Abs(out[b].t) })
	return out
}

// fallMargin is how many residual SDs of the line a reading above the
// linear range may fall below the line's value at the top of the range
// before it is taken for a wrong standard rather than a bend.
const fallMargin = 3

// falling finds the readings of a line l (rows[i] the fit row behind
// l.Data[i]) that were left out above its linear range and read lower
// than the fitted line at the highest concentration it was fitted to, by
// more than fallMargin residual SDs. A calibration line can bend (stray
// light, association, a saturating detector flatten it) but absorbance
// does not fall as concentration rises (common practice): such a reading
// is a mislabelled level, a wrong dilution or a wrong scan, not
// curvature, and is reported as an outlier.
func falling(l reference.Linearity, rows []int) []outlier {
	top := math.Inf(-1)
	for _, p := range l.Data {
		if p.Used && p.Conc > top {
			top = p.Conc
		}
	}
	if math.IsInf(top, -1) || !finite(l.Slope) || !finite(l.ResidualSD) {
		return nil
	}
	want := l.Intercept + l.Slope*top
	var out []outlier
	for i, p := range l.Data {
		if !p.Used && p.Conc > top && p.Absorbance < want-fallMargin*l.ResidualSD {
			out = append(out, outlier{row: rows[i], t: math.NaN(), limit: math.NaN(), n: len(l.Data),
				falls: true, got: p.Absorbance, top: top, want: want})
		}
	}
	return out
}

// relSD is the relative residual standard deviation of a calibration
// line l: the method standard deviation s_y / slope over the mean
// concentration of the used readings (V_x0). NaN when undefined.
func relSD(l reference.Linearity) float64 {
	sum, n := 0.0, 0
	for _, p := range l.Data {
		if p.Used {
			sum += p.Conc
			n++
		}
	}
	if n == 0 || sum == 0 || l.Slope <= 0 {
		return math.NaN()
	}
	return l.ResidualSD / l.Slope / (sum / float64(n))
}

// limits returns the R² and relative SD limits in force (negative: off).
func (b *builder) limits() (minR2, maxRelSD float64) {
	minR2, maxRelSD = b.opt.MinR2, b.opt.MaxRelSD
	if minR2 == 0 {
		minR2 = DefaultMinR2
	}
	if maxRelSD == 0 {
		maxRelSD = DefaultMaxRelSD
	}
	return minR2, maxRelSD
}

// poorFit says why compound c's line misses the R² or relative SD limit,
// or "" when it does not.
func (b *builder) poorFit(c *reference.Compound) string {
	minR2, maxRelSD := b.limits()
	l := c.Linearity
	var why []string
	if minR2 >= 0 && !(l.R2 >= minR2) {
		why = append(why, fmt.Sprintf("R² %.4f is below %g (--min-r2)", l.R2, minR2))
	}
	if rsd := relSD(l); maxRelSD >= 0 && !(rsd <= maxRelSD) {
		why = append(why, fmt.Sprintf("relative residual SD %.3g %% is above %g %% (--max-rsd)", 100*rsd, 100*maxRelSD))
	}
	if len(why) == 0 {
		return ""
	}
	s := why[0]
	if len(why) > 1 {
		s += " and " + why[1]
	}
	return s
}

// outlierRows are the fit rows found outlying on any compound's line in
// the build's final fit, as sheet lines, with the reason to record.
func (b *builder) outlierRows() map[int]string {
	if b.res == nil {
		return nil
	}
	drop := map[int]string{}
	for k, os := range b.res.outliers {
		for _, o := range os {
			line := b.fit[o.row].Line
			if _, ok := drop[line]; ok {
				continue
			}
			if o.falls {
				drop[line] = fmt.Sprintf("reading below the lower standards on the calibration line of %s (A %.3g at level %s, where the line reads %.3g at %s)", b.sh.Compounds[k], o.got, fmtNum(b.fit[o.row].Conc[k]), o.want, fmtNum(o.top))
			} else {
				drop[line] = fmt.Sprintf("outlying on the calibration line of %s (externally studentized residual %.3g, limit %.3g)", b.sh.Compounds[k], o.t, o.limit)
			}
		}
	}
	return drop
}

// outlierNotes flags compound k (c) outlier when standards lie off its
// line, naming them, and poor-fit when the line misses the R² or
// relative SD limit.
func (b *builder) outlierNotes(c *reference.Compound, k int) {
	if os := b.res.outliers[k]; len(os) > 0 {
		c.Flags = append(c.Flags, reference.FlagOutlier)
		for _, o := range os {
			if o.falls {
				b.warn("%s: standard %s at level %s reads A %.3g at %g nm, below the calibration line at the lower level %s (A %.3g): absorbance does not fall as concentration rises, so this is not a bend of the line but a wrong level, dilution or scan; check its concentration and scan (--drop-outliers leaves it out and refits; --accept-outliers writes the set without it)",
					c.Name, rowName(b.fit[o.row]), fmtNum(b.fit[o.row].Conc[k]), o.got, c.PeakNM, fmtNum(o.top), o.want)
				continue
			}
			b.warn("%s: standard %s lies off the calibration line at %g nm: externally studentized residual %.3g, beyond the limit %.3g for %d readings (Bonferroni, %g %% overall); check its concentration and scan (--drop-outliers leaves it out and refits; --accept-outliers keeps it)",
				c.Name, rowName(b.fit[o.row]), c.PeakNM, o.t, o.limit, o.n, 100*OutlierLevel)
		}
	}
	if why := b.poorFit(c); why != "" {
		c.Flags = append(c.Flags, reference.FlagPoorFit)
		b.warn("%s: the calibration line at %g nm fits poorly: %s; check the standards (--accept-outliers keeps the set)", c.Name, c.PeakNM, why)
	}
}

// droppedNotes records the rows DropOutliers left out: in the
// StandardsLeftOut of every compound whose line they were on, and in a
// note.
func (b *builder) droppedNotes(set *reference.Set) {
	if len(b.drop) == 0 {
		return
	}
	for _, r := range b.dropped {
		for k := range set.Compounds {
			if onLine(r, k) {
				c := &set.Compounds[k]
				c.StandardsLeftOut = append(c.StandardsLeftOut, reference.Standard{File: r.File, Column: r.Column, SHA256: r.scanSHA256,
					Conc: append([]float64(nil), r.Conc...), Line: r.Line})
			}
		}
	}
	for _, r := range b.dropped {
		b.warn("left out with --drop-outliers and refitted without it: %s, %s", rowName(r), b.drop[r.Line])
	}
}
