package screen

import (
	"math"
	"math/rand/v2"
	"testing"
)

// engine returns a solar engine's voltage sampled every dt for dur seconds: charging from
// 1.6 V towards 3.2 V with τ 6 s, a fire at 2.7 V that dumps into a load with τ 30 ms
// down to 1.6 V; with noise (SD) and rounding to an ADC step (0: none). Our own
// synthetic circuit (Wren's numbers, roughly).
func engine(dt, dur, noise, step float64, seed uint64) (t, v []float64) {
	r := rand.New(rand.NewPCG(seed, 1))
	x, firing := 1.6, false
	for tt := 0.0; tt < dur; tt += dt {
		t = append(t, tt)
		y := x + noise*r.NormFloat64()
		if step > 0 {
			y = step * math.Round(y/step)
		}
		v = append(v, y)
		// advance the circuit by dt in small steps
		for k := 0; k < 100; k++ {
			h := dt / 100
			if firing {
				x -= h * x / 0.03
				if x <= 1.6 {
					firing = false
				}
			} else {
				x += h * (3.2 - x) / 6
				if x >= 2.7 {
					firing = true
				}
			}
		}
	}
	return t, v
}

// hold repeats every k-th sample k times: a board that converts k times slower than it
// is read.
func hold(v []float64, k int) []float64 {
	out := make([]float64, len(v))
	for i := range v {
		out[i] = v[i-i%k]
	}
	return out
}

type sink struct{ t, v []float64 }

func (s *sink) emit(t, v, _ []float64) {
	s.t = append(s.t, t...)
	s.v = append(s.v, v...)
}

func screenAll(step float64, t, v []float64, batch int) (*sink, Summary) {
	var out sink
	s := New(step, out.emit)
	for a := 0; a < len(t); a += batch {
		b := min(a+batch, len(t))
		s.Push(t[a:b], v[a:b], nil)
	}
	return &out, s.Finish()
}

func TestWildValuesDropped(t *testing.T) {
	ts, vs := engine(0.01, 60, 0.0015, 0.0049, 1)
	cases := []struct {
		name string
		at   []int
		val  []float64
	}{
		{"one 1e300", []int{3000}, []float64{1e300}},
		{"a NaN and an Inf", []int{10, 4000}, []float64{math.NaN(), math.Inf(-1)}},
		{"the first sample", []int{0}, []float64{-1e30}},
		{"the last sample", []int{len(ts) - 1}, []float64{1e300}},
		{"three in a row", []int{2000, 2001, 2002}, []float64{1e9, 2e9, 65535}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			v := append([]float64(nil), vs...)
			for k, i := range c.at {
				v[i] = c.val[k]
			}
			out, sum := screenAll(0, ts, v, 777)
			if sum.Wild != len(c.at) {
				t.Fatalf("dropped %d wild samples, want %d", sum.Wild, len(c.at))
			}
			if sum.FirstWildS != ts[c.at[0]] {
				t.Errorf("first wild at %g s, want %g s", sum.FirstWildS, ts[c.at[0]])
			}
			if len(out.v) != len(v)-len(c.at) {
				t.Fatalf("passed on %d samples, want %d", len(out.v), len(v)-len(c.at))
			}
			j := 0
			for i := range v {
				if j < len(c.at) && i == c.at[j] {
					j++
					continue
				}
				if out.v[i-j] != v[i] || out.t[i-j] != ts[i] {
					t.Fatalf("sample %d changed: %g at %g s, want %g at %g s", i, out.v[i-j], out.t[i-j], v[i], ts[i])
				}
			}
			if sum.Held != nil {
				t.Errorf("honest samples read as held: %+v", *sum.Held)
			}
		})
	}
}

// A real change of level (the probe moved to a higher node and stays) is no wild value,
// and neither is a commutation spike of a volt.
func TestLevelChangeKept(t *testing.T) {
	ts, vs := engine(0.01, 30, 0.0015, 0, 2)
	v := append([]float64(nil), vs...)
	for i := 1500; i < len(v); i++ {
		v[i] += 20
	}
	v[500] += 1.0
	out, sum := screenAll(0, ts, v, 1000)
	if sum.Wild != 0 || len(out.v) != len(v) {
		t.Fatalf("dropped %d samples (wild %d), want none", len(v)-len(out.v), sum.Wild)
	}
}

func TestHeldStaircase(t *testing.T) {
	cases := []struct {
		name        string
		dt          float64
		k           int
		noise, step float64
	}{
		{"10-bit board repeating each value 10 times", 0.01, 10, 0.0015, 0.0049},
		{"slow link, 4 repeats", 0.005, 4, 0.0015, 0.0049},
		{"no quantisation, 3 repeats", 0.01, 3, 0.001, 0},
		{"noise-free steps, 5 repeats", 0.01, 5, 0, 0.0049},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ts, vs := engine(c.dt, 120, c.noise, c.step, 3)
			v := hold(vs, c.k)
			out, sum := screenAll(0, ts, v, 4096)
			h := sum.Held
			if h == nil {
				t.Fatalf("staircase of %d repeats not seen", c.k)
			}
			if math.Round(h.Repeat) != float64(c.k) {
				t.Errorf("repeat %g, want %d", h.Repeat, c.k)
			}
			if want := c.dt * float64(c.k); math.Abs(h.EffectiveSpacingS-want) > 0.01*want {
				t.Errorf("effective spacing %g s, want %g s", h.EffectiveSpacingS, want)
			}
			if math.Abs(h.LoggedSpacingS-c.dt) > 1e-3*c.dt {
				t.Errorf("logged spacing %g s, want %g s", h.LoggedSpacingS, c.dt)
			}
			// Every kept sample is the first of a conversion: its time is a multiple of k·dt.
			for i, tt := range out.t {
				if r := math.Mod(tt/c.dt+0.5, float64(c.k)); r > 1 {
					t.Fatalf("kept sample %d at %g s is a repeat", i, tt)
				}
			}
			if got, want := len(out.t), len(ts)/c.k; got < want || got > want+1 {
				t.Errorf("kept %d samples, want %d (one per conversion)", got, want)
			}
			if h.Dropped != len(ts)-len(out.t) {
				t.Errorf("dropped count %d, want %d", h.Dropped, len(ts)-len(out.t))
			}
		})
	}
}

// Honest samples, quantised or not, noisy or not, are passed on whole.
func TestHonestNotHeld(t *testing.T) {
	cases := []struct {
		name        string
		dt          float64
		noise, step float64
	}{
		{"10-bit with noise", 0.01, 0.0015, 0.0049},
		{"10-bit noise-free, slow charging", 0.01, 0, 0.0049},
		{"noise-free at 1 kHz, long runs on the charge", 0.001, 0, 0.0049},
		{"no quantisation", 0.01, 0.001, 0},
		{"slow sampling", 0.5, 0.0015, 0.0049},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ts, vs := engine(c.dt, 120, c.noise, c.step, 4)
			out, sum := screenAll(0, ts, vs, 999)
			if sum.Held != nil {
				t.Fatalf("honest samples read as held: %+v", *sum.Held)
			}
			if len(out.t) != len(ts) {
				t.Fatalf("passed on %d of %d samples", len(out.t), len(ts))
			}
		})
	}
}
