package analyze

import (
	"math"

	"capcycle/analyze/detect"
)

// Fires and resets located between samples.
//
// The detector reads a fire at the last sample still on the charging curve and a reset
// at the first sample near the trough: a fire happens somewhere in the interval after
// the first and a reset somewhere around the second, so the voltages read there are
// biased (the fire about slope·dt/2 low, the reset high by part of the last step of the
// fast fall). Here each event is placed where the curves on its two sides meet: the
// charging curve before the fire (a local quadratic through the last points of the rise)
// and the fitted exponential of the pulse after it; the exponential of the pulse and the
// recharge after the reset (a local quadratic through the first points of the next
// rise). The event's voltage is that of the slow curve at the meeting time, where a
// small error in the time costs almost nothing. A pulse with no exponential fit (too few
// samples in it) has its event at the middle of the interval between the two samples
// around it: for a sample grid unrelated to the circuit the event is equally likely
// anywhere in it, so the midpoint is unbiased, with a standard uncertainty of
// dt/sqrt(12) in time (the rectangular distribution, JCGM 100:2008, 4.3.7).

// located is an event placed between samples; ok is false when it was not.
type located struct {
	ok   bool
	t, v float64
	// fitted is true when the event is where two fitted curves meet, false when it is the
	// midpoint of the sample interval.
	fitted bool
	// dt is the sample interval the event lies in, s.
	dt float64
}

// sideCurve is a local quadratic through the points on one side of an event: its value
// and slope at t0.
type sideCurve struct {
	ok           bool
	t0, v, slope float64
}

func (c sideCurve) at(t float64) float64 { return c.v + c.slope*(t-c.t0) }

// sidePoints is the number of points of the slow curve each side fit uses.
const sidePoints = 32

// fitSide fits the points' local quadratic (a line for fewer than 8) at time t0.
func fitSide(ts, vs []float64, t0 float64) sideCurve {
	if len(ts) < 3 {
		return sideCurve{}
	}
	order := 2
	if len(ts) < 8 {
		order = 1
	}
	v, s, ok := detect.LocalPoly(ts, vs, t0, order)
	if !ok || math.IsNaN(v+s) {
		return sideCurve{}
	}
	return sideCurve{ok: true, t0: t0, v: v, slope: s}
}

// meet returns the time in [ta, tb] where the slow curve and the pulse's exponential
// cross (bisection on their difference slow − fast, which grows with time there at a
// fire and at a reset alike: the exponential falls fast through the slow curve). ok is
// false when the two do not cross in the interval.
func meet(slow sideCurve, e *expResult, ta, tb float64) (float64, bool) {
	f := func(t float64) float64 { return slow.at(t) - e.at(t) }
	fa, fb := f(ta), f(tb)
	if math.IsNaN(fa+fb) || fa > 0 || fb < 0 {
		return 0, false
	}
	for range 60 {
		m := 0.5 * (ta + tb)
		if f(m) < 0 {
			ta = m
		} else {
			tb = m
		}
	}
	return 0.5 * (ta + tb), true
}

// locateFire places the fire of a fall: pts are the fall's points (the onset at
// onset), tailT and tailV the last points of the rise before it (may be empty), e the
// pulse's exponential (nil or not ok: the midpoint).
//
// The onset sample may already be a little down the fall (the detector takes it within
// four noise SDs of the level), so the fire is sought from the sample before it; when
// it comes out before the onset sample, the charging curve is fitted again without it.
func locateFire(pts []detect.Point, onset int, tailT, tailV []float64, e *expResult) located {
	if onset+1 >= len(pts) {
		return located{}
	}
	ts, vs := chargingSide(pts, onset, tailT, tailV)
	ta, tb := pts[onset].T, pts[onset+1].T
	slow := fitSide(ts, vs, ta)
	if !slow.ok {
		return located{}
	}
	l := located{ok: true, t: 0.5 * (ta + tb), dt: tb - ta}
	if e != nil && e.ok {
		before := ta
		if len(ts) > 1 {
			before = ts[len(ts)-2]
		}
		if tm, ok := meet(slow, e, before, tb); ok {
			l.t, l.fitted = tm, true
			if tm < ta {
				if s2 := fitSide(ts[:len(ts)-1], vs[:len(vs)-1], ta); s2.ok {
					slow = s2
					if tm2, ok := meet(slow, e, before, ta); ok {
						l.t = tm2
					}
				}
			}
		}
	}
	l.v = slow.at(l.t)
	return l
}

