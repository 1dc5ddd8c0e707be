package analyze

import (
	"math"
	"math/rand/v2"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/model"
)

// loadCurrent is a current channel for a trace of detecttest: v/R_load during each pulse
// of the truth (the switch is closed from FireS to ResetS), plus an offset and noise of
// the current sensor's own.
func loadCurrent(ts, vs []float64, tr detecttest.Truth, rLoad, offsetA, noiseA float64, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	is := make([]float64, len(ts))
	k := 0
	for j, t := range ts {
		for k < len(tr.ResetS) && tr.ResetS[k] <= t {
			k++
		}
		if k < len(tr.FireS) && tr.FireS[k] <= t && t < tr.ResetS[k] {
			is[j] = vs[j] / rLoad
		}
		is[j] += offsetA + noiseA*rng.NormFloat64()
	}
	return is
}

// With a load-current channel the capacitance is measured at every fire, C = Q/ΔV, within
// 2 % of the truth across light levels and ADC resolutions; the declared value is not
// used (here it is 30 % off).
func TestCapacitanceFromCurrent(t *testing.T) {
	for _, ia := range []float64{0.5e-3, 2e-3} {
		for _, a := range []detecttest.ADC{{NoiseV: 1e-3, Seed: 61}, {NoiseV: 1e-3, Bits: 10, FullV: 5, Seed: 62}} {
			ts, vs, tr := detecttest.Generate(wrenRC, []detecttest.Light{{FromS: 0, IA: ia}}, 120, detecttest.Sampling{DtS: 0.002}, a)
			is := loadCurrent(ts, vs, tr, wrenRC.RLoadOhm, 0.4e-3, 0.3e-3, a.Seed)
			res := RunSamplesCurrent(ts, vs, is, &Options{Declared: analysis.Declared{CapF: 1.3 * wrenRC.C}})
			c := res.Capacitance
			if c == nil || c.Method != "current-channel" || c.F.Origin != analysis.OriginMeasured {
				t.Fatalf("I=%g %+v: capacitance %+v, want measured from the current channel", ia, a, c)
			}
			within(t, "C", &c.F, wrenRC.C, 0.02)
			if c.Pulses < len(tr.ResetS)-2 {
				t.Errorf("I=%g %+v: C from %d pulses of %d", ia, a, c.Pulses, len(tr.ResetS))
			}
			if c.F.SD == nil || *c.F.SD <= 0 || math.Abs(c.F.Value-wrenRC.C) > 4**c.F.SD+0.005*wrenRC.C {
				t.Errorf("I=%g %+v: C = %.4g ± %v F, true %.4g F", ia, a, c.F.Value, c.F.SD, wrenRC.C)
			}
			// The load's resistance now rests on the measured C.
			within(t, "load ohm", res.Fit.Load.Ohm, wrenRC.RLoadOhm, 0.03)
		}
	}
}

// The built-in rover (a DC motor behind a hold-capacitor trigger, its current not a
// resistor's): the capacitance from the motor current within 3 % of the circuit's.
func TestCapacitanceFromMotorCurrent(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	noise := detecttest.NewNoise(detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 63})
	var ts, vs, is []float64
	_, err = model.Simulate(sc.Circuit, shifted{sc.Light, 12 * 3600}, &model.Options{DurationS: 120, StartV: 2.0, RateHz: 500,
		OnSample: func(s model.Sample) {
			ts = append(ts, s.TS)
			vs = append(vs, noise.Measure(s.V, s.On))
			is = append(is, s.LoadA)
		}})
	if err != nil {
		t.Fatal(err)
	}
	res := RunSamplesCurrent(ts, vs, is, nil)
	c := res.Capacitance
	if c == nil || c.Method != "current-channel" {
		t.Fatalf("capacitance %+v, notes %v", c, res.Notes)
	}
	within(t, "C", &c.F, sc.Circuit.Storage.CapF, 0.03)
	t.Logf("C = %.4g F from %d pulses (true %.4g F)", c.F.Value, c.Pulses, sc.Circuit.Storage.CapF)
}

// The charge log across its ring's wrap: Q by the trapezoid rule, a rectangular pulse's
// capacitance exact, a pulse with an unsampled current (NaN) or one older than the ring
// refused.
func TestChargeLog(t *testing.T) {
	c := newChargeLog()
	const dt = 1e-3
	n := chargeRing + 5000 // wraps
	ts, vs, is := make([]float64, n), make([]float64, n), make([]float64, n)
	// A 10 mA offset throughout; from the samples after 69.000 s to 69.100 s a 1 A pulse,
	// over which the voltage falls from 3 V to 2.9 V: 0.1 C into 1 F.
	for k := range ts {
		ts[k] = float64(k) * dt
		vs[k] = 3
		is[k] = 0.01
		if t := ts[k]; t > 69.0+dt/2 && t < 69.1+dt/2 {
			is[k] += 1
		}
		if ts[k] > 69.1-dt/2 {
			vs[k] = 2.9
		}
	}
	c.add(ts, vs, is)
	if q, ok := c.qAt(69.05); !ok || math.Abs(q-(0.01*69.05+1*(0.05-dt/2))) > 1e-9 {
		t.Errorf("Q(69.05 s) = %.9g, %v", q, ok)
	}
	got, ok := c.pulseCap(69.0, 69.1, 0)
	// Q = 1 A · 0.1 s (the trapezoid: half a step at each edge cancels), ΔV = 0.1 V.
	if !ok || math.Abs(got-1) > 1e-6 {
		t.Errorf("C = %.5g, %v; want 1 F", got, ok)
	}
	if _, ok := c.pulseCap(1.0, 1.1, 0); ok {
		t.Error("a pulse older than the ring was measured")
	}
	is[69050] = math.NaN()
	c2 := newChargeLog()
	c2.add(ts, vs, is)
	if _, ok := c2.pulseCap(69.0, 69.1, 0); ok {
		t.Error("a pulse with an unsampled current was measured")
	}
}
