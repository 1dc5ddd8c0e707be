package detect_test

import (
	"math"
	"testing"

	"capcycle/analyze/detect"
	"capcycle/analyze/detect/detecttest"
)

func detectAll(ts, vs []float64, cfg *detect.Config) *detect.Summary {
	d := detect.New(cfg)
	d.Push(ts, vs)
	return d.Finish()
}

// Light that changes every few minutes (passing clouds).
func clouds(dur, step, lo, hi float64) []detecttest.Light {
	var l []detecttest.Light
	k := 0
	for t := 0.0; t < dur; t += step {
		i := lo + (hi-lo)*float64((k*7)%5)/4
		l = append(l, detecttest.Light{FromS: t, IA: i})
		k++
	}
	return l
}

func TestTriggerKindVoltage(t *testing.T) {
	ts, vs, tr := detecttest.Generate(wren, clouds(1200, 97, 0.3e-3, 1.5e-3), 1200, detecttest.Sampling{DtS: 0.01},
		detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 31})
	s := detectAll(ts, vs, nil)
	if len(s.Cycles) < len(tr.ResetS)-1 || s.Trigger != detect.TriggerVoltage {
		t.Errorf("%d cycles (%d true), trigger %q, want voltage", len(s.Cycles), len(tr.ResetS), s.Trigger)
	}
}

func TestTriggerKindTimer(t *testing.T) {
	c := wren
	c.PeriodS, c.PulseS = 20, 0.3
	ts, vs, tr := detecttest.Generate(c, clouds(1200, 97, 0.1e-3, 0.5e-3), 1200, detecttest.Sampling{DtS: 0.01},
		detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 32})
	s := detectAll(ts, vs, nil)
	if len(s.Cycles) < len(tr.ResetS)-1 || s.Trigger != detect.TriggerTimer {
		t.Errorf("%d cycles (%d true), trigger %q, want timer", len(s.Cycles), len(tr.ResetS), s.Trigger)
	}
	for i, c := range s.Cycles {
		if math.Abs(c.FireS-tr.FireS[i]) > 0.01+1e-9 {
			t.Errorf("fire %d at %.3f, true %.3f", i, c.FireS, tr.FireS[i])
		}
	}
}

// A trigger whose release is just below its threshold: every fall is tiny.
func TestChatter(t *testing.T) {
	c := wren
	c.OffV = 2.75
	ts, vs, tr := detecttest.Generate(c, []detecttest.Light{{FromS: 0, IA: 1e-3}}, 120, detecttest.Sampling{DtS: 0.002},
		detecttest.ADC{NoiseV: 0.5e-3, Seed: 33})
	s := detectAll(ts, vs, nil)
	n := 0
	for _, cy := range s.Cycles {
		if !cy.Chatter {
			t.Errorf("a 50 mV fall at %.3f s not marked chatter", cy.FireS)
		}
		n++
	}
	if n < len(tr.ResetS)-1 {
		t.Errorf("%d chatter cycles, %d true", n, len(tr.ResetS))
	}
}

// The ADC tops out below the trigger: saturated stretches before each fire (which the
// ADC sees only when the voltage comes back into range).
func TestSaturated(t *testing.T) {
	c := wren
	c.OnV = 4.0
	ts, vs, tr := detecttest.Generate(c, []detecttest.Light{{FromS: 0, IA: 1e-3}}, 120, detecttest.Sampling{DtS: 0.01},
		detecttest.ADC{NoiseV: 1e-3, Bits: 10, FullV: 3.3, Seed: 34})
	s := detectAll(ts, vs, &detect.Config{FullScaleV: 3.3})
	if len(s.Cycles) != len(tr.ResetS) {
		t.Errorf("%d fires, %d true", len(s.Cycles), len(tr.ResetS))
	}
	var sat float64
	n := 0
	for _, g := range s.Segments {
		if g.Kind == detect.KindSaturated {
			sat += g.EndS - g.StartS
			n++
		}
	}
	// In closed form: from 3.3 V to 4.0 V at about 1 mA into 4.7 mF, 3.3 s per cycle.
	if n < len(tr.ResetS) || sat < 3*float64(len(tr.ResetS)) {
		t.Errorf("%d saturated stretches, %.1f s in all", n, sat)
	}
}

// Samples missing for a while: a gap segment; the cycle after it has no charge time.
func TestGap(t *testing.T) {
	ts, vs, _ := detecttest.Generate(wren, []detecttest.Light{{FromS: 0, IA: 1e-3}}, 120, detecttest.Sampling{DtS: 0.01},
		detecttest.ADC{NoiseV: 1e-3, Seed: 35})
	var t2, v2 []float64
	for i := range ts {
		if ts[i] < 40 || ts[i] > 52 {
			t2 = append(t2, ts[i])
			v2 = append(v2, vs[i])
		}
	}
	s := detectAll(t2, v2, nil)
	var gap *detect.Segment
	for i, g := range s.Segments {
		if g.Kind == detect.KindGap {
			gap = &s.Segments[i]
		}
	}
	if gap == nil || gap.StartS > 40 || gap.EndS < 52 {
		t.Fatalf("gap segment %+v", gap)
	}
	for _, c := range s.Cycles {
		if c.FireS > 52 {
			if !math.IsNaN(c.ChargeS) {
				t.Errorf("first cycle after the gap has charge time %v", c.ChargeS)
			}
			break
		}
	}
	for i := 1; i < len(s.Segments); i++ {
		if s.Segments[i].StartS < s.Segments[i-1].EndS-1e-9 {
			t.Errorf("segments overlap: %+v then %+v", s.Segments[i-1], s.Segments[i])
		}
	}
}
