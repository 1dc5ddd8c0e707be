package analyze

import (
	"bufio"
	"context"
	"errors"
	"io"
	"os"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/logger/capture"
)

// File opens the capture at path and analyses it with Run, then, with a profile and at
// least sixteen full cycles, makes the held-out check: the circuit fitted on the first
// half of the file (by size) predicts the cycles of the second (Prediction.HeldOut).
// opts.Path is set to path. It is the one way every command analyses a file.
//
// A file that cannot be opened is returned as an *os.PathError, bad input as a
// *capture.ParseError; a failed held-out check is a note, not an error.
func File(ctx context.Context, path string, opts *Options) (*analysis.Result, error) {
	if opts == nil {
		opts = &Options{}
	}
	o := *opts
	o.Path = path
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := capture.NewReader(f, path)
	if o.Setup != nil {
		if err := o.Setup(r); err != nil {
			return nil, err
		}
	}
	res, err := Run(ctx, r, &o)
	if err != nil || o.Profile == nil || res.Prediction == nil {
		return res, err
	}
	ho, err := heldOut(ctx, res, f, &o)
	switch {
	case err != nil && ctx.Err() != nil:
		return nil, ctx.Err()
	case err != nil:
		res.Notes = append(res.Notes, "held-out check skipped: "+err.Error())
	case ho != nil:
		res.Prediction.HeldOut = ho
	}
	return res, nil
}

// heldOut fits the circuit on the first half of the capture f (by size) and predicts the
// cycles after it. It needs at least eight full cycles in each half; nil without them.
func heldOut(ctx context.Context, res *analysis.Result, f *os.File, opts *Options) (*analysis.ErrorSummary, error) {
	if full, _ := analysis.CountCycles(res.Cycles); full < 16 {
		return nil, nil
	}
	nominal, _, err := model.FromProfile(opts.Profile)
	if err != nil {
		return nil, err
	}
	cut, err := halfAtLine(f)
	if err != nil {
		return nil, err
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return nil, err
	}
	r := capture.NewReader(io.LimitReader(f, cut), opts.Path)
	if opts.Setup != nil {
		if err := opts.Setup(r); err != nil {
			return nil, err
		}
	}
	o := *opts
	o.Progress = nil
	s := newSession(&o)
	if err := s.read(ctx, r); err != nil {
		return nil, err
	}
	first := s.finish(r)
	split, n := 0.0, 0
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
		return 0, errors.New("no line break after the middle of the file")
	}
	return mid + int64(len(skip)), nil
}
