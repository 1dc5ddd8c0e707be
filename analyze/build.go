package analyze

import (
	"fmt"
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
	"capcycle/logger/capture"
)

// finish closes the stream and assembles the Result. r may be nil (samples in memory).
func (a *session) finish(r *capture.Reader) *analysis.Result {
	sum := a.det.Finish()
	res := &analysis.Result{
		Schema:    analysis.Schema,
		Samples:   sum.Samples,
		DurationS: sum.EndS - sum.StartS,
		Cycles:    []analysis.Cycle{},
		Segments:  []analysis.Segment{},
		Findings:  []analysis.Finding{},
		Fit:       analysis.Fit{Trigger: analysis.TriggerFit{Kind: analysis.TriggerKind(sum.Trigger)}},
	}
	if sum.Samples == 0 {
		res.DurationS = 0
	}
	b := &builder{a: a, sum: sum, res: res, opts: a.opts, info: a.col.info}
	b.source(r)
	b.noise()
	b.cycles()
	b.segments(r)
	b.trigger()
	b.leakTau()
	b.capacitance()
	b.energy()
	b.load()
	b.leak()
	b.equilibrium()
	b.cell()
	b.envelope()
	b.traces()
	res.CycleDensity = a.col.dens.result(a.det)
	b.declared()
	b.identifiability()
	return res
}

type builder struct {
	a    *session
	sum  *detect.Summary
	res  *analysis.Result
	opts *Options
	info []swingInfo

	capF    float64 // the capacitance used: measured, else declared; 0 unknown
	tauLeak float64 // total dark-decay time constant, 0 unknown
	drift   float64 // constant drain over C (V/s) from the decay fit; NaN unknown

	leakDriftSD float64
}

func (b *builder) swing(i int) (*detect.Swing, *swingInfo) {
	var inf *swingInfo
	if i >= 0 && i < len(b.info) {
		inf = &b.info[i]
	} else {
		inf = &swingInfo{}
	}
	return &b.sum.Swings[i], inf
}

func (b *builder) source(r *capture.Reader) {
	s := &b.res.Source
	s.Path = b.opts.Path
	if p := b.opts.Profile; p != nil {
		s.Profile = p.Name
	}
	if r == nil {
		return
	}
	if m := r.Meta(); len(m) > 0 {
		s.Meta = m
		if s.Profile == "" {
			s.Profile = m[capture.KeyProfile]
		}
	}
	if st, ok := r.Start(); ok {
		s.StartRFC = st.UTC().Format(capture.TimeLayout)
	}
	s.Lost = int(r.Lost())
}

func (b *builder) noise() {
	if b.sum.Samples < 3 {
		return
	}
	b.res.Noise = &analysis.Noise{RMSV: b.sum.NoiseV, StepV: b.sum.StepV}
	switch {
	case b.sum.StepV == 0:
	case b.a.stepOrigin != "":
		b.res.Noise.StepOrigin = b.a.stepOrigin
	default:
		b.res.Noise.StepOrigin = analysis.StepEstimated
	}
}

func (b *builder) cycles() {
	for k, c := range b.sum.Cycles {
		cy := analysis.Cycle{Index: k, FireS: c.FireS, FireV: c.FireV, ResetS: c.ResetS, ResetV: c.ResetV,
			PulseS: c.PulseS(), Kind: analysis.CycleFull}
		if c.Chatter {
			cy.Kind = analysis.CycleChatter
		}
		if !math.IsNaN(c.ChargeS) {
			cy.ChargeS = ptr(c.ChargeS)
		}
		b.res.Cycles = append(b.res.Cycles, cy)
	}
}

func (b *builder) segments(r *capture.Reader) {
	segs := b.sum.Segments
	if r != nil {
		var ev []detect.Segment
		for _, g := range r.Gaps() {
			if g.EndS <= g.StartS || covered(segs, g.StartS, g.EndS) {
				continue
			}
			ev = append(ev, detect.Segment{Kind: detect.KindGap, StartS: g.StartS, EndS: g.EndS})
		}
		segs = detect.Carve(segs, ev)
	}
	for _, s := range segs {
		b.res.Segments = append(b.res.Segments, analysis.Segment{Kind: analysis.SegmentKind(s.Kind), StartS: s.StartS, EndS: s.EndS, StartV: s.StartV, EndV: s.EndV})
		if s.Kind == detect.KindGap {
			b.res.Source.GapsS += s.EndS - s.StartS
		}
	}
}

func covered(segs []detect.Segment, t0, t1 float64) bool {
	for _, s := range segs {
		if s.Kind == detect.KindGap && s.StartS <= t0+1e-9 && s.EndS >= t1-1e-9 {
			return true
		}
	}
	return false
}

// full returns the cycles that are not chatter.
func (b *builder) full() []detect.Cycle {
	var out []detect.Cycle
	for _, c := range b.sum.Cycles {
		if !c.Chatter {
			out = append(out, c)
		}
	}
	return out
}

