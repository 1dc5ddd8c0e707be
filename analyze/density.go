package analyze

import (
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
)

// density accumulates every cycle of a capture, aligned at its fire, into a fixed grid of
// time since the fire × voltage, while the capture streams: its memory does not grow with
// the number of cycles.
//
// The time axis is logarithmic (densityColsPerDecade columns a decade, from 100 µs to
// about 28 h), so the pulse (milliseconds) and the recharge (seconds to hours) both get
// columns of their own. A cycle runs from its fire (the fall's onset) through the fall and
// the rise after it, up to the next swing; in each column it adds one count, at the mean
// of its points there, so a column's counts are the cycles that reached that time.
//
// Which falls are fires is only decided when the capture ends (detect's Finish: the falls
// whose implied time constant sits in the faster of two groups at least a factor of 8
// apart, and that fall at least 3 times faster than the charging beside them). So each
// fall's cycle goes into the grid of its time-constant class (a factor of 2 wide): a gap
// of a factor of 8 never splits a class, and result adds up the classes below the cut
// that Finish draws. The local tests (noise, the size of the swing, the rate against the
// rise) are made as each fall arrives. Memory: one grid per class in use (a handful).
type density struct {
	vTop    float64               // the top of the voltage axis: a power of two
	classes map[int]*densityClass // by floor(log2 of the implied time constant)
	pend    *densityPending       // a fall waiting for the swing after it
	spare   *densityPending       // the last one, for reuse
	last    detect.Swing          // the swing before this one
	hasLast bool
}

const (
	densityColsPerDecade = 20
	densityDecades       = 9
	densityCols          = densityColsPerDecade * densityDecades
	densityRows          = 64
	densityLogT0         = -4.0 // log10 of the lower edge of column 0, seconds
)

type densityClass struct {
	n            int     // falls in the class (fire or not), for the cut
	loLog, hiLog float64 // smallest and largest ln(implied time constant)
	cycles       int     // the falls that passed the local tests and are counted
	counts       []uint32
}

type densityPending struct {
	sw        detect.Swing
	before    detect.Swing // the swing before the fall, when hasBefore
	hasBefore bool
	cols      [densityCols][2]float64
	tau       float64 // implied time constant; 0: not a fire candidate
}

// add takes one swing as the detector confirms it (the collector's onSwing).
func (d *density) add(det *detect.Detector, s *detect.Swing, pts []detect.Point) {
	if d.pend != nil {
		if s.Up && !d.pend.sw.Gap {
			d.fill(&d.pend.cols, d.pend.sw.OnsetS, pts)
		}
		d.commit(det, s)
	}
	before, hasBefore := d.last, d.hasLast
	d.last, d.hasLast = *s, true
	if s.Up {
		return
	}
	p := d.spare
	if p == nil {
		p = new(densityPending)
	}
	d.spare = nil
	*p = densityPending{sw: *s, before: before, hasBefore: hasBefore}
	if s.AmplitudeV() >= det.MinSwingV() && !(s.LevelBeforeV-s.LevelAfterV < 0.5*det.MinSwingV()) {
		fall := math.Max(s.FallS(), math.Max(det.SpacingS(), 1e-12))
		p.tau = fall * math.Max(math.Abs(s.StartV), s.AmplitudeV()) / s.AmplitudeV()
	}
	if p.tau > 0 && s.OnsetIndex < len(pts) {
		d.fill(&p.cols, s.OnsetS, pts[s.OnsetIndex:])
	}
	d.pend = p
}

// fill adds pts (time relative to fire) to the column sums in cols.
func (d *density) fill(cols *[densityCols][2]float64, fire float64, pts []detect.Point) {
	for _, p := range pts {
		k := densityCol(p.T - fire)
		if k < 0 {
			continue
		}
		cols[k][0] += p.V
		cols[k][1]++
	}
}

func densityCol(dt float64) int {
	if !(dt > 0) {
		return -1 // the onset itself: at time zero, off the log axis
	}
	k := int(math.Floor((math.Log10(dt) - densityLogT0) * densityColsPerDecade))
	return max(0, min(densityCols-1, k))
}

