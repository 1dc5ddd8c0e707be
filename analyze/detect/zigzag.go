package detect

import (
	"capcycle/analyze/stats"
	"math"
)

// zig advances the zigzag with one sample whose decision value s.m is the median of 3.
//
// Rising: ext is the running maximum, seg holds the samples from the last turn to ext,
// tail those after ext. A sample MinSwingV below ext turns the swing: the rise from the
// last turn to ext is done, and a fall begins at ext. Falling is the mirror image. A
// fall's end is provisional until the rise after it proves itself (it lasts longer than
// twice the fall, or climbs half the fall's height): a rebound that falls back below the
// trough, or turns down first, was a spike inside the pulse (a motor's commutation), and
// the fall goes on.
func (d *Detector) zig(s sample) {
	d.ring[d.ringPos] = s
	d.ringPos = (d.ringPos + 1) % ringN
	d.ringLen = min(d.ringLen+1, ringN)
	h := d.swingMin
	switch d.mode {
	case 0:
		if d.seg.empty() {
			d.lo, d.hi = s, s
		}
		d.seg.add(s.t, s.v)
		if s.m < d.lo.m {
			d.lo = s
		}
		if s.m > d.hi.m {
			d.hi = s
		}
		switch {
		case s.m >= d.lo.m+h && s.m > d.hi.m-h:
			d.mode, d.last, d.ext = 1, d.lo, s
		case s.m <= d.hi.m-h:
			d.mode, d.last, d.ext = -1, d.hi, s
		}
		return
	case 1:
		if d.prov && (s.m < d.provTrough.m || s.m < d.ext.m-h) {
			d.revert(s)
			return
		}
		if s.m > d.ext.m {
			d.ext = s
			d.seg.appendFrom(&d.tail, 0)
			d.tail.reset()
			d.seg.add(s.t, s.v)
		} else {
			d.tail.add(s.t, s.v)
			if s.m < d.ext.m-h {
				d.turn(s)
				return
			}
		}
		if d.prov {
			f := &d.provSwing
			if s.t-f.EndS > math.Max(2*f.FallS(), 3*d.dtTyp) || d.ext.m-f.EndV > 0.5*f.AmplitudeV() {
				d.confirm()
			}
		}
	case -1:
		if s.m < d.ext.m {
			d.ext = s
			d.seg.appendFrom(&d.tail, 0)
			d.tail.reset()
			d.seg.add(s.t, s.v)
			return
		}
		d.tail.add(s.t, s.v)
		if s.m > d.ext.m+h {
			d.turn(s)
		}
	}
}

// turn ends the swing from d.last to d.ext and starts the next one at d.ext.
func (d *Detector) turn(s sample) {
	sw := d.makeSwing(d.mode > 0, false, false)
	if d.mode < 0 {
		// The fall waits in provSeg until the rise after it proves itself.
		d.prov = true
		d.provSwing = sw
		d.provTrough = d.ext
		d.seg, d.provSeg = d.provSeg, d.seg
	} else {
		d.emit(&sw, d.ptsBuf) // makeSwing left d.seg's points there
	}
	if d.mode > 0 {
		d.before = d.levelBefore()
	}
	d.seg.reset()
	d.seg.add(d.ext.t, d.ext.v)
	d.onsetOK = false
	if d.mode > 0 && d.tail.width > 1 {
		// A long flat top was averaged: take the fall's start from the raw samples.
		d.rawOnset()
	}
	if d.onsetOK {
		for k := 0; k < d.ringLen; k++ {
			r := d.ring[(d.ringPos-d.ringLen+k+2*ringN)%ringN]
			if r.t >= d.onsetT {
				d.seg.add(r.t, r.v)
			}
		}
	} else {
		d.seg.appendFrom(&d.tail, 0)
	}
	d.tail.reset()
	d.last = d.ext
	d.ext = s
	d.mode = -d.mode
}

