package fit

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// ExpFit is an exponential approach v(t) = VInf + (V0 − VInf)·exp(−(t − T0)/Tau).
type ExpFit struct {
	Tau  Value   // time constant, seconds
	VInf Value   // the asymptote, volts
	V0   Value   // the value at T0, volts
	Rate Value   // 1/Tau, per second
	T0   float64 // the time origin: the first sample time
	N    int     // points fitted
	RMS  float64 // root-mean-square residual √(RSS/N), volts
	SD   float64 // residual standard deviation √(RSS/(N−3)), volts

	// Result is the underlying least-squares result in the internal parameters
	// (V0, A, k) of v = V0 + A·(1 − exp(−k·(t − T0)))/k, where A = (VInf − V0)·k is the
	// initial slope.
	Result *Result
}

// At returns the fitted curve at time t.
func (f *ExpFit) At(t float64) float64 {
	x := f.Result.X
	return expModel(x[0], x[1], x[2], t-f.T0)
}

// Settle returns how long after T0 the fitted curve takes to come within frac (for
// example 0.01) of its asymptote, |v − v∞| ≤ frac·|v∞|, that is
//
//	t = τ·ln(|v0 − v∞| / (frac·|v∞|)),
//
// with its standard error by the delta method; 0 if v0 is already that close, NaN
// values if the fit has no asymptote.
func (f *ExpFit) Settle(frac float64) Value {
	x, c := f.Result.X, f.Result.Cov
	v0, a, k := x[0], x[1], x[2]
	if !(k > 0) || !(frac > 0) {
		return Value{math.NaN(), math.NaN()}
	}
	vinf := v0 + a/k
	d := math.Abs(a / k) // |v0 − v∞|
	tol := frac * math.Abs(vinf)
	if d <= tol {
		return Value{0, 0}
	}
	t := math.Log(d/tol) / k
	// t(v0, A, k) = [ln|A/k| − ln(frac) − ln|v0 + A/k|]/k; partial derivatives:
	g := []float64{
		-1 / (k * vinf),
		(1/a - 1/(k*vinf)) / k,
		(-1/k+a/(k*k*vinf))/k - t/k,
	}
	return Value{t, math.Sqrt(quadForm(c, g))}
}

// ExpApproach fits v(t) = v∞ + (v0 − v∞)·exp(−(t − t0)/τ), with t0 = t[0], to the
// samples (t, v): the discharge through a load while the cell keeps charging, a dark
// decay towards an offset, or the approach to an equilibrium. The samples need not be
// evenly spaced but t must not decrease; at least 5 points are needed.
//
// The curve is fitted as v = v0 + A·(1 − e^(−k·(t−t0)))/k, which stays smooth as
// k → 0 (a straight line), with an analytic Jacobian; τ = 1/k and v∞ = v0 + A/k and
// their standard errors follow from the covariance by the delta method.
//
// The starting rate k comes from three equal time windows: for an exponential their
// integrals S1, S2, S3 satisfy (S3 − S2)/(S2 − S1) = e^(−k·w) for windows of length w,
// exactly, whatever the sampling. That estimate and a few multiples of 1/span are each
// tried with v0 and A solved linearly; the best is refined, and the second best too if
// the first does not converge to an approach.
//
// If the data do not approach an asymptote (k ≤ 0: a straight line or a curve bending
// away), ExpApproach returns the fit with an error wrapping ErrNotIdentifiable; τ and v∞
// are then NaN.
func ExpApproach(t, v []float64) (*ExpFit, error) {
	if err := checkSeries(t, v, 5, "exp approach"); err != nil {
		return nil, err
	}
	t0 := t[0]
	tt := make([]float64, len(t))
	for i := range t {
		tt[i] = t[i] - t0
	}
	span := tt[len(tt)-1]
	p := expProblem(tt, v)

	type cand struct {
		x   []float64
		rss float64
	}
	var cands []cand
	ks := []float64{0, 1 / span, 3 / span, 10 / span, 30 / span}
	if k3, ok := threeWindowRate(tt, v); ok {
		ks = append(ks, k3)
	}
	for _, k := range ks {
		v0, a, rss := expLinear(tt, v, k)
		cands = append(cands, cand{[]float64{v0, a, k}, rss})
	}
	sort.SliceStable(cands, func(i, j int) bool { return cands[i].rss < cands[j].rss })
	cands = cands[:2]
	var best *Result
	var bestErr error
	for _, c := range cands {
		res, err := Solve(p, c.x, nil)
		if res == nil {
			return nil, err
		}
		if best == nil || (err == nil && bestErr != nil) || ((err == nil) == (bestErr == nil) && res.RSS < best.RSS) {
			best, bestErr = res, err
		}
		if bestErr == nil && best.X[2] > 0 {
			break // the best start converged to an approach: no need for the second
		}
	}
	f := expFromResult(best, t0, len(t))
	if bestErr != nil {
		return f, bestErr
	}
	if !(f.Rate.Value > 0) {
		return f, errorf(ErrNotIdentifiable, "exp approach: no approach to an asymptote (rate %.3g /s)", f.Rate.Value)
	}
	return f, nil
}

