package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
)

// cellInputs are what the cell's tracing rests on: the capacitance (0: unknown, and the
// currents are then over C, in V/s), the decay (its drains are added back to the traced
// current), the probe's resistance, and the panel's cells in series and temperature.
type cellInputs struct {
	capF     float64
	decay    decayFit
	probeOhm float64
	series   int
	tempK    float64
}

// drains returns the drains over C at a voltage: the fitted dark decay when there is
// one, else the probe's known share alone (when C and the probe are known).
func (in cellInputs) drains(v float64) float64 {
	switch {
	case in.decay.dark():
		d := v / in.decay.tau
		if !math.IsNaN(in.decay.drift) && in.decay.drift > 0 {
			d += in.decay.drift
		}
		return d
	case in.capF > 0 && in.probeOhm > 0:
		return v / (in.probeOhm * in.capF)
	}
	return 0
}

// current is the cell's current at a traced point: I/C = dV/dt + drains/C, times C when
// C is known.
func (in cellInputs) current(p ivPt) float64 {
	ic := p.dvdt + in.drains(p.v)
	if in.capF > 0 {
		ic *= in.capF
	}
	return ic
}

// riseIV is one rise's traced points: volts, and I (A) or I/C (V/s).
type riseIV struct {
	idx  int
	v, i []float64
	t    float64 // the middle of the rise, s
}

// cellResult is the fitted cell and the light level of every traced rise.
type cellResult struct {
	fit   analysis.CellFit
	rises []riseIV
	level []float64 // per rise: the short-circuit current it implies (NaN: not determined)
	top   float64   // the largest level
}

// measureCell: capacitive-load I-V tracing. On each rise the cell's current is traced
// (cellInputs.current); with C known, the single-diode fit on the rise in the brightest
// light over a good span (see ivRank). When that fit fails, Isc from a straight line
// through the traced points extrapolated to 0 V (lineIsc). Per rise, the cell's
// short-circuit current (or Isc/C) is the light level.
func measureCell(w *swings, in cellInputs, n *notes) cellResult {
	var out cellResult
	widest := -1
	for idx := range w.sum.Swings {
		s, inf := w.at(idx)
		if !s.Up || len(inf.iv) < 3 {
			continue
		}
		out.rises = append(out.rises, traceRise(idx, (s.StartS+s.EndS)/2, inf.iv, in))
		if idx == w.col.widest && len(w.col.widestIV) > 0 {
			widest = len(out.rises) - 1
		}
	}
	if len(out.rises) == 0 {
		return out
	}
	var d diodeResult
	var ln ivLine
	if widest >= 0 {
		// The rise chosen for the fit, with all its traced points.
		r := out.rises[widest]
		full := traceRise(r.idx, r.t, w.col.widestIV, in)
		out.fit, d, ln = fitCell(full, in, n)
	}
	out.level, out.top = riseLevels(out.rises, d, ln)
	return out
}

func traceRise(idx int, t float64, pts []ivPt, in cellInputs) riseIV {
	r := riseIV{idx: idx, t: t, v: make([]float64, 0, len(pts)), i: make([]float64, 0, len(pts))}
	for _, p := range pts {
		r.v = append(r.v, p.v)
		r.i = append(r.i, in.current(p))
	}
	return r
}

