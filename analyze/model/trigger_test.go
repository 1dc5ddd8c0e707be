package model

import (
	"math"
	"testing"
)

// TestHoldTrigger checks the hold-capacitor release against its closed form: after the
// fire the diode blocks, the hold capacitor alone feeds the supervisor's quiescent current,
// so its voltage falls linearly at I_q/C_h and the release comes Ch (OnV - OffV)/I_q after
// the fire (charge conservation on the hold capacitor; common practice, no source).
func TestHoldTrigger(t *testing.T) {
	const (
		ch   = 10e-6
		iq   = 1e-6
		on   = 2.6
		off  = 2.55
		vd   = 0.3
		cf   = 4.7e-3
		rl   = 20.0
		ia   = 3e-3
		vmin = 1.0
	)
	c := &Circuit{
		Cell:       currentSource(ia),
		Storage:    Storage{CapF: cf},
		Supervisor: Supervisor{QuiescentA: iq, MinSupplyV: vmin},
		Trigger:    Trigger{Kind: TriggerHold, OnV: on, OffV: off, HoldF: ch, DiodeV: vd},
		Load:       Load{Ohm: rl},
	}
	res, err := Simulate(c, Constant(1000), &Options{DurationS: 30})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Cycles) < 3 {
		t.Fatalf("%d cycles", len(res.Cycles))
	}
	wantPulse := ch * (on - off) / iq
	for _, cy := range res.Cycles[:3] {
		if math.Abs(cy.FireV-(on+vd)) > 1e-6 {
			t.Errorf("cycle %d fired at %.7f V, want OnV + DiodeV = %.7f V", cy.Index, cy.FireV, on+vd)
		}
		pulse := cy.ResetS - cy.FireS
		// The diode blocks within microseconds of the fire; allow 10 µs.
		if math.Abs(pulse-wantPulse) > 10e-6 {
			t.Errorf("cycle %d pulse %.7f s, want Ch ΔV/Iq = %.7f s", cy.Index, pulse, wantPulse)
		}
		// During the pulse the node decays toward I·R through the load.
		vr := ia * rl
		wantV := vr + (on+vd-vr)*math.Exp(-pulse/(rl*cf))
		if math.Abs(cy.ResetV-wantV) > 1e-6 {
			t.Errorf("cycle %d reset at %.7f V, want %.7f V", cy.Index, cy.ResetV, wantV)
		}
		// The balance holds to the integration error, about RelTol of the flows.
		if r := cy.Residual(); math.Abs(r) > 10*DefaultRelTol*cy.HarvestedJ {
			t.Errorf("cycle %d: energy residual %.3g J of %.3g J harvested", cy.Index, r, cy.HarvestedJ)
		}
	}
	// The event list alternates diode and switch events in the expected order.
	want := []EventKind{EventDiodeOn, EventFire, EventDiodeOff, EventReset, EventDiodeOn, EventFire}
	for i, k := range want {
		if res.Events[i].Kind != k {
			t.Fatalf("event %d is %v, want %v (%v)", i, res.Events[i].Kind, k, res.Events[:6])
		}
	}
}

// TestQuiescentFades checks that the supervisor current fades below its minimum supply: a
// hold capacitor left alone must decay ever more slowly and never go below zero.
func TestQuiescentFades(t *testing.T) {
	e := &engine{c: Circuit{Supervisor: Supervisor{QuiescentA: 1e-6, MinSupplyV: 1}}}
	prev := 0.0
	for v := -0.5; v <= 2; v += 0.01 {
		iq := e.quiescent(v)
		if iq < prev-1e-18 || iq < 0 || iq > 1e-6 {
			t.Fatalf("I_q(%.2f V) = %g after %g: not a rising ramp from 0 to 1 µA", v, iq, prev)
		}
		prev = iq
	}
	if e.quiescent(0) != 0 || e.quiescent(1) != 1e-6 {
		t.Fatalf("I_q(0) = %g, I_q(1) = %g", e.quiescent(0), e.quiescent(1))
	}
}

// TestMotorSpinUp checks the DC motor against the first-order closed form on a stiff
// supply (a huge capacitor, no inductance, no dry friction):
// ω(t) = ω∞ (1 - exp(-t/τ)), ω∞ = Ke V/(Ke² + B R), τ = J R/(Ke² + B R)
// (the standard permanent-magnet motor equations; common practice, no source).
func TestMotorSpinUp(t *testing.T) {
	const (
		v  = 3.0
		r  = 20.0
		ke = 1e-3
		j  = 1e-8
		b  = 1e-9
	)
	c := &Circuit{
		Storage: Storage{CapF: 1e6},
		Trigger: Trigger{Kind: TriggerVoltage, OnV: 1, OffV: 0.5},
		Load:    Load{Kind: LoadMotor, Ohm: r, KeVsPerRad: ke, InertiaKgM2: j, ViscousNms: b},
	}
	var got []Sample
	_, err := Simulate(c, Constant(0), &Options{DurationS: 1, StartV: v, RateHz: 20,
		OnSample: func(s Sample) { got = append(got, s) }})
	if err != nil {
		t.Fatal(err)
	}
	den := ke*ke + b*r
	winf := ke * v / den
	tau := j * r / den
	for _, s := range got {
		want := winf * (1 - math.Exp(-s.TS/tau))
		if math.Abs(s.SpeedRadS-want) > 1e-5*winf {
			t.Errorf("ω(%.2f s) = %.6f rad/s, want %.6f", s.TS, s.SpeedRadS, want)
		}
	}
	// With a small inductance the current lags by L/R but the speed barely changes.
	c.Load.InductH = 200e-6
	var got2 []Sample
	if _, err := Simulate(c, Constant(0), &Options{DurationS: 0.2, StartV: v, RateHz: 20, QuasiStaticS: -1,
		OnSample: func(s Sample) { got2 = append(got2, s) }}); err != nil {
		t.Fatal(err)
	}
	for k, s := range got2 {
		if d := math.Abs(s.SpeedRadS - got[k].SpeedRadS); d > 1e-3*winf {
			t.Errorf("with L: ω(%.2f s) = %.4f, without %.4f", s.TS, s.SpeedRadS, got[k].SpeedRadS)
		}
	}
}
