package detect

import (
	"fmt"
	"math"
)

// SGCoeffs returns the Savitzky-Golay convolution coefficients for a window of 2m+1
// equally spaced points, a fitted polynomial of the given order, and derivative deriv
// (0 smooths, 1 gives the first derivative per sample spacing). Applying them,
//
//	y'_k = sum_{j=-m..m} c[j+m] * y_{k+j}
//
// equals evaluating at the centre the least-squares polynomial through the window, which
// is how Savitzky and Golay (1964) derived their tables. The coefficients come from the
// normal equations of the fit, c = e_deriv^T (A^T A)^-1 A^T * deriv!, with A_{j,i} = j^i.
// It panics when order >= 2m+1 or deriv > order (a programmer error).
func SGCoeffs(m, order, deriv int) []float64 {
	if m < 0 || order < 0 || order >= 2*m+1 || deriv < 0 || deriv > order {
		panic(fmt.Sprintf("detect: bad Savitzky-Golay window m=%d order=%d deriv=%d", m, order, deriv))
	}
	x := make([]float64, 2*m+1)
	for j := range x {
		x[j] = float64(j - m)
	}
	c := make([]float64, 2*m+1)
	w := localWeights(x, 0, order, deriv)
	copy(c, w)
	return c
}

// localWeights returns the weights w such that sum w_i y_i is the deriv-th derivative at
// x0 of the least-squares polynomial of the given order through (x_i, y_i). The points
// need not be equally spaced; this is the Savitzky-Golay filter on a non-uniform grid.
// It returns nil when the points cannot determine the polynomial.
func localWeights(x []float64, x0 float64, order, deriv int) []float64 {
	n := len(x)
	p := order + 1
	if n < p {
		return nil
	}
	// Scale the abscissa to [-1, 1] for conditioning.
	s := 0.0
	for _, xi := range x {
		s = math.Max(s, math.Abs(xi-x0))
	}
	if s == 0 {
		return nil
	}
	// Normal matrix G = A^T A with A_{i,k} = u_i^k, u = (x - x0)/s.
	var g [8][8]float64
	if p > 8 {
		panic("detect: polynomial order above 7")
	}
	pw := make([]float64, p)
	for _, xi := range x {
		u := (xi - x0) / s
		pw[0] = 1
		for k := 1; k < p; k++ {
			pw[k] = pw[k-1] * u
		}
		for a := 0; a < p; a++ {
			for b := 0; b < p; b++ {
				g[a][b] += pw[a] * pw[b]
			}
		}
	}
	// Solve G z = e_deriv by Gaussian elimination with partial pivoting.
	var z [8]float64
	z[deriv] = 1
	for col := 0; col < p; col++ {
		piv := col
		for r := col + 1; r < p; r++ {
			if math.Abs(g[r][col]) > math.Abs(g[piv][col]) {
				piv = r
			}
		}
		if math.Abs(g[piv][col]) < 1e-12*float64(n) {
			return nil
		}
		g[col], g[piv] = g[piv], g[col]
		z[col], z[piv] = z[piv], z[col]
		for r := col + 1; r < p; r++ {
			f := g[r][col] / g[col][col]
			for k := col; k < p; k++ {
				g[r][k] -= f * g[col][k]
			}
			z[r] -= f * z[col]
		}
	}
	for r := p - 1; r >= 0; r-- {
		for k := r + 1; k < p; k++ {
			z[r] -= g[r][k] * z[k]
		}
		z[r] /= g[r][r]
	}
	// w_i = deriv! / s^deriv * sum_k z_k u_i^k
	fact := 1.0
	for k := 2; k <= deriv; k++ {
		fact *= float64(k)
	}
	scale := fact / math.Pow(s, float64(deriv))
	w := make([]float64, n)
	for i, xi := range x {
		u := (xi - x0) / s
		acc, uk := 0.0, 1.0
		for k := 0; k < p; k++ {
			acc += z[k] * uk
			uk *= u
		}
		w[i] = acc * scale
	}
	return w
}

