package model

import (
	"math"
	"testing"
)

// fullCircuit has every part that moves energy: a cell with all its resistances, leakage,
// the probe, a slow supercapacitor branch, the hold trigger with its diode and quiescent
// draw, a switch with both on-resistance and drop, and a motor with dry friction.
func fullCircuit() *Circuit {
	return &Circuit{
		Cell:       Cell{IphA: 18e-3, I0A: 5e-10, N: 1.5, RsOhm: 5, RshOhm: 8e3, Cells: 5},
		Storage:    Storage{CapF: 4.7e-3, LeakOhm: 900e3, Branch2F: 1e-3, Branch2Ohm: 500},
		ProbeOhm:   2e6,
		Supervisor: Supervisor{QuiescentA: 1e-6, MinSupplyV: 1.2},
		Trigger:    Trigger{Kind: TriggerHold, OnV: 2.5, OffV: 2.45, HoldF: 2.2e-6, DiodeV: 0.2},
		Switch:     Switch{OnOhm: 0.4, DropV: 0.05},
		Load: Load{Kind: LoadMotor, Ohm: 18, KeVsPerRad: 0.8e-3, InertiaKgM2: 50e-9,
			ViscousNms: 10e-9, FrictionNm: 30e-6},
	}
}

// TestEnergyBalance checks the bookkeeping: per cycle, what the cell delivered equals what
// the load, leakage, probe, supervisor, hold diode and slow branch took plus the change of
// ½CV² + ½C2V2² + ½ChVh² (conservation of energy at the nodes). The imbalance must be
// integration error only: it shrinks as the tolerance is tightened.
func TestEnergyBalance(t *testing.T) {
	worst := map[float64]float64{}
	for _, tol := range []float64{1e-7, 1e-10} {
		res, err := Simulate(fullCircuit(), Constant(400), &Options{DurationS: 60, RelTol: tol})
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Cycles) < 5 {
			t.Fatalf("%d cycles", len(res.Cycles))
		}
		for _, cy := range res.Cycles {
			for name, v := range map[string]float64{"harvested": cy.HarvestedJ, "load": cy.LoadJ, "leak": cy.LeakJ,
				"probe": cy.ProbeJ, "quiescent": cy.QuiescentJ, "diode": cy.DiodeJ, "branch": cy.BranchJ} {
				if !(v > 0) {
					t.Fatalf("cycle %d: %s energy %g, want > 0", cy.Index, name, v)
				}
			}
			rel := math.Abs(cy.Residual()) / cy.HarvestedJ
			worst[tol] = math.Max(worst[tol], rel)
		}
		tot := res.Totals
		if rel := math.Abs(tot.Residual()) / tot.HarvestedJ; rel > 10*tol {
			t.Errorf("tol %g: whole-run residual %.3g of the harvest", tol, rel)
		}
	}
	t.Logf("worst per-cycle residual: %.3g of the harvest at RelTol 1e-7, %.3g at 1e-10", worst[1e-7], worst[1e-10])
	if worst[1e-7] > 1e-6 || worst[1e-10] > 1e-9 {
		t.Errorf("energy does not balance to the integration error: %v", worst)
	}
}

// TestStartAboveTrigger: a node that starts above the trigger fires at once.
func TestStartAboveTrigger(t *testing.T) {
	c := &Circuit{Storage: Storage{CapF: 1e-3}, Trigger: Trigger{Kind: TriggerVoltage, OnV: 2, OffV: 1}, Load: Load{Ohm: 100}}
	res, err := Simulate(c, Constant(0), &Options{DurationS: 1, StartV: 3})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Events) < 2 || res.Events[0].Kind != EventFire || res.Events[0].TS != 0 {
		t.Fatalf("events %v", res.Events)
	}
	// Discharge from 3 V to 1 V through 100 Ω: t = RC ln 3.
	if d := res.Events[1].TS - 0.1*math.Log(3); math.Abs(d) > 1e-7 {
		t.Errorf("reset at %.9f s, want %.9f s", res.Events[1].TS, 0.1*math.Log(3))
	}
}

// TestTimerTrigger: fires exactly at the phase and every period, for the pulse.
func TestTimerTrigger(t *testing.T) {
	c := &Circuit{Cell: currentSource(1e-3), Storage: Storage{CapF: 1e-3},
		Trigger: Trigger{Kind: TriggerTimer, PeriodS: 2, PulseS: 0.25, PhaseS: 0.5}, Load: Load{Ohm: 50}}
	res, err := Simulate(c, Constant(1000), &Options{DurationS: 9})
	if err != nil {
		t.Fatal(err)
	}
	f, r := res.Fires(), res.Resets()
	if len(f) != 5 || len(r) != 5 {
		t.Fatalf("fires %v resets %v", f, r)
	}
	for k := range f {
		if w := 0.5 + 2*float64(k); math.Abs(f[k]-w) > 1e-12 {
			t.Errorf("fire %d at %v, want %v", k, f[k], w)
		}
		if k < len(r) && math.Abs(r[k]-f[k]-0.25) > 1e-12 {
			t.Errorf("pulse %d lasts %v, want 0.25", k, r[k]-f[k])
		}
	}
}

// TestPlateauTrigger: a plateau detector fires once the net charging current C dV/dt has
// fallen to its threshold. With a current source I and leakage R the node follows
// V = IR(1 - e^(-t/RC)) and C dV/dt = I e^(-t/RC), so it fires at t = RC ln(I/I_th).
func TestPlateauTrigger(t *testing.T) {
	const ia, r, cf, ith = 1e-3, 5e3, 1e-3, 0.1e-3
	c := &Circuit{Cell: currentSource(ia), Storage: Storage{CapF: cf, LeakOhm: r},
		Trigger: Trigger{Kind: TriggerPlateau, PlateauA: ith, ArmV: 1, OffV: 0.5}, Load: Load{Ohm: 10}}
	res, err := Simulate(c, Constant(1000), &Options{DurationS: 20})
	if err != nil {
		t.Fatal(err)
	}
	f := res.Fires()
	if len(f) == 0 {
		t.Fatal("no fire")
	}
	want := r * cf * math.Log(ia/ith)
	if math.Abs(f[0]-want) > 1e-6 {
		t.Errorf("plateau fire at %.9f s, want %.9f s", f[0], want)
	}
}
