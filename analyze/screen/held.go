package screen

import (
	"math"

	"capcycle/analyze/detect"
	"capcycle/analyze/stats"
)

// held is the held-value stage: it keeps the first samples until it has decided whether
// the capture is a staircase, then passes samples on (all of them, or the first of each
// run and every k-th after it).
type held struct {
	s       *Screen
	decided bool
	buf     []sample
	runs    []run // candidate runs in the buffer (entered and left the same way)
	hasCur  bool

	// run tracking, over the buffer
	pv, rt, je float64
	rl         int
	started    bool

	// output
	k       int     // keep every k-th sample of a run (1: all)
	ov      float64 // value of the run being passed on
	oj      int     // index within it
	orun    bool    // a run is being passed on
	ot, ovs []float64
	oi      []float64
	checkAt int
}

// run is a run of one value between two jumps of the same sign.
type run struct {
	n         int
	durS      float64
	jin, jout float64 // sizes of the jumps into and out of it
}

func (h *held) init(s *Screen) {
	h.s, h.k, h.checkAt = s, 1, 4096
}

// add takes a kept sample.
func (h *held) add(x sample) {
	if h.decided {
		h.out(x)
		return
	}
	h.buf = append(h.buf, x)
	h.track(x)
	if len(h.buf) >= DecideN {
		h.decide()
	} else if len(h.buf) >= h.checkAt {
		h.checkAt *= 2
		if len(h.fast(h.step())) >= DecideRuns {
			h.decide()
		}
	}
}

// track follows the runs of one value in the buffer.
func (h *held) track(x sample) {
	if !h.started {
		h.pv, h.rt, h.rl, h.started, h.je = x.v, x.t, 1, true, math.NaN()
		return
	}
	if x.v == h.pv {
		h.rl++
		return
	}
	jl := x.v - h.pv
	if !math.IsNaN(h.je) && (jl > 0) == (h.je > 0) {
		h.runs = append(h.runs, run{n: h.rl, durS: x.t - h.rt, jin: math.Abs(h.je), jout: math.Abs(jl)})
	}
	h.pv, h.rt, h.rl, h.je = x.v, x.t, 1, jl
}

// step is the ADC step: given, or estimated from the buffer.
func (h *held) step() float64 {
	if h.s.stepV > 0 {
		return h.s.stepV
	}
	n := min(len(h.buf), 8192)
	vs := make([]float64, n)
	for k := range vs {
		vs[k] = h.buf[k].v
	}
	return detect.ADCStep(vs, make([]float64, 0, n))
}

// fast returns the runs in the middle of a fast move: entered and left by jumps of at
// least three steps (2.5 for rounding; noise of a step or so makes two-step jumps on a
// slow charge), any jump when there is no step.
func (h *held) fast(step float64) []run {
	var out []run
	for _, r := range h.runs {
		if r.jin >= 2.5*step && r.jout >= 2.5*step && (step > 0 || r.jin > 0) {
			out = append(out, r)
		}
	}
	return out
}

// decide calls the capture held or not, and passes the buffer on.
func (h *held) decide() {
	h.decided = true
	fr := h.fast(h.step())
	if len(fr) >= MinFastRuns {
		ns := make([]float64, len(fr))
		ds := make([]float64, len(fr))
		for k, r := range fr {
			ns[k], ds[k] = float64(r.n), r.durS
		}
		if k := median(ns); k >= 2 {
			h.k = int(math.Round(k))
			h.s.sum.Held = &Held{Repeat: k, FastRuns: len(fr), LoggedSpacingS: h.spacing(), EffectiveSpacingS: median(ds)}
		}
	}
	buf := h.buf
	h.buf, h.runs = nil, nil
	for _, x := range buf {
		h.out(x)
	}
}

// spacing is the median spacing of the buffered rows.
func (h *held) spacing() float64 {
	if len(h.buf) < 2 {
		return math.NaN()
	}
	dt := make([]float64, len(h.buf)-1)
	for k := range dt {
		dt[k] = h.buf[k+1].t - h.buf[k].t
	}
	return median(dt)
}

// out passes a sample on, or drops it as a repeat.
func (h *held) out(x sample) {
	if h.k > 1 {
		if h.orun && x.v == h.ov {
			h.oj++
		} else {
			h.ov, h.oj, h.orun = x.v, 0, true
		}
		if h.oj%h.k != 0 {
			h.s.sum.Held.Dropped++
			return
		}
	}
	h.ot = append(h.ot, x.t)
	h.ovs = append(h.ovs, x.v)
	h.oi = append(h.oi, x.i)
}

// flush hands what was passed on to the consumer.
func (h *held) flush() {
	if len(h.ot) == 0 {
		return
	}
	var cur []float64
	if h.hasCur {
		cur = h.oi
	}
	h.s.emit(h.ot, h.ovs, cur)
	h.ot, h.ovs, h.oi = h.ot[:0], h.ovs[:0], h.oi[:0]
}

func (h *held) finish() {
	if !h.decided {
		h.decide()
	}
	h.flush()
}

// median returns the median of x (reordering it); NaN for none.
func median(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	return stats.MedianInPlace(x)
}
