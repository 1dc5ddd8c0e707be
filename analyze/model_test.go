package analyze

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/model"
)

// shifted starts a light at an offset into its day.
type shifted struct {
	l   model.Light
	off float64
}

func (s shifted) IrradianceWm2(t float64) float64 { return s.l.IrradianceWm2(t + s.off) }

// simulate runs a circuit and returns its samples, with noise and ADC steps added.
func simulate(t *testing.T, c *model.Circuit, light model.Light, durS, rateHz, startV float64, adc detecttest.ADC) ([]float64, []float64, *model.Result) {
	t.Helper()
	var ts, vs []float64
	noise := detecttest.NewNoise(adc)
	res, err := model.Simulate(c, light, &model.Options{DurationS: durS, StartV: startV, RateHz: rateHz,
		OnSample: func(s model.Sample) {
			ts = append(ts, s.TS)
			vs = append(vs, noise.Measure(s.V, s.On))
		}})
	if err != nil {
		t.Fatal(err)
	}
	return ts, vs, res
}

// The built-in Wren scenario around noon (a hold-capacitor trigger and a DC motor):
// every completed fire found within one sample.
func TestModelWren(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	for _, adc := range []detecttest.ADC{{NoiseV: 2e-3, Bits: 10, FullV: 5, Seed: 21}, {NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 22}} {
		const rate = 200
		ts, vs, sim := simulate(t, sc.Circuit, shifted{sc.Light, 12 * 3600}, 120, rate, 2.0, adc)
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: sc.Circuit.Storage.CapF, ProbeOhm: sc.Circuit.ProbeOhm}})
		fires := 0
		for _, c := range sim.Cycles {
			if !math.IsNaN(c.FireS) && c.ResetS < ts[len(ts)-3] {
				fires++
			}
		}
		full := 0
		for _, c := range res.Cycles {
			if c.Kind == "full" {
				full++
			}
		}
		if full != fires || fires == 0 {
			t.Errorf("%+v: %d full cycles (%d chatter), the model had %d", adc, full, len(res.Cycles)-full, fires)
			continue
		}
		k := 0
		for _, c := range sim.Cycles {
			if math.IsNaN(c.FireS) || c.ResetS >= ts[len(ts)-3] {
				continue
			}
			got := res.Cycles[k]
			k++
			if math.Abs(got.FireS-c.FireS) > 1.0/rate+1e-9 {
				t.Errorf("%+v: fire at %.4f s, model %.4f s", adc, got.FireS, c.FireS)
			}
		}
		if r := res.Fit.Load.Resistive; r != nil {
			t.Logf("%+v: resistive %v (this motor's back-EMF is small in a short pulse)", adc, *r)
		}
	}
}

// A motor whose back-EMF builds up within the pulse: its discharge is no exponential,
// and the goodness of fit says so; a plain resistor in its place is recognised.
func TestModelMotorNotResistive(t *testing.T) {
	sc, _ := model.Scenario("wren")
	c := *sc.Circuit
	c.Trigger = model.Trigger{Kind: model.TriggerVoltage, OnV: 2.7, OffV: 1.6}
	c.Switch = model.Switch{}
	c.Load = model.Load{Kind: model.LoadMotor, Ohm: 18, KeVsPerRad: 5e-3, InertiaKgM2: 1e-7, FrictionNm: 3e-4}
	for _, adc := range []detecttest.ADC{{}, {NoiseV: 2e-3, Bits: 12, FullV: 5, Seed: 27}} {
		ts, vs, _ := simulate(t, &c, model.Constant(300), 120, 500, 1.5, adc)
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF}})
		if len(res.Cycles) < 5 {
			t.Fatalf("%+v: %d cycles", adc, len(res.Cycles))
		}
		if r := res.Fit.Load.Resistive; r == nil || *r {
			t.Errorf("%+v: the motor was taken for a resistor (resistive %v)", adc, r)
		}
		if res.Fit.Load.StartOhm == nil || res.Fit.Load.EndOhm == nil || !(res.Fit.Load.EndOhm.Value > 1.2*res.Fit.Load.StartOhm.Value) {
			t.Errorf("%+v: effective resistance %+v at the start, %+v at the end: want it to grow as the motor speeds up", adc, res.Fit.Load.StartOhm, res.Fit.Load.EndOhm)
		}
	}
}

