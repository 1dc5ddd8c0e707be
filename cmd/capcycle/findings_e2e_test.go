package main

// End-to-end checks of the findings: each fault is built into a circuit (a profile, then
// model.FromProfile, then the part changed), simulated by the circuit model or by ngspice,
// read through the probe divider by a 10-bit ADC with noise, analysed, and handed to the
// later stages exactly as "capcycle analyze --profile" does. Each fault must raise its
// finding, with its severity and its key numbers checked against the generating circuit,
// and healthy circuits must raise no warning at all.
//
// Tolerances are stated beside each check. Two recur:
//   - At a sample rate of R Hz the analysis places a fire or a reset on a sample, so times
//     are good to about 1/R and a median period to 1/R (50 Hz: 20 ms).
//   - Wren's probe divider is 1 MΩ + 1 MΩ (ratio 0.5) before a 10-bit ADC at 5 V: one ADC step
//     is 5/1024/0.5 = 9.77 mV at the capacitor.

import (
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/profile"
)

// adcStepV is one 10-bit step at Wren's capacitor: 5 V / 1024 / 0.5.
const adcStepV = 5.0 / 1024 / 0.5

// wantFinding returns the finding with the code, failing the test when it is absent or its
// severity differs.
func wantFinding(t *testing.T, res *analysis.Result, code string, sev analysis.Severity) analysis.Finding {
	t.Helper()
	f, ok := findingsOf(res)[code]
	if !ok {
		logFindings(t, res)
		t.Fatalf("no %s finding", code)
	}
	if f.Severity != sev {
		t.Errorf("%s is %q, want %q: %s", code, f.Severity, sev, f.Message)
	}
	if f.Message == "" {
		t.Errorf("%s has no message", code)
	}
	return f
}

// onlyProblems fails when a warn or fault finding other than the allowed codes is raised.
func onlyProblems(t *testing.T, res *analysis.Result, allowed ...string) {
	t.Helper()
	ok := map[string]bool{}
	for _, a := range allowed {
		ok[a] = true
	}
	for _, f := range res.Findings {
		if (f.Severity == "warn" || f.Severity == "fault") && !ok[f.Code] {
			t.Errorf("unexpected %s %s: %s (numbers %v)", f.Severity, f.Code, f.Message, f.Numbers)
		}
	}
}

// num returns a finding's number, failing when it is missing.
func numOf(t *testing.T, f analysis.Finding, key string) float64 {
	t.Helper()
	v, ok := f.Numbers[key]
	if !ok {
		t.Fatalf("%s has no number %q (it has %v)", f.Code, key, f.Numbers)
	}
	return v
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.6g, want %.6g ± %.3g", what, got, want, tol)
		return
	}
	t.Logf("%s = %.6g (want %.6g ± %.3g)", what, got, want, tol)
}

// steadyOf measures the steady cycle of a model run from its event list: the median
// fire-to-fire period, pulse (fire to reset) and energy the capacitor gives up per pulse,
// ½C(V_fire² − V_reset²), over the completed cycles after the first.
func steadyOf(t *testing.T, c *model.Circuit, sim *model.Result) (periodS, pulseS, energyJ, fireV, resetV float64) {
	t.Helper()
	var fires, per, pul, en, fv, rv []float64
	for _, cy := range sim.Cycles {
		if math.IsNaN(cy.FireS) {
			continue
		}
		if len(fires) > 0 {
			per = append(per, cy.FireS-fires[len(fires)-1])
			pul = append(pul, cy.ResetS-cy.FireS)
			en = append(en, 0.5*c.Storage.CapF*(cy.FireV*cy.FireV-cy.ResetV*cy.ResetV))
			fv, rv = append(fv, cy.FireV), append(rv, cy.ResetV)
		}
		fires = append(fires, cy.FireS)
	}
	if len(per) < 3 {
		t.Fatalf("the model completed %d cycles: too few for a steady cycle", len(per))
	}
	return med(per), med(pul), med(en), med(fv), med(rv)
}

func med(x []float64) float64 {
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return 0.5 * (s[n/2-1] + s[n/2])
}

