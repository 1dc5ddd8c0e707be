package analyze

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
)

// The probe's declared share comes off the leak; the quiescent current comes back within
// its uncertainty.
func TestLeakProbeShareAndQuiescent(t *testing.T) {
	c := wrenRC // 1 MOhm in all: a 2 MOhm probe and 2 MOhm of other leakage
	c.IQA = 0.3e-6
	light := []detecttest.Light{{FromS: 0, IA: 0.5e-3}, {FromS: 100, IA: 0}}
	ts, vs, tr := detecttest.Generate(c, light, 6000, detecttest.Sampling{DtS: 0.1}, detecttest.ADC{NoiseV: 1e-3, Seed: 41})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.C, ProbeOhm: 2e6}})
	lf := res.Fit.Leak
	within(t, "tau_leak", lf.TauS, tr.TauLeakS, 0.05)
	within(t, "leak ohm besides the probe", lf.Ohm, 2e6, 0.10)
	if lf.ProbeOhm == nil || lf.ProbeOhm.Value != 2e6 || lf.ProbeOhm.Origin != "declared" {
		t.Errorf("probe %+v", lf.ProbeOhm)
	}
	if lf.QuiescentA == nil || lf.QuiescentA.SD == nil {
		t.Fatalf("quiescent %+v", lf.QuiescentA)
	}
	if d := math.Abs(lf.QuiescentA.Value - c.IQA); d > 3**lf.QuiescentA.SD+0.05*c.IQA {
		t.Errorf("quiescent %.3g ± %.2g A, true %.3g A", lf.QuiescentA.Value, *lf.QuiescentA.SD, c.IQA)
	}
}

// Without the capacitance: time constants only; ohms, amperes and joules are null.
func TestIdentifiableWithoutCapacitance(t *testing.T) {
	ts, vs, tr := detecttest.Generate(wrenRC, []detecttest.Light{{FromS: 0, IA: 1e-3}, {FromS: 60, IA: 0}}, 3000,
		detecttest.Sampling{DtS: 0.005}, detecttest.ADC{NoiseV: 1e-3, Seed: 42})
	res := RunSamples(ts, vs, nil)
	within(t, "tau_load", res.Fit.Load.TauS, tr.TauLoadS, 0.02)
	within(t, "tau_leak", res.Fit.Leak.TauS, tr.TauLeakS, 0.05)
	if res.Fit.Load.Ohm != nil || res.Fit.Leak.Ohm != nil || res.Fit.Leak.QuiescentA != nil || res.Capacitance != nil || res.Fit.Cell.IscA != nil {
		t.Errorf("values that need C: load %v leak %v q %v cap %v isc %v", res.Fit.Load.Ohm, res.Fit.Leak.Ohm, res.Fit.Leak.QuiescentA, res.Capacitance, res.Fit.Cell.IscA)
	}
	for _, c := range res.Cycles {
		if c.EnergyJ != nil {
			t.Fatalf("energy without C")
		}
	}
	if len(res.Notes) == 0 {
		t.Error("no note on what is identifiable")
	}
}

// A calibration stretch: a known 10 kOhm across the capacitor in the dark measures C
// (within 2 %: the 1 MOhm leak in parallel is not corrected without a dark decay).
func TestCapacitanceFromCalibration(t *testing.T) {
	c := wrenRC
	c.OnV = 10 // never fires
	t1, v1, _ := detecttest.Generate(c, []detecttest.Light{{FromS: 0, IA: 1e-3}}, 100, detecttest.Sampling{DtS: 0.05}, detecttest.ADC{NoiseV: 1e-3, Seed: 43})
	cal := c
	cal.V0 = v1[len(v1)-1]
	cal.RLeakOhm = 1 / (1/c.RLeakOhm + 1/10e3)
	t2, v2, _ := detecttest.Generate(cal, nil, 120, detecttest.Sampling{DtS: 0.05}, detecttest.ADC{NoiseV: 1e-3, Seed: 44})
	ts, vs := t1, v1
	for i := 1; i < len(t2); i++ {
		ts = append(ts, 100+t2[i])
		vs = append(vs, v2[i])
	}
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{Calibration: &analysis.Calibration{ResistorOhm: 10e3, StartS: 100.2, EndS: 219}}})
	if res.Capacitance == nil || res.Capacitance.F.Origin != analysis.OriginMeasured {
		t.Fatalf("capacitance %+v, notes %v", res.Capacitance, res.Notes)
	}
	within(t, "measured C", &res.Capacitance.F, c.C, 0.02)
}