// rawOnset finds, among the last raw samples, the last one still at the level of the
// running maximum (within 4 noise SDs, at least one ADC step) before the drop.
func (d *Detector) rawOnset() {
	c := math.Max(4*d.sdEff(), d.step)
	level := d.ext.m
	for k := d.ringLen - 1; k >= 0; k-- {
		r := d.ring[(d.ringPos-d.ringLen+k+2*ringN)%ringN]
		if r.t < d.ext.t {
			return
		}
		if r.v >= level-c && k < d.ringLen-1 {
			d.onsetOK, d.onsetT, d.onsetV = true, r.t, r.v
			return
		}
	}
}

// levelBefore is the median of the few raw samples up to the last one still at the
// level of the running maximum (within 4 noise SDs, at least one ADC step), from the
// samples kept; NaN when that sample is older than them.
func (d *Detector) levelBefore() float64 {
	c := math.Max(4*d.sdEff(), d.step)
	at := -1
	for k := d.ringLen - 2; k >= 0; k-- {
		if r := d.ring[(d.ringPos-d.ringLen+k+2*ringN)%ringN]; r.v >= d.ext.m-c {
			at = k
			break
		}
	}
	if at < 0 {
		return math.NaN()
	}
	n := 0
	for k := at; k >= 0 && n < levelN; k-- {
		d.levelBuf[n] = d.ring[(d.ringPos-d.ringLen+k+2*ringN)%ringN].v
		n++
	}
	return stats.MedianInPlace(d.levelBuf[:n])
}

// confirm emits the provisional fall, with the level the rise after it starts from.
func (d *Detector) confirm() {
	n := 0
	for _, p := range d.seg.pts {
		if n == levelN {
			break
		}
		d.levelBuf[n] = p.V
		n++
	}
	if n < levelN && d.seg.accN > 0 {
		d.levelBuf[n] = d.seg.accV / float64(d.seg.accN)
		n++
	}
	if n >= 3 {
		d.provSwing.LevelAfterV = stats.MedianInPlace(d.levelBuf[:n])
	}
	d.prov = false
	d.ptsBuf = d.provSeg.points(d.ptsBuf)
	refineReset(&d.provSwing, d.ptsBuf, d.seg.pts, math.Max(3*d.sdEff(), d.step))
	d.emit(&d.provSwing, d.ptsBuf)
	d.provSeg.reset()
}

// resetFitN is the number of points on each side of a slow fall's trough that
// refineReset fits.
const resetFitN = 8

// refineReset places the end of a fall with a slow tail (at least 3 resetFitN points
// from the onset to the reset: a motor's back-EMF tail, a supercapacitor's slow branch)
// where a line through the tail's last points meets a line through the first points of
// the rise after it: the true minimum, where the switch let go. The first sample within
// the noise band of the trough comes early on a slow tail, and the lowest sample is
// noise; the two lines (robust: Theil-Sen) average both out. When the voltage steps up
// as the switch opens (a series resistance, see ReleaseStepV), the release is placed
// halfway between the last sample on the tail and the first after the step, at the
// tail's line. Nothing changes when the
// lines do not meet between their points (falling into the trough, rising out of it).
// ResetIndex stays where it was: the pulse's fits keep their points.
func refineReset(sw *Swing, fall, rise []Point, band float64) {
	r := sw.ResetIndex
	if r-sw.OnsetIndex < 3*resetFitN || len(fall) < 2 || len(rise) < resetFitN+3 {
		return
	}
	tail := fall[max(sw.OnsetIndex+1, r-resetFitN) : len(fall)-1]
	a1, b1, ok1 := lineOf(tail)
	a2, b2, ok2 := lineOf(rise[3 : resetFitN+3])
	if !ok1 || !ok2 || !(b1 < 0) || !(b2 > 0) {
		return
	}
	// The median of 3 can hide the last sample or two of the tail before a step up:
	// they follow the tail's line and lie well below the rise's.
	j := 1
	for j < 3 && math.Abs(rise[j].V-(a1+b1*rise[j].T)) <= band && a2+b2*rise[j].T-rise[j].V > band {
		j++
	}
	if a, b, ok := lineOf(rise[j : j+resetFitN]); ok && b > 0 {
		a2, b2 = a, b
	}
	ts := (a1 - a2) / (b2 - b1)
	if !(ts >= tail[0].T && ts <= rise[j+resetFitN-1].T) {
		return
	}
	// A step up when the switch opens (a supercapacitor's ESR: the drop across it goes
	// with the current) makes the lines meet before the last sample on the tail, and
	// puts the rise's line above that sample by more than the noise and the tail's fall
	// over one spacing. The release is then between that sample and the first after the
	// step.
	last, next := rise[j-1].T, rise[j].T
	gap := a2 + b2*last - rise[j-1].V // the rise's line over the last sample on the tail
	if ts < last-0.5*(next-last) && gap > math.Max(band, -b1*(next-last)) {
		ts = 0.5 * (last + next)
		sw.ReleaseStepV = a2 + b2*ts - (a1 + b1*ts)
	}
	sw.EndS, sw.EndV = ts, a1+b1*ts
}

