package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
	"capcycle/analyze/fit"
)

// checkTriggerKind sets the trigger's kind against the declared one: with a declared
// kind that the cycles agree with (detect.Evidence.Agrees), Kind is the declared kind, even
// where the voltage alone could not tell ("voltage, as declared; the data agree"); when
// they contradict it, Kind stays what the cycles show and KindCheck says "contradict"
// (package diagnose raises a finding). Without a declared kind nothing changes.
func checkTriggerKind(tf *analysis.TriggerFit, ev *detect.Evidence, declared analysis.TriggerKind) {
	if declared == "" {
		return
	}
	tf.DeclaredKind = declared
	seen := tf.Kind
	switch {
	case ev.Cycles < 3:
		tf.KindCheck = analysis.KindTooFew
		tf.KindBasis = string(seen) + " from the data; " + string(declared) + " declared, too few full cycles to check it"
	case ev.Agrees(string(declared)):
		tf.KindCheck, tf.Kind = analysis.KindAgree, declared
		tf.KindBasis = string(declared) + ", as declared; the data agree"
	default:
		tf.KindCheck = analysis.KindContradict
		tf.KindBasis = string(seen) + " from the data; the declared " + string(declared) + " trigger does not fit them: " + whyNot(ev, declared)
	}
}

// whyNot says which test of the declared kind the cycles fail.
func whyNot(ev *detect.Evidence, declared analysis.TriggerKind) string {
	switch declared {
	case analysis.TriggerVoltage:
		return "the fire voltage varies more than noise and sampling explain"
	case analysis.TriggerTimer:
		return "the intervals between fires vary more than sampling explains"
	case analysis.TriggerPlateau:
		return "the charging had not levelled off at the fires"
	}
	return "no such trigger kind"
}

// plateauThreshold sets, for a plateau trigger, the threshold current over C (the mean
// net charging slope at the end of the rises before the fires) and, with the capacitance,
// the current; and on every cycle the slope (and current) at its fire.
func plateauThreshold(tf *analysis.TriggerFit, cs []analysis.Cycle, w *swings, capF float64) {
	if tf.Kind != analysis.TriggerPlateau {
		return
	}
	var full []float64
	for k := range cs {
		if k >= len(w.sum.Cycles) {
			break
		}
		s := fireSlope(w, &w.sum.Cycles[k])
		if math.IsNaN(s) {
			continue
		}
		cs[k].FireSlopeVPerS = ptr(s)
		if capF > 0 {
			cs[k].FireA = ptr(capF * s)
		}
		if cs[k].Kind == analysis.CycleFull {
			full = append(full, s)
		}
	}
	tf.ThresholdVPerS = spread(full, analysis.OriginMeasured)
	if tf.ThresholdVPerS != nil && capF > 0 {
		tf.ThresholdA = scaled(tf.ThresholdVPerS, capF)
	}
}

// fireSlope is the charging slope at a fire: that of the approach fitted to the end of
// the rise before it (endSlope), at half a sample spacing after the onset (the trigger
// closed somewhere between the onset sample and the next). NaN when the fall has no rise
// before it, or the rise did not level off.
func fireSlope(w *swings, c *detect.Cycle) float64 {
	if c.Swing < 1 || c.Swing > len(w.sum.Swings) {
		return math.NaN()
	}
	r, inf := w.at(c.Swing - 1)
	if !r.Up || !inf.approach.ok {
		return math.NaN()
	}
	return inf.approach.at(c.FireS + 0.5*w.sum.SpacingS)
}

// endApproach is the slope of an exponential approach, (v∞ − v0)/τ · e^(−(t − t0)/τ),
// or a constant slope when τ is infinite.
type endApproach struct {
	ok          bool
	a, t0, tauS float64
}

func (e endApproach) at(t float64) float64 {
	if math.IsInf(e.tauS, 1) {
		return e.a
	}
	return e.a * math.Exp(-(t-e.t0)/e.tauS)
}

// endSlope fits the end of a rise that levels off (its end slope under a quarter of its
// start slope, as a plateau trigger's rises do): an exponential approach to its last
// endShare (at least 8 points). A local quadratic over a stretch whose slope falls by a
// factor of several reads the slope at the end low; the approach follows the charge as
// it levels off. A straight line is taken when the points show no approach.
func endSlope(pts []detect.Point, s *detect.Swing) endApproach {
	if !(s.StartSlopeVPerS > 0) || !(s.EndSlopeVPerS < 0.25*s.StartSlopeVPerS) || len(pts) < 8 {
		return endApproach{}
	}
	from := s.EndS - endShare*s.DurationS()
	k := len(pts) - 1
	for k > 0 && (pts[k-1].T >= from || len(pts)-k < 8) {
		k--
	}
	t := make([]float64, 0, len(pts)-k)
	v := make([]float64, 0, len(pts)-k)
	for _, p := range pts[k:] {
		t, v = append(t, p.T), append(v, p.V)
	}
	if f, err := fit.ExpApproach(t, v); err == nil && f.Tau.Value > 0 && !math.IsInf(f.Tau.Value, 0) {
		return endApproach{ok: true, a: (f.VInf.Value - f.V0.Value) / f.Tau.Value, t0: f.T0, tauS: f.Tau.Value}
	}
	if l, err := fit.Line(t, v, nil); err == nil {
		return endApproach{ok: true, a: l.Slope.Value, tauS: math.Inf(1)}
	}
	return endApproach{}
}

// scaled returns e times k (k > 0), the interval and SD with it.
func scaled(e *analysis.Estimate, k float64) *analysis.Estimate {
	out := &analysis.Estimate{Value: e.Value * k, Origin: e.Origin}
	for _, p := range []struct{ from, to **float64 }{{&e.SD, &out.SD}, {&e.Lo95, &out.Lo95}, {&e.Hi95, &out.Hi95}} {
		if *p.from != nil {
			*p.to = ptr(**p.from * k)
		}
	}
	return out
}

// endShare is the share of a rise, at its end, that endSlope fits. A cell's current falls
// off faster than an exponential near its open-circuit voltage, so a longer stretch reads
// the slope at the fire high (on the model's plateau trigger: +14 % from the last 15 %,
// +3 % from the last 8 % without noise, +8 % with 1 mV of noise at 50 Hz); a shorter one
// is noisier.
const endShare = 0.08
