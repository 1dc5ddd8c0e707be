package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// pulseFits gathers what the full cycles' pulse fits say.
type pulseFits struct {
	taus, sds, rms []float64
	early, late    []float64 // effective resistance early and late in the pulse, Ω
	runs, runsVar  float64   // residual sign runs less their expectation, and its variance
	big, n         int       // pulses with residuals that matter, and pulses fitted
	swings         map[int]bool
}

// measureLoad: the pulse's exponential approach, per full cycle (but those in skip), combined in logarithms
// (stats.CombineScale); the joint fit of all the pulses over a shared time constant gives
// the value. With the capacitance, ohms with the slow drains taken out.
func measureLoad(w *swings, capF float64, decay decayFit, skip map[int]bool, n *notes) analysis.LoadFit {
	var lf analysis.LoadFit
	pf := gatherPulses(w, capF, skip)
	if pf.n == 0 {
		if len(w.full()) > 0 {
			n.add("the pulses have too few samples (fewer than 5) for the load's time constant")
		}
		return lf
	}
	m, se := stats.CombineScale(pf.taus, pf.sds)
	// The joint fit's standard error is the larger of its own and that of the pulses'
	// scatter (a motor's pulses differ from light to light, which no shared time
	// constant describes).
	if jt, jse, ok := jointTau(&w.col.pool, pf.swings, m); ok {
		m, se = jt, math.Max(jse, se)
	}
	lf.TauS = est(m, se, analysis.OriginFitted)
	lf.RMSResidV = ptr(stats.Median(pf.rms))
	// Not a resistor when the residuals of the exponential are systematic: far fewer
	// sign runs than chance gives, pooled over all fitted pulses (z below -4), and
	// large enough to matter in most pulses (over 0.03 % of the fall; a noise-free
	// trace shows systematic residuals of the integrator alone, some 1e-6 of the fall).
	z := 0.0
	if pf.runsVar > 0 {
		z = pf.runs / math.Sqrt(pf.runsVar)
	}
	resistive := !(z < -4 && 2*pf.big > pf.n)
	lf.Resistive = &resistive
	if capF > 0 {
		// R_pulse = tau/C is the load in parallel with the slow drains; take those out.
		r, rsd := m/capF, se/capF
		if decay.dark() {
			if rl := decay.tau / capF; rl > r {
				r2 := 1 / (1/r - 1/rl)
				rsd *= r2 / r * r2 / r
				r = r2
			}
		}
		lf.Ohm = est(r, rsd, analysis.OriginFitted)
		if len(pf.early) > 0 {
			lf.StartOhm = spread(pf.early, analysis.OriginMeasured)
			lf.EndOhm = spread(pf.late, analysis.OriginMeasured)
		}
	}
	return lf
}

// gatherPulses collects the fits of the full cycles' pulses. The effective resistance
// R = V / I with C dV/dt = I_cell − I takes the cell's current (and the slow drains) as
// they were just before the fire, from the charging slope there: it needs no model of
// the load, but it needs the capacitance.
func gatherPulses(w *swings, capF float64, skip map[int]bool) pulseFits {
	pf := pulseFits{swings: map[int]bool{}}
	for _, c := range w.full() {
		if skip[c.Swing] {
			continue
		}
		pf.swings[c.Swing] = true
		_, inf := w.at(c.Swing)
		if !inf.exp.ok {
			continue
		}
		pf.n++
		pf.taus = append(pf.taus, inf.exp.tau)
		pf.sds = append(pf.sds, inf.exp.tauSD)
		pf.rms = append(pf.rms, inf.exp.rms)
		pf.runs += inf.exp.runs - inf.exp.runsMean
		pf.runsVar += inf.exp.runsVar
		if inf.exp.rms > 3e-4*inf.fallV {
			pf.big++
		}
		if c.Swing > 0 && capF > 0 {
			pre := w.sum.Swings[c.Swing-1].EndSlopeVPerS
			if w.sum.Swings[c.Swing-1].Up && !math.IsNaN(pre) {
				i1 := capF * (pre - inf.earlySlope)
				i2 := capF * (pre - inf.lateSlope)
				if i1 > 0 && i2 > 0 && !math.IsNaN(i1+i2) {
					pf.early = append(pf.early, inf.earlyV/i1)
					pf.late = append(pf.late, inf.lateV/i2)
				}
			}
		}
	}
	return pf
}
