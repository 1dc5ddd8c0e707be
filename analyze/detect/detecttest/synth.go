// Package detecttest makes synthetic storage-capacitor traces with known truth, in
// closed form, for the tests of the detector and the analysis.
//
// The circuit: a photocurrent I(t) (piecewise constant) charges C; a leakage resistor
// RLeak and a constant quiescent current IQ drain it; a voltage trigger connects RLoad
// when V reaches OnV and releases it when V falls to OffV. Between events
//
//	C dV/dt = I - IQ - V/R,  R = RLeak (off) or RLeak || RLoad (on)
//
// so V(t) = Vinf + (V0 - Vinf) exp(-(t - t0)/tau) with Vinf = (I - IQ) R and tau = R C
// (the first-order RC step response; common textbook result). Event times are solved
// exactly from that expression, so the truth does not depend on the sample grid.
package detecttest

import (
	"math"
	"math/rand/v2"
)

// Circuit is the synthetic circuit.
type Circuit struct {
	C         float64 // farads
	RLeakOhm  float64 // leakage resistance (probe included)
	RLoadOhm  float64 // load resistance while firing
	IQA       float64 // constant quiescent drain, amperes
	OnV, OffV float64 // trigger thresholds
	V0        float64 // voltage at t = 0
	// PeriodS and PulseS, when PeriodS > 0, make the trigger a timer instead: on at
	// k PeriodS (k = 1, 2, ...) for PulseS, whatever the voltage.
	PeriodS, PulseS float64
}

// Light is a photocurrent step: from FromS on, the cell gives IA amperes.
type Light struct {
	FromS float64
	IA    float64
}

// Sampling says when samples are taken.
type Sampling struct {
	DtS float64 // spacing while idle
	// FastDtS, when > 0, is the spacing while firing and for PostS after each reset (a
	// board that bursts during pulses); with DtS large this gives one sample per slow
	// interval and many in each pulse.
	FastDtS float64
	PostS   float64
	// JitterS adds a uniform random offset in [0, JitterS) to each sample time.
	JitterS float64
}

// ADC describes the measurement.
type ADC struct {
	NoiseV float64 // Gaussian noise SD added before quantisation
	Bits   int     // 0: no quantisation
	FullV  float64 // full scale for Bits
	SpikeV float64 // when > 0, random spikes of up to this size on samples while firing
	Seed   uint64
}

// Truth is what the generator knows.
type Truth struct {
	FireS, ResetS []float64
	FireV, ResetV []float64
	TauLoadS      float64 // C * (RLeak || RLoad): the pulse's time constant
	TauLeakS      float64 // C * RLeak
}

// Generate samples the circuit from 0 to durS.
func Generate(c Circuit, light []Light, durS float64, s Sampling, a ADC) (t, v []float64, tr Truth) {
	tr = Stream(c, light, durS, s, a, func(ts, vs float64) {
		t = append(t, ts)
		v = append(v, vs)
	})
	return t, v, tr
}

// Stream is Generate handing each sample to emit instead of keeping them (for long
// captures); the truth's event lists still grow with the number of cycles.
func Stream(c Circuit, light []Light, durS float64, s Sampling, a ADC, emit func(t, v float64)) (tr Truth) {
	rng := rand.New(rand.NewPCG(a.Seed, a.Seed^0x9e3779b97f4a7c15))
	tr.TauLeakS = c.C * c.RLeakOhm
	rOn := c.RLeakOhm * c.RLoadOhm / (c.RLeakOhm + c.RLoadOhm)
	tr.TauLoadS = c.C * rOn
	st := state{c: c, light: light, rOn: rOn, t0: 0, v0: c.V0}
	lastReset := math.Inf(-1)
	now := 0.0
	step := 0
	for now <= durS {
		vt := st.advance(now, &tr)
		if len(tr.ResetS) > 0 {
			lastReset = tr.ResetS[len(tr.ResetS)-1]
		}
		x := vt + a.NoiseV*rng.NormFloat64()
		if st.on && a.SpikeV > 0 && rng.Float64() < 0.3 {
			x += a.SpikeV * (2*rng.Float64() - 1)
		}
		if a.Bits > 0 {
			lsb := a.FullV / float64(int(1)<<a.Bits)
			x = math.Round(x/lsb) * lsb
			x = math.Max(0, math.Min(x, a.FullV-lsb))
		}
		emit(now, x)
		dt := s.DtS
		if s.FastDtS > 0 && (st.on || now-lastReset < s.PostS) {
			dt = s.FastDtS
		}
		if s.JitterS > 0 {
			dt += s.JitterS * rng.Float64()
		}
		if s.FastDtS == 0 && s.JitterS == 0 {
			// uniform spacing without accumulated rounding
			step++
			now = float64(step) * s.DtS
			continue
		}
		now += dt
	}
	return tr
}

