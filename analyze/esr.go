package analyze

import (
	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// measureESR reads a supercapacitor's equivalent series resistance from the step up its
// terminals make when the switch lets go (detect.Swing.ReleaseStepV): the current I that
// stops flowing took I·ESR across it. The terminals read I·R at the release, R the load
// outside the capacitor, and the pulse's time constant over C is R + ESR, so
// ESR = step·(R + ESR)/(V_reset + step). The step is the mean over the full cycles that
// show one (its SD their scatter); the resistance needs the capacitance and the load's
// fit. Nothing is set when no cycle shows a step.
func measureESR(w *swings, cs []analysis.Cycle, lf *analysis.LoadFit) {
	var steps, esr []float64
	for k := range cs {
		if k >= len(w.sum.Cycles) || cs[k].Kind != analysis.CycleFull {
			continue
		}
		s, _ := w.at(w.sum.Cycles[k].Swing)
		if !(s.ReleaseStepV > 0) {
			continue
		}
		steps = append(steps, s.ReleaseStepV)
		if lf.Ohm != nil && cs[k].ResetV > 0 {
			esr = append(esr, s.ReleaseStepV*lf.Ohm.Value/(cs[k].ResetV+s.ReleaseStepV))
		}
	}
	if len(steps) < 2 {
		return
	}
	lf.ReleaseStepV = spread(steps, analysis.OriginMeasured)
	if len(esr) >= 2 && stats.Mean(esr) > 0 {
		lf.ESROhm = spread(esr, analysis.OriginMeasured)
	}
}
