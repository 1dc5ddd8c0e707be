package analyze

import (
	"math"

	"capcycle/analyze/detect"
)

// collector keeps, for every swing the detector confirms, what the fits need: the
// exponential fit of a fall, the I-V tracing points of a rise, and a few points for the
// plots. The swing's samples themselves are not kept.
type collector struct {
	opts  *Options
	det   *detect.Detector
	info  []swingInfo
	decay []keptSwing // the longest falls, for the leak fit's plot
	ts    []float64
	vs    []float64
	falls int

	pool      pulsePool  // the samples of fitted pulses, for the joint fit of the load
	chg       *chargeLog // the load current, when the capture has one
	riseSlope float64    // the end slope of the last rise, and its swing index
	riseIdx   int
	// the last points of the last rise (swing riseIdx), for placing the next fire
	tailT, tailV []float64

	widest     int    // the rise chosen for the single-diode fit (see ivRank)
	widestRank ivRank // its rank
	widestIV   []ivPt // its traced points, all of them
	ivBuf      ivBuffers
	dens       density // every cycle, aligned at the fire (density.go)
}

// ivBuffers are traceIV's scratch slices, reused from rise to rise.
type ivBuffers struct {
	out  []ivPt
	t, v []float64
}

// fitThisFall says whether the fall gets its own exponential fit: every long one (a
// decay: 64 points or more), every one of the first 256, and then every k-th with k the
// power of two nearest below falls/256, so a day of thousands of pulses costs a few
// hundred fits while the load's SE still rests on hundreds of them.
func (c *collector) fitThisFall(points int) bool {
	if points >= 64 || c.falls <= 256 {
		return true
	}
	k := 1
	for k*2 <= c.falls/256 {
		k *= 2
	}
	return c.falls%k == 0
}

// swingInfo is what is kept per swing.
type swingInfo struct {
	exp expResult // falls (from the onset), and rises that level off or end the capture
	// rises that level off or end the capture: the fit of their later half alone
	expTail expResult
	fallV   float64 // falls: the height
	// the voltage and its slope early and late in a fall (a line through the first and
	// through the last third), for the effective load resistance
	earlyV, earlySlope, lateV, lateSlope float64
	iv                                   []ivPt  // rises: traced points
	trace                                []tvPt  // compact copy for the overlay plot
	capF                                 float64 // falls, with a current channel: C from the pulse's charge (0: none)
	// falls: the fire and the reset placed between samples (see events.go), and the
	// fall's last points, for a reset with no pulse fit
	fire, reset located
	end         [endPoints]detect.Point
	nEnd        int
	// rises that level off: the approach fitted to their end (see endSlope)
	approach endApproach
}

// endPoints is the number of a fall's last points kept for placing its reset.
const endPoints = 4

type ivPt struct{ t, v, dvdt float64 }

type tvPt struct{ t, v float32 }

type keptSwing struct {
	index int
	dur   float64
	pts   []detect.Point
}

const tracePts = 32
const ivPerRise = 24

func newCollector(opts *Options) *collector { return &collector{opts: opts, riseIdx: -1} }