// trigger: on_v and off_v are the mean fire and reset voltages of the full cycles; their
// SD is the cycle-to-cycle standard deviation and Lo95/Hi95 the 95 % interval of the mean.
func (b *builder) trigger() {
	cs := b.full()
	tf := &b.res.Fit.Trigger
	if len(cs) == 0 {
		return
	}
	var fv, rv, ft, per, pul []float64
	for k, c := range cs {
		fv = append(fv, c.FireV)
		rv = append(rv, c.ResetV)
		ft = append(ft, c.FireS/3600)
		pul = append(pul, c.PulseS())
		if k > 0 && c.ChargeS == c.ChargeS { // a charge time: no gap or slow fall between
			per = append(per, c.FireS-cs[k-1].FireS)
		}
	}
	tf.OnV = spread(fv, analysis.OriginMeasured)
	tf.OffV = spread(rv, analysis.OriginMeasured)
	tf.PulseS = spread(pul, analysis.OriginMeasured)
	if len(per) > 0 {
		tf.PeriodS = spread(per, analysis.OriginMeasured)
	}
	if len(fv) >= 5 && (ft[len(ft)-1]-ft[0]) > 0 {
		if l := fitLine(ft, fv); l.ok {
			tf.OnDriftVPerH = est(l.b, l.bSD, analysis.OriginFitted)
		}
	}
}

// leakTau finds the total time constant of the slow decays (all drains together), which
// needs no capacitance. Decays are the falls that are not fires.
func (b *builder) leakTau() {
	b.drift = math.NaN()
	var taus, sds, drifts, dsds []float64
	dusk := 0
	for i := range b.sum.Swings {
		s, inf := b.swing(i)
		if s.Up || s.Fire || s.Noise || !inf.exp.ok || inf.exp.n < 8 || b.inCalibration(s) {
			continue
		}
		taus = append(taus, inf.exp.tau)
		sds = append(sds, inf.exp.tauSD)
		drifts = append(drifts, inf.exp.drift)
		dsds = append(dsds, inf.exp.driftSD)
		if late := inf.exp.t0 - s.OnsetS; late > 0.1*s.FallS() {
			dusk++
		}
	}
	lf := &b.res.Fit.Leak
	if dusk > 0 {
		b.note(fmt.Sprintf("%d of %d decays sped up before they slowed (the light still fading): the leak is fitted from where the fall stopped speeding up", dusk, len(taus)))
	}
	if len(taus) > 0 {
		m, se := combine(taus, sds)
		lf.TauS = est(m, se, analysis.OriginFitted)
		lf.Method = analysis.LeakDarkDecay
		b.tauLeak = m
		dm, dse := combine(drifts, dsds)
		b.drift = dm
		b.leakDriftSD = dse
		return
	}
	// No dark decay: the approach to a plateau.
	for i := range b.sum.Swings {
		s, inf := b.swing(i)
		if !s.Up || !inf.exp.ok || inf.exp.n < 8 || inf.exp.vinf <= s.StartV || b.inCalibration(s) {
			continue
		}
		taus = append(taus, inf.exp.tau)
		sds = append(sds, inf.exp.tauSD)
	}
	if len(taus) > 0 {
		m, se := combine(taus, sds)
		lf.TauS = est(m, se, analysis.OriginFitted)
		lf.Method = analysis.LeakPlateau
		b.tauLeak = m
	}
}

// inCalibration reports whether a swing overlaps the calibration stretch, whose decay
// runs through the known resistor and is no leak.
func (b *builder) inCalibration(s *detect.Swing) bool {
	o := b.opts
	return b.a.cal.on && s.EndS > o.Declared.Calibration.StartS && s.StartS < o.Declared.Calibration.EndS
}

// capacitance: measured from the calibration stretch when there is one, else from the
// load-current channel at every fire, else declared.
func (b *builder) capacitance() {
	o := b.opts
	w := &b.a.cal
	if w.on && len(w.t) >= 8 {
		e := fitExp(w.t, w.v, b.sum.NoiseV)
		if e.ok {
			// 1/tau = 1/(R_cal C) + 1/tau_leak
			g := 1 / e.tau
			if b.tauLeak > 0 {
				g -= 1 / b.tauLeak
			}
			if g > 0 {
				c := 1 / (g * o.Declared.Calibration.ResistorOhm)
				b.capF = c
				b.res.Capacitance = &analysis.Capacity{F: *est(c, c*e.tauSD/e.tau, analysis.OriginMeasured), Method: analysis.CapCalibrationRes}
				return
			}
		}
		b.note("the calibration stretch did not give a capacitance (no clean exponential decay)")
	}
	if full := b.full(); b.a.chg != nil && len(full) > 0 {
		var cs []float64
		for _, cy := range full {
			if _, inf := b.swing(cy.Swing); inf.capF > 0 {
				cs = append(cs, inf.capF)
			}
		}
		if len(cs) >= 3 {
			// The median of the pulses, its SE that of a median of normal scatter
			// (1.2533 sd/√n).
			c := median(cs)
			sd := 1.2533 * sdOfSlice(cs) / math.Sqrt(float64(len(cs)))
			b.capF = c
			b.res.Capacitance = &analysis.Capacity{F: *est(c, sd, analysis.OriginMeasured), Method: analysis.CapCurrentChannel, Pulses: len(cs)}
			return
		}
		b.note(fmt.Sprintf("the load-current column gave a capacitance on %d of %d fires, fewer than the 3 needed", len(cs), len(full)))
	}
	if o.capKnown() {
		b.capF = o.Declared.CapF
		origin := o.Declared.CapOrigin
		if origin == "" {
			origin = analysis.OriginDeclared
		}
		b.res.Capacitance = &analysis.Capacity{F: analysis.Estimate{Value: o.Declared.CapF, Origin: origin}, Tol: o.Declared.CapTol}
	}
}