// chargingSide returns the points of the charging curve up to a fall's onset: the tail
// of the rise before it and the fall's own points up to the onset, the last sidePoints
// of them.
func chargingSide(pts []detect.Point, onset int, tailT, tailV []float64) (ts, vs []float64) {
	ts = append([]float64(nil), tailT...)
	vs = append([]float64(nil), tailV...)
	last := math.Inf(-1)
	if len(ts) > 0 {
		last = ts[len(ts)-1]
	}
	for _, p := range pts[:onset+1] {
		if p.T > last {
			ts, vs = append(ts, p.T), append(vs, p.V)
		}
	}
	if len(ts) > sidePoints {
		ts, vs = ts[len(ts)-sidePoints:], vs[len(vs)-sidePoints:]
	}
	return ts, vs
}

// locateReset places the reset of a fall whose pulse exponential is e, from the first
// points of the rise after it (pts, starting at the trough). Without a pulse fit (e nil
// or not ok) it is the midpoint between the fall's last sample off the recharge curve
// and the recharge's first (end are the fall's last points, band the distance from the
// recharge curve within which a sample is taken to be on it).
func locateReset(pts []detect.Point, e *expResult, end []detect.Point, band float64) located {
	if len(pts) < 4 {
		return located{}
	}
	ta := math.Inf(-1)
	if e != nil && e.ok {
		ta = e.t1 // after the last sample of the fall's fit
	}
	var ts, vs []float64
	for _, p := range pts {
		if len(ts) == sidePoints {
			break
		}
		if p.T > ta {
			ts, vs = append(ts, p.T), append(vs, p.V)
		}
	}
	if e == nil || !e.ok {
		return midReset(ts, vs, end, band)
	}
	slow := fitSide(ts, vs, ta)
	if !slow.ok {
		return located{}
	}
	// The reset lies before the first sample of the recharge that the exponential,
	// continued, would put below it.
	tb := ts[0]
	for k := 1; k < len(ts) && slow.at(tb)-e.at(tb) < 0; k++ {
		tb = ts[k]
	}
	tm, ok := meet(slow, e, ta, tb)
	if !ok {
		return located{}
	}
	return located{ok: true, t: tm, v: slow.at(tm), fitted: true, dt: ts[0] - ta}
}

// midReset places a reset with no pulse fit: the recharge curve is fitted to the rise's
// points after its first, the first is taken for the recharge's own when within band of
// that curve, and the reset is the midpoint between the recharge's first sample and the
// last sample before it (of the fall's last points), at the recharge curve's voltage.
func midReset(ts, vs []float64, end []detect.Point, band float64) located {
	if len(ts) < 4 {
		return located{}
	}
	first := 0
	slow := fitSide(ts[1:], vs[1:], ts[0])
	if !slow.ok {
		return located{}
	}
	if math.Abs(vs[0]-slow.at(ts[0])) > band {
		first = 1 // the trough sample is still on the fall
	}
	tr := ts[first]
	tl := math.Inf(-1)
	for _, p := range end {
		if p.T < tr && p.T > tl {
			tl = p.T
		}
	}
	if first == 1 {
		tl = ts[0]
	}
	if math.IsInf(tl, -1) {
		return located{}
	}
	tm := 0.5 * (tl + tr)
	return located{ok: true, t: tm, v: slow.at(tm), dt: tr - tl}
}

// placeEvents moves every cycle's fire and reset to where they were located between
// samples (each where it was, when it was not), and its charge time with them. It
// rewrites sum.Cycles in place, before anything reads them.
func placeEvents(sum *detect.Summary, info []swingInfo) {
	prevShift := 0.0 // how far the last cycle's reset moved
	for k := range sum.Cycles {
		c := &sum.Cycles[k]
		var fire, reset located
		if c.Swing >= 0 && c.Swing < len(info) {
			fire, reset = info[c.Swing].fire, info[c.Swing].reset
		}
		shift := 0.0
		if fire.ok && fire.t < c.ResetS {
			shift = fire.t - c.FireS
			c.FireS, c.FireV = fire.t, fire.v
		}
		if !math.IsNaN(c.ChargeS) {
			c.ChargeS += shift - prevShift
		}
		prevShift = 0
		// A fall with a step up as the switch opened (a series resistance, see
		// detect.Swing.ReleaseStepV) was released at the true minimum, before the step:
		// the recharge after it starts above that minimum by the step, so where the two
		// curves meet is no reset; the detector's stays.
		esrStep := c.Swing >= 0 && c.Swing < len(sum.Swings) && sum.Swings[c.Swing].ReleaseStepV > 0
		if reset.ok && reset.t > c.FireS && !esrStep {
			prevShift = reset.t - c.ResetS
			c.ResetS, c.ResetV = reset.t, reset.v
		}
	}
}
