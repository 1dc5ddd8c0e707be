package main

import (
	"context"
	"encoding/json"
	"math"
	"path/filepath"
	"testing"

	"capcycle/firmware-protocol/virtualboard"
)

// recSawtooth is a voltage-triggered solar engine in miniature (invented demo numbers):
// charge toward 3.2 V with a 20 s time constant, fire at 2.7 V, dump to 1.6 V in 50 ms.
func recSawtooth(endS float64) virtualboard.SourceFunc {
	v, last, firing := 1.6, 0.0, false
	return func(t float64, out []float64) bool {
		if t > endS {
			return false
		}
		dt := t - last
		last = t
		if firing {
			if v -= dt * 1.1 / 0.05; v <= 1.6 {
				v, firing = 1.6, false
			}
		} else if v += (3.2 - v) * (1 - math.Exp(-dt/20)); v >= 2.7 {
			firing = true
		}
		out[0] = v
		return true
	}
}

// TestRecordVirtualThenAnalyze: "capcycle record" against the virtual board writes a
// capture that "capcycle analyze" reads and finds the cycles in.
func TestRecordVirtualThenAnalyze(t *testing.T) {
	vb, err := virtualboard.Open(&virtualboard.Config{Source: recSawtooth(300), Div: []float64{0.5}, NoiseLSB: 0.5,
		Link: filepath.Join(t.TempDir(), "ttyVIRTUAL")})
	if err != nil {
		t.Skip("virtual board:", err)
	}
	defer vb.Close()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go vb.Run(ctx)
	out := filepath.Join(t.TempDir(), "virtual.csv")
	code, _, errs := runCmd(t, "record", "--port", vb.Path(), "--out", out, "--duration", "2s", "--quiet")
	if code != 0 {
		t.Fatalf("record: exit %d: %s", code, errs)
	}
	code, stdout, errs := runCmd(t, "analyze", out, "--json")
	if code != 0 {
		t.Fatalf("analyze: exit %d: %s", code, errs)
	}
	var res struct {
		Samples int `json:"samples"`
		Cycles  []struct {
			FireV float64 `json:"fire_v"`
		} `json:"cycles"`
	}
	if err := json.Unmarshal([]byte(stdout), &res); err != nil {
		t.Fatalf("analysis JSON: %v", err)
	}
	// 300 s of a cycle of about 24 s (20 s * ln((3.2-1.6)/(3.2-2.7))): 12 fires.
	if len(res.Cycles) < 10 || res.Samples < 2500 {
		t.Fatalf("%d samples, %d cycles", res.Samples, len(res.Cycles))
	}
	for _, c := range res.Cycles {
		if math.Abs(c.FireV-2.7) > 0.05 {
			t.Errorf("a fire at %v V, want 2.7", c.FireV)
		}
	}
}