// equilibriumOf is where the circuit's node settles under light g when it never fires: the
// root of I_cell(V) = V/R_leak + V/R_probe + I_q (bisection on the model's own cell; the
// supervisor's draw is taken as constant, which it is above 1 V).
func equilibriumOf(c *model.Circuit, g float64) float64 {
	net := func(v float64) float64 {
		i := c.Cell.Current(v, g) - c.Supervisor.QuiescentA
		if c.Storage.LeakOhm > 0 {
			i -= v / c.Storage.LeakOhm
		}
		if c.ProbeOhm > 0 {
			i -= v / c.ProbeOhm
		}
		return i
	}
	lo, hi := 0.0, c.Cell.OpenCircuitV(g)
	for range 100 {
		m := (lo + hi) / 2
		if net(m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	return (lo + hi) / 2
}

// A healthy Wren at three light levels (a hazy, a bright and a full-sun sill): it fires
// every time the model does, and no finding is a warning or a fault.
func TestE2EHealthyWren(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	const rate, dur = 50.0, 240.0
	for _, g := range []float64{150, 400, 800} {
		t.Run(fmt.Sprintf("%gWm2", g), func(t *testing.T) {
			r := simulate(t, c, model.Constant(g), dur, rate, 1.5, boardOf(t, p))
			res := analyse(t, p, r)
			logFindings(t, res)
			onlyProblems(t, res)
			f := wantFinding(t, res, "cycling", "info")
			// Every completed model cycle is found; the last fire may fall in the final
			// samples, where the analysis cannot yet see its reset.
			want := modelFires(r.sim, dur)
			if n := int(numOf(t, f, "cycles")); n < want-1 || n > want+1 {
				t.Errorf("%d cycles found, the model completed %d", n, want)
			}
			per, pulse, energy, _, _ := steadyOf(t, c, r.sim)
			// The median period: fires are placed on samples, so within one sample interval.
			near(t, "median_period_s", numOf(t, f, "median_period_s"), per, 1/rate+1e-9)
			// Pulse: from fire to reset, each on a sample: within two sample intervals.
			near(t, "median_pulse_s", numOf(t, f, "median_pulse_s"), pulse, 2/rate+1e-9)
			// Energy ½C(V_fire² − V_reset²): the fire reading is low by up to one sample's
			// rise (about 3 V/s / 50 Hz = 60 mV at 800 W/m², 2.2 % of the voltage, 4.4 % of
			// the energy) plus about two ADC steps; 10 % covers it.
			near(t, "median_energy_j", numOf(t, f, "median_energy_j"), energy, 0.10*energy)
			// The probe (2 MΩ) draws a quarter of the small drain but hardly changes the
			// period: an info, and the model's figure matches a direct run with ten times
			// the resistance.
			if pf, ok := findingsOf(res)["probe-heavy"]; ok {
				cc := *c
				cc.ProbeOhm *= 10
				per10, _, _, _, _ := steadyOf(t, &cc, simulate(t, &cc, model.Constant(g), dur, rate, 1.5, boardOf(t, p)).sim)
				near(t, "probe period_change", numOf(t, pf, "period_change"), 1-per10/per, 0.01)
			}
			// The prediction from the declared parts: charge times within 10 % on average.
			if pr := res.Prediction; pr == nil || pr.Nominal == nil || pr.Nominal.MAPEPct == nil {
				t.Errorf("no nominal prediction: %+v", pr)
			} else if t.Logf("nominal charge-time MAPE %.2f %%", *pr.Nominal.MAPEPct); *pr.Nominal.MAPEPct > 10 {
				t.Errorf("nominal prediction's charge-time error %.1f %%, want under 10 %%", *pr.Nominal.MAPEPct)
			}
		})
	}
}

// A healthy Wren under a passing cloud (600 W/m², a minute at 150 W/m², 600 W/m² again):
// the charge times change fourfold, yet no warning, and the prediction driven by each
// cycle's own light keeps the charge-time error small (a cloud is no model error).
func TestE2EHealthyWrenCloud(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	light, err := model.NewPiecewise([]float64{0, 80, 90, 150, 160, 400}, []float64{600, 600, 150, 150, 600, 600})
	if err != nil {
		t.Fatal(err)
	}
	const dur = 240.0
	r := simulate(t, c, light, dur, 50, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res)
	f := wantFinding(t, res, "cycling", "info")
	if n, want := int(numOf(t, f, "cycles")), modelFires(r.sim, dur); n < want-1 || n > want+1 {
		t.Errorf("%d cycles found, the model completed %d", n, want)
	}
	if pr := res.Prediction; pr == nil || pr.Nominal == nil || pr.Nominal.MAPEPct == nil {
		t.Errorf("no nominal prediction")
	} else {
		// Charges that span a light change are predicted at one light; they are a few of
		// the 200 or so, so the mean error stays within 10 %.
		t.Logf("nominal charge-time MAPE %.2f %% over %d cycles", *pr.Nominal.MAPEPct, pr.Nominal.N)
		if *pr.Nominal.MAPEPct > 10 {
			t.Errorf("nominal prediction's charge-time error %.1f %%, want under 10 %%", *pr.Nominal.MAPEPct)
		}
	}
}

// A healthy Wren that charges, then sits in the dark for two minutes: the dark decay
// measures its leakage (the declared 3 µA at 2.7 V, 0.9 MΩ), far inside the datasheet
// rule, so no leaky-capacitor finding and no warning.
func TestE2EHealthyWrenDarkDecay(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	light, err := model.NewPiecewise([]float64{0, 60, 60.01, 400}, []float64{400, 400, 0, 0})
	if err != nil {
		t.Fatal(err)
	}
	r := simulate(t, c, light, 180, 50, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res)
	if _, ok := findingsOf(res)["leaky-capacitor"]; ok {
		t.Errorf("a leaky-capacitor finding on the declared 0.9 MΩ leak")
	}
	if res.Fit.Leak.Method != "dark-decay" {
		t.Errorf("leak method %q: the dark stretch was not seen as a decay", res.Fit.Leak.Method)
	}
}

// Never reaches the trigger, two ways: a trigger set above what the cell gives (Wren with a
// 4.5 V trigger at 200 W/m², where the cell's open-circuit voltage is about 3.9 V), and too
// little light (Fern in its shaded north window, 40 W/m²).
func TestE2ENeverReachesTrigger(t *testing.T) {
	t.Run("trigger-too-high", func(t *testing.T) {
		p := variant(t, "Wren", profileText(t, "wren.toml"), []string{"on_v = 2.7 ", "on_v = 4.5 ", "off_v = 1.6 ", "off_v = 3.0 "}, "")
		c := circuitOf(t, p)
		const g = 200.0
		r := simulate(t, c, model.Constant(g), 240, 20, 0.5, boardOf(t, p))
		if n := len(r.sim.Fires()); n != 0 {
			t.Fatalf("the model fired %d times: not a stall", n)
		}
		res := analyse(t, p, r)
		logFindings(t, res)
		onlyProblems(t, res, "never-reaches-trigger")
		f := wantFinding(t, res, "never-reaches-trigger", "fault")
		veq := equilibriumOf(c, g)
		// The settling voltage: within two ADC steps (19.5 mV) of the true root.
		near(t, "equilibrium_v", numOf(t, f, "equilibrium_v"), veq, 2*adcStepV)
		near(t, "on_v", numOf(t, f, "on_v"), 4.5, 1e-9)
		// The light the capture was taken in: near the open-circuit voltage the voltage
		// moves by n·Ns·kT/q = 1.5·5·25.7 mV = 0.19 V per e-fold of light, so two ADC
		// steps of voltage are about 10 % of light.
		near(t, "light_wm2", numOf(t, f, "light_wm2"), g, 0.10*g)
		// The remedy of a lower trigger: 5 % below the equilibrium, and the model run of
		// the true circuit with that trigger fires.
		lower := numOf(t, f, "lower_on_v")
		near(t, "lower_on_v", lower, 0.95*veq, 2*adcStepV)
		cc := *c
		cc.Trigger.OnV = lower - cc.Trigger.DiodeV
		cc.Trigger.OffV = cc.Trigger.OnV - (c.Trigger.OnV - c.Trigger.OffV)
		if sim := simulate(t, &cc, model.Constant(g), 60, 20, 0.5, boardOf(t, p)).sim; len(sim.Fires()) == 0 {
			t.Errorf("with the proposed %.3f V trigger the circuit still does not fire", lower)
		}
	})
	t.Run("too-little-light", func(t *testing.T) {
		p := loadProfile(t, "fern.toml")
		c := circuitOf(t, p)
		const g = 40.0
		r := simulate(t, c, model.Constant(g), 2400, 10, 0.05, boardOf(t, p))
		if n := len(r.sim.Fires()); n != 0 {
			t.Fatalf("the model fired %d times: not a stall", n)
		}
		res := analyse(t, p, r)
		logFindings(t, res)
		onlyProblems(t, res, "never-reaches-trigger")
		f := wantFinding(t, res, "never-reaches-trigger", "fault")
		veq := equilibriumOf(c, g)
		// Extrapolated from an approach that is still about 10 % short after 2400 s (two of
		// its time constants): within 2 % (as analyze's own Fern check).
		near(t, "equilibrium_v", numOf(t, f, "equilibrium_v"), veq, 0.02*veq)
		near(t, "on_v", numOf(t, f, "on_v"), 4.0, 1e-9)
		// The light: Fern's cell has a 4 kΩ shunt, so in shade the voltage is nearly
		// proportional to the light; a 2 % voltage error is about 2 % of light; 5 %.
		near(t, "light_wm2", numOf(t, f, "light_wm2"), g, 0.05*g)
		// "k× the light makes it fire": at the true light times k, the true circuit's
		// equilibrium is above the trigger (the finding aims 3 % above it).
		k := numOf(t, f, "light_factor")
		if v := equilibriumOf(c, g*k); v < 4.0 {
			t.Errorf("at %.3g× the light the circuit settles at %.3f V, still below the 4 V trigger", k, v)
		}
		// And no less would do: at 85 % of that light it stays below 4 V.
		if v := equilibriumOf(c, 0.85*g*k); v >= 4.0 {
			t.Errorf("even %.3g× the light would do (settles at %.3f V): the factor %.3g is far too high", 0.85*k, v, k)
		}
	})
}

// Never reaches the trigger because the capacitor leaks: a 1 kΩ leak across Wren's
// capacitor at 100 W/m², where the cell gives about 1.8 mA and the leak takes all of it at
// 1.8 V. Forty seconds of darkness in the middle let the analysis measure the leak from the
// decay (without a dark stretch a leak cannot be told from less light).
func TestE2ENeverReachesTriggerLeak(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	c.Storage.LeakOhm = 1e3
	const g = 100.0
	light, err := model.NewPiecewise([]float64{0, 60, 60.01, 100, 100.01, 400}, []float64{g, g, 0, 0, g, g})
	if err != nil {
		t.Fatal(err)
	}
	r := simulate(t, c, light, 160, 20, 0.5, boardOf(t, p))
	if n := len(r.sim.Fires()); n != 0 {
		t.Fatalf("the model fired %d times: not a stall", n)
	}
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "never-reaches-trigger", "leaky-capacitor")
	f := wantFinding(t, res, "never-reaches-trigger", "fault")
	// The leak is the largest drain by far (the probe and the supervisor take 2 µA of 1.8 mA).
	if s := numOf(t, f, "largest_share"); s < 0.99 {
		t.Errorf("largest drain's share %.3f, want the leak's 0.99 or more", s)
	}
	near(t, "leak_a", numOf(t, f, "leak_a"), numOf(t, f, "equilibrium_v")/1e3, 0.02*numOf(t, f, "equilibrium_v")/1e3)
	l := wantFinding(t, res, "leaky-capacitor", "warn")
	near(t, "leak_ohm", numOf(t, l, "leak_ohm"), 1e3, 0.02*1e3) // the dark decay, τ = 4.7 s
	veq := equilibriumOf(c, g)
	// The last rise starts on a flat 0 V stretch (the dark decay reached 0 V 17 s before the
	// light returned); the approach is fitted from where it leaves that level.
	near(t, "equilibrium_v", numOf(t, f, "equilibrium_v"), veq, 2*adcStepV)
	near(t, "light_wm2", numOf(t, f, "light_wm2"), g, 0.10*g)
}

// No dump: the switch never closes (model.TriggerNone). The voltage passes the 2.7 V
// trigger and keeps rising towards the open-circuit voltage of a 7-cell panel (5.9 V rated),
// past the ADC's full scale of a 100 k / 1 MΩ divider (5 V / (1/1.1) = 5.5 V), where the
// readings clip.
func TestE2ENoDump(t *testing.T) {
	p := variant(t, "Wren", profileText(t, "wren.toml"), []string{"voc_v = 4.2 ", "voc_v = 5.9 ", "series_cells = 5", "series_cells = 7",
		"top_ohm = \"1meg\"\nbottom_ohm = \"1meg\"\n\n[[channel]]", "top_ohm = \"100k\"\nbottom_ohm = \"1meg\"\n\n[[channel]]"}, "")
	c := circuitOf(t, p)
	c.Trigger.Kind = model.TriggerNone
	const rate = 20.0
	b := boardOf(t, p)
	r := simulate(t, c, model.Constant(600), 120, rate, 1.5, b)
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "no-dump", "adc-clipping")
	f := wantFinding(t, res, "no-dump", "fault")
	fullV := b.RefV / b.Ratio * 1023 / 1024 // the top code, read back as node volts
	near(t, "max_v", numOf(t, f, "max_v"), fullV, 2*adcStepV)
	near(t, "on_v", numOf(t, f, "on_v"), 2.7, 1e-9)
	clip := wantFinding(t, res, "adc-clipping", "warn")
	// The time at the top code, counted on the samples themselves: within two sample
	// intervals (the saturated stretch starts and ends on a sample).
	top := 0
	for _, v := range r.v {
		if v >= fullV-1e-9 {
			top++
		}
	}
	near(t, "saturated_s", numOf(t, clip, "saturated_s"), float64(top)/rate, 2/rate)
	if _, ok := findingsOf(res)["never-reaches-trigger"]; ok {
		t.Errorf("a circuit above its trigger was said never to reach it")
	}
}

