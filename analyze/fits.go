package analyze

import (
	"errors"
	"math"

	"capcycle/analyze/fit"
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
func fitExp(t, v []float64, noiseV float64) expResult {
	if len(t) < 5 {
		return expResult{}
	}
	f, err := fit.ExpApproach(t, v)
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