func checkSeries(t, v []float64, min int, what string) error {
	switch {
	case len(t) != len(v):
		return inputErrorf("%s: %d times, %d values", what, len(t), len(v))
	case len(t) < min:
		return inputErrorf("%s: %d points, need at least %d", what, len(t), min)
	case !allFinite(t) || !allFinite(v):
		return inputErrorf("%s: non-finite input", what)
	}
	for i := 1; i < len(t); i++ {
		if t[i] < t[i-1] {
			return inputErrorf("%s: time goes backwards at index %d (%g after %g)", what, i, t[i], t[i-1])
		}
	}
	if t[len(t)-1] == t[0] {
		return inputErrorf("%s: all times are equal", what)
	}
	return nil
}

// expG returns g = (1 − e^(−k·t))/k and dg/dk, using series for small |k·t|.
func expG(k, t float64) (g, dg float64) {
	x := k * t
	if math.Abs(x) < 1e-2 {
		g = t * (1 + x*(-1.0/2+x*(1.0/6+x*(-1.0/24+x/120))))
		dg = t * t * (-1.0/2 + x*(1.0/3+x*(-1.0/8+x*(1.0/30-x/144))))
		return g, dg
	}
	em := math.Expm1(-x) // e^(−x) − 1
	g = -em / k
	dg = (x*(em+1) + em) / (k * k)
	return g, dg
}

func expModel(v0, a, k, t float64) float64 {
	g, _ := expG(k, t)
	return v0 + a*g
}

func expProblem(tt, v []float64) Problem {
	return Problem{
		M: len(tt),
		Func: func(dst, x []float64) {
			for i, t := range tt {
				dst[i] = expModel(x[0], x[1], x[2], t) - v[i]
			}
		},
		Jac: func(dst *mat.Dense, x []float64) {
			for i, t := range tt {
				g, dg := expG(x[2], t)
				row := dst.RawRowView(i)
				row[0], row[1], row[2] = 1, g, x[1]*dg
			}
		},
	}
}

// expLinear solves for v0 and A at a fixed rate k by linear least squares.
func expLinear(tt, v []float64, k float64) (v0, a, rss float64) {
	g := make([]float64, len(tt))
	for i, t := range tt {
		g[i], _ = expG(k, t)
	}
	l, err := Line(g, v, nil)
	if err != nil {
		return v[0], 0, math.Inf(1)
	}
	return l.Intercept.Value, l.Slope.Value, l.RSS
}

// threeWindowRate estimates k from the integrals of v over three equal time windows.
func threeWindowRate(tt, v []float64) (float64, bool) {
	span := tt[len(tt)-1]
	w := span / 3
	s1 := integrate(tt, v, 0, w)
	s2 := integrate(tt, v, w, 2*w)
	s3 := integrate(tt, v, 2*w, span)
	r := (s3 - s2) / (s2 - s1)
	if !(r > 0) || math.IsInf(r, 0) || r == 1 {
		return 0, false
	}
	return -math.Log(r) / w, true
}

// integrate returns the trapezoidal integral of v over [a, b], interpolating linearly
// at the ends.
func integrate(tt, v []float64, a, b float64) float64 {
	interp := func(x float64) float64 {
		for i := 1; i < len(tt); i++ {
			if tt[i] >= x {
				if tt[i] == tt[i-1] {
					return v[i]
				}
				f := (x - tt[i-1]) / (tt[i] - tt[i-1])
				return v[i-1] + f*(v[i]-v[i-1])
			}
		}
		return v[len(v)-1]
	}
	s := 0.0
	prevT, prevV := a, interp(a)
	for i := range tt {
		if tt[i] <= a {
			continue
		}
		if tt[i] >= b {
			break
		}
		s += (tt[i] - prevT) * (v[i] + prevV) / 2
		prevT, prevV = tt[i], v[i]
	}
	vb := interp(b)
	s += (b - prevT) * (vb + prevV) / 2
	return s
}

func expFromResult(res *Result, t0 float64, n int) *ExpFit {
	x := res.X
	v0, a, k := x[0], x[1], x[2]
	f := &ExpFit{T0: t0, N: n, Result: res, SD: res.SD}
	f.RMS = math.Sqrt(res.RSS / float64(n))
	f.V0 = Value{v0, res.SE[0]}
	f.Rate = Value{k, res.SE[2]}
	if !(k > 0) {
		f.Tau = Value{math.NaN(), math.NaN()}
		f.VInf = Value{math.NaN(), math.NaN()}
		return f
	}
	f.Tau = Value{1 / k, res.SE[2] / (k * k)}
	// v∞ = v0 + A/k: gradient (1, 1/k, −A/k²).
	g := []float64{1, 1 / k, -a / (k * k)}
	f.VInf = Value{v0 + a/k, math.Sqrt(quadForm(res.Cov, g))}
	return f
}

// quadForm returns gᵀ·C·g.
func quadForm(c *mat.SymDense, g []float64) float64 {
	s := 0.0
	for i := range g {
		for j := range g {
			s += g[i] * c.At(i, j) * g[j]
		}
	}
	return s
}
