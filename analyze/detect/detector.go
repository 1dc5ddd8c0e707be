package detect

import (
	"capcycle/analyze/stats"
	"math"
	"slices"
)

// Config tunes a Detector. The zero value (or nil) means: estimate everything from the
// data.
type Config struct {
	// NoiseV is the sample noise SD in volts. Default: estimated (NoiseSD) block by block.
	NoiseV float64
	// StepV is the ADC step in volts. Default: estimated (ADCStep) from the first samples
	// (the first that move, when the capture starts on one value), and looked for again in
	// the first few moving blocks when those show none.
	StepV float64
	// MinSwingV is the smallest rise or fall the detector follows. Default:
	// max(8 * noise, 3 * step, 1e-4 * the first samples' largest |v|, 1 uV).
	MinSwingV float64
	// GapS is the spacing above which two samples are taken to have a gap between them.
	// Default: 20 times the 90th percentile of the first samples' spacing.
	GapS float64
	// FullScaleV is the ADC's full scale referred to the storage node; samples at or
	// above FullScaleV - 1.5 StepV (the top code reads one step below full scale; 0.1 %
	// of full scale when no step shows) are saturated. Default 0: no saturation check.
	FullScaleV float64
	// PointLimit bounds the points kept per swing (Point, averaged). Default 1024.
	PointLimit int
	// OnSwing, when set, is called for every swing as it is confirmed, with its points
	// (valid only during the call). The analysis fits each swing there so that the
	// samples need not be kept.
	OnSwing func(index int, s *Swing, pts []Point)
}

// Swing is a monotone stretch between two extremes that differ by at least the minimum
// swing: a rise (charging, or charging then levelling off) or a fall (a fire, or a slow
// decay). Which falls are fires is decided at the end, from all of them (Finish).
type Swing struct {
	Up     bool
	Open   bool // the capture (or a gap) ended it before a turn confirmed its end
	Gap    bool // it ended at a gap
	StartS float64
	StartV float64 // at the starting extreme (median of 3 samples)
	EndS   float64
	EndV   float64 // at the end extreme (median of 3 samples)
	// OnsetS and OnsetV, for falls: the last sample before the voltage leaves the
	// starting level (fire onset); for rises they equal StartS and StartV.
	OnsetS  float64
	OnsetV  float64
	Samples int
	// FlatS is the time within the minimum swing of the level the swing leaves (falls,
	// at the start) or reaches (rises, at the end): a plateau when long.
	FlatS float64
	// StartSlopeVPerS is, for rises, the mean slope over the first fifth of the swing,
	// and EndSlopeVPerS the slope at its end (a local quadratic over the last 15 %, at
	// most 64 points).
	StartSlopeVPerS float64
	EndSlopeVPerS   float64
	// Fire is set by Finish for falls taken to be fires, and Noise for falls between a
	// high and a low of the noise (the levels around them equal): neither fire nor decay.
	Fire, Noise bool
	// OnsetRateVPerS, for falls, is how fast the voltage leaves the onset: the drop to a
	// tenth of the amplitude below it over the time it takes (see Finish).
	OnsetRateVPerS float64
	// EndRateVPerS, for falls, is how fast it still falls as it ends (over the last tenth
	// of it): a switch that lets go cuts a fall that is still falling.
	EndRateVPerS float64
	// ReleaseStepV, for falls with a slow tail, is the step up when the switch opened
	// (the drop across a supercapacitor's ESR); 0 when none shows.
	ReleaseStepV float64
	// OnsetIndex and ResetIndex locate the onset and the end of the fall among the
	// swing's points as passed to Config.OnSwing.
	OnsetIndex, ResetIndex int
	// LevelBeforeV and LevelAfterV, for falls, are the medians of the few samples up to
	// the starting extreme and of the few after the end one (NaN when unknown): a fall
	// between two extremes of noise has them equal.
	LevelBeforeV, LevelAfterV float64
}

// DurationS is EndS - StartS.
func (s *Swing) DurationS() float64 { return s.EndS - s.StartS }