// Chatter: Wren's hold capacitor cut from 2.2 µF to 22 nF, so the supervisor lets go after
// about 22 nF·50 mV/1 µA = 1.1 ms and each fire drops the node by only the supervisor's
// 50 mV hysteresis (dim light, 50 W/m², so that a recharge takes a quarter of a second).
func TestE2EChatter(t *testing.T) {
	p := variant(t, "Wren", profileText(t, "wren.toml"), []string{"hold_f = \"2.2u\"", "hold_f = \"22n\""}, "")
	c := circuitOf(t, p)
	const g = 50.0
	r := simulate(t, c, model.Constant(g), 120, 100, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "chatter")
	f := wantFinding(t, res, "chatter", "warn")
	_, _, _, fv, rv := steadyOf(t, c, r.sim)
	// The swing the model makes, within two ADC steps.
	near(t, "swing_v", numOf(t, f, "swing_v"), fv-rv, 2*adcStepV)
	if n := numOf(t, f, "chatter_cycles"); n < 0.9*float64(modelFires(r.sim, 120)) {
		t.Errorf("%.0f chatter cycles, the model fired %d times", n, modelFires(r.sim, 120))
	}
	// The remedy: the hold capacitance for a swing down to the declared 1.6 V release,
	// C_hold = I_q·t/ΔV with t = τ ln(V_on/V_off) and τ = C(R_load + R_on): 1 µA ·
	// 86.5 ms·ln(2.7/1.6) / 50 mV = 0.905 µF, 1 µF in the E6 series.
	near(t, "hold_needed_f", numOf(t, f, "hold_needed_f"), 1e-6*4.7e-3*18.4*math.Log(2.7/1.6)/0.05, 0.01e-6)
	std := numOf(t, f, "hold_standard_f")
	near(t, "hold_standard_f", std, 1e-6, 1e-12)
	// The model's swing with that capacitor, against a direct run of the true circuit.
	cc := *c
	cc.Trigger.HoldF = std
	sim := simulate(t, &cc, model.Constant(g), 60, 10, 1.5, boardOf(t, p)).sim
	_, _, _, fv2, rv2 := steadyOf(t, &cc, sim)
	// The finding predicts at the measured light (within a few % of 50 W/m²); the swing is
	// set by the hold time and barely by the light: 5 %.
	near(t, "predicted_swing_v", numOf(t, f, "predicted_swing_v"), fv2-rv2, 0.05*(fv2-rv2))
	if fv2-rv2 < 0.5 {
		t.Errorf("with %.3g F the swing is only %.3f V: not a remedy", std, fv2-rv2)
	}
}

