package lsq

import "math"

// givensSubset re-triangularises the columns cols (increasing) of the
// k×k upper-triangular a (row-major, stride lda) by Givens rotations,
// applying the same rotations to b (length k). On return the leading
// m×m block of mm (row-major, stride m, m = len(cols)) is upper triangular
// with a[:, cols] = G' [T; 0], and rhs[:k] holds G b.
//
// Because a is upper triangular and cols increase, column c of a[:, cols]
// has non-zeros only in rows 0..cols[c], so column c needs cols[c] - c
// rotations, each on two adjacent rows.
func givensSubset(mm, rhs, a []float64, k, lda int, cols []int, b []float64) {
	m := len(cols)
	for i := range k {
		row := mm[i*m : i*m+m]
		for c, j := range cols {
			row[c] = a[i*lda+j]
		}
		rhs[i] = b[i]
	}
	for c := range m {
		for r := cols[c]; r > c; r-- {
			lo := mm[r*m+c]
			if lo == 0 {
				continue
			}
			hi := mm[(r-1)*m+c]
			// Entries are bounded by the unit column norms: no overflow.
			h := math.Sqrt(hi*hi + lo*lo)
			cs, sn := hi/h, lo/h
			mm[(r-1)*m+c] = h
			mm[r*m+c] = 0
			up := mm[(r-1)*m : r*m]
			dn := mm[r*m : (r+1)*m]
			for cc := c + 1; cc < m; cc++ {
				u, v := up[cc], dn[cc]
				up[cc] = cs*u + sn*v
				dn[cc] = cs*v - sn*u
			}
			u, v := rhs[r-1], rhs[r]
			rhs[r-1] = cs*u + sn*v
			rhs[r] = cs*v - sn*u
		}
	}
}

// backSub solves the m×m upper-triangular system T x = rhs (T row-major,
// stride ldt) into x.
func backSub(x, t []float64, ldt int, rhs []float64, m int) {
	for i := m - 1; i >= 0; i-- {
		sum := rhs[i]
		for j := i + 1; j < m; j++ {
			sum -= t[i*ldt+j] * x[j]
		}
		x[i] = sum / t[i*ldt+i]
	}
}

// passiveSolve solves min || A[:, P] s - b || for the current passive set
// P of the k×k triangular A and scatters the solution into s (zero
// outside P).
func (s *Solver) passiveSolve(a []float64, k int, b []float64) {
	ws := &s.ws
	P := ws.pidx
	m := len(P)
	givensSubset(ws.m, ws.rhs, a, k, k, P, b)
	t := ws.tinv[:m] // scratch for the packed solution
	backSub(t, ws.m, m, ws.rhs, m)
	clear(ws.s)
	for c, j := range P {
		ws.s[j] = t[c]
	}
}

// gradient sets w = A'(b - A x) for the k×k upper-triangular A.
func gradient(w, res, a []float64, k int, b, x []float64) {
	for i := range k {
		sum := b[i]
		for j := i; j < k; j++ {
			sum -= a[i*k+j] * x[j]
		}
		res[i] = sum
	}
	for j := range k {
		var sum float64
		for i := 0; i <= j; i++ {
			sum += a[i*k+j] * res[i]
		}
		w[j] = sum
	}
}

// nnls runs the Lawson-Hanson active-set method (Lawson & Hanson, Solving
// Least Squares Problems, 1974, chapter 23, algorithm NNLS) on
//
//	min ||A c - b||  subject to c >= 0
//
// with A = R_SS (k×k upper triangular, unit-norm-or-less columns) and
// b = z_S. The result is left in ws.x; it returns the number of
// iterations and whether it stopped at the cap. wtol is the absolute
// gradient threshold.
//
// The degenerate case in which a column with positive gradient would enter
// with a non-positive value (rounding) is handled as in the original
// algorithm: the column is set aside until the iterate moves, which
// prevents cycling.
func (s *Solver) nnls(b []float64, wtol float64) (iter int, capped bool) {
	f, ws := s.f, &s.ws
	k := f.nn
	a := f.rss
	x, w := ws.x, ws.w
	clear(x)
	clear(ws.inP)
	clear(ws.rej)
	ws.pidx = ws.pidx[:0]
	if k == 0 {
		return 0, false
	}
	gradient(w, ws.res, a, k, b, x)
	for {
		// Column with the largest positive gradient outside P.
		t := -1
		wmax := wtol
		for j := range k {
			if !ws.inP[j] && !ws.rej[j] && w[j] > wmax {
				t, wmax = j, w[j]
			}
		}
		if t < 0 {
			return iter, false
		}
		if iter >= f.maxIter {
			return iter, true
		}
		iter++
		s.addPassive(t)
		s.passiveSolve(a, k, b)
		if !(ws.s[t] > 0) {
			// Would enter at a non-positive value: set aside.
			s.removePassive(t)
			ws.rej[t] = true
			continue
		}
		// Inner loop: step back to feasibility while some s_j <= 0.
		for {
			alpha := 2.0
			jmin := -1
			for _, j := range ws.pidx {
				if ws.s[j] <= 0 {
					q := x[j] / (x[j] - ws.s[j])
					if q < alpha {
						alpha, jmin = q, j
					}
				}
			}
			if jmin < 0 {
				break
			}
			if iter >= f.maxIter {
				return iter, true
			}
			iter++
			for _, j := range ws.pidx {
				x[j] += alpha * (ws.s[j] - x[j])
			}
			x[jmin] = 0
			// Remove every passive column that reached zero.
			out := ws.pidx[:0]
			for _, j := range ws.pidx {
				if x[j] > 0 {
					out = append(out, j)
				} else {
					x[j] = 0
					ws.inP[j] = false
				}
			}
			ws.pidx = out
			s.passiveSolve(a, k, b)
		}
		for j := range k {
			x[j] = ws.s[j]
		}
		clear(ws.rej)
		gradient(w, ws.res, a, k, b, x)
	}
}

// addPassive inserts j into the sorted passive list.
func (s *Solver) addPassive(j int) {
	ws := &s.ws
	ws.inP[j] = true
	P := append(ws.pidx, j)
	for i := len(P) - 1; i > 0 && P[i-1] > P[i]; i-- {
		P[i-1], P[i] = P[i], P[i-1]
	}
	ws.pidx = P
}

// removePassive deletes j from the sorted passive list.
func (s *Solver) removePassive(j int) {
	ws := &s.ws
	ws.inP[j] = false
	out := ws.pidx[:0]
	for _, i := range ws.pidx {
		if i != j {
			out = append(out, i)
		}
	}
	ws.pidx = out
}
