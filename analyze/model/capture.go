package model

import (
	"context"
	"fmt"
	"math"
	"time"

	"capcycle/logger/capture"
)

// MinSamplesPerPulse is the fewest samples per expected pulse for the pulse to keep its
// shape in a capture (common practice, no source: a handful of points per time constant
// for a curve to be followed).
const MinSamplesPerPulse = 5

// ExpectedPulse is the time scale of the circuit's pulse, seconds, and what it is: a
// timer's or a fixed on time when the trigger has one, otherwise the load's time constant
// C·(R_load + R_on), over which the storage voltage falls to 1/e of its drop while the
// switch is on. It is 0 when the circuit has no trigger.
func ExpectedPulse(c *Circuit) (float64, string) {
	t := c.Trigger
	switch {
	case t.Kind == TriggerNone:
		return 0, ""
	case t.Kind == TriggerTimer, t.Kind == TriggerPlateau && t.OffV == 0:
		return t.PulseS, "the trigger's on time"
	}
	return c.Storage.CapF * (c.Load.Ohm + c.Switch.OnOhm), "the load's time constant"
}

// RateFor is the lowest sample rate on the 1-2-5 series that gives MinSamplesPerPulse
// samples per pulse of pulseS seconds, and at least DefaultRateHz (at most 100 kHz).
func RateFor(pulseS float64) float64 {
	rate := DefaultRateHz
	if !(pulseS > 0) {
		return rate
	}
	for _, step := range []float64{1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10000, 20000, 50000, 100000} {
		if r := step * DefaultRateHz; r*pulseS >= MinSamplesPerPulse || r >= 100e3 {
			return max(rate, r)
		}
	}
	return 100e3
}

// ShortestPulseS is the shortest time from a fire to the next reset in r, seconds (0 when
// there is none).
func (r *Result) ShortestPulseS() float64 {
	shortest, fire := 0.0, math.NaN()
	for _, ev := range r.Events {
		switch ev.Kind {
		case EventFire:
			fire = ev.TS
		case EventReset:
			if d := ev.TS - fire; d > 0 && (shortest == 0 || d < shortest) {
				shortest = d
			}
			fire = math.NaN()
		}
	}
	return shortest
}

// WriteCapture writes the sampler's samples as capture rows (the storage voltage, and the
// load current when current is set, in the order of the writer's channels) until the run
// ends, and returns the rows written. It stops when ctx is done, with ctx's error and the
// rows kept so far; the caller closes w.
func WriteCapture(ctx context.Context, sp *Sampler, w *capture.Writer, current bool) (int, error) {
	row := []float64{0}
	if current {
		row = append(row, 0)
	}
	n := 0
	for {
		smp, ok := sp.Next()
		if !ok {
			break
		}
		row[0] = smp.V
		if current {
			row[1] = smp.LoadA
		}
		if err := w.Row(smp.TS, row); err != nil {
			return n, err
		}
		n++
		if n%4096 != 0 {
			continue
		}
		if err := ctx.Err(); err != nil {
			return n, fmt.Errorf("model: stopped at %.1f s (%d rows kept): %w", smp.TS, n, err)
		}
		if err := w.Tick(time.Now()); err != nil {
			return n, err
		}
	}
	return n, sp.Err()
}
