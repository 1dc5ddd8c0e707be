package predict

import (
	"errors"
	"math"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
)

func TestCellFromRatings(t *testing.T) {
	c := CellFromRatings(4.2, 18e-3, 5, 0)
	if got := c.Current(0, 1000); math.Abs(got-18e-3) > 1e-9 {
		t.Errorf("Isc %.6g A, want 18 mA", got)
	}
	if got := c.OpenCircuitV(1000); math.Abs(got-4.2) > 1e-6 {
		t.Errorf("Voc %.6f V, want 4.2 V", got)
	}
}

// A circuit rebuilt from an analysis of a known RC circuit predicts its cycle: without the
// capacitance (normalised to 1 F) the times still come out right.
func TestFromResultPredictsTimes(t *testing.T) {
	truth := &model.Circuit{
		Cell:    CellFromRatings(4.0, 5e-3, 1, 0),
		Storage: model.Storage{CapF: 1000e-6, LeakOhm: 500e3},
		Trigger: model.Trigger{Kind: model.TriggerVoltage, OnV: 3.0, OffV: 2.0},
		Load:    model.Load{Ohm: 100},
	}
	want, err := Steady(truth, 600, nil)
	if err != nil {
		t.Fatal(err)
	}
	e := func(v float64) *analysis.Estimate { return &analysis.Estimate{Value: v} }
	r := &analysis.Result{}
	r.Fit.Trigger.OnV, r.Fit.Trigger.OffV = e(3.0), e(2.0)
	r.Fit.Load.TauS = e(0.1)      // R C
	r.Fit.Leak.TauS = e(500)      // R_leak C
	voc, isc := 4.0, 5e-3/1000e-6 // without C the analysis reports I/C in V/s
	r.Declared = &analysis.Declared{VocV: voc, IscA: isc}
	c, norm, err := FromResult(r)
	if err != nil {
		t.Fatal(err)
	}
	if !norm || c.Storage.CapF != 1 {
		t.Fatalf("normalised %v, C %g", norm, c.Storage.CapF)
	}
	got, err := Steady(c, 600, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got.ChargeS-want.ChargeS)/want.ChargeS > 1e-3 || math.Abs(got.PulseS-want.PulseS)/want.PulseS > 1e-3 {
		t.Errorf("from the analysis: charge %.4f s pulse %.4f s; truth %.4f s, %.4f s", got.ChargeS, got.PulseS, want.ChargeS, want.PulseS)
	}
}

func TestFromResultUnderdetermined(t *testing.T) {
	if _, _, err := FromResult(&analysis.Result{}); !errors.Is(err, ErrUnderdetermined) {
		t.Fatalf("err = %v", err)
	}
}
