package analyze

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/diagnose"
	"capcycle/analyze/model"
)

// A plateau trigger on the model (it fires when the net charging current C dV/dt falls
// below 0.3 mA): the threshold current over C and, with C, the current, within 10 % of
// the model's (the fit of the end of each rise reads it 8 % high here: see endShare);
// every cycle carries the current at its fire.
func TestPlateauThreshold(t *testing.T) {
	sc, _ := model.Scenario("wren")
	c := *sc.Circuit
	c.Trigger = model.Trigger{Kind: model.TriggerPlateau, PlateauA: 0.3e-3, ArmV: 2.0, OffV: 1.5}
	c.Load = model.Load{Kind: model.LoadResistor, Ohm: 30}
	c.Switch = model.Switch{}
	ts, vs, _ := simulate(t, &c, model.Constant(300), 600, 50, 1.0, detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 26})
	capF := c.Storage.CapF
	res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: capF, TriggerKind: analysis.TriggerPlateau}})
	tf := res.Fit.Trigger
	if tf.Kind != analysis.TriggerPlateau || tf.KindCheck != analysis.KindAgree {
		t.Fatalf("kind %q check %q (%s), want plateau, agree", tf.Kind, tf.KindCheck, tf.KindBasis)
	}
	want := c.Trigger.PlateauA / capF
	if tf.ThresholdVPerS == nil || math.Abs(tf.ThresholdVPerS.Value-want) > 0.1*want {
		t.Fatalf("threshold over C %+v, want %.4g V/s within 10 %%", tf.ThresholdVPerS, want)
	}
	if tf.ThresholdA == nil || math.Abs(tf.ThresholdA.Value-c.Trigger.PlateauA) > 0.1*c.Trigger.PlateauA {
		t.Fatalf("threshold current %+v, want %.4g A within 10 %%", tf.ThresholdA, c.Trigger.PlateauA)
	}
	for _, cy := range res.Cycles {
		if cy.Kind != analysis.CycleFull {
			continue
		}
		if cy.FireA == nil || cy.FireSlopeVPerS == nil || !(*cy.FireA > 0) || *cy.FireA != capF**cy.FireSlopeVPerS {
			t.Fatalf("cycle %d: current at the fire %v, slope %v", cy.Index, cy.FireA, cy.FireSlopeVPerS)
		}
	}
	t.Logf("threshold %.4g ± %.2g V/s (model %.4g), %.4g A (model %.4g)", tf.ThresholdVPerS.Value, *tf.ThresholdVPerS.SD, want, tf.ThresholdA.Value, c.Trigger.PlateauA)
}

// A voltage trigger under steady light, where a timer would look the same: the declared
// kind is used ("voltage, as declared; the data agree"); declared as a timer or a plateau
// trigger when the light changes, it is contradicted, with a warning.
func TestDeclaredTriggerKind(t *testing.T) {
	steady := []detecttest.Light{{FromS: 0, IA: 1e-3}}
	varied := []detecttest.Light{{FromS: 0, IA: 1e-3}, {FromS: 60, IA: 0.5e-3}, {FromS: 150, IA: 2e-3}, {FromS: 220, IA: 0.8e-3}}
	adc := detecttest.ADC{NoiseV: 1.5e-3, Bits: 10, FullV: 5, Seed: 9}
	cases := []struct {
		name     string
		light    []detecttest.Light
		declared analysis.TriggerKind
		kind     analysis.TriggerKind
		check    analysis.KindCheck
		basis    string
	}{
		{"voltage declared, steady light", steady, analysis.TriggerVoltage, analysis.TriggerVoltage, analysis.KindAgree, "voltage, as declared; the data agree"},
		{"voltage declared, changing light", varied, analysis.TriggerVoltage, analysis.TriggerVoltage, analysis.KindAgree, "voltage, as declared; the data agree"},
		{"timer declared, changing light", varied, analysis.TriggerTimer, analysis.TriggerVoltage, analysis.KindContradict, ""},
		{"plateau declared", varied, analysis.TriggerPlateau, analysis.TriggerVoltage, analysis.KindContradict, ""},
		{"nothing declared, steady light", steady, "", analysis.TriggerUnknown, "", ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ts, vs, _ := detecttest.Generate(wrenRC, c.light, 300, detecttest.Sampling{DtS: 0.005}, adc)
			res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: wrenRC.C, TriggerKind: c.declared}})
			tf := res.Fit.Trigger
			if tf.Kind != c.kind || tf.KindCheck != c.check || tf.DeclaredKind != c.declared {
				t.Fatalf("kind %q check %q declared %q (%s), want %q %q %q", tf.Kind, tf.KindCheck, tf.DeclaredKind, tf.KindBasis, c.kind, c.check, c.declared)
			}
			if c.basis != "" && tf.KindBasis != c.basis {
				t.Errorf("basis %q, want %q", tf.KindBasis, c.basis)
			}
			f := hasFinding(res, diagnose.CodeKindDiffers)
			if (c.check == analysis.KindContradict) != (f != nil) {
				t.Errorf("finding %+v for check %q", f, c.check)
			}
			if f != nil && f.Severity != analysis.Warn {
				t.Errorf("severity %q, want warn", f.Severity)
			}
		})
	}
}