// Weak pulse: the load is declared to need 30 mJ to start, and Wren's 4.7 mF from 2.7 V
// down to about 0.9 V gives 15 mJ.
func TestE2EWeakPulse(t *testing.T) {
	p := variant(t, "Wren", profileText(t, "wren.toml"), []string{"start_a = \"40m\"", "start_a = \"40m\"\nstart_j = \"30m\""}, "")
	c := circuitOf(t, p)
	const g = 400.0
	r := simulate(t, c, model.Constant(g), 120, 100, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "weak-pulse")
	f := wantFinding(t, res, "weak-pulse", "warn")
	_, _, energy, fv, rv := steadyOf(t, c, r.sim)
	// The fire reading at 100 Hz is low by up to one sample's rise (1.4 V/s·10 ms = 14 mV)
	// plus two ADC steps: about 2 % of the energy; 5 %.
	near(t, "energy_j", numOf(t, f, "energy_j"), energy, 0.05*energy)
	near(t, "start_j", numOf(t, f, "start_j"), 0.030, 1e-12)
	// The capacitor for 30 mJ with a 20 % margin: 2·1.2·30 mJ/(V_on² − V_off²).
	near(t, "cap_needed_f", numOf(t, f, "cap_needed_f"), 2*1.2*0.030/(fv*fv-rv*rv), 0.05*2*1.2*0.030/(fv*fv-rv*rv))
	std := numOf(t, f, "cap_standard_f")
	near(t, "cap_standard_f", std, 10e-3, 1e-9) // 11.2 mF → 10 mF in the E6 series
	// The model's energy with it, against a direct run of the true circuit at the light.
	cc := *c
	cc.Storage.CapF = std
	_, _, e2, _, _ := steadyOf(t, &cc, simulate(t, &cc, model.Constant(g), 60, 10, 1.5, boardOf(t, p)).sim)
	// Predicted at the measured light and with the fitted hold time: 5 %.
	near(t, "predicted_energy_j", numOf(t, f, "predicted_energy_j"), e2, 0.05*e2)
}

