package analyze

import (
	"fmt"
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// decayFit is what the slow decays say about all the drains together, which needs no
// capacitance: their time constant and, from a dark decay, the constant drain over C.
type decayFit struct {
	tauS   *analysis.Estimate // nil: no decay fitted
	method analysis.LeakMethod
	// tau is tauS's value (0 unknown); drift the constant drain over C in V/s (NaN
	// unknown) with its standard error driftSD.
	tau, drift, driftSD float64
}

// dark reports whether the decay is a dark decay (not a plateau approach).
func (d decayFit) dark() bool { return d.tau > 0 && d.method == analysis.LeakDarkDecay }

// measureDecay finds the total time constant of the slow decays: the falls that are not
// fires, else the approach to a plateau below the trigger.
func measureDecay(w *swings, n *notes) decayFit {
	out := decayFit{drift: math.NaN()}
	var taus, sds, drifts, dsds []float64
	dusk := 0
	for i := range w.sum.Swings {
		s, inf := w.at(i)
		if s.Up || s.Fire || s.Noise || !inf.exp.ok || inf.exp.n < 8 || w.inCalibration(s) {
			continue
		}
		taus = append(taus, inf.exp.tau)
		sds = append(sds, inf.exp.tauSD)
		drifts = append(drifts, inf.exp.drift)
		dsds = append(dsds, inf.exp.driftSD)
		if late := inf.exp.t0 - s.OnsetS; late > 0.1*s.FallS() {
			dusk++
		}
	}
	if dusk > 0 {
		n.add(fmt.Sprintf("%d of %d decays sped up before they slowed (the light still fading): the leak is fitted from where the fall stopped speeding up", dusk, len(taus)))
	}
	if len(taus) > 0 {
		m, se := stats.Combine(taus, sds)
		out.tauS, out.method, out.tau = est(m, se, analysis.OriginFitted), analysis.LeakDarkDecay, m
		out.drift, out.driftSD = stats.Combine(drifts, dsds)
		return out
	}
	// No dark decay: the approach to a plateau. A rise that ends in a fire, or heads for
	// the voltage the circuit fires at, approaches no plateau: its levelling off is the
	// cell's own slope (a plateau trigger) or a supercapacitor's slow branch relaxing.
	onV := math.Inf(1)
	if full := w.full(); len(full) > 0 {
		var fv []float64
		for _, c := range full {
			fv = append(fv, c.FireV)
		}
		onV = stats.Mean(fv)
	}
	for i := range w.sum.Swings {
		s, inf := w.at(i)
		if !s.Up || !inf.exp.ok || inf.exp.n < 8 || inf.exp.vinf <= s.StartV || w.inCalibration(s) {
			continue
		}
		if (i+1 < len(w.sum.Swings) && w.sum.Swings[i+1].Fire) || inf.exp.vinf >= onV {
			continue
		}
		taus = append(taus, inf.exp.tau)
		sds = append(sds, inf.exp.tauSD)
	}
	if len(taus) > 0 {
		m, se := stats.Combine(taus, sds)
		out.tauS, out.method, out.tau = est(m, se, analysis.OriginFitted), analysis.LeakPlateau, m
	}
	return out
}

// measureLeak turns the decay into the leak: its time constant and, with the
// capacitance, the resistance with the probe divider's known share taken out, and the
// constant drain in amperes.
func measureLeak(d decayFit, capF, probeOhm float64, n *notes) analysis.LeakFit {
	lf := analysis.LeakFit{TauS: d.tauS, Method: d.method}
	if lf.TauS == nil {
		return lf
	}
	if probeOhm > 0 {
		lf.ProbeOhm = &analysis.Estimate{Value: probeOhm, Origin: analysis.OriginDeclared}
	}
	if capF <= 0 {
		return lf
	}
	rt := lf.TauS.Value / capF
	rtsd := sdOf(lf.TauS) / capF
	if probeOhm > 0 {
		if rt >= probeOhm*0.999 {
			n.add("the probe divider alone explains the decay: no further leakage resistance is seen")
		} else {
			r := 1 / (1/rt - 1/probeOhm)
			lf.Ohm = est(r, rtsd*(r/rt)*(r/rt), analysis.OriginFitted)
		}
	} else {
		lf.Ohm = est(rt, rtsd, analysis.OriginFitted)
	}
	if d.method == analysis.LeakDarkDecay && !math.IsNaN(d.drift) {
		if d.drift >= 0 {
			lf.QuiescentA = est(d.drift*capF, d.driftSD*capF, analysis.OriginFitted)
		} else {
			n.add("the decays level off above zero: some light or charge was still arriving, so the quiescent current is not determined")
		}
	}
	return lf
}

// leakPlot returns the longest kept decay and its fitted curve, over the fitted stretch
// only (see darkPart): before it the light was still fading, after it the capacitor sat
// at its floor. Both nil when no decay was kept.
func leakPlot(w *swings) (tr, md *analysis.Trace) {
	var best *keptSwing
	for k := range w.col.decay {
		d := &w.col.decay[k]
		s := &w.sum.Swings[d.index]
		if s.Fire || !w.info[d.index].exp.ok {
			continue
		}
		if best == nil || d.dur > best.dur {
			best = d
		}
	}
	if best == nil {
		return nil, nil
	}
	e := w.info[best.index].exp
	s := &w.sum.Swings[best.index]
	tr = &analysis.Trace{Label: "decay", TS: []float64{}, V: []float64{}}
	md = &analysis.Trace{Label: "fit", TS: []float64{}, V: []float64{}}
	for _, p := range compact(best.pts, 400) {
		if t := float64(p.t); t < s.OnsetS || t < e.t0 || t > e.t1 {
			continue
		}
		tr.TS = append(tr.TS, float64(p.t)-s.OnsetS)
		tr.V = append(tr.V, float64(p.v))
		md.TS = append(md.TS, float64(p.t)-s.OnsetS)
		md.V = append(md.V, e.at(float64(p.t)))
	}
	return tr, md
}
