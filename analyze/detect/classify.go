package detect

import (
	"math"
	"slices"
	"sort"
)

// Segment kinds.
const (
	KindCharging  = "charging"
	KindFiring    = "firing"
	KindDarkDecay = "dark-decay"
	KindPlateau   = "plateau"
	KindSaturated = "saturated"
	KindGap       = "gap"
)

// Trigger kinds.
const (
	TriggerVoltage = "voltage"
	TriggerTimer   = "timer"
	TriggerPlateau = "plateau"
	TriggerUnknown = "unknown"
)

// Segment is a stretch of the capture of one kind.
type Segment struct {
	Kind         string
	StartS, EndS float64
	StartV, EndV float64
}

// Cycle is one fire and the reset after it.
type Cycle struct {
	Swing   int     // index of the fall in Summary.Swings
	FireS   float64 // onset of the fast fall
	FireV   float64 // the level it fell from
	ResetS  float64 // the trough, where charging resumes
	ResetV  float64
	ChargeS float64 // from the previous reset; NaN for the first cycle or after a gap
	Chatter bool    // the fall was tiny beside the others
}

// PulseS is ResetS - FireS.
func (c *Cycle) PulseS() float64 { return c.ResetS - c.FireS }

// Summary is what a Detector found in the whole stream.
type Summary struct {
	Samples       int
	StartS, EndS  float64
	FirstV, LastV float64
	MinV, MaxV    float64
	NoiseV        float64
	StepV         float64
	MinSwingV     float64
	SpacingS      float64
	GapS          float64
	Swings        []Swing
	Cycles        []Cycle
	Segments      []Segment
	Trigger       string   // the kind the cycles show (Evidence.Kind)
	Evidence      Evidence // each trigger kind's test on the cycles
}

// Finish closes the stream and decides which falls are fires.
//
// Falls whose surrounding levels (the medians of a few samples before and after) differ
// by less than half the minimum swing are noise, neither fire nor decay. A fall is a fire
// when it is fast: its implied time constant (fall time * V / dV, or, for a pulse bent
// into a slow tail by a motor's back-EMF, V over the rate at which it leaves its onset) sits in the lower of two groups that differ by at least a
// factor of 8 (when the falls form two such groups: fires through the load and slow
// decays through the leakage), and it falls at least 3 times faster than the charging
// before it rose (at its onset, for a fall cut while still falling, as by a switch), and takes less time than that charging did (or, bent, leaves its onset
// 30 times faster than the charging). Fires that fall by under 10 % of their voltage, or by under a
// quarter of the typical fire (the 75th percentile) and under 30 % of their voltage, are
// chatter.
func (d *Detector) Finish() *Summary {
	if !d.booted {
		if len(d.boot) == 0 {
			return &Summary{Trigger: TriggerUnknown}
		}
		d.bootstrap()
	}
	if d.waitMove && len(d.moveBuf) > 0 {
		d.reestimate()
	}
	d.flushMedian()
	d.endZigzag(false)
	if d.satOn {
		d.satOn = false
		d.events = append(d.events, Segment{Kind: KindSaturated, StartS: d.satStart, EndS: d.lastT, StartV: d.satV0, EndV: d.endV})
	}
	s := &Summary{Samples: d.samples, StartS: d.firstT, EndS: d.lastT, FirstV: d.firstV, LastV: d.endV,
		MinV: d.minV, MaxV: d.maxV, NoiseV: d.sd, StepV: d.step, MinSwingV: d.swingMin,
		SpacingS: d.dtTyp, GapS: d.gapS, Swings: d.swings}
	d.classify(s)
	s.Cycles = d.cycles(s)
	s.Segments = d.segments(s)
	s.Evidence = TriggerEvidence(s.Cycles, s.Swings, s.NoiseV, s.StepV, s.SpacingS)
	s.Trigger = s.Evidence.Kind()
	return s
}

func (d *Detector) fallTime(sw *Swing) float64 {
	return math.Max(sw.FallS(), math.Max(d.dtTyp, 1e-12))
}

