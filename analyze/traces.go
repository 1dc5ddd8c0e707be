package analyze

import (
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
	"capcycle/analyze/stats"
)

// firesPerHour counts full fires in [t0 - 1800, t1 + 1800] s, per hour of capture there.
func firesPerHour(sum *detect.Summary, t0, t1 float64) float64 {
	lo, hi := math.Max(sum.StartS, t0-1800), math.Min(sum.EndS, t1+1800)
	if hi <= lo {
		return 0
	}
	cs := sum.Cycles
	i := sort.Search(len(cs), func(i int) bool { return cs[i].FireS >= lo })
	j := sort.Search(len(cs), func(i int) bool { return cs[i].FireS > hi })
	n := 0
	for k := i; k < j; k++ {
		if !cs[k].Chatter {
			n++
		}
	}
	return float64(n) / (hi - lo) * 3600
}

// envelopeOf is the min/max envelope of the voltage, one point a bin.
func envelopeOf(env *detect.Envelope) []analysis.EnvelopePt {
	var out []analysis.EnvelopePt
	for _, bin := range env.Bins() {
		out = append(out, analysis.EnvelopePt{TS: (bin.StartS + bin.EndS) / 2, MinV: bin.MinV, MaxV: bin.MaxV})
	}
	return out
}

// traces: up to five typical full cycles spread over the capture, time relative to the
// fire: from 1.5 median charge times before the fire to 4 median pulse lengths after it
// (the charge, the pulse and the start of the recharge at a scale that suits them).
// Typical means a charge time within 25 % of the median (widened to a factor of 2, then
// to any known charge time, when too few are that close), so neither the first charge
// of the day from empty nor the first after a dark stretch or a gap is drawn.
func traces(w *swings) []analysis.Trace {
	cs := w.full()
	if len(cs) == 0 {
		return nil
	}
	var out []analysis.Trace
	var charges, pulses []float64
	for _, c := range cs {
		pulses = append(pulses, c.PulseS())
		if !math.IsNaN(c.ChargeS) {
			charges = append(charges, c.ChargeS)
		}
	}
	medPulse := stats.Median(pulses)
	pick := cs
	before := math.Inf(1)
	if len(charges) > 0 {
		med := stats.Median(charges)
		before = 1.5 * med
		for _, f := range []float64{1.25, 2, math.Inf(1)} {
			var near []detect.Cycle
			for _, c := range cs {
				if !math.IsNaN(c.ChargeS) && c.ChargeS <= f*med && c.ChargeS >= med/f {
					near = append(near, c)
				}
			}
			if len(near) >= min(5, len(charges)) {
				pick = near
				break
			}
		}
	}
	after := math.Inf(1)
	if medPulse > 0 {
		after = 4 * medPulse
	}
	k := min(5, len(pick))
	for j := 0; j < k; j++ {
		c := pick[0]
		if k > 1 {
			c = pick[j*(len(pick)-1)/(k-1)]
		}
		tr := analysis.Trace{Label: "cycle", TS: []float64{}, V: []float64{}}
		for idx := c.Swing - 3; idx <= c.Swing+1; idx++ {
			if idx < 0 || idx >= len(w.info) {
				continue
			}
			for _, p := range w.info[idx].trace {
				t := float64(p.t) - c.FireS
				if t < -before || t > after {
					continue
				}
				if n := len(tr.TS); n > 0 && t <= tr.TS[n-1] {
					continue
				}
				tr.TS = append(tr.TS, t)
				tr.V = append(tr.V, float64(p.v))
			}
		}
		out = append(out, tr)
	}
	return out
}
