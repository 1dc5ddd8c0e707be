package analyze

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/diagnose"
)

func hasFinding(res *analysis.Result, code string) *analysis.Finding {
	for k := range res.Findings {
		if res.Findings[k].Code == code {
			return &res.Findings[k]
		}
	}
	return nil
}

// One wild cell (1e300 V) among hours of samples: the same fires as without it, the
// sample dropped and counted, and a warning that says so.
func TestWildSampleDropped(t *testing.T) {
	ts, vs, tr := detecttest.Generate(wrenRC, []detecttest.Light{{FromS: 0, IA: 1e-3}}, 300, detecttest.Sampling{DtS: 0.005},
		detecttest.ADC{NoiseV: 1.5e-3, Bits: 10, FullV: 5, Seed: 7})
	opts := &Options{Declared: analysis.Declared{CapF: wrenRC.C}}
	clean := RunSamples(ts, vs, opts)
	if w := hasFinding(clean, diagnose.CodeWild); w != nil || clean.Screen != nil {
		t.Fatalf("clean capture: screen %+v, finding %+v", clean.Screen, w)
	}
	for _, at := range []int{0, 5000, len(vs) / 2, len(vs) - 1} {
		v := append([]float64(nil), vs...)
		v[at] = 1e300
		res := RunSamples(ts, v, opts)
		if len(res.Cycles) != len(clean.Cycles) || len(res.Cycles) < len(tr.FireS)-1 {
			t.Fatalf("wild sample at %d: %d cycles, want %d (clean) and the truth's %d", at, len(res.Cycles), len(clean.Cycles), len(tr.FireS))
		}
		if res.Screen == nil || res.Screen.Wild != 1 {
			t.Fatalf("wild sample at %d: screen %+v, want 1 wild sample", at, res.Screen)
		}
		f := hasFinding(res, diagnose.CodeWild)
		if f == nil || f.Severity != analysis.Warn || f.Numbers["wild_samples"] != 1 {
			t.Fatalf("wild sample at %d: finding %+v", at, f)
		}
		// Dropping one sample of 60,000 moves the detector's averaged points a little, and
		// with them the fire located between samples (events.go), so on_v is not the same
		// to the last bit; the wild value itself must not show: the change stays under a
		// tenth of on_v's own standard uncertainty.
		on, cleanOn := res.Fit.Trigger.OnV, clean.Fit.Trigger.OnV
		if cleanOn.SD == nil || math.Abs(on.Value-cleanOn.Value) > 0.1**cleanOn.SD {
			t.Errorf("wild sample at %d: on_v %g, clean %g ± %v", at, on.Value, cleanOn.Value, cleanOn.SD)
		}
	}
}

// A board that converts every 50 ms but is read every 5 ms (each value ten times): the
// staircase is seen, the effective spacing reported, and the fires, pulses and load
// read as from the conversions alone, not as 5 ms pulses.
func TestHeldStaircaseAnalysed(t *testing.T) {
	adc := detecttest.ADC{NoiseV: 1.5e-3, Bits: 10, FullV: 5, Seed: 8}
	light := []detecttest.Light{{FromS: 0, IA: 1e-3}}
	ts, vs, tr := detecttest.Generate(wrenRC, light, 600, detecttest.Sampling{DtS: 0.005}, adc)
	const k = 10
	held := make([]float64, len(vs))
	for i := range vs {
		held[i] = vs[i-i%k]
	}
	opts := &Options{Declared: analysis.Declared{CapF: wrenRC.C}}
	res := RunSamples(ts, held, opts)
	h := res.Screen
	if h == nil || h.Held == nil {
		t.Fatalf("staircase not seen: screen %+v", h)
	}
	if math.Round(h.Held.Repeat) != k || math.Abs(h.Held.EffectiveSpacingS-0.05) > 1e-3 {
		t.Errorf("held %+v, want %d repeats every 50 ms", *h.Held, k)
	}
	if f := hasFinding(res, diagnose.CodeHeld); f == nil || f.Severity != analysis.Warn {
		t.Errorf("no held-samples warning: %+v", res.Findings)
	}
	// The same capture converted every 50 ms, honestly.
	var t2, v2 []float64
	for i := 0; i < len(ts); i += k {
		t2, v2 = append(t2, ts[i]), append(v2, vs[i])
	}
	ref := RunSamples(t2, v2, opts)
	if len(res.Cycles) != len(ref.Cycles) || len(res.Cycles) < len(tr.FireS)-1 {
		t.Fatalf("%d cycles, want %d (the conversions alone) and the truth's %d", len(res.Cycles), len(ref.Cycles), len(tr.FireS))
	}
	for i, c := range res.Cycles {
		if c.FireS != ref.Cycles[i].FireS || c.ResetS != ref.Cycles[i].ResetS {
			t.Fatalf("cycle %d: fire %g reset %g, the conversions alone give %g %g", i, c.FireS, c.ResetS, ref.Cycles[i].FireS, ref.Cycles[i].ResetS)
		}
	}
	if res.Fit.Load.TauS != nil && ref.Fit.Load.TauS != nil && res.Fit.Load.TauS.Value != ref.Fit.Load.TauS.Value {
		t.Errorf("tau_load %g, the conversions alone give %g", res.Fit.Load.TauS.Value, ref.Fit.Load.TauS.Value)
	}
}
