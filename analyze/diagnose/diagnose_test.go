package diagnose

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/profile"
	"capcycle/analyze/stats"
)

func find(fs []analysis.Finding, code string) *analysis.Finding {
	for i := range fs {
		if fs[i].Code == code {
			return &fs[i]
		}
	}
	return nil
}

func loadProfile(t *testing.T, name string) *profile.Profile {
	t.Helper()
	p, err := profile.Load("../../testdata/profiles/" + name)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// circuit is the profile's circuit, as the command line builds it.
func circuit(t *testing.T, p *profile.Profile) *model.Circuit {
	t.Helper()
	c, _, err := model.FromProfile(p)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// stalled is the analysis of a circuit that settled at its equilibrium under light g.
func stalled(c *model.Circuit, g float64) *analysis.Result {
	veq := predict.EquilibriumV(c, g)
	sd := 0.002
	return &analysis.Result{Schema: analysis.Schema, Samples: 1000, DurationS: 36000,
		EquilibriumV: &analysis.Estimate{Value: veq, SD: &sd},
		Envelope:     []analysis.EnvelopePt{{TS: 0, MinV: 0, MaxV: veq * 0.999}},
		Noise:        &analysis.Noise{RMSV: 0.002, StepV: 0.005}}
}

// A circuit that stalls below its trigger gets a fault with the equilibrium, the light
// factor, the drain cut and the lower trigger, each checked against the model directly.
func TestNeverReachesTrigger(t *testing.T) {
	p := loadProfile(t, "fern.toml")
	c := circuit(t, p)
	const g = 60.0
	r := stalled(c, g)
	if r.EquilibriumV.Value >= c.Trigger.OnV {
		t.Fatalf("fern reaches its trigger at %v W/m²; the test needs a stall", g)
	}
	fs := Diagnose(&Input{Result: r, Nominal: c, Fitted: c, Profile: p})
	f := find(fs, CodeNeverFires)
	if f == nil || f.Severity != "fault" {
		t.Fatalf("no never-reaches-trigger fault in %+v", fs)
	}
	n := f.Numbers
	if math.Abs(n["light_wm2"]-g)/g > 1e-3 {
		t.Errorf("measured light %.3f W/m², want %.0f (recovered from the equilibrium)", n["light_wm2"], g)
	}
	if !(n["light_factor"] > 1) {
		t.Fatalf("light factor %v", n["light_factor"])
	}
	// At the suggested light the node settles just above the trigger (3 % margin).
	thr := c.Trigger.OnV * 1.03
	if v := predict.EquilibriumV(c, g*n["light_factor"]); math.Abs(v-thr) > 1e-3 {
		t.Errorf("equilibrium at the suggested light %.4f V, want %.4f V", v, thr)
	}
	// The lower trigger's period, against a direct simulation of that change.
	newOn := n["lower_on_v"]
	if math.Abs(newOn-0.95*r.EquilibriumV.Value) > 1e-9 {
		t.Errorf("lower trigger %.4f V", newOn)
	}
	cc := *c
	cc.Trigger.OffV = newOn - math.Min(c.Trigger.OnV-c.Trigger.OffV, 0.5*newOn)
	cc.Trigger.OnV = newOn
	res, err := model.Simulate(&cc, model.Constant(g), &model.Options{DurationS: 40 * n["period_lower_on_s"], StartV: cc.Trigger.OffV})
	if err != nil {
		t.Fatal(err)
	}
	fires := res.Fires()
	if len(fires) < 3 {
		t.Fatalf("direct simulation fired %d times", len(fires))
	}
	if got := fires[len(fires)-1] - fires[len(fires)-2]; math.Abs(got-n["period_lower_on_s"])/got > 0.01 {
		t.Errorf("period with the lower trigger: finding %.2f s, direct simulation %.2f s", n["period_lower_on_s"], got)
	}
	// The drains add up, and the largest share is the largest of the three.
	sum := n["leak_a"] + n["probe_a"] + n["quiescent_a"]
	largest := math.Max(n["leak_a"], math.Max(n["probe_a"], n["quiescent_a"]))
	if math.Abs(n["largest_share"]-largest/sum) > 1e-12 {
		t.Errorf("largest share %.4f, want %.4f", n["largest_share"], largest/sum)
	}
	if f.Suggestion == "" || f.Message == "" {
		t.Error("empty message or suggestion")
	}
	if find(fs, CodeNoDump) != nil {
		t.Error("no-dump raised for a stall")
	}
}

func TestNoDump(t *testing.T) {
	p := loadProfile(t, "fern.toml") // on_v 4.0 V
	r := &analysis.Result{Schema: analysis.Schema, DurationS: 3600,
		Envelope: []analysis.EnvelopePt{{TS: 0, MinV: 1, MaxV: 4.6}}}
	fs := Diagnose(&Input{Result: r, Nominal: circuit(t, p), Profile: p})
	f := find(fs, CodeNoDump)
	if f == nil || f.Severity != "fault" || f.Numbers["max_v"] != 4.6 {
		t.Fatalf("no-dump missing or wrong: %+v", fs)
	}
	if find(fs, CodeNeverFires) != nil {
		t.Error("never-reaches-trigger raised for a circuit that passed its trigger")
	}
}

// healthy builds the analysis of a circuit cycling steadily under light g, as a perfect
// analyser would report it.
func healthy(t *testing.T, c *model.Circuit, g float64) *analysis.Result {
	t.Helper()
	res, err := model.Simulate(c, model.Constant(g), &model.Options{DurationS: 600, StartV: 2.5})
	if err != nil {
		t.Fatal(err)
	}
	r := &analysis.Result{Schema: analysis.Schema, Samples: 60000, DurationS: 600,
		Noise: &analysis.Noise{RMSV: 0.002, StepV: 0.0049}}
	isc := c.Cell.Current(0, g)
	var on, off []float64
	for i, cy := range res.Cycles {
		if i == 0 {
			continue
		}
		ch := cy.FireS - cy.StartS
		e := 0.5 * c.Storage.CapF * (cy.FireV*cy.FireV - cy.ResetV*cy.ResetV)
		r.Cycles = append(r.Cycles, analysis.Cycle{Index: i, FireS: cy.FireS, FireV: cy.FireV, ResetS: cy.ResetS,
			ResetV: cy.ResetV, ChargeS: &ch, PulseS: cy.ResetS - cy.FireS, EnergyJ: &e, Kind: "full", LightA: &isc})
		on, off = append(on, cy.FireV), append(off, cy.ResetV)
		r.Envelope = append(r.Envelope, analysis.EnvelopePt{TS: cy.FireS, MinV: cy.ResetV, MaxV: cy.FireV})
	}
	r.Fit.Trigger.OnV = &analysis.Estimate{Value: stats.Median(on)}
	r.Fit.Trigger.OffV = &analysis.Estimate{Value: stats.Median(off)}
	r.Fit.Leak.Ohm = &analysis.Estimate{Value: c.Storage.LeakOhm}
	return r
}

// A healthy capture produces no warn or fault finding, only the info ones.
func TestHealthyHasNoWarnings(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuit(t, p)
	for _, g := range []float64{300, 600, 900} {
		r := healthy(t, c, g)
		fs := Diagnose(&Input{Result: r, Nominal: c, Fitted: c, Profile: p})
		for _, f := range fs {
			if f.Severity != "info" {
				t.Errorf("at %v W/m²: %s (%s): %s", g, f.Code, f.Severity, f.Message)
			}
		}
		if find(fs, CodeCycling) == nil {
			t.Errorf("at %v W/m²: no cycling summary", g)
		}
	}
}

func TestChatterHoldNeeded(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	c := circuit(t, p)
	r := healthy(t, c, 600)
	for i := range r.Cycles {
		if i%4 != 0 {
			r.Cycles[i].Kind = "chatter"
			r.Cycles[i].ResetV = r.Cycles[i].FireV - 0.02
		}
	}
	tau := 0.094 // load time constant, s
	r.Fit.Load.TauS = &analysis.Estimate{Value: tau}
	fs := Diagnose(&Input{Result: r, Nominal: c, Fitted: c, Profile: p})
	f := find(fs, CodeChatter)
	if f == nil || f.Severity != "warn" {
		t.Fatalf("no chatter warning: %+v", fs)
	}
	// t = τ ln(Von/Voff) to swing down to the declared off_v: C_hold = I_q t / ΔV.
	on := r.Fit.Trigger.OnV.Value
	wantHold := p.Trigger.QuiescentA * tau * math.Log(on/p.Trigger.OffV) / p.Trigger.HysteresisV
	if math.Abs(f.Numbers["hold_needed_f"]-wantHold)/wantHold > 1e-9 {
		t.Errorf("hold needed %.4g F, want %.4g F", f.Numbers["hold_needed_f"], wantHold)
	}
	if math.Abs(f.Numbers["swing_v"]-0.02) > 1e-9 {
		t.Errorf("swing seen %.4f V", f.Numbers["swing_v"])
	}
}

// The aluminium-electrolytic rule: I ≤ 0.01·C·V or 3 µA, whichever is greater (C in µF,
// V rated; testdata/al_electrolytic_leakage_spec.txt, [D1]): 4700 µF at 6.3 V allows
// 296.1 µA.
func TestLeakyCapacitor(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	for _, c := range []struct {
		ohm  float64
		want bool
	}{{10e3, true}, {20e3, true}, {22e3, false}, {1.5e6, false}} {
		r := &analysis.Result{Schema: analysis.Schema}
		r.Fit.Leak.Ohm = &analysis.Estimate{Value: c.ohm}
		f := find(Diagnose(&Input{Result: r, Profile: p}), CodeLeakyCap)
		if (f != nil) != c.want {
			t.Errorf("leak %g Ω: finding %v, want %v", c.ohm, f != nil, c.want)
		}
		if f != nil && math.Abs(f.Numbers["limit_a"]-296.1e-6) > 1e-9 {
			t.Errorf("limit %.4g A, want 296.1 µA", f.Numbers["limit_a"])
		}
	}
}

// Tolerance code M is ±20 % (testdata/capacitance_tolerance_codes.csv, sources W1-W5):
// 31 % below nominal is outside it, 15 % below is inside.
func TestCapacitanceAgainstTolerance(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	for _, c := range []struct {
		ratio float64
		want  bool
	}{{0.69, true}, {0.85, false}, {1.19, false}, {1.25, true}} {
		r := &analysis.Result{Schema: analysis.Schema,
			Capacitance: &analysis.Capacity{F: analysis.Estimate{Value: c.ratio * p.Storage.CapF, Origin: "measured"}}}
		f := find(Diagnose(&Input{Result: r, Profile: p}), CodeCapOffNominal)
		if (f != nil) != c.want {
			t.Errorf("C at %.2f× nominal: finding %v, want %v", c.ratio, f != nil, c.want)
		}
	}
}

func TestCaptureFindings(t *testing.T) {
	r := &analysis.Result{Schema: analysis.Schema, Samples: 9000, DurationS: 1000,
		Segments: []analysis.Segment{{Kind: "saturated", StartS: 10, EndS: 30, StartV: 5, EndV: 5},
			{Kind: "gap", StartS: 100, EndS: 200}},
		Source: analysis.Source{Lost: 1000},
		Noise:  &analysis.Noise{RMSV: 0.05, StepV: 0.005},
	}
	on := 3.0
	r.Declared = &analysis.Declared{OnV: on}
	fs := Diagnose(&Input{Result: r})
	for _, code := range []string{CodeClipping, CodeGaps, CodeLost, CodeNoisy} {
		if f := find(fs, code); f == nil {
			t.Errorf("no %s finding", code)
		}
	}
	if f := find(fs, CodeGaps); f != nil && f.Severity != "warn" {
		t.Errorf("a 10 %% gap is %s, want warn", f.Severity)
	}
	if f := find(fs, CodeLost); f != nil && math.Abs(f.Numbers["share"]-0.1) > 1e-12 {
		t.Errorf("lost share %.4f, want 0.1", f.Numbers["share"])
	}
}

func TestProbeHeavySeverity(t *testing.T) {
	p := loadProfile(t, "fern.toml")
	c := circuit(t, p)
	// With a 20 kΩ probe, find a light at which the sculpture stalls below its trigger but
	// would fire with a probe of ten times the resistance: the probe itself stops it.
	heavy, light := *c, *c
	heavy.ProbeOhm, light.ProbeOhm = 20e3, 200e3
	g := 0.0
	for x := 20.0; x < 5000; x *= 1.05 {
		if predict.EquilibriumV(&heavy, x) < 0.97*c.Trigger.OnV && predict.EquilibriumV(&light, x) > 1.05*c.Trigger.OnV {
			g = x
			break
		}
	}
	if g == 0 {
		t.Fatal("no light separates the two probes")
	}
	r := stalled(&heavy, g)
	fs := Diagnose(&Input{Result: r, Nominal: &heavy, Fitted: &heavy, Profile: p, LightWm2: g})
	f := find(fs, CodeProbeHeavy)
	if f == nil || f.Severity != "warn" {
		t.Fatalf("probe-heavy missing or not a warning: %+v", fs)
	}
	if _, ok := f.Numbers["period_probe_x10_s"]; !ok {
		t.Errorf("no predicted period with the larger probe: %+v", f.Numbers)
	}
	// A probe that hardly changes a firing circuit is only info.
	wp := loadProfile(t, "wren.toml")
	wc := circuit(t, wp)
	for _, f := range Diagnose(&Input{Result: healthy(t, wc, 600), Nominal: wc, Fitted: wc, Profile: wp}) {
		if f.Code == CodeProbeHeavy && f.Severity != "info" {
			t.Errorf("wren's probe: %s %s", f.Severity, f.Message)
		}
	}
}

func TestCodesDocumented(t *testing.T) {
	for _, code := range []string{CodeCycling, CodeNeverFires, CodeNoDump, CodeChatter, CodeWeakPulse,
		CodeEarlyRelease, CodeLeakyCap, CodeProbeHeavy, CodeClipping, CodeGaps, CodeLost, CodeNoisy,
		CodeCapOffNominal, CodeTrigOffNominal} {
		if Codes[code] == "" {
			t.Errorf("code %q undocumented", code)
		}
	}
}

// Behind a window the light changes all day and the voltage never levels off: the finding
// then works from the highest voltage reached, at the brightest light.
func TestNeverReachesTriggerFromPeak(t *testing.T) {
	p := loadProfile(t, "fern.toml")
	c := circuit(t, p)
	const g = 60.0
	peak := predict.EquilibriumV(c, g)
	r := &analysis.Result{Schema: analysis.Schema, Samples: 1000, DurationS: 86400,
		Envelope: []analysis.EnvelopePt{{TS: 0, MinV: 0, MaxV: peak}}}
	f := find(Diagnose(&Input{Result: r, Nominal: c, Fitted: c, Profile: p}), CodeNeverFires)
	if f == nil {
		t.Fatal("no never-reaches-trigger finding")
	}
	if f.Numbers["peak_v"] != peak || math.Abs(f.Numbers["light_wm2"]-g)/g > 1e-3 {
		t.Errorf("numbers %+v, want peak %.4f V at %.0f W/m²", f.Numbers, peak, g)
	}
	if !(f.Numbers["light_factor"] > 1) || f.Numbers["lower_on_v"] >= peak {
		t.Errorf("suggestions missing: %+v", f.Numbers)
	}
}

// A capture that stops while the node is still charging says so, and claims no settling.
func TestStillCharging(t *testing.T) {
	p := loadProfile(t, "fern.toml")
	c := circuit(t, p)
	r := &analysis.Result{Schema: analysis.Schema, Samples: 300, DurationS: 180}
	for i := 0; i < 40; i++ {
		v := 0.004 * float64(i) // a steady climb to 0.156 V
		r.Envelope = append(r.Envelope, analysis.EnvelopePt{TS: 4.5 * float64(i), MinV: v, MaxV: v})
	}
	fs := Diagnose(&Input{Result: r, Nominal: c, Fitted: c, Profile: p})
	if find(fs, CodeStillCharging) == nil || find(fs, CodeNeverFires) != nil {
		t.Fatalf("findings %+v, want still-charging and no never-reaches-trigger", fs)
	}
}