// FallS is the time from the onset to the end extreme.
func (s *Swing) FallS() float64 { return s.EndS - s.OnsetS }

// AmplitudeV is |EndV - StartV|.
func (s *Swing) AmplitudeV() float64 { return math.Abs(s.EndV - s.StartV) }

type sample struct {
	t, v, m float64 // time, raw volts, median-of-3 volts
}

const bootN = 1024      // samples used to estimate the noise, step and spacing before detecting
const noiseBlock = 4096 // samples per noise estimate after that
const ringN = 256       // raw samples kept for onsets
const levelN = 8        // samples in the medians before and after a fall

// Detector finds rises and falls in a stream of samples with memory that does not grow
// with the stream (beyond one compact Swing per swing). Push samples in time order,
// then call Finish.
type Detector struct {
	cfg    Config
	limit  int
	boot   []sample
	booted bool
	// waitMove: the first samples did not move (one value throughout), so no step or
	// noise showed in them; the first bootN samples after the value first changes are
	// held in moveBuf, the estimates made from them, and then they are detected.
	waitMove bool
	stuckV   float64
	moveBuf  []sample

	// median of 3
	p1, p2 sample
	np     int

	// noise
	blk       []float64
	blkT      []float64
	scratch   []float64
	sds       []float64
	sd        float64
	step      float64
	swingMin  float64
	vscale    float64
	gapS      float64
	dtTyp     float64
	nblk      int
	stepTries int // blocks searched for a step after the first samples showed none
	skip      int

	// saturation and gaps
	satOn    bool
	satStart float64
	satV0    float64
	events   []Segment // gap and saturated stretches
	lastT    float64
	haveLast bool

	// zigzag
	mode       int // 0 undecided, +1 rising, -1 falling
	lo, hi     sample
	last, ext  sample
	seg, tail  decim
	tmp        decim // scratch for revert
	prov       bool
	provSwing  Swing
	provSeg    decim
	provTrough sample
	ptsBuf     []Point

	// the last raw samples, for the exact onset of a fall after a long flat top
	ring     [ringN]sample
	ringLen  int
	ringPos  int
	onsetOK  bool
	onsetT   float64
	onsetV   float64
	levelBuf [levelN]float64
	before   float64

	swings  []Swing
	samples int
	firstT  float64
	firstV  float64
	endV    float64
	minV    float64
	maxV    float64
}

// New returns a Detector; cfg may be nil.
func New(cfg *Config) *Detector {
	d := &Detector{}
	if cfg != nil {
		d.cfg = *cfg
	}
	d.limit = d.cfg.PointLimit
	if d.limit <= 0 {
		d.limit = 1024
	}
	d.seg, d.tail, d.provSeg = newDecim(d.limit), newDecim(d.limit), newDecim(d.limit)
	d.minV, d.maxV = math.Inf(1), math.Inf(-1)
	return d
}

// SetStepV sets the ADC step, as Config.StepV does, when it is learnt after New (from a
// capture file's metadata, say). It has effect only before the first Push; 0 leaves the
// step to be estimated.
func (d *Detector) SetStepV(v float64) {
	if d.samples == 0 && v > 0 {
		d.cfg.StepV = v
	}
}

// NoiseV is the noise SD in use (the median of the block estimates so far).
func (d *Detector) NoiseV() float64 { return d.sd }

// StepV is the ADC step found (0 when none shows).
func (d *Detector) StepV() float64 { return d.step }

// MinSwingV is the smallest swing followed.
func (d *Detector) MinSwingV() float64 { return d.swingMin }

// SpacingS is the typical (median) sample spacing of the first samples.
func (d *Detector) SpacingS() float64 { return d.dtTyp }

// Samples is the number of samples pushed.
func (d *Detector) Samples() int { return d.samples }

