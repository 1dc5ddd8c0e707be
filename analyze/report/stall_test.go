package report

import (
	"math"
	"testing"
)

// TestStallModelMeetsTheMeasurement checks the settling-voltage model of the stall plot
// against the capture it is drawn for: the simulated Fern day settles where the model,
// built from the declared cell and the fitted drains, puts it at the capture's own light
// (within 10 %), and the light it takes to fire lifts the settling voltage to the
// trigger.
func TestStallModelMeetsTheMeasurement(t *testing.T) {
	r := fernAnalysed(t)
	if r.EquilibriumV == nil {
		t.Fatal("the Fern capture has no settling voltage")
	}
	m, missing := stallOf(r)
	if missing != "" {
		t.Fatalf("no model: %s", missing)
	}
	got, want := m.settle(m.gNow), r.EquilibriumV.Value
	t.Logf("model settles at %.3f V, measured %.3f V", got, want)
	if math.Abs(got-want) > 0.1*want {
		t.Errorf("the model settles at %.3f V at the capture's light, the capture at %.3f V", got, want)
	}
	need := m.lightToFire()
	if !(need > 1) {
		t.Fatalf("light to fire %g × the capture's: a stalled circuit needs more", need)
	}
	if v := m.settle(need * m.gNow); math.Abs(v-m.onV) > 0.01 {
		t.Errorf("at %g × the light it settles at %.3f V, not at the trigger %.3f V", need, v, m.onV)
	}
}
