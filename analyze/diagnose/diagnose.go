package diagnose

import (
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/eseries"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/profile"
	"capcycle/analyze/units"
)

// Input is what Diagnose looks at. Only Result is required; without a profile the findings
// that compare with declared parts, and the predicted effects of changes, are left out.
type Input struct {
	Result  *analysis.Result
	Profile *profile.Profile // the declared parts; nil when there is no profile
	Nominal *model.Circuit   // the profile's circuit; nil without a profile
	Fitted  *model.Circuit   // the nominal circuit with the fitted parts in place (predict.Fitted)
	// LightWm2 is the irradiance at which changes are predicted; 0 means MeasuredLight.
	LightWm2 float64
}

// Diagnose returns the findings for an analysis, most severe first.
func Diagnose(in *Input) []analysis.Finding {
	d := &diag{in: in, r: in.Result}
	d.c = in.Fitted
	if d.c == nil {
		d.c = in.Nominal
	}
	if d.c != nil {
		d.g = in.LightWm2
		if d.g <= 0 {
			d.g = predict.MeasuredLight(in.Result, d.c)
		}
	}
	d.capture()
	switch {
	case d.fullCycles() == 0 && d.chatterCycles() > 0:
		d.chatter() // it fires, but every fire lets go at once
	case d.fullCycles() == 0:
		d.notFiring()
	default:
		d.cycling()
		d.chatter()
		d.pulse()
	}
	d.drains()
	d.triggerKind()
	d.motorStalled()
	d.nominal()
	sort.SliceStable(d.out, func(i, j int) bool { return rank(d.out[i].Severity) > rank(d.out[j].Severity) })
	if d.out == nil {
		d.out = []analysis.Finding{}
	}
	return d.out
}

func rank(sev analysis.Severity) int {
	switch sev {
	case analysis.Fault:
		return 2
	case analysis.Warn:
		return 1
	}
	return 0
}

type diag struct {
	in  *Input
	r   *analysis.Result
	c   *model.Circuit // the best circuit we have: fitted, else nominal
	g   float64        // measured light, W/m² (0: unknown)
	out []analysis.Finding
}

func (d *diag) add(code string, sev analysis.Severity, msg, sugg string, nums map[string]float64) {
	for k, v := range nums {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			delete(nums, k) // JSON has no NaN; a missing number is absent
		}
	}
	d.out = append(d.out, analysis.Finding{Code: code, Severity: sev, Message: msg, Suggestion: sugg, Numbers: nums})
}

func (d *diag) chatterCycles() int {
	_, n := analysis.CountCycles(d.r.Cycles)
	return n
}

func (d *diag) fullCycles() int {
	n, _ := analysis.CountCycles(d.r.Cycles)
	return n
}

// onV is the node voltage at which the circuit should fire: measured when it fires,
// otherwise the circuit's (which the predictions use), otherwise declared.
func (d *diag) onV() (float64, string) {
	if e := d.r.Fit.Trigger.OnV; e != nil && d.fullCycles() > 0 {
		return e.Value, "measured"
	}
	if c := d.c; c != nil {
		if k := c.Trigger.Kind; k == model.TriggerVoltage || k == model.TriggerHold {
			return predict.FireThresholdV(c), "declared"
		}
	}
	if d.in.Profile != nil && d.in.Profile.Trigger.OnV > 0 {
		return d.in.Profile.Trigger.OnV, "declared"
	}
	if d.r.Declared != nil && d.r.Declared.OnV != 0 {
		return d.r.Declared.OnV, "declared"
	}
	return math.NaN(), ""
}

func fmtV(v float64) string { return units.Format(v, "V") }
func fmtS(v float64) string {
	if math.IsInf(v, 1) {
		return "never"
	}
	return units.Duration(v)
}

// nearestStandard rounds a part value to its E-series neighbour (log-nearest).
func nearestStandard(series string, v float64) float64 {
	s, err := eseries.Get(series)
	if err != nil || !(v > 0) || math.IsInf(v, 0) {
		return v
	}
	n, _ := s.Nearest(v)
	return n
}

// steadyWith predicts c with the change made; ok is false when the prediction failed.
func steadyWith(c *model.Circuit, g float64, change func(*model.Circuit)) (predict.Figures, bool) {
	if c == nil || g <= 0 {
		return predict.Figures{}, false
	}
	cc := *c
	change(&cc)
	f, err := predict.Steady(&cc, g, nil)
	return f, err == nil
}
