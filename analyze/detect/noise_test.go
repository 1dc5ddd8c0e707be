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
