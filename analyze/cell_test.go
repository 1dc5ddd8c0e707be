package analyze

import (
	"math"
	"strings"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/model"
	"capcycle/analyze/stats"
)

// The built-in Wren circuit (model.Scenario) starting empty in faint light (20 W/m²: a
// slow first charge over the widest span of voltage), then cycling in bright light
// (300 W/m²) far below the cell's open-circuit voltage. The I-V tracing takes a bright
// rise; when the single-diode model is not determined there, Isc is still reported (the
// traced current extrapolated to 0 V) with an SD, and each cycle's light level is a
// short-circuit current, near the model's Isc at its light.
func TestCellBrightRise(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	light, err := model.NewPiecewise([]float64{0, 60, 61}, []float64{20, 20, 300})
	if err != nil {
		t.Fatal(err)
	}
	ts, vs, _ := simulate(t, sc.Circuit, light, 150, 50, 0, detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 31})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: sc.Circuit.Storage.CapF, ProbeOhm: sc.Circuit.ProbeOhm, CellSeries: 5}})
	want := sc.Circuit.Cell.Current(0, 300)
	cf := res.Fit.Cell
	if cf.IscA == nil || cf.IscA.SD == nil {
		t.Fatalf("isc_a %+v, want %.4g A with an SD (notes %q)", cf.IscA, want, res.Notes)
	}
	// 5 %: the traced currents rest on a few samples per rise, quantised (12 bits on 5 V)
	if got := cf.IscA.Value; math.Abs(got-want) > 0.05*want {
		t.Errorf("isc_a %.4g A ± %.2g, model %.4g A at 300 W/m²", got, *cf.IscA.SD, want)
	}
	if cf.VocV == nil {
		found := false
		for _, n := range res.Notes {
			found = found || strings.Contains(n, "Voc") && strings.Contains(n, "not determined")
		}
		if !found {
			t.Errorf("voc_v null without a note saying so: %q", res.Notes)
		}
	}
	n := 0
	for _, c := range res.Cycles {
		if c.FireS < 70 || c.LightA == nil || c.Kind != "full" {
			continue
		}
		n++
		if got := *c.LightA; math.Abs(got-want) > 0.1*want {
			t.Errorf("cycle %d at %.1f s: light_a %.4g A, model Isc %.4g A", c.Index, c.FireS, got, want)
		}
	}
	if n < 5 {
		t.Errorf("%d bright cycles with a light level, want at least 5", n)
	}
}

// A capture of chatter alone: Wren's supervisor with a 22 nF hold capacitor (too small to
// stretch its hysteresis) fires every quarter second with 50 mV drops near 2.7 V, at
// 50 W/m², read at 100 Hz by a 10-bit ADC (9.8 mV at the node). Each recharge spans only
// five ADC steps; its traced current must not take the steps' edges for the slope, and
// the single-diode fit to the first charge must not be a degenerate one (ideality 0.03,
// Voc just below the voltages it charges at) that turns each recharge into a huge
// short-circuit current. The light level stays within 20 % of the cell's Isc.
func TestCellChatterLight(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	c := sc.Circuit
	c.Trigger.HoldF = 22e-9
	const g = 50.0
	ts, vs, _ := simulate(t, c, model.Constant(g), 120, 100, 1.5, detecttest.ADC{NoiseV: 2e-3, Bits: 10, FullV: 10, Seed: 51})
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF, ProbeOhm: c.ProbeOhm, CellSeries: 5}})
	var l []float64
	for _, cy := range res.Cycles {
		if cy.LightA != nil {
			l = append(l, *cy.LightA)
		}
	}
	if len(l) < 100 {
		t.Fatalf("%d cycles with a light level, want the chatter's hundreds", len(l))
	}
	isc := c.Cell.Current(0, g)
	if m := stats.Median(l); math.Abs(m-isc) > 0.2*isc {
		t.Errorf("median light_a %.4g A, the cell's Isc %.4g A", m, isc)
	}
	if n := res.Fit.Cell.N; n != nil && !(n.Value >= 0.5 && n.Value <= 10) {
		t.Errorf("degenerate single-diode fit: ideality %.3g per cell", n.Value)
	}
}

// Fern charging from empty through a morning whose light grows from 0 to 40 W/m² over four
// hours, never firing: the one long rise is traced while the light changes, so its traced
// current rises with the voltage, which no cell under steady light does. No Isc is read
// from it (it would be some mixture of the morning's light levels), and a note says why.
func TestCellGrowingLight(t *testing.T) {
	sc, err := model.Scenario("fern")
	if err != nil {
		t.Fatal(err)
	}
	light, err := model.NewPiecewise([]float64{0, 4 * 3600}, []float64{0, 40})
	if err != nil {
		t.Fatal(err)
	}
	ts, vs, sim := simulate(t, sc.Circuit, light, 4*3600, 0.5, 0, detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 10, Seed: 81})
	if len(sim.Fires()) != 0 {
		t.Fatal("the model fired")
	}
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: sc.Circuit.Storage.CapF, ProbeOhm: sc.Circuit.ProbeOhm, CellSeries: sc.Circuit.Cell.Cells}})
	if cf := res.Fit.Cell; cf.IscA != nil {
		t.Errorf("isc_a %.4g A from a rise traced in growing light (the cell's Isc went from 0 to %.4g A); notes %q",
			cf.IscA.Value, sc.Circuit.Cell.Current(0, 40), res.Notes)
	}
	found := false
	for _, n := range res.Notes {
		found = found || strings.Contains(n, "light grew")
	}
	if !found {
		t.Errorf("no note on the growing light: %q", res.Notes)
	}
}
