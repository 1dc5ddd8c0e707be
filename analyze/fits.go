package analyze

import (
	"errors"
	"math"

	"capcycle/analyze/fit"
	"capcycle/analyze/stats"
)

// This file holds every call into package fit, so the analysis talks to the least-squares
// engine in one place.

// expResult is an exponential approach v = vinf + (v0 - vinf) exp(-(t - t0)/tau).
type expResult struct {
	ok           bool
	tau, tauSD   float64
	vinf, vinfSD float64
	v0           float64
	t0, t1       float64 // the first and the last time fitted
	rms          float64
	n            int
	systematic   bool
	ratio        float64 // residual RMS over the noise
	// the Wald-Wolfowitz runs test of the residual signs: runs seen, expected and their
	// variance, for pooling over many pulses
	runs, runsMean, runsVar float64
	// drift = -vinf/tau, the constant part of the drain over C (V/s), with its SD from
	// the covariance (in the fit's parameters (V0, A, k), drift = -(V0 k + A)).
	drift, driftSD float64
}

func (e *expResult) at(t float64) float64 {
	return e.vinf + (e.v0-e.vinf)*math.Exp(-(t-e.t0)/e.tau)
}

// fitExp fits an exponential approach and tests its residuals against the noise noiseV.
//
// Samples far off the first fit (a motor's commutation spikes riding on a pulse, a
// glitch) are dropped and the fit made again: those beyond 4.5 robust standard
// deviations of the residuals (1.4826 times their median absolute deviation, Hampel's
// rule) and beyond 4 noiseV, at most a third of the samples.
func fitExp(t, v []float64, noiseV float64) expResult {
	if len(t) < 5 {
		return expResult{}
	}
	f, err := fit.ExpApproach(t, v)
	if err == nil && f != nil && f.Result != nil && len(f.Result.Residuals) == len(t) {
		if keep := inliers(f.Result.Residuals, noiseV); keep != nil && len(keep) >= 5 {
			tk, vk := make([]float64, len(keep)), make([]float64, len(keep))
			for j, k := range keep {
				tk[j], vk[j] = t[k], v[k]
			}
			if g, err2 := fit.ExpApproach(tk, vk); err2 == nil && g != nil {
				f, t = g, tk
			}
		}
	}
	if err != nil || f == nil || !(f.Tau.Value > 0) || math.IsInf(f.Tau.Value, 0) {
		return expResult{}
	}
	e := expResult{ok: true, tau: f.Tau.Value, tauSD: f.Tau.SD, vinf: f.VInf.Value, vinfSD: f.VInf.SD,
		v0: f.V0.Value, t0: f.T0, t1: t[len(t)-1], rms: f.RMS, n: f.N}
	e.drift, e.driftSD = -e.vinf/e.tau, math.NaN()
	if r := f.Result; r != nil && r.Cov != nil && len(r.X) == 3 {
		g := [3]float64{-r.X[2], -1, -r.X[0]}
		var s2 float64
		for a := 0; a < 3; a++ {
			for b := 0; b < 3; b++ {
				s2 += g[a] * r.Cov.At(a, b) * g[b]
			}
		}
		e.driftSD = math.Sqrt(math.Max(s2, 0))
	}
	if f.Result != nil && len(f.Result.Residuals) == len(t) {
		p := fit.ResidualPattern(f.Result.Residuals, 3, noiseV)
		e.systematic, e.ratio = p.Systematic, p.Ratio
		if mu := p.ExpectedRuns; p.N > 2 && mu > 2 {
			// Var = (mu - 1)(mu - 2)/(N - 1) (Wald and Wolfowitz 1940)
			e.runs, e.runsMean, e.runsVar = float64(p.Runs), mu, (mu-1)*(mu-2)/float64(p.N-1)
		}
	}
	return e
}

// inliers returns the indices of the residuals within max(4.5 robust SD, 4 noiseV) of
// zero, or nil when all of them are (or when more than a third would go: then the
// model, not the samples, is at fault).
func inliers(res []float64, noiseV float64) []int {
	abs := make([]float64, len(res))
	for i, r := range res {
		abs[i] = math.Abs(r)
	}
	lim := math.Max(4.5*1.4826*stats.Median(abs), 4*noiseV)
	var keep []int
	for i, a := range abs {
		if a <= lim {
			keep = append(keep, i)
		}
	}
	if len(keep) == len(res) || 3*len(keep) < 2*len(res) {
		return nil
	}
	return keep
}

// poolPts bounds the samples a pulsePool keeps (4 MiB): hundreds of pulses of a
// thousand samples, or thousands of short ones.
const poolPts = 1 << 18

// pulsePool keeps the samples of the pulses fitted one by one (those within the robust
// limit of their own fit, see inliers), for jointTau.
type pulsePool struct {
	t, v  []float64
	spans []poolSpan
}

type poolSpan struct {
	swing, from, to int
	rms             float64 // of the pulse's own fit over the kept samples
}