// energy is ½C(fire_v² − reset_v²) per cycle, when the capacitance is known.
func (b *builder) energy() {
	if b.capF <= 0 {
		return
	}
	for i := range b.res.Cycles {
		c := &b.res.Cycles[i]
		c.EnergyJ = ptr(0.5 * b.capF * (c.FireV*c.FireV - c.ResetV*c.ResetV))
	}
}

// load: the pulse's exponential approach, per full cycle, combined by inverse-variance
// weights (the SE widened by the Birge ratio when the cycles scatter more than their
// errors say).
func (b *builder) load() {
	var taus, sds, rms, early, late []float64
	var runs, runsVar float64
	nBig, n := 0, 0
	for _, c := range b.full() {
		_, inf := b.swing(c.Swing)
		if !inf.exp.ok {
			continue
		}
		n++
		taus = append(taus, inf.exp.tau)
		sds = append(sds, inf.exp.tauSD)
		rms = append(rms, inf.exp.rms)
		runs += inf.exp.runs - inf.exp.runsMean
		runsVar += inf.exp.runsVar
		if inf.exp.rms > 3e-4*inf.fallV {
			nBig++
		}
		// The effective resistance R = V / I with C dV/dt = I_cell - I: the cell's current
		// (and the slow drains) taken as they were just before the fire, from the
		// charging slope there. Needs no model of the load.
		if c.Swing > 0 && b.capF > 0 {
			pre := b.sum.Swings[c.Swing-1].EndSlopeVPerS
			if b.sum.Swings[c.Swing-1].Up && !math.IsNaN(pre) {
				i1 := b.capF * (pre - inf.earlySlope)
				i2 := b.capF * (pre - inf.lateSlope)
				if i1 > 0 && i2 > 0 && !math.IsNaN(i1+i2) {
					early = append(early, inf.earlyV/i1)
					late = append(late, inf.lateV/i2)
				}
			}
		}
	}
	lf := &b.res.Fit.Load
	if n == 0 {
		if len(b.full()) > 0 {
			b.note("the pulses have too few samples (fewer than 5) for the load's time constant")
		}
		return
	}
	m, se := combineScale(taus, sds)
	// The joint fit of all the pulses gives the value; its standard error is the larger
	// of its own and that of the pulses' scatter (a motor's pulses differ from light to
	// light, which no shared time constant describes).
	swings := make(map[int]bool, n)
	for _, c := range b.full() {
		swings[c.Swing] = true
	}
	if jt, jse, ok := jointTau(&b.a.col.pool, swings, m); ok {
		m, se = jt, math.Max(jse, se)
	}
	lf.TauS = est(m, se, analysis.OriginFitted)
	lf.RMSResidV = ptr(median(rms))
	// Not a resistor when the residuals of the exponential are systematic: far fewer
	// sign runs than chance gives, pooled over all fitted pulses (z below -4), and
	// large enough to matter in most pulses (over 0.03 % of the fall; a noise-free
	// trace shows systematic residuals of the integrator alone, some 1e-6 of the fall).
	z := 0.0
	if runsVar > 0 {
		z = runs / math.Sqrt(runsVar)
	}
	resistive := !(z < -4 && 2*nBig > n)
	lf.Resistive = &resistive
	if b.capF > 0 {
		// R_pulse = tau/C is the load in parallel with the slow drains; take those out.
		r := m / b.capF
		rsd := se / b.capF
		if b.tauLeak > 0 && b.res.Fit.Leak.Method == analysis.LeakDarkDecay {
			rl := b.tauLeak / b.capF
			if rl > r {
				r2 := 1 / (1/r - 1/rl)
				rsd *= r2 / r * r2 / r
				r = r2
			}
		}
		lf.Ohm = est(r, rsd, analysis.OriginFitted)
		if len(early) > 0 {
			lf.StartOhm = spread(early, analysis.OriginMeasured)
			lf.EndOhm = spread(late, analysis.OriginMeasured)
		}
	}
}