// lineOf fits v = a + b·t to points robustly (ok false for fewer than 3): b is the
// median of the slopes between every pair (Theil and Sen), a the median of v − b·t, so
// that a commutation spike among the points moves neither.
func lineOf(pts []Point) (a, b float64, ok bool) {
	if len(pts) < 3 || len(pts) > 2*resetFitN {
		return 0, 0, false
	}
	var sl [2 * resetFitN * resetFitN]float64
	n := 0
	for i := range pts {
		for j := i + 1; j < len(pts); j++ {
			if dt := pts[j].T - pts[i].T; dt > 0 {
				sl[n] = (pts[j].V - pts[i].V) / dt
				n++
			}
		}
	}
	if n == 0 {
		return 0, 0, false
	}
	b = stats.MedianInPlace(sl[:n])
	var rs [2 * resetFitN]float64
	for i, p := range pts {
		rs[i] = p.V - b*p.T
	}
	return stats.MedianInPlace(rs[:len(pts)]), b, true
}

// revert takes back a provisional fall's end: the rebound was part of the pulse.
func (d *Detector) revert(s sample) {
	d.prov = false
	trough := d.provTrough
	up := d.seg
	upTail := d.tail
	d.seg, d.provSeg = d.provSeg, up
	d.tail = upTail
	// tail after the trough: the rise's samples (its first point is the trough) and its tail
	if d.tmp.limit == 0 {
		d.tmp = newDecim(d.limit)
	}
	d.tmp.reset()
	d.tmp.appendFrom(&up, 1)
	d.tmp.appendFrom(&upTail, 0)
	d.tail.reset()
	d.tail.appendFrom(&d.tmp, 0)
	d.tail.add(s.t, s.v)
	d.provSeg.reset()
	d.mode = -1
	d.last = sample{t: d.provSwing.StartS, v: d.provSwing.StartV, m: d.provSwing.StartV}
	d.ext = trough
	if s.m < trough.m {
		d.ext = s
		d.seg.appendFrom(&d.tail, 0)
		d.tail.reset()
	}
}

