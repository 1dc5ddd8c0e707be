package analyze

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"capcycle/analyze/analysis"
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
func Run(r *capture.Reader, opts *Options) (*analysis.Result, error) {
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
		free <- &batch{t: make([]float64, n), v: make([]float64, n), i: make([]float64, n)}
	}
	done := make(chan struct{})
	go func() {
		defer close(batches)
		first := true
		for {
			var b *batch
			select {
			case b = <-free:
			case <-done:
				return
			}
			k, err := r.ReadCurrent(b.t, b.v, b.i)
			b.n, b.err, b.rows, b.bytes, b.hasI = k, err, r.Rows(), r.Offset(), r.HasCurrent()
			if first {
				// The header block is read with the first rows: its metadata goes
				// along with them (the reader keeps adding later event lines).
				b.meta, first = append([]capture.Field(nil), r.MetaFields()...), false
			}
			batches <- b
			if err != nil {
				return
			}
		}
	}()
	var readErr error
	for b := range batches {
		if b.meta != nil {
			a.useMeta(b.meta)
			b.meta = nil
		}
		var cur []float64
		if b.hasI {
			cur = b.i[:b.n]
		}
		a.push(b.t[:b.n], b.v[:b.n], cur)
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
	i     []float64 // the load current, when hasI
	hasI  bool
	n     int
	err   error
	rows  int
	bytes int64
	meta  []capture.Field // the first batch only
}

// RunSamples analyses samples already in memory (t increasing), as Run does for a file,
// except that it does not call opts.Post (it has no error to return): a caller that wants
// the later stages calls the hook on the Result itself.
func RunSamples(t, v []float64, opts *Options) *analysis.Result {
	return RunSamplesCurrent(t, v, nil, opts)
}

// RunSamplesCurrent is RunSamples with the load current iload (amperes, one per sample;
// nil for none), from which the capacitance is measured at every fire (see pulseCap).
func RunSamplesCurrent(t, v, iload []float64, opts *Options) *analysis.Result {
	if opts == nil {
		opts = &Options{}
	}
	a := newAnalysis(opts)
	a.push(t, v, iload)
	return a.finish(nil)
}

// session is the state of one run.
type session struct {
	opts *Options
	det  *detect.Detector
	env  *detect.Envelope
	col  *collector
	cal  calWindow
	chg  *chargeLog // nil without a current channel

	stepOrigin analysis.StepOrigin
}

func newAnalysis(opts *Options) *session {
	a := &session{opts: opts, env: detect.NewEnvelope(4000)}
	a.col = newCollector(opts)
	a.det = detect.New(&detect.Config{
		NoiseV:     opts.NoiseV,
		MinSwingV:  opts.MinSwingV,
		GapS:       opts.GapS,
		FullScaleV: opts.FullScaleV,
		OnSwing:    a.col.onSwing,
	})
	a.col.det = a.det
	if opts.StepV > 0 {
		a.det.SetStepV(opts.StepV)
		a.stepOrigin = analysis.StepDeclared
	}
	if opts.CalResistorOhm > 0 && opts.CalEndS > opts.CalStartS {
		a.cal = newCalWindow(opts.CalStartS, opts.CalEndS)
	}
	return a
}

// push hands samples to the detector and the other accumulators; i is the load current
// (nil without a current channel). The charge log goes first: the detector's callbacks
// look the samples up in it.
func (a *session) push(t, v, i []float64) {
	if i != nil {
		if a.chg == nil {
			a.chg = newChargeLog()
			a.col.chg = a.chg
		}
		a.chg.add(t, v, i)
	}
	a.det.Push(t, v)
	a.env.Add(t, v)
	if a.cal.on {
		a.cal.add(t, v)
	}
}

// useMeta takes the ADC step at the storage node from the capture's channel line for the
// voltage column, unless Options.StepV gives it: v = counts / 2^bits * ref_v / divider *
// scale, then the calibration gain, so one count is ref_v / 2^bits / divider * scale *
// gain (logger/capture/FORMAT.md).
func (a *session) useMeta(meta []capture.Field) {
	if a.opts.StepV > 0 {
		return
	}
	if lsb := metaStep(meta); lsb > 0 {
		a.det.SetStepV(lsb)
		a.stepOrigin = analysis.StepMetadata
	}
}

// metaStep returns the step of the vcap_v column (else of the first channel line) from
// the metadata, 0 when no channel line gives one.
func metaStep(meta []capture.Field) float64 {
	var chosen []capture.Field
	col := ""
	for _, f := range meta {
		if f.Name != capture.KeyChannel {
			continue
		}
		word, fs := capture.ParseFields(f.Value)
		if chosen == nil || (word == "vcap_v" && col != "vcap_v") {
			chosen, col = fs, word
		}
	}
	if chosen == nil {
		return 0
	}
	num := func(fs []capture.Field, name string, def float64) float64 {
		s, ok := capture.Lookup(fs, name)
		if !ok {
			return def
		}
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return math.NaN()
		}
		return x
	}
	bits := num(chosen, "bits", 0)
	ref := num(chosen, "ref_v", 0)
	div := num(chosen, "divider", 1)
	sc := num(chosen, "scale", 1)
	if div == 0 {
		div = 1
	}
	if sc == 0 {
		sc = 1
	}
	gain := 1.0
	for _, f := range meta {
		if f.Name != capture.KeyCalibration {
			continue
		}
		if word, fs := capture.ParseFields(f.Value); word == col {
			if g := num(fs, "gain", 1); g != 0 {
				gain = g
			}
			break
		}
	}
	if !(bits >= 1 && bits <= 32 && bits == math.Trunc(bits)) || !(ref > 0) || !(div > 0 && div <= 1) || !(sc > 0) {
		return 0
	}
	lsb := ref / math.Exp2(bits) / div * sc * math.Abs(gain)
	if !(lsb > 0) || math.IsInf(lsb, 0) || math.IsNaN(lsb) {
		return 0
	}
	return lsb
}
