package fit

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// Synthetic data with known truth (invented for the test, not a reference).

func expData(rng *rand.Rand, n int, span, v0, vinf, tau, noise, lsb float64, jitter bool) (t, v []float64) {
	t = make([]float64, n)
	v = make([]float64, n)
	for i := range t {
		t[i] = 10 + span*float64(i)/float64(n-1) // an arbitrary origin: v0 is at t[0]
		if jitter && i > 0 && i < n-1 {
			t[i] += span / float64(n-1) * 0.4 * (rng.Float64() - 0.5)
		}
		x := vinf + (v0-vinf)*math.Exp(-(t[i]-10)/tau) + noise*rng.NormFloat64()
		if lsb > 0 {
			x = lsb * math.Round(x/lsb)
		}
		v[i] = x
	}
	return t, v
}

func TestExpApproachRecovers(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	cases := []struct {
		name                       string
		v0, vinf, tau, span, noise float64
		lsb                        float64
		jitter                     bool
	}{
		{"load discharge", 3.0, 1.2, 0.05, 0.2, 2e-3, 0, false},
		{"dark decay with offset", 2.6, 0.3, 400, 1500, 1e-3, 0, true},
		{"approach to equilibrium (rising)", 0.8, 2.1, 30, 60, 2e-3, 0, true},
		{"10-bit ADC steps at 5 V", 3.2, 0.9, 0.08, 0.3, 3e-3, 5.0 / 1024, false},
		{"only half a time constant", 3.0, 1.0, 1.0, 0.5, 1e-3, 0, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			tt, v := expData(rng, 500, c.span, c.v0, c.vinf, c.tau, c.noise, c.lsb, c.jitter)
			f, err := ExpApproach(tt, v)
			if err != nil {
				t.Fatal(err)
			}
			for _, q := range []struct {
				what string
				got  Value
				want float64
			}{{"tau", f.Tau, c.tau}, {"v_inf", f.VInf, c.vinf}, {"v0", f.V0, c.v0}} {
				z := (q.got.Value - q.want) / q.got.SD
				t.Logf("%s = %.6g ± %.2g (true %g, z %.2f)", q.what, q.got.Value, q.got.SD, q.want, z)
				if math.Abs(z) > 4 || !(q.got.SD > 0) {
					t.Errorf("%s = %g ± %g, true %g", q.what, q.got.Value, q.got.SD, q.want)
				}
			}
			if c.lsb == 0 && math.Abs(f.RMS/c.noise-1) > 0.1 {
				t.Errorf("RMS %g, noise %g", f.RMS, c.noise)
			}
		})
	}
}

// TestExpApproachHonestSD checks that the reported standard errors match the spread of
// the estimates over many noisy replicates (Monte Carlo, 300 runs).
func TestExpApproachHonestSD(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const runs = 300
	var taus, sds []float64
	for range runs {
		tt, v := expData(rng, 200, 0.3, 3.0, 1.0, 0.1, 5e-3, 0, false)
		f, err := ExpApproach(tt, v)
		if err != nil {
			t.Fatal(err)
		}
		taus = append(taus, f.Tau.Value)
		sds = append(sds, f.Tau.SD)
	}
	spread := stat.StdDev(taus, nil)
	mean := stat.Mean(sds, nil)
	t.Logf("tau spread %.4g, mean reported SD %.4g", spread, mean)
	// The sample SD of 300 normal values is within ±12 % of the true one at ~3 sigma.
	if math.Abs(mean/spread-1) > 0.12 {
		t.Errorf("reported SD %g, observed spread %g", mean, spread)
	}
}

func TestExpApproachNoDecay(t *testing.T) {
	tt := []float64{0, 1, 2, 3, 4, 5, 6, 7}
	v := make([]float64, len(tt))
	for i, x := range tt {
		v[i] = 1 + 0.1*x*x // bending away: no asymptote
	}
	_, err := ExpApproach(tt, v)
	if !errors.Is(err, ErrNotIdentifiable) {
		t.Fatalf("err = %v, want ErrNotIdentifiable", err)
	}
}

func TestExpApproachBadInput(t *testing.T) {
	cases := map[string][2][]float64{
		"length mismatch": {{0, 1, 2, 3, 4}, {1, 2, 3}},
		"too few":         {{0, 1, 2}, {1, 2, 3}},
		"NaN":             {{0, 1, 2, 3, 4}, {1, math.NaN(), 3, 4, 5}},
		"backwards":       {{0, 1, 3, 2, 4}, {1, 2, 3, 4, 5}},
		"no time span":    {{1, 1, 1, 1, 1}, {1, 2, 3, 4, 5}},
	}
	for name, c := range cases {
		if _, err := ExpApproach(c[0], c[1]); !errors.Is(err, ErrInput) {
			t.Errorf("%s: err = %v, want ErrInput", name, err)
		}
	}
}

