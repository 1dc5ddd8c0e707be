package analyze

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/stats"
)

// The overlay traces are typical cycles in a window that suits them: not the first charge
// from empty (20 s here, twice the others), not the first after a dark stretch, and each
// from 1.5 median charge times before the fire to 4 median pulses after it.
func TestTracesTypical(t *testing.T) {
	c := wrenRC
	c.V0 = 0
	light := []detecttest.Light{{FromS: 0, IA: 0.6e-3}, {FromS: 200, IA: 0}, {FromS: 500, IA: 0.6e-3}}
	ts, vs, _ := detecttest.Generate(c, light, 800, detecttest.Sampling{DtS: 0.02}, detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 3})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.C}})
	var charges, pulses []float64
	for _, cy := range res.Cycles {
		pulses = append(pulses, cy.PulseS)
		if cy.ChargeS != nil {
			charges = append(charges, *cy.ChargeS)
		}
	}
	if len(res.Cycles) < 10 || len(res.Traces) != 5 {
		t.Fatalf("%d cycles, %d traces; want at least 10 and 5", len(res.Cycles), len(res.Traces))
	}
	before, after := 1.5*stats.Median(charges), 4*stats.Median(pulses)
	for k, tr := range res.Traces {
		first, last := tr.TS[0], tr.TS[len(tr.TS)-1]
		if first < -before-0.02 || last > after+0.02 {
			t.Errorf("trace %d spans %.2f to %.2f s, want within %.2f to %.2f s", k, first, last, -before, after)
		}
		if first > -0.5*before || !(last > 0) {
			t.Errorf("trace %d spans %.2f to %.2f s: it does not show the charge and the pulse", k, first, last)
		}
		// the voltage 1.5 charge times before a typical fire is on the previous cycle,
		// far above 0 V (the empty start)
		if v := tr.V[0]; math.Abs(v) < 1 {
			t.Errorf("trace %d starts at %.3f V: the charge from empty", k, v)
		}
	}
}
