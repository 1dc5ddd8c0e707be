package main

import (
	"capcycle/analyze/whatif"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"

	"capcycle/analyze/profile"
)

func whatifJSON(t *testing.T, args ...string) whatif.Report {
	t.Helper()
	code, out, errs := runCmd(t, append([]string{"whatif", "--json"}, args...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var a whatif.Report
	if err := json.Unmarshal([]byte(out), &a); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	return a
}

// Doubling the storage capacitor: each answer's energy per pulse is what its own
// capacitor gives up between the fire and reset voltages, E = ½C(Von² − Voff²) (the
// energy stored in a capacitor, ½CV²: common practice, any circuits text), with C the
// profile's 4.70 mF before and the 9.40 mF set after. The trigger's fire voltage does not depend on
// the capacitor, so the energy grows only as far as the reset voltage allows: with the
// same pulse length into the same load, the bigger capacitor ends its pulse higher
// (V falls as exp(−t/RC) into a resistive load) and gives up less than twice the energy.
// The period grows.
func TestWhatifDoubleCap(t *testing.T) {
	const wren = "../../analyze/model/scenarios/wren.toml"
	p, err := profile.Load(wren)
	if err != nil {
		t.Fatal(err)
	}
	capF := p.Storage.CapF
	a := whatifJSON(t, "--profile", wren, "--light", "500", "--set", "cap="+strconv.FormatFloat(2*capF, 'g', -1, 64))
	if !a.Base.Fires || a.Changed == nil || !a.Changed.Fires {
		t.Fatalf("answer %+v", a)
	}
	if *a.Changed.PeriodS <= *a.Base.PeriodS {
		t.Errorf("period %.3f s with twice the capacitance, %.3f s before", *a.Changed.PeriodS, *a.Base.PeriodS)
	}
	if a.LightWm2 != 500 || a.LightFrom != "--light" {
		t.Errorf("light %v from %q", a.LightWm2, a.LightFrom)
	}
	for _, c := range []struct {
		name string
		f    whatif.Figures
		capF float64
	}{
		{"before", a.Base, capF},
		{"with twice the capacitance", *a.Changed, 2 * capF},
	} {
		if c.f.EnergyJ == nil || c.f.FireV == nil || c.f.ResetV == nil {
			t.Fatalf("%s: energy, fire or reset voltage missing: %+v", c.name, c.f)
		}
		von, voff := *c.f.FireV, *c.f.ResetV
		want := 0.5 * c.capF * (von*von - voff*voff)
		if got := *c.f.EnergyJ; want <= 0 || math.Abs(got-want) > 1e-9*want {
			t.Errorf("%s: energy per pulse %.6g J, want ½·%.3g F·(%.4f² − %.4f²) V² = %.6g J", c.name, got, c.capF, von, voff, want)
		}
	}
	if d := math.Abs(*a.Changed.FireV - *a.Base.FireV); d > 1e-6 {
		t.Errorf("fire voltage moved by %.3g V with the capacitor; the trigger sets it", d)
	}
	if math.Abs(*a.Changed.PulseS-*a.Base.PulseS) < 1e-6 {
		if *a.Changed.ResetV <= *a.Base.ResetV {
			t.Errorf("same %.3f s pulse: reset %.4f V with twice the capacitance, %.4f V before; want higher", *a.Base.PulseS, *a.Changed.ResetV, *a.Base.ResetV)
		}
		if e0, e1 := *a.Base.EnergyJ, *a.Changed.EnergyJ; e1 <= e0 || e1 >= 2*e0 {
			t.Errorf("energy per pulse %.4g J with twice the capacitance, %.4g J before; want more, but less than twice", e1, e0)
		}
	}
}

func TestWhatifTargetProposesStandardValues(t *testing.T) {
	a := whatifJSON(t, "--profile", "../../analyze/model/scenarios/wren.toml", "--light", "500", "--target", "period=60s", "--vary", "cap")
	if len(a.Proposals) < 2 || a.Proposals[0].Label != "exact" {
		t.Fatalf("proposals %+v", a.Proposals)
	}
	if p := a.Proposals[0].Figures.PeriodS; p == nil || math.Abs(*p-60) > 0.01 {
		t.Errorf("exact proposal's period %v", p)
	}
	for _, p := range a.Proposals[1:] {
		if !strings.HasPrefix(p.Label, "E6") {
			t.Errorf("proposal %q is not from the E6 series", p.Label)
		}
	}
}

func TestWhatifBadUsage(t *testing.T) {
	for _, args := range [][]string{
		{"whatif"},
		{"whatif", "--profile", "../../analyze/model/scenarios/wren.toml", "--light", "500", "--set", "colour=red"},
		{"whatif", "--profile", "../../analyze/model/scenarios/wren.toml", "--light", "500", "--target", "speed=3"},
		{"whatif", "--profile", "no-such.toml"},
	} {
		if code, _, errs := runCmd(t, args...); code != 2 || strings.Count(strings.TrimSpace(errs), "\n") > 0 && !strings.Contains(errs, "usage") {
			t.Errorf("%v: exit %d, stderr %q", args, code, errs)
		}
	}
}
