package fit

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat"
)

// LineFit is a straight line y = Intercept + Slope·x with standard errors.
type LineFit struct {
	Intercept Value
	Slope     Value
	N         int     // points used
	DoF       int     // N − 2
	RSS       float64 // Σ w_i (y_i − a − b·x_i)²
	SD        float64 // residual standard deviation √(RSS/DoF)
	R2        float64 // coefficient of determination
	// Outliers counts the points a robust fit gave less than full weight (0 for Line).
	Outliers int
}

// At returns the fitted line's value at x.
func (l *LineFit) At(x float64) float64 { return l.Intercept.Value + l.Slope.Value*x }

// Line fits y = a + b·x by (weighted) least squares with gonum's stat.LinearRegression
// and adds the classical standard errors
//
//	s² = Σ w_i r_i² / (N − 2),  Sxx = Σ w_i (x_i − x̄)²,
//	SE(b) = s/√Sxx,             SE(a) = s·√(1/Σw_i + x̄²/Sxx),
//
// with x̄ the weighted mean. If w is nil all weights are 1. It needs at least three
// points and two distinct x values.
func Line(x, y, w []float64) (*LineFit, error) {
	if err := checkLine(x, y, w); err != nil {
		return nil, err
	}
	a, b := stat.LinearRegression(x, y, w, false)
	l := lineStats(x, y, w, a, b)
	if math.IsNaN(l.Slope.SD) {
		return nil, inputErrorf("line: all x values are equal")
	}
	return l, nil
}

func checkLine(x, y, w []float64) error {
	switch {
	case len(x) != len(y):
		return inputErrorf("line: %d x values, %d y values", len(x), len(y))
	case w != nil && len(w) != len(x):
		return inputErrorf("line: %d weights for %d points", len(w), len(x))
	case len(x) < 3:
		return inputErrorf("line: %d points, need at least 3", len(x))
	}
	if !allFinite(x) || !allFinite(y) || (w != nil && !allFinite(w)) {
		return inputErrorf("line: non-finite input")
	}
	return nil
}

func lineStats(x, y, w []float64, a, b float64) *LineFit {
	sw, xm := 0.0, 0.0
	for i := range x {
		wi := weight(w, i)
		sw += wi
		xm += wi * x[i]
	}
	xm /= sw
	sxx, rss := 0.0, 0.0
	for i := range x {
		wi := weight(w, i)
		dx := x[i] - xm
		sxx += wi * dx * dx
		r := y[i] - a - b*x[i]
		rss += wi * r * r
	}
	dof := len(x) - 2
	s := math.Sqrt(rss / float64(dof))
	l := &LineFit{N: len(x), DoF: dof, RSS: rss, SD: s}
	l.Intercept = Value{a, s * math.Sqrt(1/sw+xm*xm/sxx)}
	l.Slope = Value{b, s / math.Sqrt(sxx)}
	if sxx == 0 {
		l.Slope.SD, l.Intercept.SD = math.NaN(), math.NaN()
	}
	l.R2 = stat.RSquared(x, y, w, a, b)
	return l
}

func weight(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

// huberK is Huber's tuning constant, 95 % efficiency at the normal distribution
// (Huber 1981, "Robust Statistics"; common practice).
const huberK = 1.345

// RobustLine fits y = a + b·x with Huber's M-estimator by iteratively reweighted least
// squares, so that a few wild points (a missed event, a glitch) do not tilt the line. It
// is meant for slow drifts, such as the trigger voltage over a day.
//
// The scale is the normalised median absolute deviation of the residuals (MAD/0.6745),
// fixed after the first, ordinary least-squares pass and then re-estimated each pass;
// weights are min(1, k·s/|r|) with k = 1.345. The covariance is Huber's asymptotic
// estimate
//
//	Cov = s²·[Σψ(u_i)²/(N−2)] / [Σψ'(u_i)/N]² · (XᵀX)⁻¹,   u_i = r_i/s,
//
// which reduces to the least-squares one when no point is down-weighted. It needs at
// least three points and two distinct x values.
func RobustLine(x, y []float64) (*LineFit, error) {
	if err := checkLine(x, y, nil); err != nil {
		return nil, err
	}
	n := len(x)
	a, b := stat.LinearRegression(x, y, nil, false)
	w := make([]float64, n)
	r := make([]float64, n)
	var s float64
	for iter := 0; iter < 50; iter++ {
		for i := range x {
			r[i] = y[i] - a - b*x[i]
		}
		s = madScale(r)
		if s == 0 {
			break // more than half the points lie on the line exactly
		}
		for i := range r {
			w[i] = math.Min(1, huberK*s/math.Abs(r[i]))
		}
		na, nb := stat.LinearRegression(x, y, w, false)
		done := math.Abs(nb-b) <= 1e-12*(math.Abs(b)+s) && math.Abs(na-a) <= 1e-12*(math.Abs(a)+s)
		a, b = na, nb
		if done {
			break
		}
	}
	for i := range x {
		r[i] = y[i] - a - b*x[i]
	}
	l := lineStats(x, y, nil, a, b)
	if math.IsNaN(l.Slope.SD) {
		return nil, inputErrorf("robust line: all x values are equal")
	}
	if s == 0 {
		return l, nil
	}
	// Huber's asymptotic covariance, written as a rescaling of the OLS one.
	psi2, dpsi := 0.0, 0.0
	for i := range r {
		u := r[i] / s
		if math.Abs(u) <= huberK {
			psi2 += u * u
			dpsi++
		} else {
			psi2 += huberK * huberK
			l.Outliers++
		}
	}
	if dpsi == 0 {
		return l, nil
	}
	dof := float64(n - 2)
	f := s * math.Sqrt(psi2/dof) / (dpsi / float64(n)) / l.SD
	l.Slope.SD *= f
	l.Intercept.SD *= f
	return l, nil
}

// madScale returns median(|r − median(r)|)/0.6745, a robust estimate of the standard
// deviation of normal data.
func madScale(r []float64) float64 {
	c := append([]float64(nil), r...)
	sort.Float64s(c)
	med := stat.Quantile(0.5, stat.Empirical, c, nil)
	for i := range c {
		c[i] = math.Abs(c[i] - med)
	}
	sort.Float64s(c)
	return stat.Quantile(0.5, stat.Empirical, c, nil) / 0.6745
}
