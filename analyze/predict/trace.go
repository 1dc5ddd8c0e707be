package predict

import (
	"fmt"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
)

// CycleTrace simulates c under the constant irradiance g until it cycles steadily and
// returns one cycle sampled at n points, with time relative to the fire: from beforeS
// seconds before it to afterS seconds after it. It is the model's cycle drawn over the
// measured ones in the report.
func CycleTrace(c *model.Circuit, g, beforeS, afterS float64, n int, label string) (*analysis.Trace, error) {
	f, err := Steady(c, g, nil)
	if err != nil {
		return nil, err
	}
	if !f.Fires {
		return nil, fmt.Errorf("predict: no cycle to trace: the circuit settles at %.3f V", f.EquilibriumV)
	}
	if n < 2 {
		n = 2
	}
	// Run long enough for a few cycles, then take the last fire that has beforeS of
	// history and afterS of future inside the run.
	d := 5*f.PeriodS + beforeS + afterS
	rate := float64(n-1) / (beforeS + afterS)
	var ts, vs []float64
	res, err := model.Simulate(c, model.Constant(g), &model.Options{DurationS: d, StartV: startV(c), RateHz: rate,
		OnSample: func(s model.Sample) { ts, vs = append(ts, s.TS), append(vs, s.V) }})
	if err != nil {
		return nil, fmt.Errorf("predict: %w", err)
	}
	fires := res.Fires()
	var fire float64 = -1
	for i := len(fires) - 1; i >= 0; i-- {
		if fires[i]-beforeS >= 0 && fires[i]+afterS <= d && i >= 1 {
			fire = fires[i]
			break
		}
	}
	if fire < 0 {
		return nil, fmt.Errorf("predict: no traceable cycle in %.3g s", d)
	}
	tr := &analysis.Trace{Label: label}
	for i, t := range ts {
		if t >= fire-beforeS && t <= fire+afterS {
			tr.TS = append(tr.TS, t-fire)
			tr.V = append(tr.V, vs[i])
		}
	}
	return tr, nil
}