// leak: the decay's time constant and constant part; with C, ohms and amperes, the
// probe's known share taken out.
func (b *builder) leak() {
	lf := &b.res.Fit.Leak
	if lf.TauS == nil {
		return
	}
	if b.opts.Declared.ProbeOhm > 0 {
		lf.ProbeOhm = &analysis.Estimate{Value: b.opts.Declared.ProbeOhm, Origin: analysis.OriginDeclared}
	}
	b.leakPlot()
	if b.capF <= 0 {
		return
	}
	rt := lf.TauS.Value / b.capF
	rtsd := sdOf(lf.TauS) / b.capF
	if b.opts.Declared.ProbeOhm > 0 {
		if rt >= b.opts.Declared.ProbeOhm*0.999 {
			b.note("the probe divider alone explains the decay: no further leakage resistance is seen")
		} else {
			r := 1 / (1/rt - 1/b.opts.Declared.ProbeOhm)
			lf.Ohm = est(r, rtsd*(r/rt)*(r/rt), analysis.OriginFitted)
		}
	} else {
		lf.Ohm = est(rt, rtsd, analysis.OriginFitted)
	}
	if lf.Method == analysis.LeakDarkDecay && !math.IsNaN(b.drift) {
		if b.drift >= 0 {
			lf.QuiescentA = est(b.drift*b.capF, b.leakDriftSD*b.capF, analysis.OriginFitted)
		} else {
			b.note("the decays level off above zero: some light or charge was still arriving, so the quiescent current is not determined")
		}
	}
}

func (b *builder) leakPlot() {
	var best *keptSwing
	for k := range b.a.col.decay {
		d := &b.a.col.decay[k]
		s := &b.sum.Swings[d.index]
		if s.Fire || !b.info[d.index].exp.ok {
			continue
		}
		if best == nil || d.dur > best.dur {
			best = d
		}
	}
	if best == nil {
		return
	}
	e := b.info[best.index].exp
	s := &b.sum.Swings[best.index]
	tr := &analysis.Trace{Label: "decay", TS: []float64{}, V: []float64{}}
	md := &analysis.Trace{Label: "fit", TS: []float64{}, V: []float64{}}
	// Only the fitted stretch (see darkPart): before it the light was still fading, after
	// it the capacitor sat at its floor.
	for _, p := range compact(best.pts, 400) {
		if t := float64(p.t); t < s.OnsetS || t < e.t0 || t > e.t1 {
			continue
		}
		tr.TS = append(tr.TS, float64(p.t)-s.OnsetS)
		tr.V = append(tr.V, float64(p.v))
		md.TS = append(md.TS, float64(p.t)-s.OnsetS)
		md.V = append(md.V, e.at(float64(p.t)))
	}
	b.res.LeakTrace, b.res.LeakModel = tr, md
}

// equilibrium: when the capture ends on a rise that levels off below the trigger (or
// there are no fires at all), the asymptote of its exponential approach.
func (b *builder) equilibrium() {
	sw := b.sum.Swings
	if len(sw) == 0 {
		return
	}
	i := len(sw) - 1
	s, inf := b.swing(i)
	if !s.Up || !inf.exp.ok {
		return
	}
	e := inf.exp
	span := s.EndS - s.StartS
	if !(e.vinf > s.StartV) || e.tau > 3*span {
		return // still rising steadily: where it would settle is not determined
	}
	if on := b.res.Fit.Trigger.OnV; on != nil && e.vinf >= on.Value {
		return // it is heading for the trigger, not settling
	}
	b.res.EquilibriumV = est(e.vinf, e.vinfSD, analysis.OriginFitted)
	st := &analysis.Settling{TauS: est(e.tau, e.tauSD, analysis.OriginFitted)}
	if d := math.Abs(e.v0 - e.vinf); d > 0 && e.vinf != 0 {
		w := e.tau * math.Log(d/(0.01*math.Abs(e.vinf)))
		st.Within1PctS = ptr(math.Max(w, 0))
	}
	b.res.Equilibrium = st
}

