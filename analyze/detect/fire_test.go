package detect

import (
	"math"
	"sort"
	"testing"

	"capcycle/analyze/detect/detecttest"
)

// On a steep charge (about 40 mV per sample at 50 Hz) the fire voltage is the level of
// the last sample before the fall, read to within one ADC step: not the mean of the last
// two samples, which reads half a sample's rise low.
func TestFireVoltageSteepCharge(t *testing.T) {
	c := detecttest.Circuit{C: 4.7e-3, RLeakOhm: 1e6, RLoadOhm: 20, OnV: 2.8, OffV: 1.6, V0: 1.6}
	lsb := 5.0 / 4096
	ts, vs, tr := detecttest.Generate(c, []detecttest.Light{{FromS: 0, IA: 10e-3}}, 60, detecttest.Sampling{DtS: 0.02}, detecttest.ADC{NoiseV: 0.5e-3, Bits: 12, FullV: 5, Seed: 41})
	d := New(nil)
	d.Push(ts, vs)
	s := d.Finish()
	if len(s.Cycles) < 5 {
		t.Fatalf("%d cycles, want at least 5 (the generator had %d fires)", len(s.Cycles), len(tr.FireS))
	}
	var diffs []float64
	for _, cy := range s.Cycles {
		i := sort.SearchFloat64s(ts, cy.FireS+1e-9) - 1 // the sample at the onset
		if i < 1 {
			continue
		}
		diffs = append(diffs, cy.FireV-vs[i])
	}
	sort.Float64s(diffs)
	if m := diffs[len(diffs)/2]; math.Abs(m) > lsb {
		t.Errorf("median fire_v - the last sample before the fall = %.4f V, want within one step (%.4f V)", m, lsb)
	}
}
