package analyze

import (
	"fmt"

	"capcycle/analyze/analysis"
	"capcycle/analyze/diagnose"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
)

// laterStages runs what follows the measurement, on the finished result: with a
// profile, the prediction of every measured cycle from the declared (nominal) and the
// fitted circuit and the fitted model's cycle for the overlay plot; then, with or without
// one, the findings and the attribution of each declared part.
//
// Without a profile there is no declared circuit: the findings that need none are made
// and Prediction stays null. An error means the profile's circuit could not be built.
func laterStages(res *analysis.Result, opts *Options) error {
	in := &diagnose.Input{Result: res, Profile: opts.Profile}
	if p := opts.Profile; p != nil {
		nominal, _, err := model.FromProfile(p)
		if err != nil {
			return fmt.Errorf("analyze: profile %s: %w", p.Name, err)
		}
		fitted, _ := predict.Fitted(nominal, res)
		in.Nominal, in.Fitted = nominal, fitted
		res.Prediction = predict.Compare(res, nominal, fitted)
		if g := predict.MeasuredLight(res, fitted); g > 0 {
			if tr, err := predict.CycleTrace(fitted, g, traceBefore(res), traceAfter(res), 600, "fitted model"); err == nil {
				res.ModelTrace = tr
			}
		}
	}
	res.Findings = diagnose.Diagnose(in)
	res.Attribution = diagnose.Attribute(res, opts.Profile)
	return nil
}

// traceBefore and traceAfter span the measured overlay traces, so the model's cycle is
// drawn over the same stretch; without traces, a second before and three after the fire.
func traceBefore(res *analysis.Result) float64 {
	b := 1.0
	for _, tr := range res.Traces {
		if len(tr.TS) > 0 && -tr.TS[0] > 0 {
			b = -tr.TS[0]
		}
	}
	return b
}

func traceAfter(res *analysis.Result) float64 {
	a := 3.0
	for _, tr := range res.Traces {
		if n := len(tr.TS); n > 0 && tr.TS[n-1] > 0 {
			a = tr.TS[n-1]
		}
	}
	return a
}