func (c *collector) onSwing(i int, s *detect.Swing, pts []detect.Point) {
	for len(c.info) <= i {
		c.info = append(c.info, swingInfo{})
	}
	inf := &c.info[i]
	inf.trace = compact(pts, tracePts)
	c.dens.add(c.det, s, pts)
	noise := math.Max(c.det.NoiseV(), c.det.StepV()/math.Sqrt(12))
	if !s.Up {
		c.falls++
		for _, p := range pts[max(0, len(pts)-endPoints):] {
			inf.end[inf.nEnd] = p
			inf.nEnd++
		}
		if c.chg != nil && s.ResetIndex > s.OnsetIndex {
			slope := 0.0
			if c.riseIdx == i-1 {
				slope = c.riseSlope
			}
			if f, ok := c.chg.pulseCap(pts[s.OnsetIndex].T, pts[s.ResetIndex].T, slope); ok {
				inf.capF = f
			}
		}
		if !c.fitThisFall(len(pts)) {
			inf.fire = c.locateFire(i, s, pts, nil)
			c.keepDecay(i, s, pts)
			return
		}
		// Only the samples strictly inside the pulse: the onset sample is still on the
		// charging curve (the switch closed after it) and the reset sample may already be
		// the first of the recharge.
		c.ts, c.vs = c.ts[:0], c.vs[:0]
		for k, p := range pts {
			if k > s.OnsetIndex && k < s.ResetIndex {
				c.ts = append(c.ts, p.T)
				c.vs = append(c.vs, p.V)
			}
		}
		if s.ResetIndex-s.OnsetIndex >= 64 && pts[s.ResetIndex].T-pts[s.OnsetIndex].T >= slowFallS {
			lo, hi := darkPart(c.ts, c.vs, math.Max(4*noise, 2*c.det.StepV()))
			c.ts, c.vs = c.ts[lo:hi], c.vs[lo:hi]
		}
		inf.exp = fitExp(c.ts, c.vs, noise)
		if inf.exp.ok && pts[s.ResetIndex].T-pts[s.OnsetIndex].T < slowFallS {
			c.pool.add(i, c.ts, c.vs, &inf.exp, noise)
		}
		inf.fire = c.locateFire(i, s, pts, &inf.exp)
		inf.fallV = s.AmplitudeV()
		inf.earlyV, inf.earlySlope, inf.lateV, inf.lateSlope = localSlopes(c.ts, c.vs)
		c.keepDecay(i, s, pts)
		return
	}
	c.riseSlope, c.riseIdx = s.EndSlopeVPerS, i
	if i > 0 && c.info[i-1].nEnd > 0 { // after a fall
		prev := &c.info[i-1]
		band := math.Max(4*c.det.NoiseV(), c.det.StepV())
		prev.reset = locateReset(pts, &prev.exp, prev.end[:prev.nEnd], band)
	}
	c.tailT, c.tailV = c.tailT[:0], c.tailV[:0]
	for _, p := range pts[max(0, len(pts)-sidePoints):] {
		c.tailT, c.tailV = append(c.tailT, p.T), append(c.tailV, p.V)
	}
	inf.approach = endSlope(pts, s)
	// A rise that starts on a flat stretch (the bottom of a dark decay, held at 0 V until
	// the light returns) is taken from the last point still at its starting level: the
	// flat part is no charging, neither for the I-V tracing nor for the approach's fit.
	pts = pts[flatStart(pts, math.Max(4*noise, c.det.StepV())):]
	// All the points only for a rise that may be the best for the diode fit (see
	// ivRank); a few for the others (their light level).
	rank := rankRise(pts)
	k := ivPerRise
	if !rank.better(c.widestRank) {
		k = ivPerRise / 4
	}
	iv := traceIV(pts, s, k, 4*math.Max(c.det.StepV(), 2*c.det.NoiseV()), &c.ivBuf)
	if len(iv) > 0 && rank.better(c.widestRank) {
		c.widestRank, c.widest = rank, i
		c.widestIV = append(c.widestIV[:0], iv...)
	}
	step := max(1, len(iv)/(ivPerRise/4))
	for k := 0; k < len(iv); k += step {
		inf.iv = append(inf.iv, iv[k])
	}
	if s.Open || s.FlatS > 0.2*s.DurationS() {
		c.ts, c.vs = c.ts[:0], c.vs[:0]
		for _, p := range pts {
			c.ts = append(c.ts, p.T)
			c.vs = append(c.vs, p.V)
		}
		inf.exp = fitExp(c.ts, c.vs, noise/math.Sqrt(meanN(pts)))
		// the later part alone, for the equilibrium's model discrepancy
		if h := len(c.ts) / 2; inf.exp.ok && h >= 8 {
			inf.expTail = fitExp(c.ts[h:], c.vs[h:], noise/math.Sqrt(meanN(pts)))
		}
	}
}

// locateFire places fall i's fire between samples, from the last rise's tail when that
// rise came just before it (see events.go).
func (c *collector) locateFire(i int, s *detect.Swing, pts []detect.Point, e *expResult) located {
	var tt, tv []float64
	if c.riseIdx == i-1 {
		tt, tv = c.tailT, c.tailV
	}
	return locateFire(pts, s.OnsetIndex, tt, tv, e)
}

// slowFallS is the shortest fall taken for a decay rather than a pulse: a motor or
// coil pulse of a small harvester lasts milliseconds to a second or two, a leak's decay
// minutes to hours (common practice, no source).
const slowFallS = 30.0

// darkWindows is the number of equal stretches of time over which darkPart compares the
// speed of a fall.
const darkWindows = 16