// cell: capacitive-load I-V tracing. I/C = dV/dt + V/tau_leak + drift on each rise; with
// C known, I = C times that, and the single-diode fit on the rise in the brightest light
// over a good span (see ivRank). When that fit fails, Isc from a straight line through the
// traced points extrapolated to 0 V (lineIsc). Per cycle, the cell's short-circuit
// current (or Isc/C) is the light level.
func (b *builder) cell() {
	// The drains over C: the fitted dark decay when there is one, else the probe's known
	// share alone (when C and the probe are known).
	drains := func(v float64) float64 {
		d := 0.0
		switch {
		case b.tauLeak > 0 && b.res.Fit.Leak.Method == analysis.LeakDarkDecay:
			d += v / b.tauLeak
			if !math.IsNaN(b.drift) && b.drift > 0 {
				d += b.drift
			}
		case b.capF > 0 && b.opts.Declared.ProbeOhm > 0:
			d += v / (b.opts.Declared.ProbeOhm * b.capF)
		}
		return d
	}
	type riseIV struct {
		idx  int
		v, i []float64 // volts, and I (A) or I/C (V/s)
		t    float64
	}
	var rises []riseIV
	widest := -1
	for idx := range b.sum.Swings {
		s, inf := b.swing(idx)
		if !s.Up || len(inf.iv) < 3 {
			continue
		}
		r := riseIV{idx: idx, t: (s.StartS + s.EndS) / 2}
		for _, p := range inf.iv {
			ic := p.dvdt + drains(p.v)
			if b.capF > 0 {
				ic *= b.capF
			}
			r.v = append(r.v, p.v)
			r.i = append(r.i, ic)
		}
		rises = append(rises, r)
		if idx == b.a.col.widest && len(b.a.col.widestIV) > 0 {
			widest = len(rises) - 1
		}
	}
	if len(rises) == 0 {
		return
	}
	cf := &b.res.Fit.Cell
	var d diodeResult
	var ln ivLine
	if widest >= 0 {
		w := rises[widest]
		if col := b.a.col; len(col.widestIV) > 0 && col.widest == w.idx {
			w.v, w.i = nil, nil
			for _, p := range col.widestIV {
				ic := p.dvdt + drains(p.v)
				if b.capF > 0 {
					ic *= b.capF
				}
				w.v = append(w.v, p.v)
				w.i = append(w.i, ic)
			}
		}
		if b.capF > 0 {
			for k := range w.v {
				cf.IV = append(cf.IV, [2]float64{w.v[k], w.i[k]})
			}
			ns := max(1, b.opts.Declared.CellSeries)
			tk := b.opts.Declared.CellTempK
			if tk <= 0 {
				tk = 298.15
			}
			d = fitDiode(w.v, w.i, ns, tk)
		}
		if d.ok {
			// Isc = Iph Rsh/(Rs + Rsh) minus a diode current that is nil at 0 V for any
			// real cell: its SE is taken as the photocurrent's.
			cf.IscA = est(d.isc, d.sd.Iph, analysis.OriginFitted)
			cf.VocV = est(d.voc, math.NaN(), analysis.OriginFitted)
			cf.MppV, cf.MppW = ptr(d.vmp), ptr(d.pmp)
			if d.partial {
				// The solver stopped short: take Isc, Voc and the maximum power point from
				// the traced points themselves (see ivEnds).
				isc, voc, vmp, pmp := ivEnds(w.v, w.i)
				cf.IscA = est(isc, math.NaN(), analysis.OriginMeasured)
				cf.VocV = est(voc, math.NaN(), analysis.OriginMeasured)
				cf.MppV, cf.MppW = ptr(vmp), ptr(pmp)
				ln = lineIsc(w.v, w.i) // the light levels: the stopped solver's cell is no guide
				b.note("the cell looks near-ideal (series resistance near 0, shunt near infinite): Isc, Voc and the maximum power point come from the traced curve; Rs, Rsh, I0 and n are not determined")
			} else {
				cf.I0A = est(d.p.I0, d.sd.I0, analysis.OriginFitted)
				cf.N = est(d.p.N, d.sd.N, analysis.OriginFitted)
				cf.RsOhm = est(d.p.Rs, d.sd.Rs, analysis.OriginFitted)
				cf.RshOhm = est(d.p.Rsh, d.sd.Rsh, analysis.OriginFitted)
			}
		} else {
			ln = lineIsc(w.v, w.i)
			if ln.ok && b.capF > 0 {
				cf.IscA = est(ln.isc, ln.iscSD, analysis.OriginFitted)
			}
			b.note(ln.note(b.capF > 0))
		}
	}
	// The light level of each rise: its short-circuit current, from the fitted cell with
	// the photocurrent that puts the rise's points on its curve, or else its mean traced
	// current scaled as the traced line's Isc is to the mean current of the rise it was
	// drawn through (the curve's shape taken to scale with the light; a slope carried
	// over from one rise to all would put its error into every faint one); the mean
	// traced current only when neither is known.
	level := make([]float64, len(rises))
	top := 0.0
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
	byRise := map[int]int{}
	for k, r := range rises {
		byRise[r.idx] = k
	}
	for ci := range b.res.Cycles {
		c := &b.sum.Cycles[ci]
		if k, ok := byRise[c.Swing-1]; ok && !math.IsNaN(level[k]) {
			b.res.Cycles[ci].LightA = ptr(level[k])
		}
	}
	// The light trace, at most 2000 points (averaged in runs).
	step := (len(rises) + 1999) / 2000
	for k := 0; k < len(rises); k += step {
		j := min(len(rises), k+step)
		var t, l, nl float64
		for q := k; q < j; q++ {
			t += rises[q].t
			if !math.IsNaN(level[q]) {
				l += level[q]
				nl++
			}
		}
		if nl == 0 {
			continue
		}
		n := float64(j - k)
		pt := analysis.LightPt{TS: t / n}
		if top > 0 {
			pt.Level = l / nl / top
		}
		pt.FiresH = b.firesPerHour(rises[k].t, rises[j-1].t)
		b.res.Light = append(b.res.Light, pt)
	}
}

