package analyze

import (
	"context"
	"errors"
	"io"
	"math"
	"strconv"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
	"capcycle/analyze/screen"
	"capcycle/logger/capture"
)

// Run reads the whole capture from r and analyses it the whole way: every fire and
// reset, the segments, the measured circuit (trigger, load, leak, capacitance, cell,
// equilibrium; see measure), then, with a profile, the prediction of every measured
// cycle from the declared and the fitted circuit and the fitted model's cycle, and last
// the findings and the comparison of each declared part with its measurement. (File
// adds the held-out check, which needs to read the capture twice.)
//
// Reading and parsing run on one goroutine and the analysis on another, handing batches
// of rows between them. Run stops between batches when ctx is done and returns its error.
//
// Bad input is returned as the reader's *capture.ParseError (file, line, column), with
// nothing analysed. opts may be nil.
func Run(ctx context.Context, r *capture.Reader, opts *Options) (*analysis.Result, error) {
	if opts == nil {
		opts = &Options{}
	}
	s := newSession(opts)
	if err := s.read(ctx, r); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	res := s.finish(r)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := laterStages(res, opts); err != nil {
		return res, err
	}
	return res, ctx.Err()
}

// read hands the capture to the session batch by batch.
func (s *session) read(ctx context.Context, r *capture.Reader) error {
	n := s.opts.BatchRows
	if n <= 0 {
		n = 1 << 16
	}
	batches := make(chan *batch, 3)
	free := make(chan *batch, 4)
	for i := 0; i < 4; i++ {
		free <- &batch{t: make([]float64, n), v: make([]float64, n), i: make([]float64, n)}
	}
	done := make(chan struct{})
	go readBatches(r, free, batches, done)
	var readErr error
	for b := range batches {
		if b.meta != nil {
			s.useMeta(b.meta)
			b.meta = nil
		}
		var cur []float64
		if b.hasI {
			cur = b.i[:b.n]
		}
		s.scr.Push(b.t[:b.n], b.v[:b.n], cur)
		if s.opts.Progress != nil {
			s.opts.Progress(b.rows, b.bytes)
		}
		err := b.err
		free <- b
		if err == nil {
			err = ctx.Err()
		}
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
	return readErr
}

// readBatches fills free batches from r and sends them on, until an error (io.EOF at the
// end) or done.
func readBatches(r *capture.Reader, free <-chan *batch, batches chan<- *batch, done <-chan struct{}) {
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

// RunSamples analyses samples already in memory (t increasing), as Run does a capture.
func RunSamples(t, v []float64, opts *Options) *analysis.Result {
	return RunSamplesCurrent(t, v, nil, opts)
}

// RunSamplesCurrent is RunSamples with the load current iload (amperes, one per sample;
// nil for none), from which the capacitance is measured at every fire (see pulseCap).
// A profile whose circuit cannot be built leaves the prediction out, with a note.
func RunSamplesCurrent(t, v, iload []float64, opts *Options) *analysis.Result {
	if opts == nil {
		opts = &Options{}
	}
	s := newSession(opts)
	s.scr.Push(t, v, iload)
	res := s.finish(nil)
	if err := laterStages(res, opts); err != nil {
		res.Notes = append(res.Notes, "no prediction: "+err.Error())
	}
	return res
}

// session is the state of one run.
type session struct {
	opts *Options
	scr  *screen.Screen // wild values and held repeats out, before detection
	det  *detect.Detector
	env  *detect.Envelope
	col  *collector
	cal  calWindow
	chg  *chargeLog // nil without a current channel

	stepOrigin analysis.StepOrigin
}

func newSession(opts *Options) *session {
	a := &session{opts: opts, env: detect.NewEnvelope(4000)}
	a.col = newCollector(opts)
	a.det = detect.New(&detect.Config{
		NoiseV:     opts.NoiseV,
		MinSwingV:  opts.MinSwingV,
		GapS:       opts.GapS,
		FullScaleV: opts.Declared.FullScaleV,
		OnSwing:    a.col.onSwing,
	})
	a.col.det = a.det
	a.scr = screen.New(opts.StepV, a.push)
	if opts.StepV > 0 {
		a.det.SetStepV(opts.StepV)
		a.stepOrigin = analysis.StepDeclared
	}
	if c := opts.Declared.Calibration; c != nil && c.ResistorOhm > 0 && c.EndS > c.StartS {
		a.cal = newCalWindow(c.StartS, c.EndS)
	}
	return a
}

// push hands the samples the screen kept to the detector and the other accumulators; i
// is the load current (nil without a current channel). The charge log goes first: the detector's callbacks
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
		a.scr.SetStepV(lsb)
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
