package analyze

import (
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
	for k, c := range cs {
		fv = append(fv, c.FireV)
		rv = append(rv, c.ResetV)
		ft = append(ft, c.FireS/3600)
		pul = append(pul, c.PulseS())
		if k > 0 && c.ChargeS == c.ChargeS { // a charge time: no gap or slow fall between
			per = append(per, c.FireS-cs[k-1].FireS)
		}
	}
	tf.OnV = spread(fv, analysis.OriginMeasured)
	tf.OffV = spread(rv, analysis.OriginMeasured)
	tf.PulseS = spread(pul, analysis.OriginMeasured)
	if len(per) > 0 {
		tf.PeriodS = spread(per, analysis.OriginMeasured)
	}
	if len(fv) >= 5 && (ft[len(ft)-1]-ft[0]) > 0 {
		if l := fitLine(ft, fv); l.ok {
			tf.OnDriftVPerH = est(l.b, l.bSD, analysis.OriginFitted)
		}
	}
	return tf
}