func (d *Detector) classify(s *Summary) {
	sw := s.Swings
	var logs []float64
	tau := make([]float64, len(sw))
	for i := range sw {
		if sw[i].Up || sw[i].AmplitudeV() < d.swingMin {
			continue
		}
		if b, a := sw[i].LevelBeforeV, sw[i].LevelAfterV; b-a < 0.5*d.swingMin {
			// From a high of the noise to a low of it: the levels around it are the same.
			sw[i].Noise = true
			continue
		}
		tau[i] = d.fallTime(&sw[i]) * math.Max(math.Abs(sw[i].StartV), sw[i].AmplitudeV()) / sw[i].AmplitudeV()
		if bent(&sw[i], d.fallTime(&sw[i])) {
			// From the rate at the onset: a pulse bent into a slow tail (a motor's
			// back-EMF) is still a fire.
			tau[i] = math.Min(tau[i], math.Max(math.Abs(sw[i].StartV), sw[i].AmplitudeV())/sw[i].OnsetRateVPerS)
		}
		logs = append(logs, math.Log(tau[i]))
	}
	if len(logs) == 0 {
		return
	}
	slices.Sort(logs)
	cut := math.Inf(1)
	best := 0.0
	for i := 1; i < len(logs); i++ {
		if g := logs[i] - logs[i-1]; g > best {
			best = g
			if g >= math.Log(8) {
				cut = (logs[i] + logs[i-1]) / 2
			}
		}
	}
	for i := range sw {
		if tau[i] == 0 || math.Log(tau[i]) > cut {
			continue
		}
		rate := sw[i].AmplitudeV() / d.fallTime(&sw[i])
		if stillFalling(&sw[i], d.fallTime(&sw[i])) {
			rate = math.Max(rate, sw[i].OnsetRateVPerS)
		}
		ref := -1
		if i > 0 && sw[i-1].Up && !sw[i-1].Gap {
			ref = i - 1
		} else if i+1 < len(sw) && sw[i+1].Up && !sw[i].Gap {
			ref = i + 1
		}
		if ref < 0 {
			sw[i].Fire = tau[i] < 0.02*(s.EndS-s.StartS)
			continue
		}
		r := &sw[ref]
		rr := r.AmplitudeV() / math.Max(r.DurationS(), 1e-12)
		sw[i].Fire = rate > 3*rr && (sw[i].FallS() < r.DurationS() || (bent(&sw[i], d.fallTime(&sw[i])) && rate > 30*rr))
	}
}

// bentRatio: a fall cut while still falling (see stillFalling) that leaves its onset
// this many times faster than it falls on average is a pulse bent into a slow tail (a
// turning motor's back-EMF: 6 to 30 in testdata/spice/motor-engine.cir, depending on
// where the samples fall; a resistor's pulse about 1.3, a supercapacitor's with its ESR
// step 3.5).
const bentRatio = 4

// stillFalling reports whether a fall ended while still falling: at its end at least a
// quarter of its mean rate (a switch that lets go: about 0.75 for a resistor's pulse,
// 0.5 for a motor's tail). A decay that settles has all but stopped when it reaches the
// noise band of its floor.
func stillFalling(s *Swing, fallS float64) bool {
	return s.EndRateVPerS >= 0.25*s.AmplitudeV()/fallS
}

// bent reports whether a fall is a pulse bent into a slow tail (see bentRatio).
func bent(s *Swing, fallS float64) bool {
	return stillFalling(s, fallS) && s.OnsetRateVPerS > bentRatio*s.AmplitudeV()/fallS
}

