package predict

import (
	"math"
	"testing"

	"capcycle/analyze/model"
)

// An ideal current source (no diode, no shunt) charging C through a voltage trigger into a
// resistor: charge time C·ΔV/I and pulse RC·ln((Von−V∞)/(Voff−V∞)) with V∞ = I·R (the
// first-order RC law, as in any circuits textbook; common practice, no source).
func TestSteadyAnalyticRC(t *testing.T) {
	const (
		capF = 1000e-6
		iA   = 2e-3 // at 1000 W/m²
		on   = 3.0
		off  = 2.0
		rL   = 100.0
	)
	c := &model.Circuit{
		Cell:    model.Cell{IphA: iA},
		Storage: model.Storage{CapF: capF},
		Trigger: model.Trigger{Kind: model.TriggerVoltage, OnV: on, OffV: off},
		Load:    model.Load{Ohm: rL},
	}
	f, err := Steady(c, 1000, nil)
	if err != nil {
		t.Fatal(err)
	}
	wantCharge := capF * (on - off) / iA
	vinf := iA * rL
	wantPulse := rL * capF * math.Log((on-vinf)/(off-vinf))
	if !f.Fires {
		t.Fatal("does not fire")
	}
	if rel(f.ChargeS, wantCharge) > 1e-5 {
		t.Errorf("charge %.6f s, want %.6f s", f.ChargeS, wantCharge)
	}
	if rel(f.PulseS, wantPulse) > 1e-5 {
		t.Errorf("pulse %.6f s, want %.6f s", f.PulseS, wantPulse)
	}
	if rel(f.PeriodS, wantCharge+wantPulse) > 1e-5 {
		t.Errorf("period %.6f s, want %.6f s", f.PeriodS, wantCharge+wantPulse)
	}
	wantE := 0.5 * capF * (on*on - off*off) // E = ½CV² (textbook)
	if rel(f.EnergyJ, wantE) > 1e-5 {
		t.Errorf("energy %.6g J, want %.6g J", f.EnergyJ, wantE)
	}
	if rel(f.FiresPerHour, 3600/(wantCharge+wantPulse)) > 1e-5 {
		t.Errorf("fires per hour %.4f", f.FiresPerHour)
	}
}

// A current source into C with a leak R settles at V = I·R when I·R is below the trigger.
func TestEquilibriumBelowTrigger(t *testing.T) {
	c := &model.Circuit{
		Cell:    model.Cell{IphA: 1e-3, I0A: 1e-12, N: 1.5, Cells: 6},
		Storage: model.Storage{CapF: 0.1, LeakOhm: 2000},
		Trigger: model.Trigger{Kind: model.TriggerVoltage, OnV: 3.0, OffV: 2.0},
		Load:    model.Load{Ohm: 10},
	}
	f, err := Steady(c, 1000, nil)
	if err != nil {
		t.Fatal(err)
	}
	if f.Fires {
		t.Fatalf("fires, want a stall (V_eq near 2 V)")
	}
	// The diode of 6 cells at n=1.5 barely conducts at 2 V: V_eq is within 1 mV of I·R.
	if math.Abs(f.EquilibriumV-2.0) > 1e-3 {
		t.Errorf("V_eq = %.5f V, want 2.000 V", f.EquilibriumV)
	}
	// Linear RC approach: within 1 % after τ·ln(100), τ = RC = 200 s.
	if rel(f.SettleS, 200*math.Log(100)) > 0.01 {
		t.Errorf("settle time %.1f s, want %.1f s", f.SettleS, 200*math.Log(100))
	}
}

// The stalling sculpture of the demo settles below its trigger; a long direct simulation
// ends at the same voltage.
func TestFernStallsAtEquilibrium(t *testing.T) {
	sc, err := model.Scenario("fern")
	if err != nil {
		t.Fatal(err)
	}
	const g = 60 // a dull diffuse light, W/m²
	f, err := Steady(sc.Circuit, g, nil)
	if err != nil {
		t.Fatal(err)
	}
	if f.Fires {
		t.Fatalf("fern fires at %v W/m² (period %.3g s); the demo's stalling scenario must settle below its trigger", g, f.PeriodS)
	}
	res, err := model.Simulate(sc.Circuit, model.Constant(g), &model.Options{DurationS: 10 * f.SettleS, StartV: 0})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Final.V-f.EquilibriumV) > 2e-3 {
		t.Errorf("simulated end %.4f V, equilibrium %.4f V", res.Final.V, f.EquilibriumV)
	}
}

func TestWrenFires(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	f, err := Steady(sc.Circuit, 500, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !f.Fires || f.PeriodS <= 0 || f.PulseS <= 0 || f.EnergyJ <= 0 {
		t.Fatalf("wren at 500 W/m²: %+v", f)
	}
	if f.FireV < f.ResetV {
		t.Errorf("fire %.3f V below reset %.3f V", f.FireV, f.ResetV)
	}
}

func TestIrradianceFor(t *testing.T) {
	c := &model.Circuit{Cell: model.Cell{IphA: 10e-3, I0A: 1e-10, N: 1.3, RsOhm: 2, RshOhm: 1e4, Cells: 4}}
	isc := c.Cell.Current(0, 400)
	if g := IrradianceFor(c, isc); math.Abs(g-400) > 1e-6 {
		t.Errorf("IrradianceFor(Isc at 400) = %.6f W/m²", g)
	}
}

func rel(a, b float64) float64 { return math.Abs(a-b) / math.Abs(b) }

func TestCycleTrace(t *testing.T) {
	c := &model.Circuit{
		Cell:    model.Cell{IphA: 2e-3},
		Storage: model.Storage{CapF: 1000e-6},
		Trigger: model.Trigger{Kind: model.TriggerVoltage, OnV: 3.0, OffV: 2.0},
		Load:    model.Load{Ohm: 100},
	}
	tr, err := CycleTrace(c, 1000, 0.2, 0.5, 701, "model")
	if err != nil {
		t.Fatal(err)
	}
	if len(tr.TS) < 600 || tr.TS[0] > -0.19 || tr.TS[len(tr.TS)-1] < 0.49 {
		t.Fatalf("trace spans %v..%v with %d points", tr.TS[0], tr.TS[len(tr.TS)-1], len(tr.TS))
	}
	// Just before the fire the node is near the on voltage; at the end of the pulse near off.
	for i, ts := range tr.TS {
		if ts < 0 && ts > -0.01 && math.Abs(tr.V[i]-3.0) > 0.02 {
			t.Errorf("v(%.3f s) = %.3f V, want about 3.0 V", ts, tr.V[i])
		}
	}
	minV := 10.0
	for _, v := range tr.V {
		minV = math.Min(minV, v)
	}
	if math.Abs(minV-2.0) > 0.01 {
		t.Errorf("lowest %.3f V, want the 2.0 V release", minV)
	}
}
