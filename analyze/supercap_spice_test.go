package analyze

import (
	"math"
	"os"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/fit"
	"capcycle/analyze/stats"
)

func supercapNetlist(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile("../testdata/spice/supercap-engine.cir")
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// The supercapacitor engine of testdata/spice/supercap-engine.cir (0.26 F behind 0.5 Ω
// of ESR, a 20 Ω / 50 mF second branch) in ngspice, logged at 10 Hz by a 10-bit board
// (4.88 mV steps) with 1.5 mV of noise: every fire and release within 2 samples of the
// switch's, on and off voltages within 3 ADC steps of its 2.8 V and 1.6 V thresholds
// (the release at the true minimum, before the +27 mV step of the ESR as the current
// stops), the load's time constant within 5 % of an exponential fitted to ngspice's own
// noise-free pulses, the ESR from the step, and no leak, plateau or settling voltage read into a circuit that
// fires, nor any warning.
func TestNgspiceSupercap(t *testing.T) {
	const dt = 0.1
	sc := readMotorSpice(t, supercapNetlist(t), dt, 1.5e-3, 1)
	res := RunSamples(sc.t, sc.v, &Options{Declared: analysis.Declared{CapF: 0.26}})
	if len(res.Cycles) != len(sc.fireS) {
		t.Fatalf("%d fires found, ngspice has %d", len(res.Cycles), len(sc.fireS))
	}
	for k, cy := range res.Cycles {
		if math.Abs(cy.FireS-sc.fireS[k]) > 2*dt || math.Abs(cy.ResetS-sc.resetS[k]) > 2*dt {
			t.Errorf("cycle %d: fire %.3f s reset %.3f s, ngspice %.3f s %.3f s", k, cy.FireS, cy.ResetS, sc.fireS[k], sc.resetS[k])
		}
		if math.Abs(cy.FireV-2.8) > 3*adcStep || math.Abs(cy.ResetV-1.6) > 3*adcStep {
			t.Errorf("cycle %d: on %.4f V off %.4f V, the switch's 2.8 V and 1.6 V", k, cy.FireV, cy.ResetV)
		}
	}
	// The truth for the load: the same exponential fitted to the noise-free pulses.
	var taus []float64
	for k := range sc.fireS {
		var ts, vs []float64
		for i := range sc.spiceT {
			if sc.spiceT[i] > sc.fireS[k] && sc.spiceT[i] < sc.resetS[k] {
				ts, vs = append(ts, sc.spiceT[i]), append(vs, sc.spiceV[i])
			}
		}
		f, err := fit.ExpApproach(ts, vs)
		if err != nil {
			t.Fatal(err)
		}
		taus = append(taus, f.Tau.Value)
	}
	within(t, "supercap tau_load", res.Fit.Load.TauS, stats.Mean(taus), 0.05)
	// The ESR from the step at each release: 0.5 Ω in the netlist, within 20 % (the step
	// of 27 mV is some 5 ADC steps, each read to a few millivolts).
	within(t, "supercap ESR", res.Fit.Load.ESROhm, 0.5, 0.2)
	if res.Fit.Leak.TauS != nil || res.EquilibriumV != nil {
		t.Errorf("leak %+v, settles at %v, for a circuit that fires", res.Fit.Leak, res.EquilibriumV)
	}
	for _, f := range res.Findings {
		if f.Severity != analysis.Info {
			t.Errorf("false %s finding: %s", f.Code, f.Message)
		}
	}
	t.Logf("tau_load %.4g s, ngspice's pulses %.4g s; R(C1+C2) = %.4g s; ESR %.3g ± %.2g Ω", res.Fit.Load.TauS.Value, stats.Mean(taus), 30.51*0.31, res.Fit.Load.ESROhm.Value, *res.Fit.Load.ESROhm.SD)
}
