package analyze

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strings"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/analyze/model"
	"capcycle/analyze/stats"
)

// The calibration of the analysis's uncertainties: synthetic captures with exact truth
// (package detecttest, closed-form RC response), many noise realisations each, read
// through a 2:1 divider into a 10-bit ADC on a 3.3 V reference (a step of 6.4 mV at the
// storage node) with 1-3 mV of noise. For each quantity, z = (estimate − truth) / sd;
// an honest 95 % interval covers the truth in about 95 % of realisations, and the test
// asks 90-99 %.

// calADC is the ADC of the calibration scenarios: 10 bits over 3.3 V behind a 2:1
// divider, so 6.6 V full scale at the storage node.
func calADC(noiseV float64, seed uint64) detecttest.ADC {
	return detecttest.ADC{NoiseV: noiseV, Bits: 10, FullV: 6.6, Seed: seed}
}

// coverage collects, per quantity, the z of every realisation.
type coverage struct {
	z       map[string][]float64
	in      map[string][]bool // the 95 % interval [lo95, hi95] holds the truth
	missing map[string]int
}

func newCoverage() *coverage {
	return &coverage{z: map[string][]float64{}, in: map[string][]bool{}, missing: map[string]int{}}
}

// add records estimate e of quantity name against truth (a null estimate or sd counts
// as missing).
func (c *coverage) add(name string, e *analysis.Estimate, truth float64) {
	if e == nil || e.SD == nil || !(*e.SD > 0) || e.Lo95 == nil || e.Hi95 == nil {
		c.missing[name]++
		return
	}
	c.z[name] = append(c.z[name], (e.Value-truth) / *e.SD)
	c.in[name] = append(c.in[name], *e.Lo95 <= truth && truth <= *e.Hi95)
}

// share is the share of true values in bs.
func share(bs []bool) float64 {
	k := 0
	for _, b := range bs {
		if b {
			k++
		}
	}
	return float64(k) / float64(len(bs))
}

// check logs every quantity's coverage, mean z and SD of z, and fails those whose 95 %
// interval covers the truth in fewer than lo or more than hi of the realisations.
func (c *coverage) check(t *testing.T, lo, hi float64) {
	t.Helper()
	names := make([]string, 0, len(c.z))
	for k := range c.z {
		names = append(names, k)
	}
	sort.Strings(names)
	var b strings.Builder
	for _, k := range names {
		z := c.z[k]
		cov := share(c.in[k])
		fmt.Fprintf(&b, "\n%-12s n %3d  covered %5.1f %%  mean z %+5.2f  sd z %4.2f  missing %d", k, len(z), 100*cov, stats.Mean(z), stats.SD(z), c.missing[k])
		if cov < lo || cov > hi {
			t.Errorf("%s: the 95 %% interval covers the truth in %.1f %% of %d realisations, want %.0f-%.0f %%", k, 100*cov, len(z), 100*lo, 100*hi)
		}
	}
	t.Log(b.String())
}

// realisations is the number of noise realisations per scenario: enough in -short (and
// under the race detector, which slows arithmetic tenfold and finds nothing in it) for a
// coverage within a few per cent, more in the long run.
func realisations() int {
	if testing.Short() || raceEnabled {
		return 150
	}
	return 400
}

// TestCalibrationTrigger: on_v, off_v, pulse_s and period_s of a voltage trigger under
// steady light, and the load's time constant and resistance (through a capacitance
// declared at its nominal value, the part anywhere in its ±20 % band): a resistive
// load, sampled every 5 ms (some ten samples in a pulse: each pulse fitted) and every
// 20 ms (two or three: the events at the midpoints of their sample intervals).
func TestCalibrationTrigger(t *testing.T) {
	for _, dt := range []float64{0.005, 0.02} {
		t.Run(fmt.Sprintf("dt=%gs", dt), func(t *testing.T) {
			cov := newCoverage()
			rng := rand.New(rand.NewPCG(12, uint64(1000*dt)))
			for k := range realisations() {
				noise := 1e-3 + 2e-3*float64(k%3)/2
				ia := []float64{0.6e-3, 1e-3, 2e-3}[k%3]
				// the part's capacitance anywhere in its ±20 % band, the nominal one declared
				c := wrenRC
				c.C *= 1 + 0.2*(2*rng.Float64()-1)
				ts, vs, tr := detecttest.Generate(c, []detecttest.Light{{FromS: 0, IA: ia}}, 90, detecttest.Sampling{DtS: dt}, calADC(noise, uint64(1000+k)))
				res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: wrenRC.C, CapTol: "M"}})
				if dt < 0.01 {
					cov.add("load_ohm", res.Fit.Load.Ohm, c.RLoadOhm)
					cov.add("load_tau_s", res.Fit.Load.TauS, tr.TauLoadS)
				}
				trg := res.Fit.Trigger
				cov.add("on_v", trg.OnV, c.OnV)
				cov.add("off_v", trg.OffV, c.OffV)
				cov.add("pulse_s", trg.PulseS, tr.ResetS[1]-tr.FireS[1])
				cov.add("period_s", trg.PeriodS, tr.FireS[2]-tr.FireS[1])
			}
			cov.check(t, 0.90, 0.99)
		})
	}
}