// The model with a resistor load and a plain voltage trigger: the pulse's time constant
// within 2 % of C (R_load || R_leak || R_probe || R_shunt), and on/off voltages.
func TestModelResistiveLoad(t *testing.T) {
	sc, _ := model.Scenario("wren")
	c := *sc.Circuit
	c.Trigger = model.Trigger{Kind: model.TriggerVoltage, OnV: 2.7, OffV: 1.8}
	c.Load = model.Load{Kind: model.LoadResistor, Ohm: 30}
	c.Switch = model.Switch{}
	g := 1 / c.Load.Ohm
	for _, r := range []float64{c.Storage.LeakOhm, c.ProbeOhm, c.Cell.RshOhm} {
		if r > 0 { // 0 means absent
			g += 1 / r
		}
	}
	tau := c.Storage.CapF / g
	for _, adc := range []detecttest.ADC{{}, {NoiseV: 2e-3, Bits: 12, FullV: 5, Seed: 23}} {
		ts, vs, _ := simulate(t, &c, model.Constant(300), 300, 500, 1.5, adc)
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF}})
		within(t, "model tau_load", res.Fit.Load.TauS, tau, 0.02)
		within(t, "model on_v", res.Fit.Trigger.OnV, 2.7, 0.01)
		within(t, "model off_v", res.Fit.Trigger.OffV, 1.8, 0.02)
		if r := res.Fit.Load.Resistive; r == nil || !*r {
			t.Errorf("%+v: a resistor not recognised (resistive %v)", adc, r)
		}
	}
}

// The Fern circuit (supercapacitor with a slow branch, a 4 kOhm shunt in the cell) under
// steady dim light: it charges and stalls below its trigger. No fire; the settling
// voltage extrapolated from the approach (before it has settled) within 2 % of the
// true equilibrium, where the cell's current equals the leak, the probe and the
// supervisor's draw (found by bisection on the model's own cell).
func TestModelFernEquilibrium(t *testing.T) {
	sc, err := model.Scenario("fern")
	if err != nil {
		t.Fatal(err)
	}
	c := sc.Circuit
	const g = 40 // W/m2
	drain := func(v float64) float64 {
		return c.Cell.Current(v, g) - v/c.Storage.LeakOhm - v/c.ProbeOhm - c.Supervisor.QuiescentA
	}
	lo, hi := 0.0, c.Cell.OpenCircuitV(g)
	for k := 0; k < 100; k++ {
		m := (lo + hi) / 2
		if drain(m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	veq := (lo + hi) / 2
	if veq >= c.Trigger.OnV {
		t.Fatalf("equilibrium %.3f V is above the trigger; pick a dimmer light", veq)
	}
	// About two of the approach's time constants: still 10 % short of the equilibrium.
	ts, vs, sim := simulate(t, c, model.Constant(g), 2400, 1, 0.05, detecttest.ADC{NoiseV: 1e-3, Seed: 24})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF}})
	if len(res.Cycles) != 0 || len(sim.Fires()) != 0 {
		t.Fatalf("%d fires found, the model had %d", len(res.Cycles), len(sim.Fires()))
	}
	t.Logf("fern: end %.4f V, true equilibrium %.4f V, fitted %+v", vs[len(vs)-1], veq, res.EquilibriumV)
	within(t, "equilibrium_v", res.EquilibriumV, veq, 0.02)
	if res.Equilibrium == nil || res.Equilibrium.Within1PctS == nil {
		t.Errorf("no settling time")
	}
}

// Capacitive-load I-V tracing: the Wren cell charging the capacitor from 0 V towards
// open circuit under steady light (no trigger). The single-diode fit of the traced
// points gives the model cell's own Isc and Voc (from its Lambert W solution) within 5 %.
func TestModelCellTracing(t *testing.T) {
	sc, _ := model.Scenario("wren")
	c := *sc.Circuit
	c.Trigger = model.Trigger{Kind: model.TriggerNone}
	const g = 300.0
	ts, vs, _ := simulate(t, &c, model.Constant(g), 120, 100, 0.01, detecttest.ADC{NoiseV: 0.5e-3, Seed: 25})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF, ProbeOhm: c.ProbeOhm, CellSeries: c.Cell.Cells}})
	isc, voc := c.Cell.Current(0, g), c.Cell.OpenCircuitV(g)
	t.Logf("traced %d points; model Isc %.4g A Voc %.4g V; fitted %+v %+v; notes %v", len(res.Fit.Cell.IV), isc, voc, res.Fit.Cell.IscA, res.Fit.Cell.VocV, res.Notes)
	within(t, "isc_a", res.Fit.Cell.IscA, isc, 0.05)
	within(t, "voc_v", res.Fit.Cell.VocV, voc, 0.05)
}

// A plateau trigger (fires when the charging current has fallen off) on the model: every
// fire found, the kind inferred as plateau.
func TestModelPlateauTrigger(t *testing.T) {
	sc, _ := model.Scenario("wren")
	c := *sc.Circuit
	c.Trigger = model.Trigger{Kind: model.TriggerPlateau, PlateauA: 0.3e-3, ArmV: 2.0, OffV: 1.5}
	c.Load = model.Load{Kind: model.LoadResistor, Ohm: 30}
	c.Switch = model.Switch{}
	ts, vs, sim := simulate(t, &c, model.Constant(300), 600, 50, 1.0, detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 26})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF}})
	want := 0
	for _, r := range sim.Resets() {
		if r < ts[len(ts)-3] {
			want++
		}
	}
	if len(res.Cycles) != want || want < 3 {
		t.Fatalf("%d cycles, the model had %d", len(res.Cycles), want)
	}
	if res.Fit.Trigger.Kind != "plateau" {
		t.Errorf("trigger kind %q, want plateau", res.Fit.Trigger.Kind)
	}
}
