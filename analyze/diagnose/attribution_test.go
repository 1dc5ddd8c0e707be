package diagnose

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
)

// A capacitance 31 % below nominal is outside the ±20 % of tolerance code M and comes
// first; a trigger 1 % off its stated ±1.5 % accuracy is within it.
func TestAttribution(t *testing.T) {
	p := loadProfile(t, "wren.toml") // 4700 µF M, on_v 2.7 V ±1.5 %
	sd := 0.01
	r := &analysis.Result{
		Capacitance: &analysis.Capacity{F: analysis.Estimate{Value: 0.69 * 4700e-6, Origin: "measured"}},
		Cycles:      []analysis.Cycle{{Kind: "full"}},
	}
	r.Fit.Trigger.OnV = &analysis.Estimate{Value: 2.727, SD: &sd}
	leakSD := 1e5
	r.Fit.Leak.Ohm = &analysis.Estimate{Value: 1e6, SD: &leakSD}
	r.Fit.Leak.Method = analysis.LeakDarkDecay
	as := Attribute(r, p)
	if len(as) < 3 {
		t.Fatalf("attribution %+v", as)
	}
	first := as[0]
	if first.Part != "storage.cap_f" || first.Within || first.TolMinusPct != 20 {
		t.Errorf("first %+v, want the capacitance outside ±20 %%", first)
	}
	for _, a := range as {
		switch a.Part {
		case "trigger.on_v":
			// ±1.5 % widened by two standard uncertainties, 2·0.01/2.7 = 0.74 %
			if !a.Within || math.Abs(a.TolPlusPct-(1.5+200*0.01/2.7)) > 1e-9 {
				t.Errorf("on_v %+v", a)
			}
		case "storage.leak_a":
			// 2.7 V / 1 MΩ = 2.7 µA ± 0.27 µA against the declared 3 µA at 2.7 V:
			// −10 % within two standard uncertainties (18 %).
			if !a.Within || math.Abs(a.Measured-2.7e-6) > 1e-12 || a.Declared != 3e-6 {
				t.Errorf("leakage %+v", a)
			}
		case "storage.leak_a (at rated voltage)":
			t.Errorf("the datasheet ceiling judged although the leakage is declared: %+v", a)
		}
	}
	if Attribute(r, nil) != nil {
		t.Error("attribution without a profile")
	}
}

// Like with like: a hold-capacitor trigger's release is compared with the release the
// nominal model predicts, not with the supervisor's declared off_v; a leak fitted on the
// approach to a plateau (which includes the cell) is not compared with the capacitor's
// declared leakage.
func TestAttributionLikeWithLike(t *testing.T) {
	p := loadProfile(t, "wren.toml") // hold release, off_v 1.6 V (the supervisor's), ±1.5 %
	sd, pred1, pred2 := 0.003, 0.84, 0.85
	r := &analysis.Result{Cycles: []analysis.Cycle{{Kind: "full"}}}
	r.Fit.Trigger.OffV = &analysis.Estimate{Value: 0.852, SD: &sd}
	r.Prediction = &analysis.Prediction{Cycles: []analysis.PredictedCycle{
		{Nominal: &analysis.CycleFigs{ResetV: &pred1}}, {Nominal: &analysis.CycleFigs{ResetV: &pred2}}}}
	leakSD := 1e5
	r.Fit.Leak.Ohm = &analysis.Estimate{Value: 2e5, SD: &leakSD}
	r.Fit.Leak.Method = analysis.LeakPlateau
	as := Attribute(r, p)
	if len(as) != 1 {
		t.Fatalf("attribution %+v, want the release alone", as)
	}
	a := as[0]
	if a.Declared != 0.845 || !a.Within {
		t.Errorf("release %+v, want 0.852 V against the model's 0.845 V, within", a)
	}
}

// A load resistance 1 % below its declared value, measured through a declared
// capacitance (whose ±20 % makes the ohms uncertain by some 12 %), is consistent.
func TestAttributionLoadWithCapacitance(t *testing.T) {
	p := loadProfile(t, "wren.toml")
	p.Load.Kind, p.Load.Ohm = "resistor", 18
	sd := 18 * 0.2 / math.Sqrt(3)
	r := &analysis.Result{}
	r.Fit.Load.Ohm = &analysis.Estimate{Value: 17.82, SD: &sd}
	as := Attribute(r, p)
	if len(as) != 1 || as[0].Part != "load.ohm" || !as[0].Within {
		t.Errorf("attribution %+v, want the load within", as)
	}
}
