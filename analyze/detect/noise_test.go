package detect

import (
	"math"
	"math/rand/v2"
	"testing"
)

// NoiseSD recovers the SD of normal noise on a sloping line, on a non-uniform grid, and
// after quantisation to a step close to the noise (where the median of |e| alone says 0).
func TestNoiseSD(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		sd, step, want, tol float64
		flat                bool
	}{
		{1e-3, 0, 1e-3, 0.05, false},
		{1e-3, 1.2207e-3, math.Hypot(1e-3, 1.2207e-3/math.Sqrt(12)), 0.15, true},
		{0.5e-3, 1.2207e-3, math.Hypot(0.5e-3, 1.2207e-3/math.Sqrt(12)), 0.3, true},
		{5e-3, 0, 5e-3, 0.05, false},
		// quantised: the quantisation noise step/sqrt(12) adds in quadrature
		{1e-3, 1.2207e-3, math.Hypot(1e-3, 1.2207e-3/math.Sqrt(12)), 0.15, false},
		{0.5e-3, 1.2207e-3, math.Hypot(0.5e-3, 1.2207e-3/math.Sqrt(12)), 0.25, false},
	} {
		var ts, vs []float64
		x := 0.0
		for i := 0; i < 4096; i++ {
			x += 0.005 + 0.01*rng.Float64()
			slope := 0.1
			if tc.flat {
				slope = 0
			}
			v := 2.0004 + slope*x + tc.sd*rng.NormFloat64()
			if tc.step > 0 {
				v = math.Round(v/tc.step) * tc.step
			}
			ts = append(ts, x)
			vs = append(vs, v)
		}
		got := NoiseSD(ts, vs, nil)
		if math.Abs(got-tc.want) > tc.tol*tc.want {
			t.Errorf("sd %g step %g flat %v: got %.3g, want %.3g", tc.sd, tc.step, tc.flat, got, tc.want)
		}
	}
}

// ADCStep finds a 12-bit step under noise and printed with 5 decimals, and none on an
// unquantised curve or a smooth curve sampled slowly.
func TestADCStep(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	lsb := 5.0 / 4096
	var q, smooth, slow []float64
	for i := 0; i < 1024; i++ {
		v := 1 + 0.001*float64(i) + 2e-3*rng.NormFloat64()
		q = append(q, math.Round(math.Round(v/lsb)*lsb*1e5)/1e5)
		smooth = append(smooth, v)
		slow = append(slow, 1+0.063*float64(i)-1e-6*float64(i*i))
	}
	if got := ADCStep(q, nil); math.Abs(got-lsb) > 0.01*lsb {
		t.Errorf("quantised: step %v, want %v", got, lsb)
	}
	if got := ADCStep(smooth, nil); got != 0 {
		t.Errorf("unquantised noise: step %v, want 0", got)
	}
	if got := ADCStep(slow, nil); got != 0 {
		t.Errorf("smooth slow curve: step %v, want 0", got)
	}
}

// A capture that starts with hours of exactly 0 V (a storage node empty all night) and
// then rises slowly, quantised by an 11-bit ADC through a 0.3125 divider (7.8 mV at the
// node) with 1 mV of noise: the step and the noise come from the stretch that moves, not
// from the still one, and the dawn's one-step dither is not taken for cycles.
func TestStillNightThenDawn(t *testing.T) {
	lsb := 5.0 / 2048 / 0.3125
	rng := rand.New(rand.NewPCG(5, 6))
	var ts, vs []float64
	for i := 0; i < 4*3600*2; i++ { // 2 Hz
		x := float64(i) * 0.5
		v := 0.0
		if x > 3*3600 {
			v = 20e-6*(x-3*3600) + 1e-3*rng.NormFloat64() // 20 uV/s
		}
		v = math.Max(0, math.Round(v/lsb)*lsb)
		ts = append(ts, x)
		vs = append(vs, math.Round(v*1e5)/1e5)
	}
	if got := ADCStep(vs, nil); math.Abs(got-lsb) > 0.01*lsb {
		t.Errorf("ADCStep over the whole trace: %v, want %v", got, lsb)
	}
	if got := NoiseSD(ts, vs, nil); got == 0 {
		t.Errorf("NoiseSD over the whole trace: 0, want the quantisation noise of the rise")
	}
	d := New(nil)
	d.Push(ts, vs)
	s := d.Finish()
	if math.Abs(s.StepV-lsb) > 0.01*lsb {
		t.Errorf("detector step %v, want %v", s.StepV, lsb)
	}
	if s.NoiseV == 0 {
		t.Errorf("detector noise 0")
	}
	if len(s.Cycles) != 0 {
		t.Errorf("%d cycles on a slow rise (first at %.0f s, %.4f V), want 0", len(s.Cycles), s.Cycles[0].FireS, s.Cycles[0].FireV)
	}
}
