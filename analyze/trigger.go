package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
)

// measureTrigger: on_v and off_v are the mean fire and reset voltages of the full
// cycles, period_s and pulse_s the mean interval and pulse width; each one's SD is the
// standard error of the mean and its Spread the cycle-to-cycle standard deviation (see
// spread). kind is the detector's reading of the trigger.
func measureTrigger(kind string, cs []detect.Cycle) analysis.TriggerFit {
	tf := analysis.TriggerFit{Kind: analysis.TriggerKind(kind)}
	if len(cs) == 0 {
		return tf
	}
	var fv, rv, ft, per, pul []float64
	runs, chained := 0, false // runs of consecutive periods
	for k, c := range cs {
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
	tf.PulseS = spread(pul, analysis.OriginMeasured)
	if len(per) > 0 {
		tf.PeriodS = meanPeriod(per, runs, tf.PulseS)
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
// and a reset; any true variation of the pulses only makes the bound larger).
func meanPeriod(per []float64, runs int, pulse *analysis.Estimate) *analysis.Estimate {
	e := spread(per, analysis.OriginMeasured)
	if e == nil || e.SD == nil || pulse == nil || pulse.Spread == nil || runs < 1 {
		return e
	}
	ut := *pulse.Spread / math.Sqrt2
	se := math.Sqrt(2*float64(runs)) * ut / float64(len(per))
	if se > *e.SD || !(se > 0) {
		return e
	}
	sp := e.Spread
	e = withBudget(e, analysis.Component{Source: analysis.SourceTiming, U: se})
	e.Spread = sp
	return e
}
