package calibration

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"huesolve/reference"
)

// The noise model measured from the standards (reference.NoiseModel):
//
//	sigma_ij² = s_j² (1 + 10^(2 (A_ij - k)))
//
// for the reading of standard i at wavelength j with fitted absorbance
// A_ij: a base noise s_j per wavelength and one knee k for the set (the
// constant-absorbance and constant-transmittance noise cases of Rothman,
// Crouch and Ingle, Anal. Chem. 47 (1975) 1226; recalled from memory).
// k is the maximum-likelihood estimate for Gaussian residuals with the
// s_j profiled out (s_j² = mean of e²/g² at wavelength j):
//
//	-2 log L(k) = sum_j n_j log(sum_i e_ij² / g_ij²(k)) + sum_ij log g_ij²(k) + const
//
// where e_ij are, when the standards have replicates (rows of the same
// concentrations), the deviations from their group's mean scaled to the
// noise, d sqrt(n_g / (n_g - 1)) (pure error: free of the calibration
// line, so of any bias from its fit), at the group's mean absorbance;
// without replicates, the residuals r_ij / sqrt(1 - h_ij) scaled by their
// leverage (an ordinary least-squares residual has variance
// sigma² (1 - h); Belsley, Kuh & Welsch 1980, recalled from memory) at
// the fitted absorbance. The latter still damps the highest standards'
// residuals by their quieter neighbours when the growth is strong (the
// knee comes out high). Its standard error is 1/sqrt of the
// curvature of -log L at the estimate (observed information).

const (
	// noiseMinHigh is the least number of readings at fitted absorbance
	// WeightKneeA or above for a knee to be estimated: below it the
	// standards say too little about the growth, and the set keeps the
	// fixed rule. Ten is this project's choice (a knee from ten
	// readings still has a standard error near 0.1 A when the growth
	// is strong there; fewer leave it to chance).
	noiseMinHigh = 10
	// noiseMaxKneeSE is the largest standard error of a knee that is
	// kept: a less certain knee (standards that reach too little
	// absorbance, or too few of them) leaves the set on the fixed rule,
	// as does a knee whose curvature cannot be measured (at the edge of
	// the search). Half an absorbance unit is this project's choice:
	// the growth at the ceiling is then known within a factor of about 3.
	noiseMaxKneeSE = 0.5
	// noiseSearchAbove is how far above the highest fitted absorbance
	// the knee is searched: 2 A above it the growth is below 1.00005
	// there, so a larger knee cannot be told from it.
	noiseSearchAbove = 2.0
	// noiseBinA is the width (absorbance) of the groups of residuals
	// inspect shows; noiseBinMin the least readings in a group shown.
	noiseBinA   = 0.25
	noiseBinMin = 5
	// noiseCeilingMargin: readings whose fitted absorbance lies within
	// this much of the ceiling are left out of the estimate: near the
	// ceiling the readings that noise pushed above it were cut, so the
	// ones kept scatter less than the noise does there (a truncated
	// sample). 0.1 A is five times a noise SD of 0.02 A at A = 2, more
	// than common instruments show there (common practice).
	noiseCeilingMargin = 0.1
	// leverageMax leaves out readings a fit passes through (nearly) by
	// construction: their residual says nothing about the noise.
	leverageMax = 1 - 1e-6
)

// noiseObs is one standard's reading in the noise model: its fitted
// absorbance and leverage-scaled residual. float32 (7 digits) is ample
// for a likelihood and keeps calibrate's memory per standard row within
// its bound (memory_test.go).
type noiseObs struct {
	a, e float32
}

// replicateGroups returns the groups of positions in rows (indexes into
// fit) whose rows have the same concentrations, each of two or more.
func replicateGroups(fit []Row, rows []int) [][]int {
	byKey := map[string][]int{}
	var keys []string
	for r, i := range rows {
		k := fmt.Sprint(fit[i].Conc)
		if _, ok := byKey[k]; !ok {
			keys = append(keys, k)
		}
		byKey[k] = append(byKey[k], r)
	}
	var out [][]int
	for _, k := range keys {
		if len(byKey[k]) >= 2 {
			out = append(out, byKey[k])
		}
	}
	return out
}

