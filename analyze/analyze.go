package analyze

import (
	"errors"
	"fmt"
	"io"

	"capcycle/analyze/detect"
	"capcycle/logger/capture"
)

// Run reads the whole capture from r and analyses it: every fire and reset, the segments,
// and the fits of trigger, load, leak and cell, each with its standard error. Reading and
// parsing run on one goroutine and the analysis on another, handing batches of rows
// between them; the memory does not grow with the length of the capture beyond a few
// hundred bytes per cycle.
//
// Bad input is returned as the reader's *capture.ParseError (file, line, column), with
// nothing analysed. opts may be nil.
func Run(r *capture.Reader, opts *Options) (*Result, error) {
	if opts == nil {
		opts = &Options{}
	}
	n := opts.BatchRows
	if n <= 0 {
		n = 1 << 16
	}
	a := newAnalysis(opts)
	batches := make(chan *batch, 3)
	free := make(chan *batch, 4)
	for i := 0; i < 4; i++ {
		free <- &batch{t: make([]float64, n), v: make([]float64, n)}
	}
	done := make(chan struct{})
	go func() {
		defer close(batches)
		for {
			var b *batch
			select {
			case b = <-free:
			case <-done:
				return
			}
			k, err := r.Read(b.t, b.v)
			b.n, b.err, b.rows, b.bytes = k, err, r.Rows(), r.Offset()
			batches <- b
			if err != nil {
				return
			}
		}
	}()
	var readErr error
	for b := range batches {
		a.push(b.t[:b.n], b.v[:b.n])
		if opts.Progress != nil {
			opts.Progress(b.rows, b.bytes)
		}
		err := b.err
		free <- b
		if err != nil {
			if !errors.Is(err, io.EOF) {
				readErr = err
			}
			break
		}
	}
	close(done)
	for range batches { // let the reader goroutine finish
	}
	if readErr != nil {
		return nil, readErr
	}
	res := a.finish(r)
	if opts.Post != nil {
		if err := opts.Post(res); err != nil {
			return res, fmt.Errorf("analyze: %w", err)
		}
	}
	return res, nil
}

type batch struct {
	t, v  []float64
	n     int
	err   error
	rows  int
	bytes int64
}

// RunSamples analyses samples already in memory (t increasing), as Run does for a file.
func RunSamples(t, v []float64, opts *Options) *Result {
	if opts == nil {
		opts = &Options{}
	}
	a := newAnalysis(opts)
	a.push(t, v)
	res := a.finish(nil)
	return res
}

// analysis is the state of one run.
type analysis struct {
	opts *Options
	det  *detect.Detector
	env  *detect.Envelope
	col  *collector
	cal  calWindow
}

func newAnalysis(opts *Options) *analysis {
	a := &analysis{opts: opts, env: detect.NewEnvelope(4000)}
	a.col = newCollector(opts)
	a.det = detect.New(&detect.Config{
		NoiseV:     opts.NoiseV,
		MinSwingV:  opts.MinSwingV,
		GapS:       opts.GapS,
		FullScaleV: opts.FullScaleV,
		OnSwing:    a.col.onSwing,
	})
	a.col.det = a.det
	if opts.CalResistorOhm > 0 && opts.CalEndS > opts.CalStartS {
		a.cal = newCalWindow(opts.CalStartS, opts.CalEndS)
	}
	return a
}

func (a *analysis) push(t, v []float64) {
	a.det.Push(t, v)
	a.env.Add(t, v)
	if a.cal.on {
		a.cal.add(t, v)
	}
}
