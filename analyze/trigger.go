package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
)

// measureTrigger: on_v and off_v are the mean fire and reset voltages of the full
// cycles, period_s and pulse_s the mean interval and pulse width; each one's SD is the
// standard error of the mean and its Spread the cycle-to-cycle standard deviation (see
// spread, pulseWidth and meanPeriod). kind is the detector's reading of the trigger;
// info holds where each fall's events were placed (see events.go) and spacing is the
// sample spacing, for the events that were not.
func measureTrigger(kind string, cs []detect.Cycle, info []swingInfo, spacing float64) analysis.TriggerFit {
	tf := analysis.TriggerFit{Kind: analysis.TriggerKind(kind)}
	if len(cs) == 0 {
		return tf
	}
	var fv, rv, ft, per, pul []float64
	runs, chained := 0, false // runs of consecutive periods
	var uf2, ur2 float64      // the events' timing variances, summed
	fitted := 0               // fires placed where two fitted curves meet
	for k, c := range cs {
		if c.Swing >= 0 && c.Swing < len(info) {
			uf2 += timingVar(info[c.Swing].fire, spacing)
			ur2 += timingVar(info[c.Swing].reset, spacing)
			if f := info[c.Swing].fire; f.ok && f.fitted {
				fitted++
			}
		}
		fv = append(fv, c.FireV)
		rv = append(rv, c.ResetV)
		ft = append(ft, c.FireS/3600)
		pul = append(pul, c.PulseS())
		if k > 0 && c.ChargeS == c.ChargeS { // a charge time: no gap or slow fall between
			if !chained {
				runs++
			}
			per = append(per, c.FireS-cs[k-1].FireS)
		}
		chained = k > 0 && c.ChargeS == c.ChargeS
	}
	tf.OnV = spread(fv, analysis.OriginMeasured)
	tf.OffV = spread(rv, analysis.OriginMeasured)
	n := float64(len(cs))
	tf.PulseS = pulseWidth(pul, (uf2+ur2)/n)
	if len(per) > 0 {
		tf.PeriodS = meanPeriod(per, runs, tf.PulseS, float64(fitted)/n, uf2/n)
	}
	if len(fv) >= 5 && (ft[len(ft)-1]-ft[0]) > 0 {
		if l := fitLine(ft, fv); l.ok {
			tf.OnDriftVPerH = est(l.b, l.bSD, analysis.OriginFitted)
		}
	}
	return tf
}

// meanPeriod is the mean interval between fires, from the periods per (in runs of
// consecutive fires). Its Spread is the cycle-to-cycle SD; its standard error is not
// that SD over sqrt(n): the periods of a run add up to the time from its first fire to
// its last, so their mean errs only by the timing of those two fires, and
// SD = sqrt(2 runs) u_t / n. The fire's timing uncertainty u_t is bounded by the pulse
// widths' spread over sqrt(2) (a pulse width is the difference of two such times, a fire
// and a reset; any true variation of the pulses only makes the bound larger) for the
// share fitted of the fires placed where two fitted curves meet, and is dt/sqrt(12) for
// those placed at the middle of their sample interval (uf2, the mean over all fires of
// that variance, 0 for the fitted ones).
func meanPeriod(per []float64, runs int, pulse *analysis.Estimate, fitted, uf2 float64) *analysis.Estimate {
	e := spread(per, analysis.OriginMeasured)
	if e == nil || e.SD == nil || pulse == nil || pulse.Spread == nil || runs < 1 {
		return e
	}
	ut := math.Sqrt(fitted**pulse.Spread**pulse.Spread/2 + uf2)
	se := math.Sqrt(2*float64(runs)) * ut / float64(len(per))
	if !(se > 0) {
		return e
	}
	sp := e.Spread
	e = withBudget(e, analysis.Component{Source: analysis.SourceTiming, U: se})
	e.Spread = sp
	return e
}

// timingVar is the variance of an event's time: dt²/12 for one placed at the middle of
// its sample interval (or left at a sample, with the sample spacing for dt), where it
// is equally likely to lie anywhere in the interval (rectangular, JCGM 100:2008, 4.3.7);
// 0 for one where two fitted curves meet (its small error shows in the cycles' spread).
func timingVar(l located, spacing float64) float64 {
	switch {
	case l.ok && l.fitted:
		return 0
	case l.ok:
		return l.dt * l.dt / 12
	}
	return spacing * spacing / 12
}

// pulseWidth is the mean pulse width with its standard error. Each width is the
// difference of two event times, each uncertain by its sample interval where it was not
// fitted (u2, the mean variance of a width from that). When the sampling's phase
// changes from cycle to cycle those errors are independent and show in the spread of
// the widths, and the mean averages them out; when it does not (a period that is a
// whole number of sample intervals) they are the same in every cycle, the widths come
// out alike, and the mean keeps them. The part the spread does not show,
// sqrt(max(0, u2 − spread²)), is that common error, added as a timing component.
func pulseWidth(pul []float64, u2 float64) *analysis.Estimate {
	e := spread(pul, analysis.OriginMeasured)
	if e == nil || e.SD == nil || !(u2 > 0) {
		return e
	}
	common := u2 - *e.Spread**e.Spread
	if !(common > 0) {
		return e
	}
	sp := e.Spread
	e = withBudget(e, analysis.Component{Source: analysis.SourceFit, U: *e.SD},
		analysis.Component{Source: analysis.SourceTiming, U: math.Sqrt(common)})
	e.Spread = sp
	return e
}
