package model

import (
	"reflect"
	"testing"

	"capcycle/analyze/profile"
)

// TestScenariosMatchProfiles keeps the built-in scenarios equal to FromProfile of the
// profiles in analyze/model/scenarios.
func TestScenariosMatchProfiles(t *testing.T) {
	for _, name := range ScenarioNames() {
		p, err := profile.Load("scenarios/" + name + ".toml")
		if err != nil {
			t.Fatal(err)
		}
		c, l, err := FromProfile(p)
		if err != nil {
			t.Fatal(err)
		}
		sc, err := Scenario(name)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(c, sc.Circuit) {
			t.Errorf("%s: profile circuit\n%+v\nscenario\n%+v", name, c, sc.Circuit)
		}
		if !reflect.DeepEqual(l, sc.Light) {
			t.Errorf("%s: profile light %+v, scenario %+v", name, l, sc.Light)
		}
	}
}

// TestFromProfileCell checks that the cell built from the ratings reproduces them.
func TestFromProfileCell(t *testing.T) {
	for _, pc := range []profile.Cell{
		{VocV: 4.2, IscA: 18e-3, SeriesCells: 5, RefWm2: 1000},
		{VocV: 5.6, IscA: 12e-3, SeriesCells: 7, RefWm2: 1000, ShuntOhm: 4e3, SeriesOhm: 6},
		{VocV: 2.0, IscA: 50e-3, SeriesCells: 4, RefWm2: 800, Ideality: 1.2, TempK: 310},
	} {
		c, err := cellFromProfile(&pc)
		if err != nil {
			t.Fatal(err)
		}
		if i := c.Current(0, pc.RefWm2); abs(i-pc.IscA) > 1e-12 {
			t.Errorf("%+v: Isc %g", pc, i)
		}
		if v := c.OpenCircuitV(pc.RefWm2); abs(v-pc.VocV) > 1e-9 {
			t.Errorf("%+v: Voc %g", pc, v)
		}
	}
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// TestScenarioStories checks the demo story: Wren fires all day in the sun, Fern never
// reaches its trigger.
func TestScenarioStories(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates two days; skipped with -short")
	}
	sc, _ := Scenario("wren")
	res, err := Simulate(sc.Circuit, sc.Light, &Options{DurationS: 86400})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Cycles) < 10000 {
		t.Errorf("wren: %d cycles in a day, want tens of thousands", len(res.Cycles))
	}
	t.Logf("wren: %d cycles; harvested %.1f J, into the motor %.1f J", len(res.Cycles), res.Totals.HarvestedJ, res.Totals.LoadJ)
	sc, _ = Scenario("fern")
	var peak float64
	res, err = Simulate(sc.Circuit, sc.Light, &Options{DurationS: 86400, RateHz: 0.1, OnSample: func(s Sample) {
		peak = max(peak, s.V)
	}})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Events) != 0 || peak >= sc.Circuit.Trigger.OnV || peak < 0.3*sc.Circuit.Trigger.OnV {
		t.Errorf("fern: %d events, peak %.3f V; want a stall well below %.2f V", len(res.Events), peak, sc.Circuit.Trigger.OnV)
	}
	t.Logf("fern: peak %.3f V", peak)
}

// A current-sense shunt in the load's return (an iload channel) is in series with the
// switch: the model adds it to the on-resistance, and the probe stays the vcap divider.
func TestFromProfileShunt(t *testing.T) {
	base, err := profile.Load("scenarios/wren.toml")
	if err != nil {
		t.Fatal(err)
	}
	plain, _, err := FromProfile(base)
	if err != nil {
		t.Fatal(err)
	}
	p := *base
	p.Channels = append(append([]profile.Channel(nil), base.Channels...), profile.Channel{Node: profile.NodeIload, ADC: 3, ShuntOhm: 1.5, AmpGain: 10})
	c, _, err := FromProfile(&p)
	if err != nil {
		t.Fatal(err)
	}
	if d := c.Switch.OnOhm - plain.Switch.OnOhm; d != 1.5 || c.ProbeOhm != plain.ProbeOhm {
		t.Errorf("on-resistance %g Ω (was %g Ω), probe %g Ω (was %g Ω); want the 1.5 Ω shunt added to the switch only",
			c.Switch.OnOhm, plain.Switch.OnOhm, c.ProbeOhm, plain.ProbeOhm)
	}
}
