package diagnose

import (
	"fmt"

	"capcycle/analyze/analysis"
)

// triggerKind raises CodeKindDiffers when the cycles contradict the declared trigger
// kind (analysis.TriggerFit.KindCheck, set by the analysis).
func (d *diag) triggerKind() {
	tf := &d.r.Fit.Trigger
	if tf.KindCheck != analysis.KindContradict {
		return
	}
	nums := map[string]float64{}
	if tf.OnV != nil && tf.OnV.SD != nil {
		nums["fire_v"], nums["fire_v_sd"] = tf.OnV.Value, *tf.OnV.SD
	}
	if tf.PeriodS != nil && tf.PeriodS.SD != nil {
		nums["period_s"], nums["period_sd_s"] = tf.PeriodS.Value, *tf.PeriodS.SD
	}
	d.add(CodeKindDiffers, analysis.Warn,
		fmt.Sprintf("The profile declares a %s trigger, but the cycles say otherwise (%s).", tf.DeclaredKind, tf.KindBasis),
		"Check trigger.kind in the profile against the circuit on the bench; if it is right, the trigger is not working as designed (a timer drifting with the supply, a voltage detector on the wrong node, a current sense that never sees the plateau).",
		nums)
}