// darkPart returns the stretch [lo, hi) of a slow fall that a leak's decay can explain.
//
// A capacitor draining in the dark through drains that grow with the voltage (resistors,
// a diode, a supervisor's quiescent draw) falls fastest at the start and ever more slowly
// after. A fall that speeds up is no such decay: the light is still fading (at dusk a
// panel's current dies away over an hour or more) and the fall is the balance of a
// shrinking charge current against the drains. So the stretch starts where, of
// darkWindows equal stretches of time, the fall stops speeding up (the start itself for
// a decay in full dark).
//
// It ends where the voltage reaches its floor, within band of the fall's lowest value: a
// capacitor drained to 0 V stays there, and the flat floor is no part of an exponential
// approach (fitted with it, the asymptote lands far below zero).
func darkPart(t, v []float64, band float64) (lo, hi int) {
	n := len(t)
	if n < 2*darkWindows {
		return 0, n
	}
	floor := v[0]
	for _, x := range v {
		floor = math.Min(floor, x)
	}
	hi = n
	for hi > 1 && v[hi-1] <= floor+band {
		hi--
	}
	hi = min(n, hi+1) // keep the first point on the floor
	if hi < 2*darkWindows {
		return 0, hi // too short a fall to rank its stretches
	}
	t0, w := t[0], (t[hi-1]-t[0])/darkWindows
	if !(w > 0) {
		return 0, hi
	}
	var speed [darkWindows]float64
	var start [darkWindows]int
	fastest, jf, k := 0.0, 0, 0
	for j := range darkWindows {
		end := t0 + float64(j+1)*w
		start[j] = k
		for k < hi && (t[k] < end || j == darkWindows-1) {
			k++
		}
		if l := fitLine(t[start[j]:k], v[start[j]:k]); l.ok {
			speed[j] = -l.b
		}
		if speed[j] > fastest {
			fastest, jf = speed[j], j
		}
	}
	// Of the stretches of a decay the first is the fastest (by the ratio exp(span/(16
	// tau)) over the next), and noise may put a later one ahead by a little: then the
	// whole fall is the decay. Otherwise the fall sped up to a steady speed while the
	// light faded (the charge current falling at a steady rate); the decay starts with
	// the last stretch at that speed.
	if speed[0] >= 0.9*fastest {
		return 0, hi
	}
	for jf+1 < darkWindows && speed[jf+1] >= 0.9*fastest {
		jf++
	}
	return start[jf], hi
}

func meanN(pts []detect.Point) float64 {
	if len(pts) == 0 {
		return 1
	}
	n := 0
	for _, p := range pts {
		n += p.N
	}
	return math.Max(1, float64(n)/float64(len(pts)))
}

// keepDecay keeps the points of the three longest falls (the slow decays, if any).
func (c *collector) keepDecay(i int, s *detect.Swing, pts []detect.Point) {
	d := s.DurationS()
	if len(c.decay) < 3 {
		c.decay = append(c.decay, keptSwing{i, d, append([]detect.Point(nil), pts...)})
		return
	}
	k := 0
	for j := range c.decay {
		if c.decay[j].dur < c.decay[k].dur {
			k = j
		}
	}
	if d > c.decay[k].dur {
		c.decay[k] = keptSwing{i, d, append(c.decay[k].pts[:0], pts...)}
	}
}

// flatStart returns the index of the last of the leading points within band of the
// first one (0 when the second point already leaves it).
func flatStart(pts []detect.Point, band float64) int {
	k := 0
	for k+1 < len(pts) && math.Abs(pts[k+1].V-pts[0].V) <= band {
		k++
	}
	return k
}

// ivRank orders the rises for the cell's I-V tracing: first those with enough points for
// a fit (ivEnough), then by span^2/duration, the span of voltage times the mean charging
// rate (which is the mean current over C, the drains aside): a rise in bright light
// across a wide span, rather than the slow first charge of the day from empty (wide but
// in faint light) or a short rise in bright light.
type ivRank struct {
	ok     bool // a rise was ranked
	enough bool
	score  float64
}

// ivEnough is the number of points a rise needs to be traced at ivPerRise/2 voltages.
const ivEnough = 3 * ivPerRise / 2

func rankRise(pts []detect.Point) ivRank {
	n := len(pts)
	if n < 5 {
		return ivRank{}
	}
	span, dur := pts[n-1].V-pts[0].V, pts[n-1].T-pts[0].T
	if !(span > 0) || !(dur > 0) {
		return ivRank{}
	}
	return ivRank{ok: true, enough: n >= ivEnough, score: span * span / dur}
}

