package diagnose

import (
	"capcycle/analyze/analysis"
	"testing"
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
	r.Fit.Leak.Ohm = &analysis.Estimate{Value: 1e6}
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
			if !a.Within || a.TolPlusPct != 1.5 {
				t.Errorf("on_v %+v", a)
			}
		case "storage.leak_a (at rated voltage)":
			// 6.3 V / 1 MΩ = 6.3 µA against the 296.1 µA limit.
			if !a.Within {
				t.Errorf("leakage %+v", a)
			}
		}
	}
	if Attribute(r, nil) != nil {
		t.Error("attribution without a profile")
	}
}
