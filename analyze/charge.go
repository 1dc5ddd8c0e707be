package analyze

import (
	"math"
	"sort"
)

// This file measures the storage capacitance from a load-current channel (the capture's
// iload_a column): in every fire the charge the load drew, over the voltage it cost,
// C = Q / ΔV. It needs no declared value and no calibration stretch.

// chargeRing is the number of recent samples the chargeLog keeps: far more than the
// detector needs to confirm the end of a fall (a few hundred samples), at 32 bytes each.
const chargeRing = 1 << 16

// chargeLog keeps, for the last chargeRing samples, the time, the voltage, the load
// current and its running integral Q(t) = ∫ i dt (trapezoid rule), so that a fall the
// detector confirms some samples late can still ask how much charge went into the load
// during it. The memory is fixed, whatever the capture's length.
type chargeLog struct {
	t, v, i, q []float64 // rings
	head, n    int       // next slot, filled slots
	sum        float64   // Q at the newest sample
}

func newChargeLog() *chargeLog {
	return &chargeLog{
		t: make([]float64, chargeRing), v: make([]float64, chargeRing),
		i: make([]float64, chargeRing), q: make([]float64, chargeRing),
	}
}

// add appends samples (t increasing) with their voltages and load currents. A current
// of NaN (not sampled in that row) adds nothing to Q; pulseCap skips a pulse with one.
func (c *chargeLog) add(t, v, i []float64) {
	for k := range t {
		if c.n > 0 {
			p := (c.head - 1 + chargeRing) % chargeRing
			if dq := 0.5 * (i[k] + c.i[p]) * (t[k] - c.t[p]); !math.IsNaN(dq) {
				c.sum += dq
			}
		}
		c.t[c.head], c.v[c.head], c.i[c.head], c.q[c.head] = t[k], v[k], i[k], c.sum
		c.head = (c.head + 1) % chargeRing
		c.n = min(c.n+1, chargeRing)
	}
}

// slot is the ring index of the k-th kept sample, oldest first.
func (c *chargeLog) slot(k int) int { return (c.head - c.n + k + 2*chargeRing) % chargeRing }

// find returns the position (oldest first) of the first kept sample at or after time x,
// and false when x is older than the oldest kept sample or newer than the newest.
func (c *chargeLog) find(x float64) (int, bool) {
	if c.n == 0 || x < c.t[c.slot(0)] || x > c.t[c.slot(c.n-1)] {
		return 0, false
	}
	return sort.Search(c.n, func(k int) bool { return c.t[c.slot(k)] >= x }), true
}

// qAt is Q at time x, interpolated linearly between the kept samples.
func (c *chargeLog) qAt(x float64) (float64, bool) {
	k, ok := c.find(x)
	if !ok {
		return 0, false
	}
	s := c.slot(k)
	if k == 0 || c.t[s] == x {
		return c.q[s], true
	}
	p := c.slot(k - 1)
	f := (x - c.t[p]) / (c.t[s] - c.t[p])
	return c.q[p] + f*(c.q[s]-c.q[p]), true
}

// pulseCap measures the capacitance from one fire that begins at the sample at time
// onS (voltage still on the charging curve, no load current yet) and reaches its trough
// at troughS; riseSlope is the charging slope (V/s) just before the onset.
//
// The charge balance over the pulse is C (V_on − V_end) = Q_load − I_rest·T, where T
// runs from the onset to the first sample after the trough at which the load current is
// back at its level before the fire (so the series resistance of the capacitor, which
// drops the terminal voltage while the current flows, is out of V_end), and I_rest is
// what the cell delivered meanwhile beyond the drains. Before the fire that net current
// was C·riseSlope; taking it as unchanged through the pulse gives
//
//	C = Q_load / (V_on − V_end + riseSlope·T).
//
// The current channel's offset is taken out as its mean over a stretch as long as the
// pulse just before the onset. It returns false when the samples needed are no longer
// kept, the current never settles, or the numbers make no sense (no charge, no fall).
func (c *chargeLog) pulseCap(onS, troughS, riseSlope float64) (float64, bool) {
	k0, ok := c.find(onS)
	if !ok || troughS <= onS {
		return 0, false
	}
	width := troughS - onS
	qb0, ok0 := c.qAt(onS - width)
	kt, okt := c.find(troughS)
	if !ok0 || !okt {
		return 0, false
	}
	kb, _ := c.find(onS - width)
	for k := kb; k <= kt; k++ {
		if math.IsNaN(c.i[c.slot(k)]) {
			return 0, false // the current was not sampled throughout
		}
	}
	s0 := c.slot(k0)
	base := (c.q[s0] - qb0) / width
	// The peak current of the pulse sets how close to the base "settled" is.
	peak := 0.0
	for k := k0; k <= kt; k++ {
		peak = math.Max(peak, math.Abs(c.i[c.slot(k)]-base))
	}
	if !(peak > 0) {
		return 0, false
	}
	end := -1
	for k := kt; k < c.n && c.t[c.slot(k)]-troughS <= width; k++ {
		if x := c.i[c.slot(k)]; math.IsNaN(x) {
			return 0, false
		} else if math.Abs(x-base) <= 0.02*peak {
			end = k
			break
		}
	}
	if end < 0 {
		return 0, false
	}
	s1 := c.slot(end)
	T := c.t[s1] - c.t[s0]
	q := c.q[s1] - c.q[s0] - base*T
	dv := c.v[s0] - c.v[s1] + math.Max(riseSlope, 0)*T
	if !(q > 0) || !(dv > 0) || base > 0.2*q/T {
		return 0, false // a pulse just before this one, or no pulse at all
	}
	return q / dv, true
}
