package model

import (
	"fmt"
	"math"
	"testing"
	"time"
)

// TestSunPosition checks the NOAA/Spencer solar position against facts of spherical
// astronomy: at the June solstice the noon zenith is the latitude minus the obliquity
// (23.44°; from memory), at the equinox it is the latitude; the noon sun stands due south
// north of the tropics; and above the Arctic circle the midsummer midnight sun stays up.
// Spencer's series has no year in it, so it cannot follow the equinox as it moves by up to a
// day through the leap-year cycle; near the equinox the declination changes by 0.4° a day,
// near the solstice hardly at all. The tolerance is 0.2° at a solstice, 0.5° at an equinox.
func TestSunPosition(t *testing.T) {
	noonZenith := func(day time.Time, lat float64) (zmin, azAt float64) {
		zmin = 180
		for m := 0; m < 24*60; m++ {
			z, a := SunPosition(day.Add(time.Duration(m)*time.Minute), lat, 0)
			if z < zmin {
				zmin, azAt = z, a
			}
		}
		return zmin, azAt
	}
	june := time.Date(2026, 6, 21, 0, 0, 0, 0, time.UTC)
	march := time.Date(2026, 3, 20, 0, 0, 0, 0, time.UTC)
	for _, tc := range []struct {
		name           string
		day            time.Time
		lat, want, tol float64
	}{
		{"June 48.1N", june, 48.1, 48.1 - 23.44, 0.2},
		{"June 52.2N", june, 52.2, 52.2 - 23.44, 0.2},
		{"equinox 52.2N", march, 52.2, 52.2, 0.5},
		{"June 35S", june, -35, 35 + 23.44, 0.2},
	} {
		z, az := noonZenith(tc.day, tc.lat)
		if math.Abs(z-tc.want) > tc.tol {
			t.Errorf("%s: noon zenith %.3f°, want %.2f°", tc.name, z, tc.want)
		}
		if tc.lat > 23.44 && math.Abs(az-180) > 2 {
			t.Errorf("%s: noon azimuth %.2f°, want 180° (south)", tc.name, az)
		}
	}
	if z, _ := SunPosition(time.Date(2026, 6, 21, 0, 0, 0, 0, time.UTC), 70, 0); z >= 90 {
		t.Errorf("70°N midsummer midnight: zenith %.2f°, want the sun above the horizon", z)
	}
	// December at 52.2°N: the sun rises south of east, so a north window never sees it.
	w := &WindowDay{Start: time.Date(2026, 12, 2, 0, 0, 0, 0, time.UTC), LatitudeDeg: 52.2, AzimuthDeg: 0, TiltDeg: 90}
	for s := 0.0; s < 86400; s += 300 {
		if b, _ := w.clearSky(s); b != 0 {
			t.Fatalf("north window in December gets direct sun %.3g W/m² at %.0f s", b, s)
		}
	}
}

// TestErbs checks the inversion of the Erbs, Klein and Duffie (1982) diffuse-fraction
// correlation, and its branch values (1 at k_t = 0, 0.165 above 0.8).
func TestErbs(t *testing.T) {
	for _, kt := range []float64{0.05, 0.2, 0.3, 0.45, 0.6, 0.7, 0.75} {
		if got := erbsClearness(erbsDiffuse(kt)); math.Abs(got-kt) > 1e-9 {
			t.Errorf("k_t %g: inverted %g", kt, got)
		}
	}
	if erbsDiffuse(0) != 1 || erbsDiffuse(0.9) != 0.165 {
		t.Errorf("branch values %g %g", erbsDiffuse(0), erbsDiffuse(0.9))
	}
	// Continuity at the branch point k_t = 0.22, to the correlation's printed digits (they
	// leave a step of 3e-4).
	if d := math.Abs(erbsDiffuse(0.22) - erbsDiffuse(0.2200001)); d > 5e-4 {
		t.Errorf("jump %g at k_t = 0.22", d)
	}
}

// TestLightCache checks that the simulator's interpolated windowsill light stays within
// 0.1 % (or 0.01 W/m²) of the uncached evaluation, over a whole cloudy day.
func TestLightCache(t *testing.T) {
	sc, err := Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	lc := newLightCache(sc.Light)
	for s := 0.0; s < 86400; s += 7.3 {
		want := sc.Light.IrradianceWm2(s)
		got := lc.at(s)
		if math.Abs(got-want) > 1e-3*want+0.01 {
			t.Fatalf("t = %.1f s: cached %.4f W/m², direct %.4f", s, got, want)
		}
	}
}

