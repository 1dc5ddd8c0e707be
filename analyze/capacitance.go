package analyze

import (
	"fmt"
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// measureCapacitance: measured from the calibration stretch when there is one (a decay
// through the known resistor, the leak's own decay taken out), else from the
// load-current channel at every fire, else the declared value; nil when none is known.
func measureCapacitance(w *swings, d *analysis.Declared, decay decayFit, n *notes) *analysis.Capacity {
	if c := calibrationCap(w, d, decay, n); c != nil {
		return c
	}
	if c := currentChannelCap(w, n); c != nil {
		return c
	}
	if !d.CapKnown() {
		return nil
	}
	origin := d.CapOrigin
	if origin == "" {
		origin = analysis.OriginDeclared
	}
	return &analysis.Capacity{F: analysis.Estimate{Value: d.CapF, Origin: origin}, Tol: d.CapTol}
}

// calibrationCap: 1/tau = 1/(R_cal C) + 1/tau_leak over the calibration stretch.
func calibrationCap(w *swings, d *analysis.Declared, decay decayFit, n *notes) *analysis.Capacity {
	cw := w.cal
	if !cw.on || len(cw.t) < 8 {
		return nil
	}
	e := fitExp(cw.t, cw.v, w.sum.NoiseV)
	if e.ok {
		g := 1 / e.tau
		if decay.tau > 0 {
			g -= 1 / decay.tau
		}
		if g > 0 {
			c := 1 / (g * d.Calibration.ResistorOhm)
			return &analysis.Capacity{F: *est(c, c*e.tauSD/e.tau, analysis.OriginMeasured), Method: analysis.CapCalibrationRes}
		}
	}
	n.add("the calibration stretch did not give a capacitance (no clean exponential decay)")
	return nil
}

// currentChannelCap: the median of the pulses' C = Q/ΔV (see pulseCap), its standard
// error that of a median of normal scatter (1.2533 sd/√n); it needs three pulses.
func currentChannelCap(w *swings, n *notes) *analysis.Capacity {
	full := w.full()
	if w.chg == nil || len(full) == 0 {
		return nil
	}
	var cs []float64
	for _, cy := range full {
		if _, inf := w.at(cy.Swing); inf.capF > 0 {
			cs = append(cs, inf.capF)
		}
	}
	if len(cs) < 3 {
		n.add(fmt.Sprintf("the load-current column gave a capacitance on %d of %d fires, fewer than the 3 needed", len(cs), len(full)))
		return nil
	}
	c := stats.Median(cs)
	sd := 1.2533 * stats.SD(cs) / math.Sqrt(float64(len(cs)))
	return &analysis.Capacity{F: *est(c, sd, analysis.OriginMeasured), Method: analysis.CapCurrentChannel, Pulses: len(cs)}
}