// fitCell fits the single-diode model to one traced rise (with the capacitance known),
// else a straight line to 0 V; it returns the cell's fit and whichever of the two gives
// the light levels.
func fitCell(w riseIV, in cellInputs, n *notes) (cf analysis.CellFit, d diodeResult, ln ivLine) {
	if in.capF > 0 {
		for k := range w.v {
			cf.IV = append(cf.IV, [2]float64{w.v[k], w.i[k]})
		}
		tk := in.tempK
		if tk <= 0 {
			tk = 298.15
		}
		d = fitDiode(w.v, w.i, max(1, in.series), tk)
	}
	if !d.ok {
		ln = lineIsc(w.v, w.i)
		if ln.ok && in.capF > 0 {
			cf.IscA = est(ln.isc, ln.iscSD, analysis.OriginFitted)
		}
		n.add(ln.note(in.capF > 0))
		return cf, d, ln
	}
	// Isc = Iph Rsh/(Rs + Rsh) minus a diode current that is nil at 0 V for any real
	// cell: its SE is taken as the photocurrent's.
	cf.IscA = est(d.isc, d.sd.Iph, analysis.OriginFitted)
	cf.VocV = est(d.voc, math.NaN(), analysis.OriginFitted)
	cf.MppV, cf.MppW = ptr(d.vmp), ptr(d.pmp)
	if d.partial {
		// The solver stopped short: take Isc, Voc and the maximum power point from the
		// traced points themselves (see ivEnds).
		isc, voc, vmp, pmp := ivEnds(w.v, w.i)
		cf.IscA = est(isc, math.NaN(), analysis.OriginMeasured)
		cf.VocV = est(voc, math.NaN(), analysis.OriginMeasured)
		cf.MppV, cf.MppW = ptr(vmp), ptr(pmp)
		ln = lineIsc(w.v, w.i) // the light levels: the stopped solver's cell is no guide
		n.add("the cell looks near-ideal (series resistance near 0, shunt near infinite): Isc, Voc and the maximum power point come from the traced curve; Rs, Rsh, I0 and n are not determined")
		return cf, d, ln
	}
	cf.I0A = est(d.p.I0, d.sd.I0, analysis.OriginFitted)
	cf.N = est(d.p.N, d.sd.N, analysis.OriginFitted)
	cf.RsOhm = est(d.p.Rs, d.sd.Rs, analysis.OriginFitted)
	cf.RshOhm = est(d.p.Rsh, d.sd.Rsh, analysis.OriginFitted)
	return cf, d, ln
}

// riseLevels gives the light level of each rise: its short-circuit current, from the
// fitted cell with the photocurrent that puts the rise's points on its curve, or else
// its mean traced current scaled as the traced line's Isc is to the mean current of the
// rise it was drawn through (the curve's shape taken to scale with the light; a slope
// carried over from one rise to all would put its error into every faint one); the mean
// traced current only when neither is known.
func riseLevels(rises []riseIV, d diodeResult, ln ivLine) (level []float64, top float64) {
	level = make([]float64, len(rises))
	for k, r := range rises {
		var sum float64
		for j := range r.v {
			switch {
			case d.ok && !d.partial:
				sum += d.iscFor(d.photocurrent(r.v[j], r.i[j]))
			case ln.ok && ln.meanI > 0:
				sum += r.i[j] * ln.isc / ln.meanI
			default:
				sum += r.i[j]
			}
		}
		level[k] = sum / float64(len(r.v))
		if math.IsNaN(level[k]) || math.IsInf(level[k], 0) {
			level[k] = math.NaN() // not determined for this rise
			continue
		}
		top = math.Max(top, level[k])
	}
	return level, top
}

// lightPerCycle sets each cycle's light level: that of the rise before its fire.
func (c *cellResult) lightPerCycle(cycles []analysis.Cycle, det []detect.Cycle) {
	byRise := make(map[int]int, len(c.rises))
	for k, r := range c.rises {
		byRise[r.idx] = k
	}
	for ci := range cycles {
		if k, ok := byRise[det[ci].Swing-1]; ok && !math.IsNaN(c.level[k]) {
			cycles[ci].LightA = ptr(c.level[k])
		}
	}
}

// lightTrace is the light over the capture relative to its brightest rise, with the
// fires per hour around each point: at most 2000 points (rises averaged in runs).
func (c *cellResult) lightTrace(sum *detect.Summary) []analysis.LightPt {
	var out []analysis.LightPt
	rises := c.rises
	if len(rises) == 0 {
		return nil
	}
	step := (len(rises) + 1999) / 2000
	for k := 0; k < len(rises); k += step {
		j := min(len(rises), k+step)
		var t, l, nl float64
		for q := k; q < j; q++ {
			t += rises[q].t
			if !math.IsNaN(c.level[q]) {
				l += c.level[q]
				nl++
			}
		}
		if nl == 0 {
			continue
		}
		pt := analysis.LightPt{TS: t / float64(j-k)}
		if c.top > 0 {
			pt.Level = l / nl / c.top
		}
		pt.FiresH = firesPerHour(sum, rises[k].t, rises[j-1].t)
		out = append(out, pt)
	}
	return out
}
