package predict

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
)

// truthResult simulates c under piecewise-constant light steps and returns an analysis
// Result holding the simulated cycles as if measured, each with the short-circuit current
// of the light it charged under.
func truthResult(t *testing.T, c *model.Circuit, levels []float64, stepS float64) *analysis.Result {
	t.Helper()
	var ts, gs []float64
	for i, g := range levels {
		ts = append(ts, float64(i)*stepS, float64(i+1)*stepS-1e-3)
		gs = append(gs, g, g)
	}
	light, err := model.NewPiecewise(ts, gs)
	if err != nil {
		t.Fatal(err)
	}
	res, err := model.Simulate(c, light, &model.Options{DurationS: float64(len(levels)) * stepS, StartV: c.Trigger.OffV})
	if err != nil {
		t.Fatal(err)
	}
	r := &analysis.Result{Schema: analysis.Schema}
	for i, cy := range res.Cycles {
		if i == 0 {
			continue // the first charge starts from an arbitrary voltage
		}
		g := light.IrradianceWm2(cy.FireS)
		if light.IrradianceWm2(cy.StartS) != g {
			continue // charged across a light step
		}
		charge := cy.FireS - cy.StartS
		isc := c.Cell.Current(0, g)
		e := 0.5 * c.Storage.CapF * (cy.FireV*cy.FireV - cy.ResetV*cy.ResetV)
		r.Cycles = append(r.Cycles, analysis.Cycle{Index: i, FireS: cy.FireS, FireV: cy.FireV,
			ResetS: cy.ResetS, ResetV: cy.ResetV, ChargeS: &charge, PulseS: cy.ResetS - cy.FireS,
			EnergyJ: &e, Kind: "full", LightA: &isc})
	}
	if len(r.Cycles) < 10 {
		t.Fatalf("only %d usable cycles", len(r.Cycles))
	}
	return r
}

func rcCircuit() *model.Circuit {
	return &model.Circuit{
		Cell:    model.Cell{IphA: 5e-3},
		Storage: model.Storage{CapF: 1000e-6, LeakOhm: 200e3},
		Trigger: model.Trigger{Kind: model.TriggerVoltage, OnV: 3.0, OffV: 2.0},
		Load:    model.Load{Ohm: 100},
	}
}

// Predicting a circuit's own cycles, at the light measured in each charge, reproduces them:
// a passing cloud (the light steps) is not counted as a model error.
func TestCompareSelfConsistent(t *testing.T) {
	c := rcCircuit()
	r := truthResult(t, c, []float64{1000, 400, 700, 250, 1000}, 60)
	p := Compare(r, c, c)
	for _, s := range []*analysis.ErrorSummary{p.Nominal, p.Fitted} {
		if s == nil || s.N != len(r.Cycles) {
			t.Fatalf("summary %+v, want %d cycles", s, len(r.Cycles))
		}
		// The light is binned to 0.5 % (log scale) for the cache: the charge time follows
		// 1/I, so errors stay below 0.3 %.
		if *s.MAPEPct > 0.3 || *s.Within10Pct != 1 {
			t.Errorf("MAPE %.3f %%, within 10 %% %.2f", *s.MAPEPct, *s.Within10Pct)
		}
	}
}

// A nominal capacitance 30 % high predicts charge times 30 % long: the bias shows it.
func TestCompareBiasFromWrongCapacitance(t *testing.T) {
	c := rcCircuit()
	r := truthResult(t, c, []float64{1000, 600, 800}, 60)
	nom := *c
	nom.Storage.CapF *= 1.3
	p := Compare(r, &nom, c)
	if p.Nominal == nil || math.Abs(*p.Nominal.BiasPct-30) > 1.0 {
		t.Fatalf("nominal bias %v %%, want about +30 %%", p.Nominal.BiasPct)
	}
	if *p.Nominal.Within10Pct != 0 {
		t.Errorf("share within 10 %% = %.2f, want 0", *p.Nominal.Within10Pct)
	}
	if math.Abs(*p.Fitted.BiasPct) > 0.3 {
		t.Errorf("fitted bias %.3f %%", *p.Fitted.BiasPct)
	}
}

func TestFittedReplacesMeasuredParts(t *testing.T) {
	c := rcCircuit()
	sd := 0.01
	r := &analysis.Result{}
	r.Fit.Trigger.OnV = &analysis.Estimate{Value: 3.1, SD: &sd}
	r.Fit.Trigger.OffV = &analysis.Estimate{Value: 1.9, SD: &sd}
	r.Fit.Load.Ohm = &analysis.Estimate{Value: 82}
	r.Fit.Leak.Ohm = &analysis.Estimate{Value: 150e3}
	f, replaced := Fitted(c, r)
	if f.Trigger.OnV != 3.1 || f.Trigger.OffV != 1.9 || f.Load.Ohm != 82 || f.Storage.LeakOhm != 150e3 {
		t.Errorf("fitted circuit %+v", f)
	}
	if len(replaced) != 4 {
		t.Errorf("replaced %v", replaced)
	}
	if c.Trigger.OnV != 3.0 {
		t.Error("Fitted changed the nominal circuit")
	}
	if f.Storage.CapF != c.Storage.CapF {
		t.Error("declared capacitance replaced without a measurement")
	}
}

func TestHeldOut(t *testing.T) {
	c := rcCircuit()
	r := truthResult(t, c, []float64{900, 500, 900, 500}, 60)
	s := HeldOut(r, c, 120)
	if s == nil || s.N == 0 || *s.MAPEPct > 0.3 {
		t.Fatalf("held-out summary %+v", s)
	}
	for _, cy := range r.Cycles {
		if cy.FireS >= 120 {
			return
		}
	}
	t.Fatal("no held-out cycles")
}
