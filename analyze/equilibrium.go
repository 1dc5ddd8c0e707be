package analyze

import (
	"fmt"
	"math"

	"capcycle/analyze/units"

	"capcycle/analyze/analysis"
)

// measureEquilibrium: when the capture ends on a rise that levels off below the trigger
// (or there are no fires at all), the asymptote of its exponential approach, and how long
// the approach takes to come within 1 %. Both nil when the rise is still climbing steadily
// (its time constant over three times its span) or heads for on.
//
// An exponential approach is exact for a cell that acts as a current source against
// resistive drains, and near the end of any approach (the current balance linearised
// about the equilibrium); a single-diode cell whose current falls off near its open
// circuit voltage bends the approach away from it, and an exponential fitted to the
// whole rise then extrapolates to the wrong asymptote with a confident SD. So the rise's
// later half is fitted alone as well (the nearer the end, the nearer the linearised
// approach), and the difference between the two asymptotes, beyond what their noise
// explains, is a model-discrepancy component of the uncertainty (JCGM 100:2008, F.2.4.5
// treats a correction whose size is uncertain this way). When that discrepancy exceeds
// the distance still to go from the last level to the asymptote, the capture cannot
// tell where the voltage settles: nil, with a note; likewise when the asymptote lies
// above the cell's declared open-circuit voltage.
func measureEquilibrium(w *swings, on *analysis.Estimate, n *notes) (*analysis.Estimate, *analysis.Settling) {
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
	veq := est(e.vinf, e.vinfSD, analysis.OriginFitted)
	if tl := inf.expTail; tl.ok && veq != nil && veq.SD != nil {
		// The later half is part of the whole, so from noise alone the two asymptotes
		// differ with variance sd_half² − sd_whole²; only the excess is the model's.
		disc := math.Abs(tl.vinf - e.vinf)
		model := math.Sqrt(math.Max(0, disc*disc-(tl.vinfSD*tl.vinfSD-e.vinfSD*e.vinfSD)))
		if togo := math.Abs(e.vinf - s.EndV); model > togo+2*e.vinfSD {
			n.add(fmt.Sprintf("the last rise is not a clean exponential approach (the whole rise and its later half settle %s apart, more than the %s still to go): where the voltage settles is not determined", units.Format(disc, units.Volt), units.Format(togo, units.Volt)))
			return nil, nil
		}
		veq = withBudget(veq,
			analysis.Component{Source: analysis.SourceFit, U: e.vinfSD},
			analysis.Component{Source: analysis.SourceModel, U: model})
	}
	if voc := w.opts.Declared.VocV; voc > 0 && veq != nil && veq.Value-2*sdOf(veq) > voc {
		// A cell charges no higher than its open-circuit voltage, which is highest at
		// its rated light: an asymptote above it is the exponential's, not the circuit's.
		n.add(fmt.Sprintf("the last rise's exponential settles at %s, above the cell's rated open-circuit voltage %s: the approach is not exponential and where the voltage settles is not determined", units.Format(veq.Value, units.Volt), units.Format(voc, units.Volt)))
		return nil, nil
	}
	st := &analysis.Settling{TauS: est(e.tau, e.tauSD, analysis.OriginFitted)}
	if d := math.Abs(e.v0 - e.vinf); d > 0 && e.vinf != 0 {
		t := e.tau * math.Log(d/(0.01*math.Abs(e.vinf)))
		st.Within1PctS = ptr(math.Max(t, 0))
	}
	return veq, st
}