// The envelope keeps between 2000 and 4000 bins whatever the length; the on-voltage
// drift over the day comes out of the line fit.
func TestEnvelopeAndDrift(t *testing.T) {
	var ts, vs []float64
	var light []detecttest.Light
	for k := 0; k < 40; k++ {
		light = append(light, detecttest.Light{FromS: float64(k) * 180, IA: 0.4e-3 + 0.3e-3*float64(k%3)})
	}
	// the trigger threshold drifts: 2.80 V rising by 20 mV an hour, in 10-minute pieces
	t0 := 0.0
	v0 := 1.0
	for piece := 0; piece < 12; piece++ {
		c := wrenRC
		c.OnV = 2.8 + 0.02*(t0/3600)
		c.V0 = v0
		ps, pv, _ := detecttest.Generate(c, shiftLight(light, t0), 600, detecttest.Sampling{DtS: 0.02}, detecttest.ADC{NoiseV: 1e-3, Seed: uint64(50 + piece)})
		for i := range ps {
			if piece > 0 && i == 0 {
				continue
			}
			ts = append(ts, t0+ps[i])
			vs = append(vs, pv[i])
		}
		t0 += 600
		v0 = pv[len(pv)-1]
	}
	res := RunSamples(ts, vs, nil)
	if n := len(res.Envelope); n < 2000 || n > 4000 {
		t.Errorf("%d envelope bins for %d samples", n, len(ts))
	}
	d := res.Fit.Trigger.OnDriftVPerH
	if d == nil || d.SD == nil || math.Abs(d.Value-0.02) > 3**d.SD+0.002 {
		t.Errorf("on_v drift %+v, want 0.02 V/h", d)
	}
	if len(res.Light) == 0 || len(res.Traces) == 0 {
		t.Errorf("light %d points, traces %d", len(res.Light), len(res.Traces))
	}
}

func shiftLight(l []detecttest.Light, t0 float64) []detecttest.Light {
	var out []detecttest.Light
	cur := 0.0
	for _, x := range l {
		if x.FromS <= t0 {
			cur = x.IA
			continue
		}
		out = append(out, detecttest.Light{FromS: x.FromS - t0, IA: x.IA})
	}
	return append([]detecttest.Light{{FromS: 0, IA: cur}}, out...)
}

// A decay at dusk: the light fades over two hours, then the dark drains the capacitor to
// the ADC's floor at 0 V. Only the decay after the fall stopped speeding up, and before
// the floor, is a leak's: its time constant within 5 % of C R_leak and the quiescent
// current back within its uncertainty, where one exponential over the whole fall lands its
// asymptote far below zero.
func TestLeakAtDusk(t *testing.T) {
	c := detecttest.Circuit{C: 4.7e-3, RLeakOhm: 1e6, RLoadOhm: 20, OnV: 10, OffV: 9, V0: 2.2, IQA: 0.3e-6}
	light := []detecttest.Light{{FromS: 0, IA: 2.5e-6}}
	for k := 1; k <= 120; k++ { // a staircase of 60 s steps down to dark at 10800 s
		light = append(light, detecttest.Light{FromS: 3600 + 60*float64(k), IA: 2.5e-6 * (1 - float64(k)/120)})
	}
	for _, a := range []detecttest.ADC{{NoiseV: 1e-3, Bits: 10, FullV: 5, Seed: 7}, {NoiseV: 0.5e-3, Bits: 12, FullV: 5, Seed: 8}} {
		ts, vs, tr := detecttest.Generate(c, light, 21600, detecttest.Sampling{DtS: 1}, a)
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.C}})
		lf := res.Fit.Leak
		if lf.Method != "dark-decay" {
			t.Fatalf("%+v: leak method %q, want dark-decay", a, lf.Method)
		}
		within(t, "tau_leak", lf.TauS, tr.TauLeakS, 0.05)
		if q := lf.QuiescentA; q == nil || q.SD == nil || math.Abs(q.Value-c.IQA) > 3**q.SD+0.1*c.IQA {
			t.Errorf("%+v: quiescent %+v, true %.3g A", a, q, c.IQA)
		}
		if m := res.LeakModel; m == nil || len(m.V) == 0 || m.TS[0] < 3600 {
			t.Errorf("%+v: leak model %+v, want it from the end of the fade on", a, m)
		} else {
			for k, v := range m.V {
				if v < -0.01 {
					t.Errorf("%+v: the leak model reaches %.3f V at %.0f s after the onset", a, v, m.TS[k])
					break
				}
			}
		}
		t.Logf("%+v: tau %.1f (true %.1f) q %v from %.0f s; notes %v", a, lf.TauS.Value, tr.TauLeakS, lf.QuiescentA, res.LeakModel.TS[0], res.Notes)
	}
}
