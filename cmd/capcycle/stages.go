package main

import (
	"bufio"
	"fmt"
	"io"
	"os"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/analyze/diagnose"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/profile"
	"capcycle/logger/capture"
)

// laterStages returns the hook that runs after the analysis proper (analyze.Options.Post):
// the prediction of every measured cycle from the declared and the fitted circuit, the
// held-out check, the fitted model's cycle for the overlay plot, and the findings.
//
// Without a profile there is no declared circuit: the findings that need none are made and
// Prediction stays null. file and setup (the column-mapping flags) let the held-out check
// read the first half of the capture again; file "" skips it.
func laterStages(p *profile.Profile, opts *analyze.Options, file string, setup func(*capture.Reader) error) func(*analysis.Result) error {
	return func(res *analysis.Result) error {
		in := &diagnose.Input{Result: res, Profile: p}
		if p != nil {
			nominal, _, err := model.FromProfile(p)
			if err != nil {
				return fmt.Errorf("profile %s: %w", p.Name, err)
			}
			fitted, _ := predict.Fitted(nominal, res)
			in.Nominal, in.Fitted = nominal, fitted
			res.Prediction = predict.Compare(res, nominal, fitted)
			if file != "" {
				if ho, err := heldOut(res, nominal, opts, file, setup); err == nil && ho != nil {
					res.Prediction.HeldOut = ho
				} else if err != nil {
					res.Notes = append(res.Notes, "held-out check skipped: "+err.Error())
				}
			}
			if g := predict.MeasuredLight(res, fitted); g > 0 {
				if tr, err := predict.CycleTrace(fitted, g, traceBefore(res), traceAfter(res), 600, "fitted model"); err == nil {
					res.ModelTrace = tr
				}
			}
		}
		res.Findings = diagnose.Diagnose(in)
		res.Attribution = diagnose.Attribute(res, p)
		return nil
	}
}

// heldOut fits the circuit on the first half of the capture (by size) and predicts the
// cycles after it. It needs at least eight full cycles in each half.
func heldOut(res *analysis.Result, nominal *model.Circuit, opts *analyze.Options, file string, setup func(*capture.Reader) error) (*analysis.ErrorSummary, error) {
	full := 0
	for _, c := range res.Cycles {
		if c.Kind == analysis.CycleFull {
			full++
		}
	}
	if full < 16 {
		return nil, nil
	}
	f, err := os.Open(file)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	cut, err := halfAtLine(f)
	if err != nil {
		return nil, err
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return nil, err
	}
	r := capture.NewReader(io.LimitReader(f, cut), file)
	if setup != nil {
		if err := setup(r); err != nil {
			return nil, err
		}
	}
	o := *opts
	o.Post, o.Progress = nil, nil
	first, err := analyze.Run(r, &o)
	if err != nil {
		return nil, err
	}
	split := 0.0
	n := 0
	for _, c := range first.Cycles {
		if c.Kind == analysis.CycleFull {
			split = max(split, c.ResetS)
			n++
		}
	}
	if n < 8 {
		return nil, nil
	}
	fitted, _ := predict.Fitted(nominal, first)
	return predict.HeldOut(res, fitted, split+1e-9), nil
}

// halfAtLine returns the offset just after the first newline at or past the middle of f.
func halfAtLine(f *os.File) (int64, error) {
	st, err := f.Stat()
	if err != nil {
		return 0, err
	}
	mid := st.Size() / 2
	if _, err := f.Seek(mid, io.SeekStart); err != nil {
		return 0, err
	}
	br := bufio.NewReader(f)
	skip, err := br.ReadBytes('\n')
	if err != nil {
		return 0, fmt.Errorf("no line break after the middle of the file")
	}
	return mid + int64(len(skip)), nil
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