// LocalPoly fits a polynomial of the given order (at most 7) by least squares to the
// points (t_i, v_i) and returns its value and first derivative at t0 (the Savitzky-Golay
// smoothed value and slope on a non-uniform grid). ok is false when there are too few
// distinct times. It does not allocate.
func LocalPoly(t, v []float64, t0 float64, order int) (value, slope float64, ok bool) {
	if len(t) != len(v) {
		panic("detect: slice length mismatch")
	}
	p := order + 1
	if p > 8 {
		panic("detect: polynomial order above 7")
	}
	if len(t) < p {
		return 0, 0, false
	}
	s := 0.0
	for _, x := range t {
		s = math.Max(s, math.Abs(x-t0))
	}
	if s == 0 {
		return 0, 0, false
	}
	// Normal equations G c = r with G = A^T A, r = A^T v, A_{i,k} = u_i^k, u = (t - t0)/s.
	var g [8][8]float64
	var r [8]float64
	var pw [8]float64
	for i, x := range t {
		u := (x - t0) / s
		pw[0] = 1
		for k := 1; k < p; k++ {
			pw[k] = pw[k-1] * u
		}
		for a := 0; a < p; a++ {
			r[a] += pw[a] * v[i]
			for b := a; b < p; b++ {
				g[a][b] += pw[a] * pw[b]
			}
		}
	}
	for a := 0; a < p; a++ {
		for b := 0; b < a; b++ {
			g[a][b] = g[b][a]
		}
	}
	if !solveSmall(&g, &r, p, float64(len(t))) {
		return 0, 0, false
	}
	return r[0], r[1] / s, true
}

// solveSmall solves the p-by-p system g x = r in place (x in r) by Gaussian elimination
// with partial pivoting; false when it is singular.
func solveSmall(g *[8][8]float64, r *[8]float64, p int, n float64) bool {
	for col := 0; col < p; col++ {
		piv := col
		for q := col + 1; q < p; q++ {
			if math.Abs(g[q][col]) > math.Abs(g[piv][col]) {
				piv = q
			}
		}
		if math.Abs(g[piv][col]) < 1e-12*n {
			return false
		}
		g[col], g[piv] = g[piv], g[col]
		r[col], r[piv] = r[piv], r[col]
		for q := col + 1; q < p; q++ {
			f := g[q][col] / g[col][col]
			for k := col; k < p; k++ {
				g[q][k] -= f * g[col][k]
			}
			r[q] -= f * r[col]
		}
	}
	for q := p - 1; q >= 0; q-- {
		for k := q + 1; k < p; k++ {
			r[q] -= g[q][k] * r[k]
		}
		r[q] /= g[q][q]
	}
	return true
}

// Smooth writes into dst the Savitzky-Golay smoothed values (deriv 0) or first derivative
// per unit time (deriv 1) of v sampled at times t, using for each point the window of
// the m neighbours on each side (shrunk, off-centre, at the ends) and a polynomial of the
// given order. Spacing may be non-uniform. dst must have len(v); it is returned.
func Smooth(dst, t, v []float64, m, order, deriv int) []float64 {
	n := len(v)
	if len(t) != n || len(dst) != n {
		panic("detect: slice length mismatch")
	}
	for i := 0; i < n; i++ {
		lo, hi := i-m, i+m+1
		if lo < 0 {
			hi = min(n, hi-lo)
			lo = 0
		}
		if hi > n {
			lo = max(0, lo-(hi-n))
			hi = n
		}
		ord := min(order, hi-lo-1)
		w := localWeights(t[lo:hi], t[i], ord, deriv)
		if w == nil {
			dst[i] = math.NaN()
			continue
		}
		acc := 0.0
		for k, wk := range w {
			acc += wk * v[lo+k]
		}
		dst[i] = acc
	}
	return dst
}
