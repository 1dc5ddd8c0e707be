package analyze

import (
	"math"

	"capcycle/analyze/analysis"
)

// measureEquilibrium: when the capture ends on a rise that levels off below the trigger
// (or there are no fires at all), the asymptote of its exponential approach, and how long
// the approach takes to come within 1 %. Both nil when the rise is still climbing steadily
// (its time constant over three times its span) or heads for on.
func measureEquilibrium(w *swings, on *analysis.Estimate) (*analysis.Estimate, *analysis.Settling) {
	sw := w.sum.Swings
	if len(sw) == 0 {
		return nil, nil
	}
	s, inf := w.at(len(sw) - 1)
	if !s.Up || !inf.exp.ok {
		return nil, nil
	}
	e := inf.exp
	span := s.EndS - s.StartS
	if !(e.vinf > s.StartV) || e.tau > 3*span {
		return nil, nil // still rising steadily: where it would settle is not determined
	}
	if on != nil && e.vinf >= on.Value {
		return nil, nil // it is heading for the trigger, not settling
	}
	st := &analysis.Settling{TauS: est(e.tau, e.tauSD, analysis.OriginFitted)}
	if d := math.Abs(e.v0 - e.vinf); d > 0 && e.vinf != 0 {
		t := e.tau * math.Log(d/(0.01*math.Abs(e.vinf)))
		st.Within1PctS = ptr(math.Max(t, 0))
	}
	return est(e.vinf, e.vinfSD, analysis.OriginFitted), st
}
