package analyze

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
)

var wrenRC = detecttest.Circuit{C: 4.7e-3, RLeakOhm: 1e6, RLoadOhm: 20, OnV: 2.8, OffV: 1.6, V0: 1.0}

func within(t *testing.T, what string, e *analysis.Estimate, want, rel float64) {
	t.Helper()
	if e == nil {
		t.Errorf("%s: null, want %.4g", what, want)
		return
	}
	if math.Abs(e.Value-want) > rel*math.Abs(want) {
		t.Errorf("%s = %.5g, want %.5g within %.1f %%", what, e.Value, want, rel*100)
	}
}

// Fires of a resistive load: the pulse's time constant within 2 % of C (R_load || R_leak)
// across light levels, noise and ADC resolutions.
func TestLoadTau(t *testing.T) {
	for _, ia := range []float64{0.2e-3, 1e-3, 3e-3} {
		for _, a := range []detecttest.ADC{{}, {NoiseV: 2e-3, Seed: 1}, {NoiseV: 1e-3, Bits: 10, FullV: 5, Seed: 2}, {NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 3}} {
			ts, vs, tr := detecttest.Generate(wrenRC, []detecttest.Light{{FromS: 0, IA: ia}}, 200, detecttest.Sampling{DtS: 0.005}, a)
			res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: wrenRC.C}})
			if len(res.Cycles) < len(tr.ResetS)-1 {
				t.Errorf("I=%g %+v: %d cycles, want %d", ia, a, len(res.Cycles), len(tr.ResetS))
			}
			within(t, "tau_load", res.Fit.Load.TauS, tr.TauLoadS, 0.02)
			if res.Fit.Load.Resistive == nil || !*res.Fit.Load.Resistive {
				t.Errorf("I=%g %+v: a resistor not recognised as resistive", ia, a)
			}
			within(t, "load ohm", res.Fit.Load.Ohm, wrenRC.RLoadOhm, 0.02)
			within(t, "on_v", res.Fit.Trigger.OnV, wrenRC.OnV, 0.01)
			within(t, "off_v", res.Fit.Trigger.OffV, wrenRC.OffV, 0.02)
		}
	}
}

// A dark stretch: the decay's time constant within 5 % of C R_leak, and the quiescent
// current back.
func TestLeakTau(t *testing.T) {
	c := wrenRC
	c.IQA = 0.2e-6
	light := []detecttest.Light{{FromS: 0, IA: 0.5e-3}, {FromS: 120, IA: 0}, {FromS: 7320, IA: 0.5e-3}}
	for _, a := range []detecttest.ADC{{}, {NoiseV: 2e-3, Seed: 4}, {NoiseV: 1e-3, Bits: 10, FullV: 5, Seed: 5}} {
		ts, vs, tr := detecttest.Generate(c, light, 7500, detecttest.Sampling{DtS: 0.05}, a)
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.C}})
		within(t, "tau_leak", res.Fit.Leak.TauS, tr.TauLeakS, 0.05)
		if res.Fit.Leak.Method != "dark-decay" {
			t.Errorf("leak method %q", res.Fit.Leak.Method)
		}
		within(t, "leak ohm", res.Fit.Leak.Ohm, c.RLeakOhm, 0.05)
		t.Logf("%+v: tau %.1f (true %.1f) q %v notes %v", a, res.Fit.Leak.TauS.Value, tr.TauLeakS, res.Fit.Leak.QuiescentA, res.Notes)
	}
}

// Commutation spikes of up to ±0.15 V on a third of the samples in every pulse (a brushed
// motor's, common practice, no source): the samples far off the first fit are dropped,
// and the pulse's time constant still comes within 2 %.
func TestLoadTauWithSpikes(t *testing.T) {
	for _, ia := range []float64{1e-3, 5e-3} {
		for _, a := range []detecttest.ADC{{NoiseV: 1e-3, Bits: 10, FullV: 5, SpikeV: 0.15, Seed: 3}, {NoiseV: 2e-3, Bits: 12, FullV: 5, SpikeV: 0.15, Seed: 4}} {
			ts, vs, tr := detecttest.Generate(wrenRC, []detecttest.Light{{FromS: 0, IA: ia}}, 300, detecttest.Sampling{DtS: 0.002}, a)
			res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: wrenRC.C}})
			if len(res.Cycles) < len(tr.ResetS)-1 {
				t.Errorf("I=%g %+v: %d cycles, want %d", ia, a, len(res.Cycles), len(tr.ResetS))
			}
			within(t, "tau_load", res.Fit.Load.TauS, tr.TauLoadS, 0.02)
		}
	}
}

// Sparse samples (10 ms, some ten in a pulse of a 94 ms time constant) and 5 mV of noise:
// each pulse's time constant is poorly known and scatters widely, yet their combination
// is not biased (weighting each by its own 1/sd² would favour the ones that came out
// small): within 3 % and within three of its standard errors.
func TestLoadTauSparseNoisy(t *testing.T) {
	for _, ia := range []float64{1e-3, 5e-3} {
		a := detecttest.ADC{NoiseV: 5e-3, Bits: 10, FullV: 5, Seed: 2}
		ts, vs, tr := detecttest.Generate(wrenRC, []detecttest.Light{{FromS: 0, IA: ia}}, 300, detecttest.Sampling{DtS: 0.01}, a)
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: wrenRC.C}})
		e := res.Fit.Load.TauS
		within(t, "tau_load", e, tr.TauLoadS, 0.03)
		if e != nil && e.SD != nil && math.Abs(e.Value-tr.TauLoadS) > 3**e.SD {
			t.Errorf("I=%g: tau %.4g ± %.2g s, true %.4g s", ia, e.Value, *e.SD, tr.TauLoadS)
		}
	}
}