func (p *pulsePool) add(swing int, t, v []float64, e *expResult, noiseV float64) {
	if len(p.t)+len(t) > poolPts {
		return
	}
	res := make([]float64, len(t))
	for k := range t {
		res[k] = v[k] - e.at(t[k])
	}
	from := len(p.t)
	var ss float64
	if keep := inliers(res, noiseV); keep != nil {
		for _, k := range keep {
			p.t, p.v = append(p.t, t[k]), append(p.v, v[k])
			ss += res[k] * res[k]
		}
	} else {
		p.t, p.v = append(p.t, t...), append(p.v, v...)
		for _, r := range res {
			ss += r * r
		}
	}
	p.spans = append(p.spans, poolSpan{swing, from, len(p.t), math.Sqrt(ss / float64(len(p.t)-from))})
}

// jointTau fits one time constant to the pooled pulses of the given swings at once, each
// pulse with its own level and amplitude: v = a_k + b_k exp(−(t − t0_k)/tau). For a given
// tau the a_k and b_k are a straight-line regression on exp(−(t − t0_k)/tau), so the
// least-squares problem is a search in tau alone (variable projection, Golub and Pereyra
// 1973), by golden section on ln tau within a factor 8 of guess. Its standard error
// comes from the curvature of the residual sum of squares, var(k) = 2σ²/RSS”(k) with
// k = 1/tau and σ² = RSS/(N − 2P − 1).
//
// Pulses with few samples each are where this matters: a separate three-parameter fit of
// each is biased, and so is any average of them; the joint fit shares the one parameter
// they have in common.
func jointTau(p *pulsePool, swings map[int]bool, guess float64) (tau, se float64, ok bool) {
	// Pulses whose own fit is far worse than most (a spike the detector took for the
	// trough, a pulse cut short by a gap) stay out.
	var rmss []float64
	for _, s := range p.spans {
		if swings[s.swing] {
			rmss = append(rmss, s.rms)
		}
	}
	worst := 3 * stats.Median(rmss)
	q := &pulsePool{}
	for _, s := range p.spans {
		if swings[s.swing] && s.to-s.from >= 3 && s.rms <= worst {
			from := len(q.t)
			q.t, q.v = append(q.t, p.t[s.from:s.to]...), append(q.v, p.v[s.from:s.to]...)
			q.spans = append(q.spans, poolSpan{s.swing, from, len(q.t), s.rms})
		}
	}
	k, ok := q.searchRate(guess)
	if !ok {
		return 0, 0, false
	}
	// Once more without the samples far off the joint fit (spikes that the pulse's own
	// fit could not tell, in a pulse that had many).
	res := q.residuals(k)
	abs := make([]float64, len(res))
	for i, r := range res {
		abs[i] = math.Abs(r)
	}
	if lim := 4.5 * 1.4826 * stats.Median(abs); lim > 0 {
		r := &pulsePool{}
		for _, s := range q.spans {
			from := len(r.t)
			for j := s.from; j < s.to; j++ {
				if abs[j] <= lim {
					r.t, r.v = append(r.t, q.t[j]), append(r.v, q.v[j])
				}
			}
			if len(r.t)-from >= 3 {
				r.spans = append(r.spans, poolSpan{s.swing, from, len(r.t), s.rms})
			} else {
				r.t, r.v = r.t[:from], r.v[:from]
			}
		}
		if len(r.t) < len(q.t) {
			if k2, ok2 := r.searchRate(1 / k); ok2 {
				q, k = r, k2
			}
		}
	}
	n := len(q.t)
	dof := n - 2*len(q.spans) - 1
	f0 := q.rss(k)
	h := 1e-3 * k
	d2 := (q.rss(k+h) - 2*f0 + q.rss(k-h)) / (h * h)
	if dof < 3 || !(d2 > 0) {
		return 0, 0, false
	}
	sk := math.Sqrt(2 * f0 / float64(dof) / d2)
	return 1 / k, sk / (k * k), true
}

// line is the regression of a pulse's samples on x = exp(−k (t − t0)): v = a + b x.
func (p *pulsePool) line(s poolSpan, k float64) (a, b, rss float64) {
	t, v := p.t[s.from:s.to], p.v[s.from:s.to]
	var sx, sy, sxx, sxy, syy float64
	for j := range t {
		x := math.Exp(-k * (t[j] - t[0]))
		sx += x
		sy += v[j]
		sxx += x * x
		sxy += x * v[j]
		syy += v[j] * v[j]
	}
	m := float64(len(t))
	vxx, vxy, vyy := sxx-sx*sx/m, sxy-sx*sy/m, syy-sy*sy/m
	if vxx > 1e-300 {
		b = vxy / vxx
		vyy -= vxy * b
	}
	a = (sy - b*sx) / m
	return a, b, math.Max(vyy, 0)
}

func (p *pulsePool) rss(k float64) float64 {
	var sum float64
	for _, s := range p.spans {
		_, _, r := p.line(s, k)
		sum += r
	}
	return sum
}

