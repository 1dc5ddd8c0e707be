package diagnose

import (
	"fmt"

	"capcycle/analyze/analysis"
)

// motorStalled raises CodeMotorStalled when some pulses turned the motor (bent by its
// back-EMF) and others did not (plain R-C discharges through the armature).
func (d *diag) motorStalled() {
	lf := &d.r.Fit.Load
	if lf.StalledPulses == 0 || lf.RunningPulses == 0 {
		return
	}
	n := lf.StalledPulses + lf.RunningPulses
	nums := map[string]float64{"stalled_pulses": float64(lf.StalledPulses), "running_pulses": float64(lf.RunningPulses)}
	msg := fmt.Sprintf("The motor did not turn in %d of %d pulses", lf.StalledPulses, n)
	if lf.StalledPulseS != nil && lf.RunningPulseS != nil {
		nums["stalled_pulse_s"], nums["running_pulse_s"] = lf.StalledPulseS.Value, lf.RunningPulseS.Value
		msg += fmt.Sprintf(": those pulses were plain R-C discharges of %s through the armature, against %s when it turned", fmtS(lf.StalledPulseS.Value), fmtS(lf.RunningPulseS.Value))
	}
	if first := d.firstStall(); first >= 0 {
		nums["first_stall_s"] = first
		msg += fmt.Sprintf("; the first at %s", fmtS(first))
	}
	d.add(CodeMotorStalled, analysis.Warn, msg+".",
		"Look for what held it at those times (a jammed wheel or gear, a load too heavy, a wire caught); if it stalls whenever the light is low, the pulse is too weak to start it: a larger capacitor or a higher trigger voltage gives each pulse more energy.",
		nums)
}

// firstStall is the fire time of the first stalled pulse (-1 when none is marked).
func (d *diag) firstStall() float64 {
	for _, c := range d.r.Cycles {
		if c.Motion == analysis.MotionStalled {
			return c.FireS
		}
	}
	return -1
}