// motorDischarge simulates a capacitor dumped into a small DC motor while a cell keeps
// charging it: C dV/dt = Icell − i, i = (V − Ke·ω)/R, J dω/dt = Ke·i − b·ω. The numbers
// are invented for the test (common practice, no source).
func motorDischarge(rng *rand.Rand, n int, noise float64) (t, v []float64) {
	const (
		c, icell  = 4.7e-3, 2e-3
		r, ke     = 10.0, 2e-3
		j, b      = 2e-8, 1e-9
		v0, dt    = 3.0, 1e-6
		sampleDt  = 1e-4
		perSample = int(sampleDt / dt)
	)
	vv, w := v0, 0.0
	for k := 0; k < n; k++ {
		t = append(t, float64(k)*sampleDt)
		v = append(v, vv+noise*rng.NormFloat64())
		for range perSample {
			i := (vv - ke*w) / r
			vv += dt * (icell - i) / c
			w += dt * (ke*i - b*w) / j
		}
	}
	return t, v
}

func TestLoadShape(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	t.Run("resistor", func(t *testing.T) {
		tt, v := expData(rng, 600, 0.2, 3.0, 1.2, 0.05, 2e-3, 0, false)
		s, err := LoadShape(tt, v, 0)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("runs P %.3g, ratio %.3f ± %.3f, start %.4g end %.4g", s.Pattern.RunsP, s.Ratio.Value, s.Ratio.SD, s.Start.Value, s.End.Value)
		if !s.Resistive || s.Pattern.Systematic {
			t.Errorf("resistor flagged as non-resistive: %+v", s.Pattern)
		}
		if math.Abs(s.Start.Value/0.05-1) > 0.05 || math.Abs(s.End.Value/0.05-1) > 0.05 {
			t.Errorf("local taus %g, %g; true 0.05", s.Start.Value, s.End.Value)
		}
	})
	t.Run("resistor, 10-bit ADC with little noise", func(t *testing.T) {
		// Residuals of coarse steps are correlated and the runs test calls them
		// systematic; the local time constants must still agree.
		tt, v := expData(rng, 600, 0.2, 3.0, 1.2, 0.05, 1e-3, 5.0/1024, false)
		s, err := LoadShape(tt, v, 0)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("runs P %.3g, ratio %.3f ± %.3f", s.Pattern.RunsP, s.Ratio.Value, s.Ratio.SD)
		if !s.Resistive {
			t.Errorf("quantised resistor flagged as non-resistive: ratio %+v", s.Ratio)
		}
	})
	t.Run("motor", func(t *testing.T) {
		tt, v := motorDischarge(rng, 1500, 2e-3)
		s, err := LoadShape(tt, v, 0)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("runs P %.3g, ratio %.3f ± %.3f, start %.4g end %.4g", s.Pattern.RunsP, s.Ratio.Value, s.Ratio.SD, s.Start.Value, s.End.Value)
		if s.Resistive || !s.Pattern.Systematic {
			t.Errorf("motor not flagged: %+v ratio %+v", s.Pattern, s.Ratio)
		}
		if s.Start.Value >= s.End.Value {
			t.Errorf("motor start tau %g not below end tau %g", s.Start.Value, s.End.Value)
		}
	})
}

func TestResidualPatternKnownNoise(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	r := make([]float64, 1000)
	for i := range r {
		r[i] = 0.01 * rng.NormFloat64()
	}
	p := ResidualPattern(r, 0, 0.01)
	if p.Systematic || math.Abs(p.Ratio-1) > 0.1 {
		t.Errorf("white noise called systematic: %+v", p)
	}
	p = ResidualPattern(r, 0, 0.005) // the noise is twice what was claimed
	if !p.Systematic || p.ChiP > 1e-6 {
		t.Errorf("RMS twice the noise not flagged: %+v", p)
	}
	for i := range r {
		r[i] = 0.01 * math.Sin(float64(i)/100) // smooth misfit
	}
	if p := ResidualPattern(r, 0, 0); !p.Systematic || p.Ratio < 10 {
		t.Errorf("smooth misfit not flagged: %+v", p)
	}
}

func TestSettle(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	// A cell charging a capacitor towards 2.1 V from 0.8 V with τ = 30 s: within 1 % of
	// 2.1 V after 30·ln(1.3/0.021) = 123.8 s (the RC time-constant rule,
	// 1 − e^(−n), common practice).
	want := 30 * math.Log(1.3/0.021)
	var settles []float64
	var sds []float64
	for range 200 {
		tt, v := expData(rng, 300, 60, 0.8, 2.1, 30, 3e-3, 0, false)
		f, err := ExpApproach(tt, v)
		if err != nil {
			t.Fatal(err)
		}
		s := f.Settle(0.01)
		settles, sds = append(settles, s.Value), append(sds, s.SD)
	}
	mean, spread := stat.Mean(settles, nil), stat.StdDev(settles, nil)
	t.Logf("settle %.3f s (true %.3f), spread %.3f, mean reported SD %.3f", mean, want, spread, stat.Mean(sds, nil))
	if math.Abs(mean-want) > 4*spread/math.Sqrt(200) {
		t.Errorf("mean settle time %g, want %g", mean, want)
	}
	if r := stat.Mean(sds, nil) / spread; r < 0.85 || r > 1.15 {
		t.Errorf("reported SD %g, spread %g", stat.Mean(sds, nil), spread)
	}
}