func (p *pulsePool) residuals(k float64) []float64 {
	out := make([]float64, len(p.t))
	for _, s := range p.spans {
		a, b, _ := p.line(s, k)
		t0 := p.t[s.from]
		for j := s.from; j < s.to; j++ {
			out[j] = p.v[j] - a - b*math.Exp(-k*(p.t[j]-t0))
		}
	}
	return out
}

// searchRate minimises rss over the rate k = 1/tau by golden section on ln k, within a
// factor 8 of 1/guess; false when the pool is too small or the minimum is at the edge.
func (p *pulsePool) searchRate(guess float64) (float64, bool) {
	if len(p.spans) == 0 || len(p.t)-2*len(p.spans)-1 < 3 || !(guess > 0) {
		return 0, false
	}
	lo0, hi0 := math.Log(1/guess)-math.Log(8), math.Log(1/guess)+math.Log(8)
	lo, hi := lo0, hi0
	const g = 0.6180339887498949
	a, b := hi-g*(hi-lo), lo+g*(hi-lo)
	fa, fb := p.rss(math.Exp(a)), p.rss(math.Exp(b))
	for it := 0; it < 80 && hi-lo > 1e-9; it++ {
		if fa < fb {
			hi, b, fb = b, a, fa
			a = hi - g*(hi-lo)
			fa = p.rss(math.Exp(a))
		} else {
			lo, a, fa = a, b, fb
			b = lo + g*(hi-lo)
			fb = p.rss(math.Exp(b))
		}
	}
	u := (lo + hi) / 2
	if u-lo0 < 1e-3 || hi0-u < 1e-3 {
		return 0, false
	}
	return math.Exp(u), true
}

// lineResult is y = a + b x with standard errors.
type lineResult struct {
	ok     bool
	a, aSD float64
	b, bSD float64
}

// fitLine fits a robust straight line (Huber), for drifts over the day.
func fitLine(x, y []float64) lineResult {
	if len(x) < 3 {
		return lineResult{}
	}
	l, err := fit.RobustLine(x, y)
	if err != nil {
		return lineResult{}
	}
	return lineResult{ok: true, a: l.Intercept.Value, aSD: l.Intercept.SD, b: l.Slope.Value, bSD: l.Slope.SD}
}

// diodeResult is a fitted single-diode cell.
type diodeResult struct {
	ok                 bool
	p, sd              fit.DiodeParams
	vt                 float64
	voc, isc, vmp, pmp float64
	rmse               float64
	partial            bool // the solver did not converge: Rs, Rsh (and I0, N) not determined
}

// fitDiode fits the single-diode model to the traced points (volts, amperes).
func fitDiode(v, i []float64, ns int, tK float64) diodeResult {
	if len(v) < 6 {
		return diodeResult{}
	}
	f, err := fit.SingleDiode(v, i, ns, tK, nil)
	if f == nil {
		return diodeResult{}
	}
	d := diodeResult{ok: true, p: f.Params, sd: f.SD, vt: f.Vt, voc: f.Voc, isc: f.Isc,
		vmp: f.Vmp, pmp: f.Pmp, rmse: f.RMSE}
	if err == nil && !plausibleDiode(f.Params.N, f.Voc, v, i) {
		return diodeResult{}
	}
	if err != nil {
		// A near-ideal cell drives Rs to 0 and Rsh to infinity, where the solver stops
		// without converging: the curve (Isc, Voc, the maximum power point) is still
		// determined when it fits the points to 1 % of the current; Rs and Rsh are not.
		top := 0.0
		for _, x := range i {
			top = math.Max(top, math.Abs(x))
		}
		if !errors.Is(err, fit.ErrNotConverged) || !(f.RMSE < 0.01*top) {
			return diodeResult{}
		}
		d.partial = true
	}
	return d
}

// photocurrent returns the photocurrent that puts the point (v, i) on the fitted cell's
// curve, the other parameters held: the implicit model residual plus Iph.
func (d *diodeResult) photocurrent(v, i float64) float64 {
	// Implicit = Iph - I0 (exp(u/a) - 1) - u/Rsh - i, so the photocurrent that makes it
	// zero is Iph - Implicit.
	return d.p.Iph - d.p.Implicit(v, i, d.vt)
}

// iscFor returns the short-circuit current of the fitted cell with photocurrent iph.
func (d *diodeResult) iscFor(iph float64) float64 {
	p := d.p
	p.Iph = iph
	return p.Isc(d.vt)
}

// plausibleDiode rejects a single-diode fit that no real cell gives: an ideality factor
// per cell outside 0.5 to 10 (real cells lie between about 1 and 2, amorphous and
// multi-junction ones per cell somewhat above; from memory), or an open-circuit voltage
// below a traced point that still delivers current (the cell gives none beyond Voc). A
// fit to a short span far from Voc can reach either, trading I0 against n.
func plausibleDiode(n, voc float64, v, i []float64) bool {
	if !(n >= 0.5 && n <= 10) || math.IsNaN(voc) {
		return false
	}
	top := 0.0
	for _, x := range i {
		top = math.Max(top, x)
	}
	for k := range v {
		if v[k] > voc && i[k] > 0.05*top {
			return false
		}
	}
	return true
}
