package logger

import (
	"fmt"
	"math"
)

// DriftFit estimates how fast the board's clock runs against the host's from pairs
// (device time x, host arrival time y).
//
// Arrival times are late by a latency that varies (USB frames, the operating system's
// scheduling, a loaded machine) but is never negative, so the fit uses a minimum
// filter: the device time axis is cut into blocks of BlockS seconds, and only the pair
// of least lateness y-x in each block is kept. A straight line is fitted through those
// by least squares, pooled over segments: each segment (a board reset, a reconnect) has
// its own intercept and all share one slope,
//
//	slope = sum over segments of Sxy / sum over segments of Sxx
//
// with Sxx and Sxy the centred sums of a segment (updated Welford-style, so hours of
// seconds keep their precision). The drift is 1/slope - 1: positive when the board clock
// runs fast. Taking the least-delayed packet of each interval is common practice in
// clock synchronisation (no source); the block length is our choice.
//
// The zero value is ready and uses 1 s blocks; call NewSegment at each discontinuity
// of the device clock.
type DriftFit struct {
	BlockS float64 // block length in device seconds; 0 means 1 s

	// The block being filled: its start and its least-late pair.
	inBlock          bool
	blockX           float64
	bestX, bestY     float64
	points           int // pairs added
	n                int // block minima in the current segment
	mx, my, sxx, sxy float64
	doneSxx, doneSxy float64
	x0, lastX        float64 // first and last kept x of the current segment
	spanX            float64 // kept span of the earlier segments
	kept             int     // block minima over all segments
}

func (d *DriftFit) block() float64 {
	if d.BlockS > 0 {
		return d.BlockS
	}
	return 1
}

// Add adds a pair: deviceS the device time and hostS the host arrival time, in seconds.
func (d *DriftFit) Add(deviceS, hostS float64) {
	d.points++
	if d.inBlock && deviceS-d.blockX < d.block() && deviceS >= d.blockX {
		if hostS-deviceS < d.bestY-d.bestX {
			d.bestX, d.bestY = deviceS, hostS
		}
		return
	}
	d.commit()
	d.inBlock, d.blockX, d.bestX, d.bestY = true, deviceS, deviceS, hostS
}

// commit adds the current block's least-late pair to the line fit.
func (d *DriftFit) commit() {
	if !d.inBlock {
		return
	}
	d.inBlock = false
	x, y := d.bestX, d.bestY
	if d.n == 0 {
		d.x0 = x
	}
	d.lastX = x
	d.n++
	d.kept++
	dx, dy := x-d.mx, y-d.my
	d.mx += dx / float64(d.n)
	d.my += dy / float64(d.n)
	d.sxx += dx * (x - d.mx)
	d.sxy += dx * (y - d.my)
}

// NewSegment starts a new segment: later pairs get their own intercept.
func (d *DriftFit) NewSegment() {
	d.commit()
	d.doneSxx += d.sxx
	d.doneSxy += d.sxy
	if d.n > 0 {
		d.spanX += d.lastX - d.x0
	}
	d.n, d.mx, d.my, d.sxx, d.sxy = 0, 0, 0, 0, 0
}

// Points is the number of pairs added.
func (d *DriftFit) Points() int { return d.points }

// SpanS is the device time the fit covers, summed over segments, in seconds.
func (d *DriftFit) SpanS() float64 {
	c := *d
	c.commit()
	s := c.spanX
	if c.n > 0 {
		s += c.lastX - c.x0
	}
	return s
}

// PPM is the drift of the board clock in parts per million (positive: fast), and false
// while no segment has two blocks yet.
func (d *DriftFit) PPM() (float64, bool) {
	c := *d
	c.commit()
	sxx, sxy := c.doneSxx+c.sxx, c.doneSxy+c.sxy
	if sxx <= 0 || sxy == 0 {
		return 0, false
	}
	return (1/(sxy/sxx) - 1) * 1e6, true
}

// The rule for a drift worth reporting. A shorter or wilder fit says nothing about the
// board's clock, so Drift gives none.
const (
	// MinDriftSpanS is the device time the fit must cover. After the minimum filter the
	// arrival times scatter by about a millisecond (a USB frame), which over a minute
	// moves the slope by some tens of ppm: small next to the drift of a ceramic
	// resonator, and the order of a crystal's (common practice, no source).
	MinDriftSpanS = 60
	// MinDriftBlocks is the number of blocks (one least-late pair each) the fit must have.
	MinDriftBlocks = 30
	// MaxDriftPPM bounds a plausible drift: an uncalibrated RC oscillator is off by up to
	// about 10 %, crystals and resonators by far less (from memory). A fit beyond it
	// measures something else: a board whose timestamps do not follow real time (a
	// virtual board run faster than real time, a clock that stops).
	MaxDriftPPM = 100000
)

// Drift is the drift in ppm (positive: the board clock runs fast) when the fit is long
// enough to mean something: it covers at least MinDriftSpanS of device time in at least
// MinDriftBlocks blocks, and the result is within ±MaxDriftPPM. Otherwise ok is false and
// why says which part of the rule failed, in words for the user.
func (d *DriftFit) Drift() (ppm float64, ok bool, why string) {
	c := *d
	c.commit()
	span := d.SpanS()
	p, have := d.PPM()
	switch {
	case !have || span < MinDriftSpanS || c.kept < MinDriftBlocks:
		return 0, false, fmt.Sprintf("the fit covers %.0f s of the board's clock in %d blocks; a drift needs at least %d s and %d blocks",
			span, c.kept, MinDriftSpanS, MinDriftBlocks)
	case math.Abs(p) > MaxDriftPPM:
		return 0, false, fmt.Sprintf("the fit gives %+.0f ppm, beyond the %d ppm a board's clock can be off: its timestamps do not follow real time",
			p, MaxDriftPPM)
	}
	return p, true, ""
}