// commit files the pending fall; next is the swing after it (nil at the end).
func (d *density) commit(det *detect.Detector, next *detect.Swing) {
	p := d.pend
	d.pend, d.spare = nil, p
	if p.tau <= 0 || p.sw.Open {
		return
	}
	lt := math.Log(p.tau)
	key := int(math.Floor(lt / math.Ln2))
	if d.classes == nil {
		d.classes = map[int]*densityClass{}
	}
	c := d.classes[key]
	if c == nil {
		c = &densityClass{loLog: lt, hiLog: lt}
		d.classes[key] = c
	}
	c.n++
	c.loLog, c.hiLog = math.Min(c.loLog, lt), math.Max(c.hiLog, lt)
	// The rise that sets the pace (detect's classify): the one before, else the one after.
	var ref *detect.Swing
	if b := &p.before; p.hasBefore && b.Up && !b.Gap {
		ref = b
	} else if next != nil && next.Up && !p.sw.Gap {
		ref = next
	}
	if ref != nil {
		rr := ref.AmplitudeV() / math.Max(ref.DurationS(), 1e-12)
		fall := math.Max(p.sw.FallS(), math.Max(det.SpacingS(), 1e-12))
		if !(p.sw.AmplitudeV()/fall > 3*rr && p.sw.FallS() < ref.DurationS()) {
			return
		}
	}
	c.cycles++
	if c.counts == nil {
		c.counts = make([]uint32, densityCols*densityRows)
	}
	for k, cv := range p.cols {
		if cv[1] > 0 {
			d.put(c, k, cv[0]/cv[1])
		}
	}
}

// put adds one count at column k and voltage v, doubling the voltage axis (merging rows
// pairwise in every class) until v fits.
func (d *density) put(c *densityClass, k int, v float64) {
	if d.vTop == 0 {
		d.vTop = math.Pow(2, math.Ceil(math.Log2(math.Max(math.Abs(v), 1.0/64))))
	}
	for v >= d.vTop {
		d.vTop *= 2
		for _, o := range d.classes {
			if o.counts == nil {
				continue
			}
			for col := range densityCols {
				row := o.counts[col*densityRows : (col+1)*densityRows]
				for r := range densityRows / 2 {
					row[r] = row[2*r] + row[2*r+1]
				}
				clear(row[densityRows/2:])
			}
		}
	}
	r := int(math.Floor(v / d.vTop * densityRows))
	r = max(0, min(densityRows-1, r))
	c.counts[k*densityRows+r]++
}

// result closes the stream and returns the grid of the fires (nil without any): the
// classes at or below the cut between fast and slow falls, as detect's classify draws it.
func (d *density) result(det *detect.Detector) *analysis.CycleDensity {
	if d.pend != nil {
		d.commit(det, nil)
	}
	keys := make([]int, 0, len(d.classes))
	for k := range d.classes {
		keys = append(keys, k)
	}
	sort.Ints(keys)
	cut, best := math.Inf(1), 0.0
	for j := 1; j < len(keys); j++ {
		a, b := d.classes[keys[j-1]], d.classes[keys[j]]
		if g := b.loLog - a.hiLog; g > best {
			best = g
			if g >= math.Log(8) {
				cut = (a.hiLog + b.loLog) / 2
			}
		}
	}
	sum := make([]uint32, densityCols*densityRows)
	n := 0
	for _, k := range keys {
		c := d.classes[k]
		if c.hiLog > cut || c.counts == nil {
			continue
		}
		n += c.cycles
		for i, x := range c.counts {
			sum[i] += x
		}
	}
	if n == 0 {
		return nil
	}
	return densityOut(sum, n, d.vTop)
}

// densityOut crops the grid to the columns and rows that hold counts.
func densityOut(sum []uint32, n int, vTop float64) *analysis.CycleDensity {
	c0, c1, r1 := densityCols, -1, 0
	for k := range densityCols {
		for r := range densityRows {
			if sum[k*densityRows+r] > 0 {
				c0, c1, r1 = min(c0, k), max(c1, k), max(r1, r)
			}
		}
	}
	out := &analysis.CycleDensity{
		Cycles:        n,
		T0S:           math.Pow(10, densityLogT0+float64(c0)/densityColsPerDecade),
		ColsPerDecade: densityColsPerDecade,
		VStepV:        vTop / densityRows,
	}
	for k := c0; k <= c1; k++ {
		col := make([]int, r1+1)
		for r := range col {
			col[r] = int(sum[k*densityRows+r])
		}
		out.Counts = append(out.Counts, col)
	}
	return out
}
