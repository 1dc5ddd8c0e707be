package predict

import (
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/profile"
)

func wrenCircuit(t *testing.T) *model.Circuit {
	t.Helper()
	p, err := profile.Load("../../testdata/profiles/wren.toml")
	if err != nil {
		t.Fatal(err)
	}
	c, _, err := model.FromProfile(p)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// cellFitAt is the analysis's cell fit of c's own cell traced under irradiance g.
func cellFitAt(c *model.Circuit, g float64) analysis.CellFit {
	isc := c.Cell.Current(0, g)
	return analysis.CellFit{IscA: &analysis.Estimate{Value: isc}, VocV: &analysis.Estimate{Value: c.Cell.OpenCircuitV(g)},
		I0A: &analysis.Estimate{Value: c.Cell.I0A}, N: &analysis.Estimate{Value: c.Cell.N}}
}

// A cell fitted in shade (200 W/m²) keeps the light in the declared cell's W/m²: the
// measured light of the fitted circuit is 200 W/m², not the 1000 W/m² reference, and the
// fitted circuit gives the same current as the true one at that light.
func TestFittedCellKeepsTheLight(t *testing.T) {
	c := wrenCircuit(t)
	const g = 200.0
	r := &analysis.Result{Schema: analysis.Schema}
	r.Fit.Cell = cellFitAt(c, g)
	isc := r.Fit.Cell.IscA.Value
	r.Cycles = []analysis.Cycle{{Kind: "full", FireV: 2.7, ResetV: 0.9, LightA: &isc}}
	f, replaced := Fitted(c, r)
	if !contains(replaced, "cell") {
		t.Fatalf("cell not replaced: %v", replaced)
	}
	if got := MeasuredLight(r, f); math.Abs(got-g)/g > 1e-6 {
		t.Errorf("measured light with the fitted cell %.4g W/m², want %.0f", got, g)
	}
	for _, v := range []float64{0, 1.5, 2.7} {
		if a, b := f.Cell.Current(v, g), c.Cell.Current(v, g); math.Abs(a-b) > 1e-9 {
			t.Errorf("at %.1f V: fitted cell %.6g A, true %.6g A", v, a, b)
		}
	}
}

// A degenerate fit (ideality 0.03 per cell, or a cell that cannot reach the voltage the
// capture fired at) keeps the declared cell.
func TestFittedCellDegenerate(t *testing.T) {
	c := wrenCircuit(t)
	for _, tc := range []struct {
		name  string
		edit  func(*analysis.CellFit)
		fireV float64
	}{
		{"ideality", func(cf *analysis.CellFit) { cf.N.Value = 0.03 }, 2.7},
		{"below the fires", func(cf *analysis.CellFit) {}, 4.5}, // Voc at 200 W/m² is about 3.9 V
	} {
		r := &analysis.Result{Schema: analysis.Schema}
		r.Fit.Cell = cellFitAt(c, 200)
		tc.edit(&r.Fit.Cell)
		r.Cycles = []analysis.Cycle{{Kind: "full", FireV: tc.fireV, ResetV: 1}}
		if _, replaced := Fitted(c, r); contains(replaced, "cell") {
			t.Errorf("%s: the degenerate cell replaced the declared one", tc.name)
		}
	}
}

// The approach to a plateau is no leak measurement; a dark decay is.
func TestFittedLeakNotFromPlateau(t *testing.T) {
	c := wrenCircuit(t)
	for _, m := range []analysis.LeakMethod{analysis.LeakPlateau, analysis.LeakDarkDecay} {
		r := &analysis.Result{Schema: analysis.Schema}
		r.Fit.Leak.Ohm = &analysis.Estimate{Value: 500}
		r.Fit.Leak.Method = m
		_, replaced := Fitted(c, r)
		if got := contains(replaced, "leak.ohm"); got != (m == analysis.LeakDarkDecay) {
			t.Errorf("method %s: leak replaced %v", m, got)
		}
	}
}

// The light of a capture of chatter alone comes from its recharges: C·ΔV/t plus the drains
// is the cell's current at the recharge's voltage. Cycles made from the model's own
// recharge under 50 W/m² give back 50 W/m² within 0.5 %.
func TestChatterLight(t *testing.T) {
	c := wrenCircuit(t)
	c.Trigger.HoldF = 22e-9
	const g = 50.0
	res, err := model.Simulate(c, model.Constant(g), &model.Options{DurationS: 20, StartV: 2.6})
	if err != nil {
		t.Fatal(err)
	}
	r := &analysis.Result{Schema: analysis.Schema}
	for _, cy := range res.Cycles {
		// As the analysis reports them: the charge runs from the previous reset to the fire.
		ch := cy.FireS - cy.StartS
		r.Cycles = append(r.Cycles, analysis.Cycle{Kind: "chatter", FireS: cy.FireS, FireV: cy.FireV,
			ResetS: cy.ResetS, ResetV: cy.ResetV, ChargeS: &ch})
	}
	if len(r.Cycles) < 5 {
		t.Fatalf("%d chatter cycles", len(r.Cycles))
	}
	if got := MeasuredLight(r, c); math.Abs(got-g)/g > 0.005 {
		t.Errorf("light from chatter %.4g W/m², want %.0f", got, g)
	}
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}