// noiseReadings returns the readings of the last solve for the noise
// model: pure-error deviations when there are replicate groups, else
// leverage-scaled residuals (see above).
func (mf *maskFit) noiseReadings() []noiseObs {
	if len(mf.groups) > 0 {
		n := 0
		for _, g := range mf.groups {
			n += len(g)
		}
		obs := make([]noiseObs, 0, n)
		for _, g := range mf.groups {
			mean := 0.0
			for _, r := range g {
				mean += mf.y[r]
			}
			mean /= float64(len(g))
			f := math.Sqrt(float64(len(g)) / float64(len(g)-1))
			for _, r := range g {
				obs = append(obs, noiseObs{a: float32(mean), e: float32((mf.y[r] - mean) * f)})
			}
		}
		return obs
	}
	obs := make([]noiseObs, 0, len(mf.res.Residual))
	for r, e := range mf.res.Residual {
		if h := mf.lev[r]; h < leverageMax {
			obs = append(obs, noiseObs{a: float32(mf.y[r] - e), e: float32(e / math.Sqrt(1-h))})
		}
	}
	return obs
}

// hatDiag returns the leverages h_i (diagonal of the hat matrix) of the
// rows of x: the squared row norms of the thin Q of x's QR factorisation.
// The thin Q is formed as X R^-1 (r x c; R is c x c upper triangular):
// the full Q would be r x r.
func hatDiag(x *mat.Dense) []float64 {
	r, c := x.Dims()
	var qr mat.QR
	qr.Factorize(x)
	var rf mat.Dense
	qr.RTo(&rf)
	tri := mat.NewTriDense(c, mat.Upper, nil)
	for i := range c {
		for k := i; k < c; k++ {
			tri.SetTri(i, k, rf.At(i, k))
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(tri); err != nil {
		// R singular to working precision: leave every reading out.
		h := make([]float64, r)
		for i := range h {
			h[i] = 1
		}
		return h
	}
	var q mat.Dense
	q.Mul(x, &rinv)
	h := make([]float64, r)
	for i := range r {
		for k := range c {
			v := q.At(i, k)
			h[i] += v * v
		}
	}
	return h
}

// noiseDeviance is -2 log L(k) up to a constant (see above); byJ holds
// each wavelength's readings.
func noiseDeviance(byJ [][]noiseObs, k float64) float64 {
	d := 0.0
	for _, obs := range byJ {
		if len(obs) == 0 {
			continue
		}
		s := 0.0
		for _, o := range obs {
			g2 := 1 + math.Exp(2*math.Ln10*(float64(o.a)-k))
			s += float64(o.e) * float64(o.e) / g2
			d += math.Log(g2)
		}
		d += float64(len(obs)) * math.Log(s)
	}
	return d
}

// fitNoiseModel estimates the knee from the readings (nil when fewer
// than noiseMinHigh of them lie at WeightKneeA or above, the residuals
// are all zero, the knee's standard error exceeds noiseMaxKneeSE, or the
// knee lies above the highest reading (no growth seen);
// noise is then left as it is) and, with it, sets each wavelength's base
// noise in noise to sqrt(sum_i e_ij² / g_ij² / n_j): with g = 1 an
// unbiased estimate of the variance as the set's noise was before
// (RSS / dof), since E[e²] = sigma² for each leverage-scaled residual.
// byJ holds the readings per wavelength; the zeroed ones and those
// near the ceiling (noiseCeilingMargin) are dropped from it.
//
// rebased marks the wavelengths whose noise was set to the base noise.
func fitNoiseModel(byJ [][]noiseObs, noise []float64, ceiling float64) (_ *reference.NoiseModel, rebased []bool) {
	high, maxA, ss, n := 0, math.Inf(-1), 0.0, 0
	for j, obs := range byJ {
		kept := obs[:0]
		for _, o := range obs {
			if float64(o.a) <= ceiling-noiseCeilingMargin {
				kept = append(kept, o)
			}
		}
		byJ[j] = kept
	}
	for _, obs := range byJ {
		for _, o := range obs {
			if float64(o.a) >= reference.WeightKneeA {
				high++
			}
			maxA = math.Max(maxA, float64(o.a))
			ss += float64(o.e) * float64(o.e)
			n++
		}
	}
	if high < noiseMinHigh || !(ss > 0) || math.IsInf(ss, 0) {
		return nil, nil
	}
	for j := range byJ {
		// A wavelength whose residuals are all zero (a zeroed region)
		// has no likelihood: its log of 0 would decide everything.
		z := 0.0
		for _, o := range byJ[j] {
			z += float64(o.e) * float64(o.e)
		}
		if !(z > 0) {
			byJ[j] = nil
		}
	}
	hi := math.Min(reference.MaxKneeA, math.Max(maxA, reference.WeightKneeA)+noiseSearchAbove)
	lo := float64(reference.MinKneeA)
	// Scan, then refine the best step by a bounded 1-D search.
	const step = 0.02
	best, bestD := lo, math.Inf(1)
	for k := lo; k <= hi+1e-12; k += step {
		if d := noiseDeviance(byJ, k); d < bestD {
			best, bestD = k, d
		}
	}
	best = goldenMin(func(k float64) float64 { return noiseDeviance(byJ, k) }, math.Max(lo, best-step), math.Min(hi, best+step))
	best = math.Min(math.Max(best, lo), hi)
	m := &reference.NoiseModel{KneeA: best, Readings: n, MaxA: maxA}
	// Observed information: half the second derivative of the deviance.
	const dk = 0.01
	if best-dk < lo || best+dk > hi {
		return nil, nil
	}
	d2 := (noiseDeviance(byJ, best+dk) - 2*noiseDeviance(byJ, best) + noiseDeviance(byJ, best-dk)) / (dk * dk)
	if !(d2 > 0) {
		return nil, nil
	}
	m.KneeSE = 1 / math.Sqrt(d2/2)
	if m.KneeSE > noiseMaxKneeSE || best > maxA {
		// Too uncertain, or the standards stop below the knee: they saw
		// the flat part only, and the growth up to the ceiling would be
		// an extrapolation.
		return nil, nil
	}
	// Base noise per wavelength.
	rebased = make([]bool, len(byJ))
	for j, obs := range byJ {
		if len(obs) == 0 {
			continue
		}
		rebased[j] = true
		wss := 0.0
		for _, o := range obs {
			wss += float64(o.e) * float64(o.e) / (1 + math.Exp(2*math.Ln10*(float64(o.a)-best)))
		}
		noise[j] = math.Sqrt(wss / float64(len(obs)))
	}
	m.Bins = noiseBins(byJ, noise)
	return m, rebased
}

// goldenMin returns the minimiser of f on [a, b] by golden-section
// search (f unimodal there: the scan bracketed its best point), to 1e-6.
func goldenMin(f func(float64) float64, a, b float64) float64 {
	r := (math.Sqrt(5) - 1) / 2
	c, d := b-r*(b-a), a+r*(b-a)
	fc, fd := f(c), f(d)
	for b-a > 1e-6 {
		if fc < fd {
			b, d, fd = d, c, fc
			c = b - r*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + r*(b-a)
			fd = f(d)
		}
	}
	return (a + b) / 2
}

// noiseBins groups the readings by fitted absorbance (noiseBinA wide,
// from 0) and gives each group's RMS of e / base noise.
func noiseBins(byJ [][]noiseObs, noise []float64) []reference.NoiseBin {
	type acc struct {
		sa, sr float64
		n      int
	}
	groups := map[int]*acc{}
	top := 0
	for j, obs := range byJ {
		s := math.Max(noise[j], reference.NoiseFloorAU)
		for _, o := range obs {
			b := int(math.Floor(math.Max(float64(o.a), 0) / noiseBinA))
			g := groups[b]
			if g == nil {
				g = &acc{}
				groups[b] = g
			}
			g.sa += float64(o.a)
			g.sr += (float64(o.e) / s) * (float64(o.e) / s)
			g.n++
			top = max(top, b)
		}
	}
	var out []reference.NoiseBin
	for b := 0; b <= top; b++ {
		g := groups[b]
		if g == nil || g.n < noiseBinMin {
			continue
		}
		out = append(out, reference.NoiseBin{LoA: float64(b) * noiseBinA, HiA: float64(b+1) * noiseBinA,
			MeanA: g.sa / float64(g.n), Ratio: math.Sqrt(g.sr / float64(g.n)), N: g.n})
	}
	return out
}
