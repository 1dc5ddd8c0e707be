package logger

// DriftFit estimates how fast the board's clock runs against the host's from pairs
// (device time, host arrival time), by least squares, pooled over segments: each segment
// (a board reset, a reconnect) has its own intercept and all share one slope,
//
//	slope = sum over segments of Sxy / sum over segments of Sxx
//
// with Sxx and Sxy the centred sums of the segment (computed by Welford-style updates,
// so that hours of seconds do not lose precision). The drift is 1/slope - 1: positive
// when the board clock runs fast. Arrival jitter (USB frames, scheduling) averages out
// over a long fit; it is common practice, no source, to want an hour or more for ppm.
//
// The zero value is ready; call NewSegment at each discontinuity of the device clock.
type DriftFit struct {
	n, points int
	mx, my    float64 // means of the current segment
	sxx, sxy  float64 // centred sums of the current segment
	done      struct{ sxx, sxy float64 }
	x0, lastX float64 // first and last x of the current segment
	spanX     float64 // fitted span of the earlier segments
}

// NewSegment starts a new segment: later points get their own intercept.
func (d *DriftFit) NewSegment() {
	d.done.sxx += d.sxx
	d.done.sxy += d.sxy
	if d.n > 0 {
		d.spanX += d.lastSpan()
	}
	d.n, d.mx, d.my, d.sxx, d.sxy = 0, 0, 0, 0, 0
}

func (d *DriftFit) lastSpan() float64 { return d.lastX - d.x0 }

// Add adds a point: deviceS the device time and hostS the host time, both in seconds.
func (d *DriftFit) Add(deviceS, hostS float64) {
	if d.n == 0 {
		d.x0 = deviceS
	}
	d.lastX = deviceS
	d.n++
	d.points++
	dx := deviceS - d.mx
	dy := hostS - d.my
	d.mx += dx / float64(d.n)
	d.my += dy / float64(d.n)
	d.sxx += dx * (deviceS - d.mx)
	d.sxy += dx * (hostS - d.my)
}

// Points is the number of points added.
func (d *DriftFit) Points() int { return d.points }

// SpanS is the device time the fit covers, summed over segments, in seconds.
func (d *DriftFit) SpanS() float64 {
	s := d.spanX
	if d.n > 0 {
		s += d.lastSpan()
	}
	return s
}

// PPM is the drift of the board clock in parts per million (positive: fast), and false
// when there are not yet two distinct device times in any segment.
func (d *DriftFit) PPM() (float64, bool) {
	sxx := d.done.sxx + d.sxx
	sxy := d.done.sxy + d.sxy
	if sxx <= 0 || sxy == 0 {
		return 0, false
	}
	slope := sxy / sxx
	return (1/slope - 1) * 1e6, true
}