func (r ivRank) better(o ivRank) bool {
	switch {
	case !r.ok:
		return false
	case !o.ok:
		return true
	case r.enough != o.enough:
		return r.enough
	}
	return r.score > o.score
}

// compact averages pts down to at most n points.
func compact(pts []detect.Point, n int) []tvPt {
	if len(pts) == 0 {
		return nil
	}
	k := (len(pts) + n - 1) / n
	out := make([]tvPt, 0, (len(pts)+k-1)/k)
	for i := 0; i < len(pts); i += k {
		j := min(len(pts), i+k)
		var st, sv, w float64
		for _, p := range pts[i:j] {
			st += p.T * float64(p.N)
			sv += p.V * float64(p.N)
			w += float64(p.N)
		}
		out = append(out, tvPt{float32(st / w), float32(sv / w)})
	}
	return out
}

// traceIV evaluates the slope of a rise at up to want voltages spread evenly over
// its range (so the I-V curve is covered where the voltage moves fast and where it
// crawls alike), each from a local quadratic least-squares fit (Savitzky-Golay on the
// non-uniform points) over the neighbouring points. The window is widened, on both sides
// alike, until it spans at least minSpanV of voltage: on a slow rise read in coarse ADC
// steps the levels fall on the steps' edges, and a window narrower than a few steps
// would take the edge for the slope.
func traceIV(pts []detect.Point, s *detect.Swing, want int, minSpanV float64, buf *ivBuffers) []ivPt {
	n := len(pts)
	if n < 5 {
		return nil
	}
	k := min(want, n/3)
	half := max(2, n/(4*ivPerRise)) // the same window whatever the number of points
	lo, hi := pts[0].V, pts[n-1].V
	out := buf.out[:0]
	ts, vs := buf.t[:0], buf.v[:0]
	defer func() { buf.out, buf.t, buf.v = out, ts, vs }()
	c := 0
	last := -1
	for j := 0; j < k; j++ {
		level := lo + (hi-lo)*(float64(j)+0.5)/float64(k)
		for c < n-1 && pts[c].V < level {
			c++
		}
		if c == last {
			continue
		}
		last = c
		h := half
		a, b := max(0, c-h), min(n, c+h+1)
		for minSpanV > 0 && pts[b-1].V-pts[a].V < minSpanV && (a > 0 || b < n) {
			h++
			a, b = max(0, c-h), min(n, c+h+1)
		}
		ts, vs = ts[:0], vs[:0]
		for _, p := range pts[a:b] {
			ts = append(ts, p.T)
			vs = append(vs, p.V)
		}
		order := 2
		if len(ts) < 5 {
			order = 1
		}
		val, slope, ok := detect.LocalPoly(ts, vs, pts[c].T, order)
		if !ok {
			continue
		}
		out = append(out, ivPt{pts[c].T, val, slope})
	}
	return out
}

// localSlopes returns the value and slope of a line through the first third and of one
// through the last third of a fall (NaN for fewer than 6 points).
func localSlopes(t, v []float64) (v1, s1, v2, s2 float64) {
	n := len(t)
	v1, s1, v2, s2 = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	if n < 6 {
		return
	}
	k := n / 3
	var ok bool
	if v1, s1, ok = detect.LocalPoly(t[:k+1], v[:k+1], t[k/2], 1); !ok {
		v1, s1 = math.NaN(), math.NaN()
	}
	if v2, s2, ok = detect.LocalPoly(t[n-k-1:], v[n-k-1:], t[n-1-k/2], 1); !ok {
		v2, s2 = math.NaN(), math.NaN()
	}
	return
}

// calWindow collects the samples of the calibration stretch, thinned to at most 8192.
type calWindow struct {
	on         bool
	start, end float64
	stride     int
	count      int
	t, v       []float64
}

func newCalWindow(start, end float64) calWindow {
	return calWindow{on: true, start: start, end: end, stride: 1}
}

func (w *calWindow) add(t, v []float64) {
	for i := range t {
		if t[i] < w.start || t[i] > w.end {
			continue
		}
		w.count++
		if w.count%w.stride != 0 {
			continue
		}
		w.t = append(w.t, t[i])
		w.v = append(w.v, v[i])
		if len(w.t) >= 8192 {
			k := 0
			for j := 0; j < len(w.t); j += 2 {
				w.t[k], w.v[k] = w.t[j], w.v[j]
				k++
			}
			w.t, w.v = w.t[:k], w.v[:k]
			w.stride *= 2
		}
	}
}
