package main

import (
	"testing"
	"time"

	"capcycle/analyze/model"
)

// BenchmarkModelSource measures what the adapter adds to the model: an hour of Wren at
// noon sampled at 50 Hz through modelSource (two board inputs, interpolation), against
// the same hour pulled straight from a model.Sampler in the same run. The ratio metric
// is source time over sampler time (1 means the adapter costs nothing).
func BenchmarkModelSource(b *testing.B) {
	sc, err := model.Scenario("wren")
	if err != nil {
		b.Fatal(err)
	}
	rig := model.RigFromScene(sc)
	rig.Nodes, rig.Div = []model.Node{model.NodeVcap, model.NodeVcell}, []float64{0.5, 0.5}
	rig.StartS = 12 * 3600
	const dur, hz = 3600.0, 50.0
	var base, adapted time.Duration
	for b.Loop() {
		t0 := time.Now()
		sp, err := model.NewSampler(rig.Circuit, model.ShiftLight(rig.Light, rig.StartS), &model.Options{DurationS: dur, RateHz: hz})
		if err != nil {
			b.Fatal(err)
		}
		for {
			if _, ok := sp.Next(); !ok {
				break
			}
		}
		t1 := time.Now()
		src, err := model.NewRigSource(rig, dur, hz)
		if err != nil {
			b.Fatal(err)
		}
		v := make([]float64, 2)
		for i := 0; src.Sample(float64(i)/hz, v); i++ {
		}
		t2 := time.Now()
		base += t1.Sub(t0)
		adapted += t2.Sub(t1)
	}
	b.ReportMetric(float64(adapted)/float64(base), "source/sampler")
}