// Leaky capacitor: a 5 kΩ leak across Wren's 4700 µF 6.3 V electrolytic. The datasheet rule
// (testdata/al_electrolytic_leakage_spec.txt, [D1]: "I < 0.01 CV or 3 (µA) After 2 minutes
// (Which is greater)", rated C and V) allows 0.01·4700·6.3 = 296 µA; 6.3 V/5 kΩ is 1.26 mA.
// A minute of light, then the dark, where the decay measures the leak.
func TestE2ELeakyCapacitor(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	c.Storage.LeakOhm = 5e3
	light, err := model.NewPiecewise([]float64{0, 60, 60.01, 400}, []float64{400, 400, 0, 0})
	if err != nil {
		t.Fatal(err)
	}
	r := simulate(t, c, light, 150, 50, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "leaky-capacitor")
	f := wantFinding(t, res, "leaky-capacitor", "warn")
	near(t, "limit_a", numOf(t, f, "limit_a"), 0.01*4700*6.3*1e-6, 1e-12)
	// The decay's time constant is C·(5 kΩ ∥ 2 MΩ ∥ the cell's dark diode); the probe is
	// taken out, so the fitted leak is the 5 kΩ within 2 %.
	near(t, "leak_ohm", numOf(t, f, "leak_ohm"), 5e3, 0.02*5e3)
	near(t, "leak_at_rated_a", numOf(t, f, "leak_at_rated_a"), 6.3/5e3, 0.02*6.3/5e3)
}

// Probe heavy: a 4.7 k + 4.7 k divider draws about 0.29 mA at 2.7 V, against a cell that
// gives 1.8 mA at 100 W/m²: the period changes by more than 5 %.
func TestE2EProbeHeavy(t *testing.T) {
	p := variant(t, "Wren", profileText(t, "wren.toml"), []string{"top_ohm = \"1meg\"\nbottom_ohm = \"1meg\"\n\n[[channel]]", "top_ohm = \"4.7k\"\nbottom_ohm = \"4.7k\"\n\n[[channel]]"}, "")
	c := circuitOf(t, p)
	const g = 100.0
	r := simulate(t, c, model.Constant(g), 120, 100, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "probe-heavy")
	f := wantFinding(t, res, "probe-heavy", "warn")
	near(t, "probe_ohm", numOf(t, f, "probe_ohm"), 9400, 1e-9)
	// The period change with ten times the resistance, against direct runs of the true
	// circuit: within 2 points (the finding predicts at the measured light, with the
	// fitted trigger and hold time).
	per, _, _, _, _ := steadyOf(t, c, r.sim)
	cc := *c
	cc.ProbeOhm *= 10
	per10, _, _, _, _ := steadyOf(t, &cc, simulate(t, &cc, model.Constant(g), 120, 10, 1.5, boardOf(t, p)).sim)
	change := 1 - per10/per
	if change <= 0.05 {
		t.Fatalf("the scenario is too mild: the probe changes the period by %.1f %%", 100*change)
	}
	near(t, "period_change", numOf(t, f, "period_change"), change, 0.02)
}