// ivLine is a straight line I = isc + slope V through traced I-V points.
type ivLine struct {
	ok           bool
	isc, iscSD   float64
	slope        float64
	vLo, vHi     float64 // the voltages it rests on
	iHi          float64 // the traced current at the highest traced voltage
	meanI        float64 // the mean traced current of all the points
	changing     bool    // the current rises with the voltage: the light changed
	iLo          float64 // with changing: the current at vLo
	lowerOnly    bool    // the upper third bent away and was left out
	points, used int
}

// lineIsc fits a robust straight line to the traced points (volts, current) and takes its
// value at 0 V as Isc, with the SE of the intercept. Well below Voc a cell's curve is
// nearly straight (the shunt's slope); when the line through the lower two thirds of the
// points (by voltage) disagrees with the one through all of them by more than 3 combined
// SEs, the curve bends towards Voc in the upper third, and the lower line is used.
func lineIsc(v, i []float64) ivLine {
	n := len(v)
	out := ivLine{points: n}
	if n < 3 {
		return out
	}
	idx := make([]int, n)
	for k := range idx {
		idx[k] = k
	}
	sort.Slice(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	sub := func(m int) ([]float64, []float64) {
		xs, ys := make([]float64, m), make([]float64, m)
		for k := 0; k < m; k++ {
			xs[k], ys[k] = v[idx[k]], i[idx[k]]
		}
		return xs, ys
	}
	xs, ys := sub(n)
	if k, lo, hi := risingCurrent(ys); k >= 0 {
		out.changing, out.vLo, out.vHi, out.iLo, out.iHi = true, xs[1], xs[k], lo, hi
		return out
	}
	l := fitLine(xs, ys)
	if !l.ok {
		return out
	}
	m := n
	if lo := (2*n + 2) / 3; lo >= 4 && lo < n {
		xl, yl := sub(lo)
		if l2 := fitLine(xl, yl); l2.ok && math.Abs(l2.a-l.a) > 3*math.Hypot(l.aSD, l2.aSD) {
			l, m, out.lowerOnly = l2, lo, true
		}
	}
	if math.IsNaN(l.a) || math.IsNaN(l.aSD) {
		return out
	}
	out.ok, out.isc, out.iscSD, out.slope, out.used = true, l.a, l.aSD, l.b, m
	out.vLo, out.vHi = xs[0], xs[m-1]
	out.iHi = i[idx[n-1]] // the traced current at the highest voltage
	out.meanI = meanOf(i)
	return out
}

// risingCurrent looks, in currents ordered by voltage, for a 3-point running mean more
// than 10 % above the first one (the lowest voltages): a cell under steady light gives
// less current at a higher voltage, never more, so such a rise was traced while the light
// grew (a slow charge through a morning). It returns the centre of the highest running
// mean and the two means, or k = -1 when the currents do not rise.
func risingCurrent(i []float64) (k int, first, top float64) {
	if len(i) < 6 {
		return -1, 0, 0
	}
	run := func(c int) float64 { return (i[c-1] + i[c] + i[c+1]) / 3 }
	first, top, k = run(1), run(1), 1
	for c := 2; c+1 < len(i); c++ {
		if m := run(c); m > top {
			top, k = m, c
		}
	}
	if !(first > 0) || top <= 1.1*first {
		return -1, 0, 0
	}
	return k, first, top
}

// note says what the line determines and what it does not.
func (l ivLine) note(amps bool) string {
	what := "Isc"
	if !amps {
		what = "Isc/C"
	}
	if l.changing {
		return fmt.Sprintf("the traced current rises with the voltage (%.3g to %.3g from %.3g to %.3g V): the light grew while the rise was traced, so its points are no I-V curve; Isc, Voc and the diode parameters are not determined, and each cycle's light level is its mean charging current", l.iLo, l.iHi, l.vLo, l.vHi)
	}
	if !l.ok {
		return "the traced I-V points do not determine the single-diode model, nor a straight line to 0 V: Isc and Voc are not determined"
	}
	s := fmt.Sprintf("the traced I-V points (%.3g to %.3g V) do not determine the single-diode model: %s is the current of a straight line through %d of them extrapolated to 0 V", l.vLo, l.vHi, what, l.used)
	if l.lowerOnly {
		s += " (the lower two thirds; the curve bends above)"
	}
	s += "; Voc, the maximum power point and the diode parameters (I0, n, Rs, Rsh) are not determined"
	if l.isc > 0 && l.iHi > 0.8*l.isc {
		s += ": the traced voltages never go near open circuit (the current at the top of the trace is still within 20 % of Isc)"
	}
	return s
}

// ivEnds extends a straight line through the first three traced points (in order of
// voltage) to V = 0 for Isc, finds Voc from the exponential rise of the diode current
// (a straight line in ln(Isc - I)), and the traced point of most power.
func ivEnds(v, i []float64) (isc, voc, vmp, pmp float64) {
	n := len(v)
	isc, voc = math.NaN(), math.NaN()
	if n < 3 {
		return
	}
	line := func(a, b int) (slope, at0 float64) {
		x, y := v[a:b], i[a:b]
		mx, my := meanOf(x), meanOf(y)
		var sxy, sxx float64
		for k := range x {
			sxy += (x[k] - mx) * (y[k] - my)
			sxx += (x[k] - mx) * (x[k] - mx)
		}
		if sxx == 0 {
			return math.NaN(), math.NaN()
		}
		slope = sxy / sxx
		return slope, my - slope*mx
	}
	_, isc = line(0, 3)
	// Near-ideal diode: Isc - I = I0 exp(V/a), so ln(Isc - I) is a straight line in V;
	// Voc is where it reaches ln(Isc). Points where the diode takes over 5 % of Isc.
	var xs, ys []float64
	for k := range v {
		if d := isc - i[k]; d > 0.05*isc {
			xs = append(xs, v[k])
			ys = append(ys, math.Log(d))
		}
	}
	if len(xs) >= 3 {
		mx, my := meanOf(xs), meanOf(ys)
		var sxy, sxx float64
		for k := range xs {
			sxy += (xs[k] - mx) * (ys[k] - my)
			sxx += (xs[k] - mx) * (xs[k] - mx)
		}
		if sxx > 0 && sxy > 0 {
			slope := sxy / sxx
			voc = mx + (math.Log(isc)-my)/slope
		}
	}
	for k := range v {
		if p := v[k] * i[k]; p > pmp {
			vmp, pmp = v[k], p
		}
	}
	return
}

// firesPerHour counts full fires in [t0 - 1800, t1 + 1800] s, per hour of capture there.
func (b *builder) firesPerHour(t0, t1 float64) float64 {
	lo, hi := math.Max(b.sum.StartS, t0-1800), math.Min(b.sum.EndS, t1+1800)
	if hi <= lo {
		return 0
	}
	cs := b.sum.Cycles
	i := sort.Search(len(cs), func(i int) bool { return cs[i].FireS >= lo })
	j := sort.Search(len(cs), func(i int) bool { return cs[i].FireS > hi })
	n := 0
	for k := i; k < j; k++ {
		if !cs[k].Chatter {
			n++
		}
	}
	return float64(n) / (hi - lo) * 3600
}

func (b *builder) envelope() {
	for _, bin := range b.a.env.Bins() {
		b.res.Envelope = append(b.res.Envelope, analysis.EnvelopePt{TS: (bin.StartS + bin.EndS) / 2, MinV: bin.MinV, MaxV: bin.MaxV})
	}
}

// traces: up to five typical full cycles spread over the capture, time relative to the
// fire: from 1.5 median charge times before the fire to 4 median pulse lengths after it
// (the charge, the pulse and the start of the recharge at a scale that suits them).
// Typical means a charge time within 25 % of the median (widened to a factor of 2, then
// to any known charge time, when too few are that close), so neither the first charge
// of the day from empty nor the first after a dark stretch or a gap is drawn.
func (b *builder) traces() {
	cs := b.full()
	if len(cs) == 0 {
		return
	}
	var charges, pulses []float64
	for _, c := range cs {
		pulses = append(pulses, c.PulseS())
		if !math.IsNaN(c.ChargeS) {
			charges = append(charges, c.ChargeS)
		}
	}
	medPulse := median(pulses)
	pick := cs
	before := math.Inf(1)
	if len(charges) > 0 {
		med := median(charges)
		before = 1.5 * med
		for _, f := range []float64{1.25, 2, math.Inf(1)} {
			var near []detect.Cycle
			for _, c := range cs {
				if !math.IsNaN(c.ChargeS) && c.ChargeS <= f*med && c.ChargeS >= med/f {
					near = append(near, c)
				}
			}
			if len(near) >= min(5, len(charges)) {
				pick = near
				break
			}
		}
	}
	after := math.Inf(1)
	if medPulse > 0 {
		after = 4 * medPulse
	}
	k := min(5, len(pick))
	for j := 0; j < k; j++ {
		c := pick[0]
		if k > 1 {
			c = pick[j*(len(pick)-1)/(k-1)]
		}
		tr := analysis.Trace{Label: "cycle", TS: []float64{}, V: []float64{}}
		for idx := c.Swing - 3; idx <= c.Swing+1; idx++ {
			if idx < 0 || idx >= len(b.info) {
				continue
			}
			for _, p := range b.info[idx].trace {
				t := float64(p.t) - c.FireS
				if t < -before || t > after {
					continue
				}
				if n := len(tr.TS); n > 0 && t <= tr.TS[n-1] {
					continue
				}
				tr.TS = append(tr.TS, t)
				tr.V = append(tr.V, float64(p.v))
			}
		}
		b.res.Traces = append(b.res.Traces, tr)
	}
}

// declared keeps the declared circuit for the parameter table, when anything is declared.
func (b *builder) declared() {
	if d := b.opts.Declared; !d.IsZero() {
		b.res.Declared = &d
	}
}

func (b *builder) identifiability() {
	if b.capF <= 0 {
		b.note("the capacitance is not known: only time constants (tau_s) and currents over C (V/s) are determined; resistances, currents and energies are null")
	} else if b.res.Capacitance != nil && b.res.Capacitance.F.Origin != analysis.OriginMeasured {
		b.note("resistances, currents and energies use the " + string(b.res.Capacitance.F.Origin) + " capacitance, not a measured one")
	}
	if b.res.Fit.Leak.Method == analysis.LeakPlateau {
		b.note("no dark decay: the leak time constant is that of the approach to the plateau, which includes the cell's own slope")
	}
	if len(b.res.Cycles) == 0 && b.sum.Samples > 0 {
		b.note("no fires were found")
	}
}

func (b *builder) note(s string) { b.res.Notes = append(b.res.Notes, s) }

// combine is the inverse-variance weighted mean of xs (SDs sds), its SE widened by the
// Birge ratio sqrt(chi2/(n-1)) when the values scatter more than their SEs say. Values
// without a usable SD are averaged plainly, with the SE from their spread.
// combineScale combines positive estimates of a scale (a time constant) whose standard
// errors grow in proportion to them, as a fit's do: in logarithms, each weighted by its
// relative error. Weighting the values themselves by 1/sd² would favour the pulses whose
// noise happened to make the estimate small (their sd is small with it) and so bias the
// mean low.
func combineScale(xs, sds []float64) (mean, se float64) {
	ls, lsds := make([]float64, len(xs)), make([]float64, len(xs))
	for k, x := range xs {
		if !(x > 0) {
			return combine(xs, sds)
		}
		ls[k], lsds[k] = math.Log(x), sds[k]/x
	}
	m, s := combine(ls, lsds)
	mean = math.Exp(m)
	return mean, mean * s
}

func combine(xs, sds []float64) (mean, se float64) {
	var sw, swx float64
	ok := true
	for k, x := range xs {
		s := sds[k]
		if !(s > 0) || math.IsInf(s, 0) {
			ok = false
			break
		}
		w := 1 / (s * s)
		sw += w
		swx += w * x
	}
	if !ok || sw == 0 {
		m := meanOf(xs)
		return m, sdOfSlice(xs) / math.Sqrt(float64(len(xs)))
	}
	mean = swx / sw
	se = math.Sqrt(1 / sw)
	if len(xs) > 1 {
		var chi float64
		for k, x := range xs {
			chi += (x - mean) * (x - mean) / (sds[k] * sds[k])
		}
		if r := chi / float64(len(xs)-1); r > 1 {
			se *= math.Sqrt(r)
		}
	}
	return mean, se
}

// spread is the mean of xs with the SD across them, and the 95 % interval of the mean.
func spread(xs []float64, origin analysis.Origin) *analysis.Estimate {
	if len(xs) == 0 {
		return nil
	}
	m := meanOf(xs)
	e := &analysis.Estimate{Value: m, Origin: origin}
	if len(xs) > 1 {
		s := sdOfSlice(xs)
		e.SD = ptr(s)
		h := 1.96 * s / math.Sqrt(float64(len(xs)))
		e.Lo95, e.Hi95 = ptr(m-h), ptr(m+h)
	}
	return e
}

// est makes an Estimate; an SD that is NaN or negative is left null. The 95 % interval
// is value ± 1.96 SD.
func est(v, sd float64, origin analysis.Origin) *analysis.Estimate {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	e := &analysis.Estimate{Value: v, Origin: origin}
	if sd >= 0 && !math.IsInf(sd, 0) {
		e.SD = ptr(sd)
		e.Lo95, e.Hi95 = ptr(v-1.96*sd), ptr(v+1.96*sd)
	}
	return e
}

func sdOf(e *analysis.Estimate) float64 {
	if e == nil || e.SD == nil {
		return math.NaN()
	}
	return *e.SD
}

func meanOf(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

func sdOfSlice(x []float64) float64 {
	if len(x) < 2 {
		return math.NaN()
	}
	m := meanOf(x)
	var s float64
	for _, v := range x {
		s += (v - m) * (v - m)
	}
	return math.Sqrt(s / float64(len(x)-1))
}

func scale(x []float64, k float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = v * k
	}
	return out
}

func ptr(v float64) *float64 { return &v }