type state struct {
	c      Circuit
	light  []Light
	rOn    float64
	t0, v0 float64
	on     bool
}

func (s *state) current(t float64) float64 {
	i := 0.0
	for _, l := range s.light {
		if l.FromS <= t {
			i = l.IA
		}
	}
	return i
}

func (s *state) nextLight(t float64) float64 {
	n := math.Inf(1)
	for _, l := range s.light {
		if l.FromS > t && l.FromS < n {
			n = l.FromS
		}
	}
	return n
}

func (s *state) params(t float64) (vinf, tau float64) {
	r := s.c.RLeakOhm
	if s.on {
		r = s.rOn
	}
	return (s.current(t) - s.c.IQA) * r, r * s.c.C
}

// event returns the time at which the trigger next switches, from (t0, v0), with the
// light as it is at t0 (Inf if never).
func (s *state) event() float64 {
	if p := s.c.PeriodS; p > 0 {
		k := math.Floor(s.t0/p + 1e-12)
		if s.on {
			return k*p + s.c.PulseS
		}
		return (k + 1) * p
	}
	vinf, tau := s.params(s.t0)
	target := s.c.OnV
	if s.on {
		target = s.c.OffV
		if !(vinf < target) || s.v0 <= target {
			if s.v0 <= target {
				return s.t0
			}
			return math.Inf(1)
		}
	} else if !(vinf > target) || s.v0 >= target {
		if s.v0 >= target {
			return s.t0
		}
		return math.Inf(1)
	}
	return s.t0 - tau*math.Log((target-vinf)/(s.v0-vinf))
}

func (s *state) at(t float64) float64 {
	vinf, tau := s.params(s.t0)
	return vinf + (s.v0-vinf)*math.Exp(-(t-s.t0)/tau)
}

// advance moves the state to time t, recording events, and returns V(t).
func (s *state) advance(t float64, tr *Truth) float64 {
	for {
		te := s.event()
		tl := s.nextLight(s.t0)
		if te > t && tl > t {
			return s.at(t)
		}
		if tl < te {
			s.v0, s.t0 = s.at(tl), tl
			continue
		}
		ve := s.at(te)
		s.v0, s.t0 = ve, te
		s.on = !s.on
		if s.on {
			tr.FireS = append(tr.FireS, te)
			tr.FireV = append(tr.FireV, ve)
		} else {
			tr.ResetS = append(tr.ResetS, te)
			tr.ResetV = append(tr.ResetV, ve)
		}
	}
}

// Noise adds an ADC's noise, spikes and quantisation to true voltages, for traces made
// by another simulator.
type Noise struct {
	a   ADC
	rng *rand.Rand
}

// NewNoise returns a Noise for a.
func NewNoise(a ADC) *Noise {
	return &Noise{a: a, rng: rand.New(rand.NewPCG(a.Seed, a.Seed^0x9e3779b97f4a7c15))}
}

// Measure returns the measured value of true voltage v; firing says whether the load is
// on (spikes happen only then).
func (n *Noise) Measure(v float64, firing bool) float64 {
	x := v + n.a.NoiseV*n.rng.NormFloat64()
	if firing && n.a.SpikeV > 0 && n.rng.Float64() < 0.3 {
		x += n.a.SpikeV * (2*n.rng.Float64() - 1)
	}
	if n.a.Bits > 0 {
		lsb := n.a.FullV / float64(int(1)<<n.a.Bits)
		x = math.Round(x/lsb) * lsb
		x = math.Max(0, math.Min(x, n.a.FullV-lsb))
	}
	return x
}
