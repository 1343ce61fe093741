package unmix

import "slices"

// The ceiling rule, second half: a point that reads below the ceiling but
// that the fit predicts above it is left out too. Near a detector's limit
// a reading is no longer the absorbance (stray light flattens it, noise
// there is large), so a band whose true height is A = 3 may read 1.9 at
// some points; kept, those points pull the compound's amount down. After
// each fit the raw absorbance the fit predicts (fitted compounds,
// baseline and interferents plus the blank: predictedAt) is computed on
// every window point that reads at or below the ceiling; the points
// predicted above it are left out and the sample refitted, until the set
// left out repeats (a fixed set). The iteration is capped at
// ceilingMaxIter refits; if the sets cycle, or the cap is reached, every
// point predicted above the ceiling in any round is left out and the
// sample fitted once more, which ends it. Points left out so are counted
// in Result.Dropped and raise FlagSaturated, as points read above the
// ceiling do. The rule needs the fit in raw absorbance, so it is not
// applied when the reference set has pre-treatment steps.

// ceilingMaxIter caps the refits of the predicted-ceiling rule (a project
// choice: in tests the set settles after one or two refits).
const ceilingMaxIter = 8

// ceilingFit fits the sample with the window rows extra (ascending)
// left out besides those read above the ceiling; it returns the model
// that made the fit (the chosen candidate, with Options.Auto) and its
// scan.
type ceilingFit func(extra []int) (*Model, *scan, error)

// settleCeiling runs fit until the rows predicted above the ceiling are
// a fixed set (see the rule above) and returns the last fit. m and sc are
// the first fit, with no row left out for its prediction.
func settleCeiling(m *Model, sc *scan, fit ceilingFit) (*Model, *scan, error) {
	var extra []int
	var seen [][]int
	for iter := 1; ; iter++ {
		next := m.predictedOver(nil, sc, extra)
		if slices.Equal(next, extra) {
			return m, sc, nil
		}
		seen = append(seen, extra)
		cycle := slices.ContainsFunc(seen, func(s []int) bool { return slices.Equal(s, next) })
		if cycle || iter >= ceilingMaxIter {
			all := next
			for _, s := range seen {
				all = append(all, s...)
			}
			slices.Sort(all)
			return fit(slices.Compact(all))
		}
		extra = next
		var err error
		if m, sc, err = fit(extra); err != nil {
			return m, sc, err
		}
	}
}

// overCeiling reports whether the fit of sc predicts the raw absorbance
// above the ceiling on any of its rows (the cheap test that spares most
// samples settleCeiling). It is false when the set has pre-treatment
// steps: the fit is then not in raw absorbance, and the rule is not
// applied.
func (m *Model) overCeiling(sc *scan) bool {
	if len(m.set.Pretreat) > 0 {
		return false
	}
	off := m.sh.lo - m.sh.wlo
	for i, r := range sc.d.rows {
		if sc.raw[off+r]-sc.res.Residual[i] > m.sh.ceiling {
			return true
		}
	}
	return false
}

// predictedAt is the raw absorbance the scan's fit predicts at window
// row r: the blank plus every fitted column.
func (m *Model) predictedAt(sc *scan, r int) float64 {
	sh := m.sh
	v := sc.blk[sh.lo-sh.wlo+r]
	for j, c := range sh.cols {
		v += sc.res.Coef[j] * c[r]
	}
	return v
}

// predictedOver appends to dst, ascending, the window rows that read at
// or below the ceiling (the fit's rows and extra, those already left out
// for their prediction) where the fit predicts the raw absorbance above
// the ceiling. On a fitted row the prediction is the reading less the
// residual (the fit is of the reading less the blank); on a row left out
// it is predictedAt.
func (m *Model) predictedOver(dst []int, sc *scan, extra []int) []int {
	rows := sc.d.rows
	off := m.sh.lo - m.sh.wlo
	i, j := 0, 0
	for i < len(rows) || j < len(extra) {
		var r int
		var pred float64
		if j >= len(extra) || i < len(rows) && rows[i] < extra[j] {
			r = rows[i]
			pred = sc.raw[off+r] - sc.res.Residual[i]
			i++
		} else {
			r = extra[j]
			pred = m.predictedAt(sc, r)
			j++
		}
		if pred > m.sh.ceiling {
			dst = append(dst, r)
		}
	}
	return dst
}

// leaveOut removes the window rows extra (ascending, each among sc.rows)
// from the scan's rows, counts them as dropped and rebuilds the mask key
// (the left-out usable rows) so that the design cache tells the masks
// apart. The rows and key go to storage of their own (lrows, lkey): a
// candidate of the automatic model without a shift reads sc.rows and
// sc.key as views of the storage of the candidate that read the scan
// (readState.restore), which filtering in place would overwrite.
func (m *Model) leaveOut(sc *scan, extra []int) {
	if len(extra) == 0 {
		return
	}
	b := &m.buf
	kept := b.lrows[:0]
	j := 0
	for _, r := range sc.rows {
		for j < len(extra) && extra[j] < r {
			j++
		}
		if j < len(extra) && extra[j] == r {
			sc.dropped++
			continue
		}
		kept = append(kept, r)
	}
	b.lrows = kept
	b.lkey = b.lkey[:0]
	i := 0
	for _, r := range m.sh.rows0 {
		if i < len(kept) && kept[i] == r {
			i++
			continue
		}
		b.lkey = append(b.lkey, byte(r>>16), byte(r>>8), byte(r))
	}
	sc.rows, sc.key = b.lrows, b.lkey
}