func (d *Detector) cycles(s *Summary) []Cycle {
	var out []Cycle
	var heights []float64
	for i := range s.Swings {
		if s.Swings[i].Fire {
			heights = append(heights, s.Swings[i].StartV-s.Swings[i].EndV)
		}
	}
	if len(heights) == 0 {
		return nil
	}
	sort.Float64s(heights)
	typical := heights[len(heights)*3/4]
	lastReset := math.NaN()
	for i := range s.Swings {
		w := &s.Swings[i]
		if !w.Up && !w.Fire {
			lastReset = math.NaN() // a slow fall between: no clean charge time
		}
		if !w.Fire || w.Open {
			// An open fall has no reset yet: not a finished cycle.
			if w.Gap || w.Open {
				lastReset = math.NaN()
			}
			continue
		}
		h := w.StartV - w.EndV
		c := Cycle{Swing: i, FireS: w.OnsetS, FireV: w.OnsetV, ResetS: w.EndS, ResetV: w.EndV,
			ChargeS: w.OnsetS - lastReset,
			Chatter: h < 0.1*math.Abs(w.StartV) || (h < 0.25*typical && h < 0.3*math.Abs(w.StartV))}
		out = append(out, c)
		lastReset = w.EndS
		if w.Gap {
			lastReset = math.NaN()
		}
	}
	return out
}

// segments builds the non-overlapping list of stretches, gaps and saturation carved out.
func (d *Detector) segments(s *Summary) []Segment {
	var base []Segment
	add := func(kind string, t0, t1, v0, v1 float64) {
		if n := len(base); n > 0 && t0 > base[n-1].EndS {
			t0 = base[n-1].EndS // swings are contiguous; gaps are carved out afterwards
		}
		if t1 < t0 {
			t1 = t0
		}
		if n := len(base); n > 0 && base[n-1].Kind == kind && base[n-1].EndS >= t0-1e-9 {
			base[n-1].EndS, base[n-1].EndV = t1, v1
			return
		}
		base = append(base, Segment{kind, t0, t1, v0, v1})
	}
	h := d.swingMin
	long := func(flat, dur float64) bool { return flat >= 0.25*dur && flat >= 10*d.dtTyp }
	for i := range s.Swings {
		w := &s.Swings[i]
		switch {
		case w.Up && w.AmplitudeV() < h:
			add(KindPlateau, w.StartS, w.EndS, w.StartV, w.EndV)
		case w.Up:
			if long(w.FlatS, w.DurationS()) {
				add(KindCharging, w.StartS, w.EndS-w.FlatS, w.StartV, w.EndV)
				add(KindPlateau, w.EndS-w.FlatS, w.EndS, w.EndV, w.EndV)
			} else {
				add(KindCharging, w.StartS, w.EndS, w.StartV, w.EndV)
			}
		case w.Fire:
			if w.OnsetS > w.StartS {
				add(KindCharging, w.StartS, w.OnsetS, w.StartV, w.OnsetV)
			}
			add(KindFiring, w.OnsetS, w.EndS, w.OnsetV, w.EndV)
		case w.AmplitudeV() < h || w.Noise:
			add(KindPlateau, w.StartS, w.EndS, w.StartV, w.EndV)
		default:
			if long(w.FlatS, w.DurationS()) {
				add(KindPlateau, w.StartS, w.StartS+w.FlatS, w.StartV, w.StartV)
				add(KindDarkDecay, w.StartS+w.FlatS, w.EndS, w.StartV, w.EndV)
			} else {
				add(KindDarkDecay, w.StartS, w.EndS, w.StartV, w.EndV)
			}
		}
	}
	return Carve(base, d.events)
}

// Carve removes the event stretches (gaps, saturation) from base and puts them in.
func Carve(base, events []Segment) []Segment {
	if len(events) == 0 {
		return base
	}
	out := base
	for _, e := range events {
		var next []Segment
		for _, b := range out {
			if b.EndS <= e.StartS || b.StartS >= e.EndS || b.Kind == KindGap || b.Kind == KindSaturated {
				next = append(next, b)
				continue
			}
			if b.StartS < e.StartS {
				l := b
				l.EndS, l.EndV = e.StartS, e.StartV
				next = append(next, l)
			}
			if b.EndS > e.EndS {
				r := b
				r.StartS, r.StartV = e.EndS, e.EndV
				next = append(next, r)
			}
		}
		next = append(next, e)
		out = next
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].StartS < out[j].StartS })
	return out
}