// Push adds samples; t must increase.
func (d *Detector) Push(t, v []float64) {
	if len(t) != len(v) {
		panic("detect: slice length mismatch")
	}
	for i := range t {
		if d.samples == 0 {
			d.firstT, d.firstV = t[i], v[i]
		}
		d.samples++
		d.endV = v[i]
		d.minV = math.Min(d.minV, v[i])
		d.maxV = math.Max(d.maxV, v[i])
		if !d.booted {
			d.boot = append(d.boot, sample{t: t[i], v: v[i]})
			if len(d.boot) >= bootN {
				d.bootstrap()
			}
			continue
		}
		if d.waitMove {
			d.held(t[i], v[i])
			continue
		}
		d.one(t[i], v[i])
	}
}

// held takes a sample while the estimates wait for the voltage to move.
func (d *Detector) held(t, v float64) {
	if len(d.moveBuf) == 0 && v == d.stuckV {
		d.one(t, v)
		return
	}
	d.moveBuf = append(d.moveBuf, sample{t: t, v: v})
	if len(d.moveBuf) >= bootN {
		d.reestimate()
	}
}

// reestimate makes the step, noise and scale estimates from the held samples and
// detects them.
func (d *Detector) reestimate() {
	d.waitMove = false
	buf := d.moveBuf
	d.moveBuf = nil
	ts := make([]float64, len(buf))
	vs := make([]float64, len(buf))
	for i, s := range buf {
		ts[i], vs[i] = s.t, s.v
	}
	d.estimate(ts, vs)
	if d.cfg.NoiseV == 0 {
		d.sds = append(d.sds[:0], d.sd) // the still stretch's estimate said nothing
	}
	d.setSwingMin()
	for _, s := range buf {
		d.one(s.t, s.v)
	}
}

// estimate sets the step, the noise and the voltage scale from samples (the step and
// noise only where the configuration leaves them to be estimated).
func (d *Detector) estimate(ts, vs []float64) {
	if d.cfg.StepV == 0 {
		d.step = ADCStep(vs, d.scratch)
	}
	for _, x := range vs {
		d.vscale = math.Max(d.vscale, math.Abs(x))
	}
	if d.cfg.NoiseV > 0 {
		d.sd = d.cfg.NoiseV
	} else if len(vs) >= 3 {
		d.sd = NoiseSD(ts, vs, d.scratch)
	}
}

// stuck reports whether samples hold one value throughout.
func stuck(vs []float64) bool {
	for _, x := range vs {
		if x != vs[0] {
			return false
		}
	}
	return len(vs) > 0
}

func (d *Detector) bootstrap() {
	d.booted = true
	n := len(d.boot)
	ts := make([]float64, n)
	vs := make([]float64, n)
	for i, s := range d.boot {
		ts[i], vs[i] = s.t, s.v
	}
	d.scratch = make([]float64, 0, noiseBlock)
	d.step = d.cfg.StepV
	dts := make([]float64, 0, n)
	for i := 1; i < n; i++ {
		dts = append(dts, ts[i]-ts[i-1])
	}
	if len(dts) > 0 {
		slices.Sort(dts)
		d.dtTyp = dts[len(dts)/2]
		d.gapS = 20 * dts[len(dts)*9/10]
	}
	if d.cfg.GapS > 0 {
		d.gapS = d.cfg.GapS
	}
	d.estimate(ts, vs)
	if d.cfg.NoiseV == 0 && n >= 3 {
		d.sds = append(d.sds, d.sd)
	}
	if stuck(vs) && (d.cfg.NoiseV == 0 || d.cfg.StepV == 0) {
		d.waitMove, d.stuckV = true, vs[n-1]
	}
	d.setSwingMin()
	d.blk = make([]float64, 0, noiseBlock)
	d.blkT = make([]float64, 0, noiseBlock)
	boot := d.boot
	d.boot = nil
	for _, s := range boot {
		d.one(s.t, s.v)
	}
}

func (d *Detector) sdEff() float64 {
	return math.Max(d.sd, d.step/math.Sqrt(12))
}

func (d *Detector) setSwingMin() {
	h := math.Max(8*d.sdEff(), 3*d.step)
	h = math.Max(h, 1e-4*d.vscale)
	h = math.Max(h, 1e-6)
	if d.cfg.MinSwingV > 0 {
		h = d.cfg.MinSwingV
	}
	d.swingMin = h
}