// TestCalibrationEquilibrium: where the voltage settles below the trigger, from a trace
// that ends at 50, 80 and 95 % of the approach, through the ADC above with 2 mV of
// noise. Two cells: an ideal current source (20 µA into 200 kΩ and 0.1 F: the approach
// is an exact exponential), and the circuit model's single-diode cell (the Wren
// scenario's panel at 100 W/m², the leak set to 300 Ω, 1 kΩ and 3 kΩ: the approach
// bends away from an exponential, most for 3 kΩ, where the diode sets the level). An
// estimate may be null (the capture cannot tell); one that is given must cover the
// truth like any other.
func TestCalibrationEquilibrium(t *testing.T) {
	cov := newCoverage()
	seeds := realisations() / 3
	for _, frac := range []float64{0.5, 0.8, 0.95} {
		name := fmt.Sprintf("eq_v_%02.0f%%", 100*frac)
		// the exponential: V(t) = 4 (1 − exp(−t/2e4)) from 0 V
		rc := detecttest.Circuit{C: 0.1, RLeakOhm: 2e5, RLoadOhm: 50, OnV: 4.5, OffV: 3}
		endS := -2e4 * math.Log(1-frac)
		for k := range seeds {
			ts, vs, _ := detecttest.Generate(rc, []detecttest.Light{{FromS: 0, IA: 20e-6}}, endS, detecttest.Sampling{DtS: endS / 3000}, calADC(2e-3, uint64(300+k)))
			res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: rc.C, OnV: rc.OnV}})
			cov.add("rc_"+name, res.EquilibriumV, 4.0)
		}
		sc, err := model.Scenario("wren")
		if err != nil {
			t.Fatal(err)
		}
		light, err := model.NewPiecewise([]float64{0, 1e5}, []float64{100, 100})
		if err != nil {
			t.Fatal(err)
		}
		for _, leak := range []float64{300, 1e3, 3e3} {
			c := *sc.Circuit
			c.Storage.LeakOhm = leak
			ts, vs, _ := simulate(t, &c, light, 600, 10, 0, detecttest.ADC{})
			veq := vs[len(vs)-1]
			k := 0
			for k < len(vs)-1 && vs[k] < frac*veq {
				k++
			}
			for j := range seeds {
				tn, vn, _ := simulate(t, &c, light, ts[k], 10, 0, calADC(2e-3, uint64(500+j)))
				res := RunSamples(tn, vn, &Options{Declared: analysis.Declared{CapF: c.Storage.CapF, OnV: 2.7, VocV: 4.2}})
				cov.add("diode_"+name, res.EquilibriumV, veq)
			}
		}
	}
	cov.check(t, 0.90, 0.99)
}

// TestCalibrationLeak: the leak's time constant, resistance and constant drain from a
// dark decay of an hour (Wren's 4.7 mF and 1 MΩ with a 0.2 µA drain, one sample every
// 0.5 s), the capacitance declared at its nominal value with the part anywhere in its
// ±20 % band: the ohms and amperes carry the capacitance's uncertainty.
func TestCalibrationLeak(t *testing.T) {
	cov := newCoverage()
	rng := rand.New(rand.NewPCG(13, 1))
	light := []detecttest.Light{{FromS: 0, IA: 0.5e-3}, {FromS: 120, IA: 0}}
	for k := range realisations() {
		c := wrenRC
		c.IQA = 0.2e-6
		c.C *= 1 + 0.2*(2*rng.Float64()-1)
		ts, vs, tr := detecttest.Generate(c, light, 3900, detecttest.Sampling{DtS: 0.5}, calADC(1e-3+1e-3*float64(k%3), uint64(700+k)))
		res := RunSamples(ts, vs, &Options{Declared: analysis.Declared{CapF: wrenRC.C, CapTol: "M"}})
		lk := res.Fit.Leak
		if lk.Method != analysis.LeakDarkDecay {
			t.Fatalf("realisation %d: leak method %q, want a dark decay", k, lk.Method)
		}
		cov.add("leak_tau_s", lk.TauS, tr.TauLeakS)
		cov.add("leak_ohm", lk.Ohm, c.RLeakOhm)
		cov.add("quiescent_a", lk.QuiescentA, c.IQA)
	}
	cov.check(t, 0.90, 0.99)
}