// makeSwing describes the swing from d.last to d.ext from the points in d.seg.
func (d *Detector) makeSwing(up, open, gap bool) Swing {
	d.ptsBuf = d.seg.points(d.ptsBuf)
	pts := d.ptsBuf
	n := 0
	for _, p := range pts {
		n += p.N
	}
	sw := Swing{Up: up, Open: open, Gap: gap,
		StartS: d.last.t, StartV: d.last.m, EndS: d.ext.t, EndV: d.ext.m,
		OnsetS: d.last.t, OnsetV: d.last.m, Samples: n,
		LevelBeforeV: math.NaN(), LevelAfterV: math.NaN()}
	if !up && d.mode < 0 {
		sw.LevelBeforeV = d.before
	}
	h := d.swingMin
	if up {
		// time spent within h of the top at the end
		k := len(pts) - 1
		for k > 0 && pts[k-1].V >= sw.EndV-h {
			k--
		}
		if len(pts) > 0 {
			sw.FlatS = sw.EndS - pts[k].T
		}
		sw.EndSlopeVPerS = slopeAtEnd(pts, sw.EndS-0.15*(sw.EndS-sw.StartS))
		sw.StartSlopeVPerS = slopeOver(pts, sw.StartS, sw.StartS+0.2*(sw.EndS-sw.StartS))
		return sw
	}
	// Fall: the onset is the last sample still at the starting level (within 4 noise SDs,
	// at least one ADC step) before the voltage drops away.
	c := math.Max(4*d.sdEff(), d.step)
	k := 0
	if d.onsetOK {
		for k+1 < len(pts) && pts[k+1].T <= d.onsetT {
			k++
		}
	} else {
		for k+1 < len(pts) && pts[k+1].V >= sw.StartV-c {
			k++
		}
	}
	if len(pts) > 0 {
		sw.OnsetS, sw.OnsetV = pts[k].T, levelAt(pts[:k+1])
		sw.OnsetIndex, sw.ResetIndex = k, len(pts)-1
	}
	// The reset is where the fast fall stops: the first sample (median of 3) within the
	// same band of the trough. Later samples at the bottom are noise around the start of
	// the recharge, and the lowest of them is not the reset.
	for r := k + 1; r < len(pts); r++ {
		m := pts[r].V
		if r+1 < len(pts) {
			m = med3(pts[r-1].V, pts[r].V, pts[r+1].V)
		}
		if m <= sw.EndV+c {
			sw.EndS, sw.EndV = pts[r].T, pts[r].V
			sw.ResetIndex = r
			break
		}
	}
	j := 0
	for j+1 < len(pts) && pts[j+1].V >= sw.StartV-h {
		j++
	}
	if len(pts) > 0 {
		sw.FlatS = pts[j].T - sw.StartS
	}
	sw.OnsetRateVPerS = onsetRate(pts, k, sw.OnsetV, sw.AmplitudeV(), d.dtTyp)
	sw.EndRateVPerS = endRate(pts, k, sw.ResetIndex)
	return sw
}

// endRate is how fast a fall still falls as it ends: the slope over the last tenth of
// the points from the onset to the reset (at least one step). A switch that lets go
// cuts a fall that is still falling; a decay that settles has all but stopped.
func endRate(pts []Point, k, r int) float64 {
	if r <= k || r >= len(pts) {
		return 0
	}
	a := r - max(1, (r-k)/10)
	if dt := pts[r].T - pts[a].T; dt > 0 {
		return (pts[a].V - pts[r].V) / dt
	}
	return 0
}

// onsetRate is how fast a fall leaves its onset (point k at level v0): the drop to the
// first point a tenth of the fall's amplitude below, over the time to it (at least one
// sample spacing). A fire drops at once, whatever follows (a motor's back-EMF bends the
// rest of its pulse into a slow tail); a leak's decay or a fading light starts slowly.
func onsetRate(pts []Point, k int, v0, amp, dt float64) float64 {
	for r := k + 1; r < len(pts); r++ {
		if dv := v0 - pts[r].V; dv >= 0.1*amp {
			return dv / math.Max(pts[r].T-pts[k].T, math.Max(dt, 1e-12))
		}
	}
	return 0
}

// slopeAtEnd is the slope at the last point of a local quadratic through the points
// after from (a straight line for fewer than 5; NaN for fewer than 3).
func slopeAtEnd(pts []Point, from float64) float64 {
	var t, v [64]float64
	n := 0
	for k := len(pts) - 1; k >= 0 && n < len(t) && (pts[k].T >= from || n < 3); k-- {
		t[n], v[n] = pts[k].T, pts[k].V
		n++
	}
	if n < 3 {
		return math.NaN()
	}
	order := 2
	if n < 5 {
		order = 1
	}
	_, slope, ok := LocalPoly(t[:n], v[:n], t[0], order)
	if !ok {
		return math.NaN()
	}
	return slope
}