// Gaps and lost samples: a healthy Wren capture written as a capture file (through
// logger/capture, FORMAT.md), with a second of lost samples (a gap line with lost=50) and
// 30 s unplugged, read back by analyze.Run as "capcycle analyze" does.
func TestE2ECaptureGapsAndLostSamples(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	b := boardOf(t, p)
	const rate = 50.0
	r := simulate(t, c, model.Constant(400), 240, rate, 1.5, b)
	path := writeCapture(t, p, b, r, []captureGap{{FromS: 60, ToS: 61, Lost: 50}, {FromS: 100, ToS: 130}})
	res := analyseFile(t, p, path)
	logFindings(t, res)
	onlyProblems(t, res, "capture-gaps", "lost-samples")
	g := wantFinding(t, res, "capture-gaps", "warn") // 31 s of 240 s: over the 5 % for a warning
	near(t, "gaps", numOf(t, g, "gaps"), 2, 0)
	// Each gap runs from the last row before to the first after: one sample interval more
	// than the stretch cut out, at each gap.
	near(t, "gap_s", numOf(t, g, "gap_s"), 31, 2*2/rate)
	l := wantFinding(t, res, "lost-samples", "warn")
	near(t, "lost_samples", numOf(t, l, "lost_samples"), 50, 0)
	wantFinding(t, res, "cycling", "info")

	// A single short unplugged stretch (2 s of 240 s, under 5 %) is only an info, and no
	// samples were lost.
	path = writeCapture(t, p, b, r, []captureGap{{FromS: 100, ToS: 102}})
	res = analyseFile(t, p, path)
	onlyProblems(t, res)
	wantFinding(t, res, "capture-gaps", "info")
	if _, ok := findingsOf(res)["lost-samples"]; ok {
		t.Errorf("lost samples reported for an unplugged gap")
	}
}

// A noisy capture: 50 mV RMS at the ADC pin (100 mV at the capacitor), against Wren's
// 1.8 V swing whose tenth (0.18 V) the analysis needs to resolve.
func TestE2ENoisyCapture(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	b := boardOf(t, p)
	b.NoiseV = 0.05
	r := simulate(t, c, model.Constant(400), 120, 100, 1.5, b)
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "noisy-capture")
	f := wantFinding(t, res, "noisy-capture", "warn")
	// The noise at the capacitor is 0.05/0.5 = 0.1 V; the estimate within 15 %.
	near(t, "noise_rms_v", numOf(t, f, "noise_rms_v"), 0.1, 0.015)
	// And the same capture with the usual 1 mV is not noisy (checked in the healthy runs).
}

// Capacitance off nominal: the capacitor is 31 % below its declared 4700 µF (3243 µF),
// outside the ±20 % of tolerance code M (testdata/capacitance_tolerance_codes.csv: "M
// ±20%"). A 2.2 kΩ calibration resistor across it in the dark for the first 20 s measures
// it (the profile's [calibration] table, as analyze.Options.CalResistorOhm/CalStartS/CalEndS).
func TestE2ECapacitanceOffNominal(t *testing.T) {
	p := variant(t, "Wren", profileText(t, "wren.toml"), nil, "[calibration]\nresistor_ohm = \"2.2k\"\nstart_s = 0\nend_s = 20\n")
	if p.Calibration == nil || p.Calibration.ResistorOhm != 2200 {
		t.Fatalf("calibration %+v", p.Calibration)
	}
	c := circuitOf(t, p)
	c.Storage.CapF = 0.69 * 4700e-6
	cal := *c // the calibration stretch: the resistor across the node, the switch open, dark
	cal.Storage.LeakOhm = 1 / (1/c.Storage.LeakOhm + 1/2200.0)
	cal.Trigger.Kind = model.TriggerNone
	b := boardOf(t, p)
	r1 := simulate(t, &cal, model.Constant(0), 20, 50, 2.5, b)
	b.Seed++
	r2 := simulate(t, c, model.Constant(400), 120, 50, r1.sim.Final.V, b)
	r := &genRun{t: r1.t, v: r1.v}
	for i := 1; i < len(r2.t); i++ {
		r.t, r.v = append(r.t, 20+r2.t[i]), append(r.v, r2.v[i])
	}
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "capacitance-off-nominal")
	f := wantFinding(t, res, "capacitance-off-nominal", "warn")
	// The decay through 2.2 kΩ (τ = 7.1 s) measures C within 3 %.
	near(t, "measured_f", numOf(t, f, "measured_f"), c.Storage.CapF, 0.03*c.Storage.CapF)
	near(t, "diff", numOf(t, f, "diff"), -0.31, 0.03)
	tol, err := profile.LookupTolerance("M")
	if err != nil {
		t.Fatal(err)
	}
	near(t, "tol_minus", numOf(t, f, "tol_minus"), tol.MinusPct/100, 1e-12)
	near(t, "tol_minus (M = ±20 %)", numOf(t, f, "tol_minus"), 0.20, 1e-12)
}

