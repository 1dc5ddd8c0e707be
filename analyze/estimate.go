package analyze

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// spread is the mean of xs as an Estimate: SD is the standard error of the mean, Spread
// the SD across the values (cycle to cycle), and Lo95/Hi95 the 95 % interval of the mean.
//
// Successive cycles are not independent draws: the light drifts, and a period or a pulse
// width follows it. The standard error is therefore that of the mean of a first-order
// autoregressive series, SD·sqrt((1+r)/(n(1−r))) with r the lag-1 autocorrelation of
// xs when positive (the variance inflation of the mean of an AR(1) series; a textbook
// result, from memory), with r capped at 0.95 so that a trending series still gets a
// finite, wide interval rather than none.
func spread(xs []float64, origin analysis.Origin) *analysis.Estimate {
	if len(xs) == 0 {
		return nil
	}
	m := stats.Mean(xs)
	e := &analysis.Estimate{Value: m, Origin: origin}
	n := len(xs)
	if n > 1 {
		s := stats.SD(xs)
		infl := inflation(xs, m)
		se := s / math.Sqrt(float64(n)) * math.Sqrt(infl)
		e.SD, e.Spread = ptr(se), ptr(s)
		h := studentT95(float64(n)/infl-1) * se
		e.Lo95, e.Hi95 = ptr(m-h), ptr(m+h)
	}
	return e
}

// studentT95 is the two-sided 95 % quantile of Student's t with dof degrees of freedom
// (at least 1): the interval of a mean whose SD was estimated from few values (the GUM's
// coverage factor for a Type A evaluation, JCGM 100:2008, G.3).
func studentT95(dof float64) float64 {
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: math.Max(1, dof)}.Quantile(0.975)
}

// inflation is (1+r)/(1−r) for the lag-1 autocorrelation r of xs about their mean m,
// with r taken as 0 when negative or when there are fewer than 8 values (too few to
// estimate it) and capped at maxLag1.
func inflation(xs []float64, m float64) float64 {
	if len(xs) < 8 {
		return 1
	}
	var num, den float64
	for i, x := range xs {
		den += (x - m) * (x - m)
		if i > 0 {
			num += (x - m) * (xs[i-1] - m)
		}
	}
	if !(den > 0) {
		return 1
	}
	r := math.Min(num/den, maxLag1)
	if r <= 0 {
		return 1
	}
	return (1 + r) / (1 - r)
}

// maxLag1 caps the lag-1 autocorrelation in inflation.
const maxLag1 = 0.95

// withBudget sets e's SD to the root sum of squares of the components (JCGM 100:2008,
// 5.1.2, uncorrelated inputs) and its 95 % interval to ±1.96 of it, keeping the
// components that are finite and positive. It returns e (nil stays nil).
func withBudget(e *analysis.Estimate, comps ...analysis.Component) *analysis.Estimate {
	if e == nil {
		return nil
	}
	var keep []analysis.Component
	ss := 0.0
	for _, c := range comps {
		if c.U > 0 && !math.IsInf(c.U, 0) {
			keep = append(keep, c)
			ss += c.U * c.U
		}
	}
	if len(keep) == 0 {
		return e
	}
	u := math.Sqrt(ss)
	e.SD, e.Budget = ptr(u), keep
	e.Lo95, e.Hi95 = ptr(e.Value-1.96*u), ptr(e.Value+1.96*u)
	return e
}

// est makes an Estimate; an SD that is NaN or negative is left null. The 95 % interval
// is value ± 1.96 SD.
func est(v, sd float64, origin analysis.Origin) *analysis.Estimate {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	e := &analysis.Estimate{Value: v, Origin: origin}
	if sd >= 0 && !math.IsInf(sd, 0) {
		e.SD = ptr(sd)
		e.Lo95, e.Hi95 = ptr(v-1.96*sd), ptr(v+1.96*sd)
	}
	return e
}

func sdOf(e *analysis.Estimate) float64 {
	if e == nil || e.SD == nil {
		return math.NaN()
	}
	return *e.SD
}

func ptr(v float64) *float64 { return &v }