func TestPiecewise(t *testing.T) {
	p, err := NewPiecewise([]float64{0, 10, 20}, []float64{0, 100, 50})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct{ t, want float64 }{{-5, 0}, {0, 0}, {5, 50}, {10, 100}, {15, 75}, {30, 50}} {
		if got := p.IrradianceWm2(tc.t); got != tc.want {
			t.Errorf("G(%g) = %g, want %g", tc.t, got, tc.want)
		}
	}
	if _, err := NewPiecewise([]float64{0, 0}, []float64{1, 2}); err == nil {
		t.Error("repeated time accepted")
	}
	if _, err := NewPiecewise([]float64{0}, []float64{-1}); err == nil {
		t.Error("negative irradiance accepted")
	}
}

// TestSamplerMatchesSimulate: pulling samples gives the same trajectory and events as
// Simulate with OnSample.
func TestSamplerMatchesSimulate(t *testing.T) {
	c := fullCircuit()
	opt := &Options{DurationS: 20, RateHz: 50}
	var want []Sample
	o2 := *opt
	o2.OnSample = func(s Sample) { want = append(want, s) }
	res, err := Simulate(c, Constant(400), &o2)
	if err != nil {
		t.Fatal(err)
	}
	sp, err := NewSampler(c, Constant(400), opt)
	if err != nil {
		t.Fatal(err)
	}
	var got []Sample
	for {
		s, ok := sp.Next()
		if !ok {
			break
		}
		got = append(got, s)
	}
	if sp.Err() != nil {
		t.Fatal(sp.Err())
	}
	if len(got) != len(want) || len(got) != 1001 {
		t.Fatalf("sampler %d samples, Simulate %d, want 1001", len(got), len(want))
	}
	for i := range got {
		if got[i] != want[i] {
			t.Fatalf("sample %d: %+v vs %+v", i, got[i], want[i])
		}
	}
	if len(sp.Events()) != len(res.Events) {
		t.Errorf("sampler %d events, Simulate %d", len(sp.Events()), len(res.Events))
	}
	// The switch is on in some samples and the hold voltage tracks the node while charging.
	on := 0
	for _, s := range got {
		if s.On {
			on++
		}
	}
	if on == 0 || on == len(got) {
		t.Errorf("switch on in %d of %d samples", on, len(got))
	}
}

// TestMotorCoastDown: with the switch off, dry friction alone stops the rotor at
// t = J ω0 / T_f (no viscous term), and the stop is an event, not a creep.
func TestMotorCoastDown(t *testing.T) {
	const j, tf = 50e-9, 30e-6
	c := &Circuit{Storage: Storage{CapF: 1e-3}, Trigger: Trigger{Kind: TriggerVoltage, OnV: 3, OffV: 1},
		Load: Load{Kind: LoadMotor, Ohm: 18, KeVsPerRad: 0.8e-3, InertiaKgM2: j, FrictionNm: tf}}
	e, err := newEngine(c, Constant(0), &Options{DurationS: 10})
	if err != nil {
		t.Fatal(err)
	}
	e.m.stopped = false
	e.y[iW] = 600 // rad/s
	e.ax = e.eval(e.t, &e.y, e.m, &e.f)
	e.h = e.initialStep()
	for {
		more, err := e.advance()
		if err != nil {
			t.Fatal(err)
		}
		if !more || e.m.stopped {
			break
		}
	}
	want := j * 600 / tf
	if !e.m.stopped || math.Abs(e.t-want) > 1e-6 {
		t.Fatalf("stopped %v at %.9f s, want %.9f s", e.m.stopped, e.t, want)
	}
}

func ExampleSimulate() {
	// A 1 mF capacitor charged by an ideal 1 mA source, fired into 100 Ω at 2 V and
	// released at 1 V.
	c := &Circuit{
		Cell:    Cell{IphA: 1e-3},
		Storage: Storage{CapF: 1e-3},
		Trigger: Trigger{Kind: TriggerVoltage, OnV: 2, OffV: 1},
		Load:    Load{Ohm: 100},
	}
	res, err := Simulate(c, Constant(RefIrradianceWm2), &Options{DurationS: 5})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, cy := range res.Cycles {
		fmt.Printf("fire %.4f s at %.3f V, reset %.4f s at %.3f V, into the load %.3f mJ\n",
			cy.FireS, cy.FireV, cy.ResetS, cy.ResetV, 1e3*cy.LoadJ)
	}
	// Output:
	// fire 2.0000 s at 2.000 V, reset 2.0747 s at 1.000 V, into the load 1.607 mJ
	// fire 3.0747 s at 2.000 V, reset 3.1494 s at 1.000 V, into the load 1.607 mJ
	// fire 4.1494 s at 2.000 V, reset 4.2242 s at 1.000 V, into the load 1.607 mJ
}
