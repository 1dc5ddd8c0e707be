package screen

import (
	"math"
)

// Limits of the screen (our own choices: far outside anything a capacitor on a solar
// cell does, far above any ADC step and noise).
const (
	// WildJumpV and WildJumpFactor: a jump from the last kept value v is wild beyond
	// WildJumpV + WildJumpFactor·|v| (1 V + 4 v: 11.8 V from 2.7 V).
	WildJumpV      = 1.0
	WildJumpFactor = 4.0
	// MaxWildRun is the longest excursion taken to be wild values rather than a change
	// of level.
	MaxWildRun = 3
	// MinFastRuns fast runs are needed to call a capture held; DecideRuns of them, or
	// DecideN samples, end the first look.
	MinFastRuns = 8
	DecideRuns  = 48
	DecideN     = 1 << 16
)

// Summary is what the screen took out.
type Summary struct {
	Samples int // samples pushed
	Wild    int // samples dropped as wild (not finite, or an isolated absurd jump)
	// FirstWildS is the time of the first wild sample (NaN when none).
	FirstWildS float64
	Held       *Held // nil when the samples are not a held-value staircase
}

// Held describes a held-value staircase.
type Held struct {
	Repeat            float64 // median length of a run in a fast move (k)
	FastRuns          int     // the runs it rests on
	LoggedSpacingS    float64 // median spacing of the rows
	EffectiveSpacingS float64 // median time between new values in a fast move
	Dropped           int     // repeats not passed on
}

// Emit receives the screened samples; cur is nil when there is no current channel.
// The slices are valid only during the call.
type Emit func(t, v, cur []float64)

// Screen filters a stream of samples; Push them in time order, then Finish.
type Screen struct {
	emit  Emit
	stepV float64
	sum   Summary

	// wild filter
	start   []sample // the first few samples, whose median is the first reference
	ref     float64
	haveRef bool
	pending []sample

	h held
}

type sample struct {
	t, v, i float64
}

// New returns a Screen that passes what it keeps to emit. stepV is the ADC step at the
// node when known (0: estimated from the samples).
func New(stepV float64, emit Emit) *Screen {
	s := &Screen{emit: emit, stepV: stepV}
	s.sum.FirstWildS = math.NaN()
	s.h.init(s)
	return s
}

// SetStepV sets the ADC step when it is learnt after New; only before the first Push.
func (s *Screen) SetStepV(v float64) {
	if s.sum.Samples == 0 && v > 0 {
		s.stepV = v
	}
}

// Push takes samples; cur may be nil (no current channel) or as long as t.
func (s *Screen) Push(t, v, cur []float64) {
	if len(t) != len(v) || (cur != nil && len(cur) != len(t)) {
		panic("screen: slice length mismatch")
	}
	s.h.hasCur = s.h.hasCur || cur != nil
	for k := range t {
		x := sample{t: t[k], v: v[k]}
		if cur != nil {
			x.i = cur[k]
		}
		s.sum.Samples++
		s.wild(x)
	}
	s.h.flush()
}

// Finish passes on what is held back and returns the summary. Wild-looking samples at
// the very end (with nothing after them to come back to) are dropped.
func (s *Screen) Finish() Summary {
	if !s.haveRef {
		s.startRef()
	}
	for _, x := range s.pending {
		s.dropWild(x)
	}
	s.pending = nil
	s.h.finish()
	return s.sum
}

// wild takes one sample through the wild-value rule.
func (s *Screen) wild(x sample) {
	if !finite(x.t) || !finite(x.v) || !finite(x.i) {
		s.dropWild(x)
		return
	}
	if !s.haveRef {
		s.start = append(s.start, x)
		if len(s.start) == 2*MaxWildRun+1 {
			s.startRef()
		}
		return
	}
	s.judge(x)
}

// startRef takes the median of the first samples as the reference and judges them.
func (s *Screen) startRef() {
	if len(s.start) == 0 {
		return
	}
	vs := make([]float64, len(s.start))
	for k, x := range s.start {
		vs[k] = x.v
	}
	s.ref, s.haveRef = median(vs), true
	st := s.start
	s.start = nil
	for _, x := range st {
		s.judge(x)
	}
}

func (s *Screen) judge(x sample) {
	if !s.jump(x.v) {
		for _, p := range s.pending {
			s.dropWild(p)
		}
		s.pending = s.pending[:0]
		s.keep(x)
		return
	}
	s.pending = append(s.pending, x)
	if len(s.pending) > MaxWildRun {
		// A long excursion: a real change of level.
		for _, p := range s.pending {
			s.keep(p)
		}
		s.pending = s.pending[:0]
	}
}

func (s *Screen) jump(v float64) bool {
	return math.Abs(v-s.ref) > WildJumpV+WildJumpFactor*math.Abs(s.ref)
}

func (s *Screen) keep(x sample) {
	s.ref = x.v
	s.h.add(x)
}

func (s *Screen) dropWild(x sample) {
	if s.sum.Wild == 0 {
		s.sum.FirstWildS = x.t
	}
	s.sum.Wild++
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
