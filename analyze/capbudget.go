package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
)

// The capacitance in every ohm, ampere and joule.
//
// From the voltage of one node only time constants and currents over C are measured; a
// resistance is a time constant over C, a current a rate of change of voltage times C.
// So every such value carries the capacitance's own uncertainty besides its fit's, and
// its SD is the combined standard uncertainty of the two (JCGM 100:2008, 5.1.2: the
// value is, to first order, proportional to C or to 1/C, so the capacitance's relative
// uncertainty passes on unchanged). A declared capacitance's uncertainty is its
// tolerance band taken as a rectangular distribution (JCGM 100:2008, 4.3.7): half the
// band's width over sqrt(3). Where neither the profile nor the command line gives a
// tolerance, the band is ±20 % (the usual tolerance of an aluminium electrolytic;
// common practice, no source).

// capRelU returns the capacitance's relative standard uncertainty and whether it is
// known: a measured capacitance's SD over its value, a declared one's tolerance band.
func capRelU(c *analysis.Capacity) (float64, bool) {
	if c == nil || !(c.F.Value > 0) {
		return 0, false
	}
	if capMeasured(c) {
		if c.F.SD == nil || !(*c.F.SD >= 0) {
			return 0, false
		}
		return *c.F.SD / c.F.Value, true
	}
	t := profile.DefaultTolerance
	if c.Tol != "" {
		if lt, err := profile.LookupTolerance(c.Tol); err == nil {
			t = lt
		}
	}
	return (t.MinusPct + t.PlusPct) / 2 / 100 / math.Sqrt(3), true
}

// capBudget gives every value of res that rests on the capacitance a budget of its fit's
// part and the capacitance's part, relu·|value|·sens, where sens is the value's
// sensitivity to C in relative terms (1 for a value proportional to C or to 1/C). A
// value with no fit SD is left alone: a budget of the capacitance alone would claim a
// precision the fit never gave.
//
// With a declared capacitance (rect) the 95 % interval is that of a normal fit error and
// a rectangular capacitance error together (see interval95), not ±1.96 SD: a
// rectangular distribution's 95 % lies within ±1.65 of its SD (JCGM 100:2008, G.2.3),
// and a resistance is proportional to 1/C, which makes its interval lopsided. power is
// the value's power of C (+1 or −1).
func capBudget(res *analysis.Result, relu float64, rect bool) {
	add := func(e *analysis.Estimate, sens, power float64) {
		if e == nil || e.SD == nil || len(e.Budget) > 0 {
			return
		}
		sp, fit := e.Spread, *e.SD
		uc := relu * math.Abs(e.Value) * sens
		withBudget(e, analysis.Component{Source: analysis.SourceFit, U: fit},
			analysis.Component{Source: analysis.SourceCapacitance, U: uc})
		e.Spread = sp
		if rect && e.Lo95 != nil {
			lo, hi := interval95(e.Value, fit, relu*math.Sqrt(3)*sens, power)
			e.Lo95, e.Hi95 = ptr(lo), ptr(hi)
		}
	}
	f := &res.Fit
	add(f.Load.Ohm, 1, -1)
	add(f.Load.StartOhm, 1, -1)
	add(f.Load.EndOhm, 1, -1)
	// The leak's resistance has the probe's known share taken out: R = 1/(1/R_t −
	// 1/R_probe) with R_t = tau/C, so dR/R = (R/R_t)·dR_t/R_t.
	leakSens := 1.0
	if f.Leak.Ohm != nil && f.Leak.TauS != nil && f.Leak.ProbeOhm != nil && res.Capacitance != nil {
		if rt := f.Leak.TauS.Value / res.Capacitance.F.Value; rt > 0 {
			leakSens = f.Leak.Ohm.Value / rt
		}
	}
	add(f.Leak.Ohm, leakSens, -1)
	add(f.Leak.QuiescentA, 1, 1)
	add(f.Cell.IscA, 1, 1)
	add(f.Cell.I0A, 1, 1)
	add(f.Cell.RsOhm, 1, -1)
	add(f.Cell.RshOhm, 1, -1)
}

// capMeasured says whether the capacitance was measured (its error then normal, its SD
// a standard error) rather than declared (a tolerance band).
func capMeasured(c *analysis.Capacity) bool { return c.F.Origin == analysis.OriginMeasured }

// interval95 is the 95 % interval of the true value when the estimate v errs by a
// normal fit error of SD sd and by a capacitance off its nominal value by a factor
// 1+δ, δ rectangular on [−a, a]: the truth is v·(1+δ)^p + ε, p = +1 for a value
// proportional to C (a current) and −1 for one proportional to 1/C (a resistance), so
// that a −20 % capacitor makes a resistance read 1/0.8 of its truth. The quantiles come
// from the distribution of that sum, integrated numerically over δ (the propagation of
// distributions of JCGM 101:2008, done by quadrature for this one case).
func interval95(v, sd, a, p float64) (lo, hi float64) {
	const k = 200
	centre := make([]float64, k)
	for j := range k {
		d := -a + 2*a*(float64(j)+0.5)/k
		centre[j] = v * math.Pow(1+d, p)
	}
	cdf := func(x float64) float64 {
		q := 0.0
		for _, c := range centre {
			if sd > 0 {
				q += stdNormCDF((x - c) / sd)
			} else if x >= c {
				q++
			}
		}
		return q / k
	}
	span := 4*sd + math.Abs(v)*(math.Pow(1+a, math.Abs(p))+1)
	quant := func(target float64) float64 {
		l, h := v-span, v+span
		for range 80 {
			m := 0.5 * (l + h)
			if cdf(m) < target {
				l = m
			} else {
				h = m
			}
		}
		return 0.5 * (l + h)
	}
	return quant(0.025), quant(0.975)
}

func stdNormCDF(x float64) float64 { return 0.5 * math.Erfc(-x/math.Sqrt2) }
