package detect

import (
	"math"
	"sort"

	"capcycle/analyze/stats"
)

// Evidence is what the full cycles say about the trigger, one test per kind. A kind's
// test passes when the cycles look as that kind makes them; more than one can pass (under
// steady light a voltage trigger also fires at steady intervals).
type Evidence struct {
	Cycles int // full cycles looked at; with fewer than 3 no test passes or fails
	// SteadyV: the fire voltage is steady (SD within 3 noise SDs plus one ADC step plus
	// the rise between two samples at the fire, or far smaller relative to the swing than
	// the intervals' SD relative to their mean): what a voltage trigger does.
	SteadyV bool
	// SteadyT: the intervals are steady (SD within 2 sample spacings, or far smaller
	// relative to their mean than the fire voltage's SD relative to the swing): a timer.
	SteadyT bool
	// Levelled: the charging had all but stopped at most fires (the median ratio of the
	// slope at the end of the charge to that over its first fifth is under a quarter): a
	// plateau trigger, which fires when the charging current falls off.
	Levelled bool
}

// Agrees reports whether the cycles look as a trigger of kind does ("voltage", "timer"
// or "plateau"); false for any other kind and for fewer than 3 full cycles.
func (e *Evidence) Agrees(kind string) bool {
	if e.Cycles < 3 {
		return false
	}
	switch kind {
	case TriggerVoltage:
		return e.SteadyV
	case TriggerTimer:
		return e.SteadyT
	case TriggerPlateau:
		return e.Levelled
	}
	return false
}

// InferTrigger says what kind of trigger the full cycles show (see TriggerEvidence):
//   - "plateau" when the charging had all but stopped at most fires (Levelled);
//   - "voltage" when the fire voltage is steady while the intervals vary;
//   - "timer" when the intervals are steady while the fire voltage varies;
//   - "unknown" otherwise, including when both are steady (then the two cannot be told
//     apart from the voltage alone) or there are fewer than 3 full cycles.
func InferTrigger(cycles []Cycle, swings []Swing, noiseV, stepV, spacingS float64) string {
	e := TriggerEvidence(cycles, swings, noiseV, stepV, spacingS)
	return e.Kind()
}

// Kind is the one kind the evidence points to, as InferTrigger says.
func (e *Evidence) Kind() string {
	switch {
	case e.Cycles < 3:
		return TriggerUnknown
	case e.Levelled:
		return TriggerPlateau
	case e.SteadyV && !e.SteadyT:
		return TriggerVoltage
	case e.SteadyT && !e.SteadyV:
		return TriggerTimer
	}
	return TriggerUnknown
}

// TriggerEvidence runs each kind's test on the full cycles (see Evidence).
func TriggerEvidence(cycles []Cycle, swings []Swing, noiseV, stepV, spacingS float64) Evidence {
	var e Evidence
	var fv, iv, flat, riseStep []float64
	prevFire := math.NaN()
	for _, c := range cycles {
		if c.Chatter {
			continue
		}
		fv = append(fv, c.FireV)
		if !math.IsNaN(prevFire) {
			iv = append(iv, c.FireS-prevFire)
		}
		prevFire = c.FireS
		if c.Swing > 0 {
			r := swings[c.Swing-1]
			if r.Up && r.StartSlopeVPerS > 0 && !math.IsNaN(r.EndSlopeVPerS) {
				flat = append(flat, r.EndSlopeVPerS/r.StartSlopeVPerS)
				riseStep = append(riseStep, math.Abs(r.EndSlopeVPerS)*spacingS)
			}
		}
	}
	e.Cycles = len(fv)
	if e.Cycles < 3 {
		return e
	}
	if len(flat) >= 3 {
		sort.Float64s(flat)
		e.Levelled = flat[len(flat)/2] < 0.25
	}
	sdV, sdT := stats.SD(fv), stats.SD(iv)
	rise := 0.0
	if len(riseStep) > 0 {
		sort.Float64s(riseStep)
		rise = riseStep[len(riseStep)/2]
	}
	var height float64
	for _, c := range cycles {
		if !c.Chatter {
			height += (c.FireV - c.ResetV) / float64(len(fv))
		}
	}
	cvV := sdV / math.Max(height, 1e-12)
	cvT := math.Inf(1)
	if len(iv) >= 2 {
		cvT = sdT / math.Max(stats.Mean(iv), 1e-12)
	}
	e.SteadyV = sdV <= 3*math.Max(noiseV, stepV/math.Sqrt(12))+stepV+rise || cvV < 0.2*cvT
	e.SteadyT = len(iv) >= 2 && (sdT <= 2*spacingS || cvT < 0.2*cvV)
	return e
}