// one takes a raw sample: noise, gaps and saturation first, then the median of 3 feeds
// the zigzag one sample late.
func (d *Detector) one(t, v float64) {
	if d.haveLast && d.gapS > 0 && t-d.lastT > d.gapS {
		d.flushMedian()
		d.endZigzag(true)
		d.events = append(d.events, Segment{Kind: KindGap, StartS: d.lastT, EndS: t, StartV: d.p2.v, EndV: v})
		d.np = 0
		d.blk, d.blkT = d.blk[:0], d.blkT[:0]
	}
	d.lastT, d.haveLast = t, true
	d.noise(t, v)
	d.saturation(t, v)
	cur := sample{t: t, v: v}
	switch d.np {
	case 0:
		d.p2 = cur
		d.np = 1
		return
	case 1:
		d.p1, d.p2 = d.p2, cur
		d.np = 2
		s := d.p1
		s.m = s.v // the first sample has one neighbour: take it as it is
		d.zig(s)
		return
	}
	s := d.p2
	s.m = med3(d.p1.v, d.p2.v, v)
	d.p1, d.p2 = d.p2, cur
	d.zig(s)
}

// flushMedian passes the last held sample on (with its one neighbour).
func (d *Detector) flushMedian() {
	if d.np >= 2 {
		s := d.p2
		s.m = s.v
		d.zig(s)
	}
	d.np = 0
}

func med3(a, b, c float64) float64 {
	if a > b {
		a, b = b, a
	}
	if b > c {
		b = c
	}
	if a > b {
		return a
	}
	return b
}

func (d *Detector) noise(t, v float64) {
	if d.cfg.NoiseV > 0 {
		return
	}
	// Every fourth block of samples, and after the first 64 estimates every sixteenth,
	// is plenty for a robust running estimate; the others are only counted.
	every := 4
	if len(d.sds) > 64 {
		every = 16
	}
	if d.nblk%every != 0 {
		d.skip++
		if d.skip == noiseBlock {
			d.skip = 0
			d.nblk++
		}
		return
	}
	d.blk = append(d.blk, v)
	d.blkT = append(d.blkT, t)
	if len(d.blk) < noiseBlock {
		return
	}
	sd, used := noiseSD(d.blkT, d.blk, d.scratch)
	if used < noiseBlock/16 {
		// Mostly runs of one value: nothing to learn about the noise here; the next
		// block is taken instead.
		d.blk, d.blkT = d.blk[:0], d.blkT[:0]
		return
	}
	if d.step == 0 && d.cfg.StepV == 0 && d.stepTries < 8 {
		// No step showed yet (the first samples may not have moved): look again, in
		// the first few blocks that move.
		d.stepTries++
		d.step = ADCStep(d.blk, d.scratch)
	}
	d.nblk++
	d.sds = append(d.sds, sd)
	if len(d.sds) > 2048 {
		k := 0
		for i := 0; i < len(d.sds); i += 2 {
			d.sds[k] = d.sds[i]
			k++
		}
		d.sds = d.sds[:k]
	}
	tmp := append(d.scratch[:0], d.sds...)
	d.sd = stats.MedianInPlace(tmp)
	d.setSwingMin()
	d.blk, d.blkT = d.blk[:0], d.blkT[:0]
}

func (d *Detector) saturation(t, v float64) {
	if d.cfg.FullScaleV <= 0 {
		return
	}
	// The top ADC code reads one step below full scale.
	margin := 1.5 * d.step
	if margin == 0 {
		margin = 1e-3 * d.cfg.FullScaleV
	}
	at := v >= d.cfg.FullScaleV-margin
	switch {
	case at && !d.satOn:
		d.satOn, d.satStart, d.satV0 = true, t, v
	case !at && d.satOn:
		d.satOn = false
		d.events = append(d.events, Segment{Kind: KindSaturated, StartS: d.satStart, EndS: t, StartV: d.satV0, EndV: v})
	}
}
