package logger

// FireDetector is a simple on-line detector of fires for the live status: a fire is a
// fall of the capacitor voltage by more than max(MinDropV, DropFrac*peak) within
// MaxFallS of the highest voltage since the reference was set; the firing ends when the
// voltage rises again by RiseV from its lowest point. It is deliberately simple (the
// analyser finds cycles properly afterwards); it only has to count them for a person.
//
// The zero value uses the defaults documented on each field.
type FireDetector struct {
	MinDropV float64 // least fall that counts as a fire; default 0.3 V
	DropFrac float64 // or this fraction of the peak, whichever is larger; default 0.2
	MaxFallS float64 // the fall must happen within this time of the peak; default 2 s
	RiseV    float64 // rise from the trough that ends a firing; default 0.02 V

	started       bool
	firing        bool
	peakV, peakT  float64
	lowV          float64
	cycles        int
	lastFire      float64
	lastPeriod    float64
	havePeriod    bool
	lastV, lastTS float64
}

func (d *FireDetector) defaults() (minDrop, frac, maxFall, rise float64) {
	minDrop, frac, maxFall, rise = d.MinDropV, d.DropFrac, d.MaxFallS, d.RiseV
	if minDrop <= 0 {
		minDrop = 0.3
	}
	if frac <= 0 {
		frac = 0.2
	}
	if maxFall <= 0 {
		maxFall = 2
	}
	if rise <= 0 {
		rise = 0.02
	}
	return
}

// Add feeds one sample (time in seconds, volts) and reports whether it completed a fire.
func (d *FireDetector) Add(t, v float64) (fired bool) {
	minDrop, frac, maxFall, rise := d.defaults()
	d.lastV, d.lastTS = v, t
	if !d.started {
		d.started = true
		d.peakV, d.peakT = v, t
		return false
	}
	if d.firing {
		if v < d.lowV {
			d.lowV = v
		} else if v > d.lowV+rise {
			d.firing = false
			d.peakV, d.peakT = v, t
		}
		return false
	}
	if v >= d.peakV {
		d.peakV, d.peakT = v, t
		return false
	}
	drop := max(minDrop, frac*d.peakV)
	if d.peakV-v > drop && t-d.peakT <= maxFall {
		d.firing = true
		d.lowV = v
		if d.cycles > 0 {
			d.lastPeriod, d.havePeriod = t-d.lastFire, true
		}
		d.cycles++
		d.lastFire = t
		return true
	}
	if t-d.peakT > maxFall {
		d.peakV, d.peakT = v, t // a slow fall (leakage) is not a fire: restart the reference
	}
	return false
}

// Firing is true from a fire until the voltage starts rising again.
func (d *FireDetector) Firing() bool { return d.firing }

// Cycles is the number of fires seen.
func (d *FireDetector) Cycles() int { return d.cycles }

// LastPeriod is the time between the last two fires, in seconds.
func (d *FireDetector) LastPeriod() (float64, bool) { return d.lastPeriod, d.havePeriod }
