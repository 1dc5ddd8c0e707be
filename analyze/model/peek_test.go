package model

import (
	"testing"
	"time"
)

func TestScenarioPeek(t *testing.T) {
	for _, n := range ScenarioNames() {
		sc, _ := Scenario(n)
		t0 := time.Now()
		var maxV float64
		res, err := Simulate(sc.Circuit, sc.Light, &Options{DurationS: 86400, RateHz: 1, OnSample: func(s Sample) {
			if s.V > maxV {
				maxV = s.V
			}
			if int(s.TS)%3600 == 0 {
				t.Logf("%s %5.0f h=%2.0f V=%.3f G=%.1f", n, s.TS, s.TS/3600, s.V, sc.Light.IrradianceWm2(s.TS))
			}
		}})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %v, cycles %d, events %d, steps %d rej %d evals %d maxV %.3f", n, time.Since(t0), len(res.Cycles), len(res.Events), res.Steps, res.Rejected, res.Evals, maxV)
		if len(res.Cycles) > 3 {
			c := res.Cycles[len(res.Cycles)/2]
			t.Logf("mid cycle %+v", c)
		}
	}
}