// Trigger off nominal: Wren's supervisor fires the node at 2.5 V, not the declared 2.7 V
// (−7.4 %), outside its stated ±1.5 %.
func TestE2ETriggerOffNominal(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	c.Trigger.OnV = 2.5 - c.Trigger.DiodeV
	c.Trigger.OffV = c.Trigger.OnV - 0.05
	r := simulate(t, c, model.Constant(400), 120, 50, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	logFindings(t, res)
	onlyProblems(t, res, "trigger-off-nominal")
	f := wantFinding(t, res, "trigger-off-nominal", "warn")
	// The reading is low by up to one sample's rise plus the band the finding states.
	rise, band := numOf(t, f, "rise_per_sample_v"), numOf(t, f, "reading_band_v")
	if got := numOf(t, f, "measured_on_v"); got < 2.5-rise-band || got > 2.5+band {
		t.Errorf("measured_on_v %.4f V, want 2.5 V within −%.4f/+%.4f V", got, rise+band, band)
	}
	near(t, "declared_on_v", numOf(t, f, "declared_on_v"), 2.7, 1e-12)
	near(t, "accuracy_pct", numOf(t, f, "accuracy_pct"), 1.5, 1e-12)
}

// benchTOML is Wren's cell and capacitor on the bench with a voltage trigger of fixed
// release into a 22 Ω resistor and no supervisor draw: a circuit the ngspice netlist
// carries part for part. ON is replaced by the trigger voltage.
const benchTOML = `name = "Wren bench"
notes = "Wren's cell and capacitor on the bench: a voltage trigger with a fixed release into a resistor"

[storage]
kind = "electrolytic"
cap_f = "4700u"
tolerance = "M"
rated_v = 6.3
leak_a = "3u"
leak_v = 2.7

[trigger]
kind = "voltage"
release = "fixed"
on_v = ON
off_v = 1.6
accuracy_pct = 1.5

[switch]
on_ohm = 0.4

[load]
kind = "resistor"
ohm = 22

[cell]
voc_v = 4.2
isc_a = "18m"
series_cells = 5

[adc]
reference = "avcc"
reference_v = 5.0
bits = 10

[[channel]]
node = "vcap"
adc = 0
top_ohm = "1meg"
bottom_ohm = "1meg"
`

// The bench circuit simulated by ngspice instead of our model, sampled at 50 Hz through
// the divider and the ADC: healthy with a 2.7 V trigger, stalled with a 4.5 V one.
func TestE2ENgspiceScenarios(t *testing.T) {
	if testing.Short() {
		t.Skip("ngspice runs take a few seconds; skipped with -short")
	}
	const g, dur, rate = 300.0, 120.0, 50.0
	t.Run("healthy", func(t *testing.T) {
		p := parseProfile(t, "bench", strings.Replace(benchTOML, "ON", "2.7", 1))
		c := circuitOf(t, p)
		sp := runNgspice(t, c, g, dur, 1.0)
		res := analyse(t, p, sp.sample(rate, boardOf(t, p)))
		logFindings(t, res)
		onlyProblems(t, res)
		f := wantFinding(t, res, "cycling", "info")
		fires := sp.fires(2.7, 1.6)
		if n := int(numOf(t, f, "cycles")); n < len(fires)-1 || n > len(fires)+1 {
			t.Errorf("%d cycles found, ngspice completed %d", n, len(fires))
		}
		var per []float64
		for i := 2; i < len(fires); i++ {
			per = append(per, fires[i]-fires[i-1])
		}
		// The median period against ngspice's own fires: within one sample interval.
		near(t, "median_period_s", numOf(t, f, "median_period_s"), med(per), 1/rate+1e-9)
		// Our model's prediction from the declared parts against ngspice's circuit: the
		// charge times within 5 % on average (ngspice's switch lags by up to its 1 ms step
		// at each change, which lengthens its recharge by about 1 %).
		if pr := res.Prediction; pr == nil || pr.Nominal == nil || pr.Nominal.MAPEPct == nil {
			t.Errorf("no nominal prediction")
		} else if t.Logf("nominal charge-time MAPE against ngspice %.2f %%", *pr.Nominal.MAPEPct); *pr.Nominal.MAPEPct > 5 {
			t.Errorf("nominal prediction's charge-time error against ngspice %.1f %%, want under 5 %%", *pr.Nominal.MAPEPct)
		}
	})
	t.Run("never-fires", func(t *testing.T) {
		p := parseProfile(t, "bench", strings.Replace(benchTOML, "ON", "4.5", 1))
		c := circuitOf(t, p)
		sp := runNgspice(t, c, g, dur, 1.0)
		if n := len(sp.fires(4.5, 1.6)); n != 0 {
			t.Fatalf("ngspice fired %d times", n)
		}
		res := analyse(t, p, sp.sample(rate, boardOf(t, p)))
		logFindings(t, res)
		onlyProblems(t, res, "never-reaches-trigger")
		f := wantFinding(t, res, "never-reaches-trigger", "fault")
		// The approach near open circuit takes well under a second (the cell's dynamic
		// resistance times C), so ngspice's last point is the equilibrium: two ADC steps.
		near(t, "equilibrium_v", numOf(t, f, "equilibrium_v"), sp.v[len(sp.v)-1], 2*adcStepV)
		// The light: two ADC steps near open circuit are about 10 % of light (see above).
		near(t, "light_wm2", numOf(t, f, "light_wm2"), g, 0.10*g)
	})
}

// What-if against direct simulation: "capcycle whatif --json" for a change, and a model run
// of the changed circuit measured from its event list. Both are the same model, so the
// what-if's steady cycle (taken after four cycles) and the direct run's median cycle (from
// the second of a minute's cycles on) agree to within 0.1 %: Wren's cycle repeats from the
// second on (the event times are located to 1 ns).
func TestE2EWhatifAgainstSimulation(t *testing.T) {
	wren := filepath.Join("..", "..", "analyze", "model", "scenarios", "wren.toml")
	const g = 500.0
	for _, tc := range []struct {
		set    string
		change func(*model.Circuit)
	}{
		{"cap=10000u", func(c *model.Circuit) { c.Storage.CapF = 10e-3 }},
		{"hold=4.7u", func(c *model.Circuit) { c.Trigger.HoldF = 4.7e-6 }},
		{"probe=20k", func(c *model.Circuit) { c.ProbeOhm = 20e3 }},
		{"load=33", func(c *model.Circuit) { c.Load.Ohm = 33 }},
	} {
		t.Run(tc.set, func(t *testing.T) {
			a := whatifJSON(t, "--profile", wren, "--light", "500", "--sun-hours", "6", "--set", tc.set)
			if a.Changed == nil || !a.Changed.Fires {
				t.Fatalf("what-if answer %+v", a)
			}
			c := circuitOf(t, loadProfile(t, "wren.toml"))
			tc.change(c)
			sim, err := model.Simulate(c, model.Constant(g), &model.Options{DurationS: 60, StartV: 1.5})
			if err != nil {
				t.Fatal(err)
			}
			per, pulse, energy, fv, rv := steadyOf(t, c, sim)
			ch := a.Changed
			rel := func(what string, got *float64, want float64) {
				t.Helper()
				if got == nil {
					t.Errorf("%s is null", what)
					return
				}
				near(t, what, *got, want, 0.001*math.Abs(want))
			}
			rel("period_s", ch.PeriodS, per)
			rel("pulse_s", ch.PulseS, pulse)
			rel("energy_j", ch.EnergyJ, energy)
			rel("fire_v", ch.FireV, fv)
			rel("reset_v", ch.ResetV, rv)
			rel("duty_cycle", ch.DutyCycle, pulse/per)
			rel("fires_per_h", ch.FiresPerHour, 3600/per)
			rel("energy_per_day_j", ch.EnergyPerDayJ, energy*3600/per*6)
		})
	}
}

// How the analysis reads two traces it once misread: the fire voltage on a steep charge
// (it was the mean of the last two samples, 30 mV low at 800 W/m² and 50 Hz) and the light
// of a capture of chatter alone (light_a was 22× the cell's current). The findings above
// allow for such misreadings anyway (see diagnose's fireReading and predict's plausibleCell
// and chatterLight).

// The fire voltage is the node's voltage at the fire, placed between samples: on a steep
// charge sampled at 50 Hz (where the last sample before the fire lies some 30 mV below
// it) it should be the model's own fire voltage, read to within one ADC step.
func TestE2EAnalysisFireVoltageOnSteepCharge(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuitOf(t, p)
	const rate = 50.0
	r := simulate(t, c, model.Constant(800), 120, rate, 1.5, boardOf(t, p))
	res := analyse(t, p, r)
	var fires []model.Cycle
	for _, mc := range r.sim.Cycles {
		if !math.IsNaN(mc.FireS) {
			fires = append(fires, mc)
		}
	}
	var d []float64
	k := 0
	for _, cy := range res.Cycles {
		for k < len(fires) && fires[k].FireS < cy.FireS-1/rate {
			k++
		}
		if k >= len(fires) {
			break
		}
		d = append(d, cy.FireV-fires[k].FireV)
	}
	if len(d) == 0 {
		t.Fatal("no fire matched")
	}
	near(t, "median fire_v − the model's fire voltage", med(d), 0, adcStepV)
}

// A capture of chatter alone still traces the light on each recharge: the per-cycle
// light_a (the cell's short-circuit current) should be within 20 % of the cell's, and the
// single-diode fit should not be degenerate.
func TestE2EAnalysisChatterLight(t *testing.T) {
	p := variant(t, "Wren", profileText(t, "wren.toml"), []string{"hold_f = \"2.2u\"", "hold_f = \"22n\""}, "")
	c := circuitOf(t, p)
	const g = 50.0
	res := analyse(t, p, simulate(t, c, model.Constant(g), 120, 100, 1.5, boardOf(t, p)))
	var l []float64
	for _, cy := range res.Cycles {
		if cy.LightA != nil {
			l = append(l, *cy.LightA)
		}
	}
	if len(l) == 0 {
		t.Fatal("no light_a on any cycle")
	}
	isc := c.Cell.Current(0, g)
	near(t, "median light_a", med(l), isc, 0.2*isc)
	if n := res.Fit.Cell.N; n != nil && (n.Value < 0.5 || n.Value > 5) {
		t.Errorf("fitted ideality %.3g per cell", n.Value)
	}
}
