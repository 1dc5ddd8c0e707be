package detect_test

import (
	"fmt"
	"math"
	"testing"

	"capcycle/analyze/detect"
	"capcycle/analyze/detect/detecttest"
)

// wren is a small rover's circuit: 4.7 mF, a 1 MOhm probe divider as the leak, a 20 Ohm
// motor as a resistor, a 2.8 V / 1.6 V voltage trigger (invented demo values).
var wren = detecttest.Circuit{C: 4.7e-3, RLeakOhm: 1e6, RLoadOhm: 20, OnV: 2.8, OffV: 1.6, V0: 1.0}

type scenario struct {
	name  string
	c     detecttest.Circuit
	light []detecttest.Light
	dur   float64
	s     detecttest.Sampling
	a     detecttest.ADC
}

func scenarios() []scenario {
	var out []scenario
	for _, ia := range []float64{0.15e-3, 0.6e-3, 2e-3} {
		for _, a := range []detecttest.ADC{
			{},
			{NoiseV: 2e-3, Seed: 1},
			{NoiseV: 1e-3, Bits: 10, FullV: 5, Seed: 2},
			{NoiseV: 0.5e-3, Bits: 8, FullV: 5, Seed: 3},
			{NoiseV: 5e-3, Bits: 12, FullV: 5, Seed: 4, SpikeV: 0.15},
		} {
			out = append(out, scenario{
				name:  fmt.Sprintf("I=%gmA noise=%gmV bits=%d spikes=%v", ia*1e3, a.NoiseV*1e3, a.Bits, a.SpikeV > 0),
				c:     wren,
				light: []detecttest.Light{{FromS: 0, IA: ia}},
				dur:   300, s: detecttest.Sampling{DtS: 0.01}, a: a,
			})
		}
	}
	// one sample per slow interval, bursts during the pulses
	out = append(out, scenario{name: "slow 1 s plus 2 ms bursts", c: wren,
		light: []detecttest.Light{{FromS: 0, IA: 0.3e-3}}, dur: 600,
		s: detecttest.Sampling{DtS: 1, FastDtS: 2e-3, PostS: 0.5}, a: detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 5}})
	out = append(out, scenario{name: "slow 2 s, no bursts, jitter", c: wren,
		light: []detecttest.Light{{FromS: 0, IA: 0.05e-3}}, dur: 3000,
		s: detecttest.Sampling{DtS: 2, JitterS: 0.5}, a: detecttest.ADC{NoiseV: 1e-3, Seed: 6}})
	// a supercapacitor and a slow load, light varying, a dark stretch
	super := detecttest.Circuit{C: 0.1, RLeakOhm: 2e5, RLoadOhm: 50, OnV: 4.5, OffV: 3.0, V0: 2.5}
	out = append(out, scenario{name: "supercap, clouds and dark", c: super,
		light: []detecttest.Light{{FromS: 0, IA: 10e-3}, {FromS: 300, IA: 4e-3}, {FromS: 900, IA: 0}, {FromS: 1500, IA: 12e-3}}, dur: 2400,
		s: detecttest.Sampling{DtS: 0.1}, a: detecttest.ADC{NoiseV: 2e-3, Bits: 12, FullV: 5.5, Seed: 7}})
	return out
}

func TestDetectorFindsEveryFire(t *testing.T) {
	for _, sc := range scenarios() {
		t.Run(sc.name, func(t *testing.T) {
			ts, vs, tr := detecttest.Generate(sc.c, sc.light, sc.dur, sc.s, sc.a)
			d := detect.New(nil)
			for i := 0; i < len(ts); i += 777 { // odd batch sizes
				j := min(len(ts), i+777)
				d.Push(ts[i:j], vs[i:j])
			}
			sum := d.Finish()
			// A fire whose reset is not followed by 3 samples is not a finished cycle.
			want := 0
			for _, r := range tr.ResetS {
				if r < ts[len(ts)-3] {
					want++
				}
			}
			got := sum.Cycles
			if len(got) != want {
				t.Fatalf("found %d fires, want %d (noise %.2g V, swing %.3g V)", len(got), want, sum.NoiseV, sum.MinSwingV)
			}
			for i, c := range got {
				// the onset sample is the last one before the true fire time
				k := sampleBefore(ts, tr.FireS[i])
				dt := ts[min(k+1, len(ts)-1)] - ts[k]
				if math.Abs(c.FireS-tr.FireS[i]) > dt+1e-9 {
					t.Errorf("fire %d at %.4f s, true %.4f s (sample spacing %.3g)", i, c.FireS, tr.FireS[i], dt)
				}
				kr := sampleBefore(ts, tr.ResetS[i])
				if c.ResetS < ts[max(0, kr-1)]-1e-9 || c.ResetS > ts[min(kr+2, len(ts)-1)]+1e-9 {
					t.Errorf("reset %d at %.4f s, true %.4f s (samples %.4f, %.4f)", i, c.ResetS, tr.ResetS[i], ts[kr], ts[min(kr+1, len(ts)-1)])
				}
				if c.Chatter {
					t.Errorf("fire %d marked chatter", i)
				}
			}
			if want >= 3 && sum.Trigger == detect.TriggerTimer {
				t.Errorf("trigger kind %s for a voltage trigger", sum.Trigger)
			}
		})
	}
}

func sampleBefore(ts []float64, x float64) int {
	lo, hi := 0, len(ts)-1
	for lo < hi {
		m := (lo + hi + 1) / 2
		if ts[m] <= x {
			lo = m
		} else {
			hi = m - 1
		}
	}
	return lo
}

// A stall: charging towards an equilibrium below the trigger, then darkness. No fire.
func TestDetectorNoFalseFires(t *testing.T) {
	c := detecttest.Circuit{C: 4.7e-3, RLeakOhm: 1e6, RLoadOhm: 20, OnV: 2.8, OffV: 1.6, V0: 0.5}
	light := []detecttest.Light{{FromS: 0, IA: 2e-6}, {FromS: 20000, IA: 1.5e-6}, {FromS: 30000, IA: 0}}
	for _, a := range []detecttest.ADC{{NoiseV: 3e-3, Seed: 9}, {NoiseV: 1e-3, Bits: 10, FullV: 5, Seed: 10}} {
		ts, vs, _ := detecttest.Generate(c, light, 40000, detecttest.Sampling{DtS: 1}, a)
		d := detect.New(nil)
		d.Push(ts, vs)
		s := d.Finish()
		if len(s.Cycles) != 0 {
			t.Errorf("noise %v bits %d: %d false fires: %+v", a.NoiseV, a.Bits, len(s.Cycles), s.Cycles[0])
		}
		var kinds []string
		for _, g := range s.Segments {
			kinds = append(kinds, g.Kind)
		}
		if !contains(kinds, detect.KindDarkDecay) || !contains(kinds, detect.KindCharging) {
			t.Errorf("segments %v lack charging and dark decay", kinds)
		}
	}
}

func contains(xs []string, x string) bool {
	for _, y := range xs {
		if y == x {
			return true
		}
	}
	return false
}