// slopeOver is the least-squares slope of the points in [from, to] (NaN for fewer than 3).
func slopeOver(pts []Point, from, to float64) float64 {
	var st, sv, stt, stv, w float64
	cnt := 0
	for _, p := range pts {
		if p.T < from || p.T > to {
			continue
		}
		cnt++
		wt := float64(p.N)
		w += wt
		st += wt * p.T
		sv += wt * p.V
	}
	if cnt < 3 {
		return math.NaN()
	}
	mt, mv := st/w, sv/w
	for _, p := range pts {
		if p.T < from || p.T > to {
			continue
		}
		wt := float64(p.N)
		stt += wt * (p.T - mt) * (p.T - mt)
		stv += wt * (p.T - mt) * (p.V - mv)
	}
	if stt == 0 {
		return math.NaN()
	}
	return stv / stt
}

// emit records a confirmed swing and hands it, with its points, to Config.OnSwing.
func (d *Detector) emit(sw *Swing, pts []Point) {
	d.swings = append(d.swings, *sw)
	if d.cfg.OnSwing != nil {
		d.cfg.OnSwing(len(d.swings)-1, &d.swings[len(d.swings)-1], pts)
	}
}

// endZigzag closes the swing in progress (at a gap or at the end) and starts afresh.
func (d *Detector) endZigzag(gap bool) {
	if d.prov {
		d.confirm()
	}
	switch d.mode {
	case 0:
		if !d.seg.empty() {
			// Never moved by a full swing: one open swing, rising or falling by its ends.
			d.ptsBuf = d.seg.points(d.ptsBuf)
			p := d.ptsBuf
			d.last = sample{t: p[0].T, v: p[0].V, m: p[0].V}
			d.ext = sample{t: p[len(p)-1].T, v: p[len(p)-1].V, m: p[len(p)-1].V}
			sw := d.makeSwing(d.ext.m >= d.last.m, true, gap)
			d.emit(&sw, d.ptsBuf) // makeSwing left d.seg's points there
		}
	default:
		// The swing to the running extreme, then what came after it as a last open swing.
		if !d.tail.empty() {
			d.seg.appendFrom(&d.tail, 0)
		}
		d.ptsBuf = d.seg.points(d.ptsBuf)
		p := d.ptsBuf
		endP := p[len(p)-1]
		d.ext = sample{t: endP.T, v: endP.V, m: endP.V}
		sw := d.makeSwing(d.mode > 0, true, gap)
		d.emit(&sw, d.ptsBuf) // makeSwing left d.seg's points there
	}
	d.mode = 0
	d.seg.reset()
	d.tail.reset()
}

// Swings returns the swings confirmed so far (for tests and debugging).
func (d *Detector) Swings() []Swing { return d.swings }

// levelAt is the fire voltage from the samples at the starting level (the last one is the
// onset): a straight line through them, weighted by the samples each point stands for,
// evaluated at the onset. On a flat top that is their mean (the noise averaged away); on
// a charge still rising steeply it is the last sample's level, not the mean of a rising
// stretch, which would read low by half the rise across it.
func levelAt(pts []Point) float64 {
	n := len(pts)
	if n == 1 {
		return pts[0].V
	}
	var sw, st, sv float64
	for _, p := range pts {
		w := float64(p.N)
		sw += w
		st += w * p.T
		sv += w * p.V
	}
	mt, mv := st/sw, sv/sw
	var stt, stv float64
	for _, p := range pts {
		w := float64(p.N)
		stt += w * (p.T - mt) * (p.T - mt)
		stv += w * (p.T - mt) * (p.V - mv)
	}
	if !(stt > 0) {
		return mv
	}
	return mv + stv/stt*(pts[n-1].T-mt)
}
