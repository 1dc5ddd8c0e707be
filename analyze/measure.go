package analyze

import (
	"fmt"
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect"
	"capcycle/analyze/screen"
	"capcycle/logger/capture"
)

// finish closes the stream and assembles the Result: the events and segments the
// detector found, then each measured quantity in turn. Each measurement is one function
// that takes what it rests on and returns its estimate, so the order below is the order
// of the data: the slow decays give the leak's time constant, which the capacitance (a
// calibration decay) and the load (the drains taken out of a pulse) need; the capacitance
// turns time constants into ohms and currents over C into amperes for the load, the leak
// and the cell. r may be nil (samples in memory).
func (s *session) finish(r *capture.Reader) *analysis.Result {
	scr := s.scr.Finish()
	sum := s.det.Finish()
	placeEvents(sum, s.col.info)
	w := &swings{sum: sum, info: s.col.info, col: s.col, cal: &s.cal, chg: s.chg, opts: s.opts}
	res := &analysis.Result{
		Schema:    analysis.Schema,
		Samples:   sum.Samples,
		DurationS: sum.EndS - sum.StartS,
		Findings:  []analysis.Finding{},
	}
	if sum.Samples == 0 {
		res.DurationS = 0
	}
	var n notes
	d := &s.opts.Declared
	res.Source = sourceOf(s.opts, r)
	res.Noise = noiseOf(sum, s.stepOrigin)
	res.Screen = screenOf(scr, &n)
	res.Cycles = cyclesOf(sum)
	res.Segments, res.Source.GapsS = segmentsOf(sum, r)
	res.Fit.Trigger = measureTrigger(sum.Trigger, w.full(), s.col.info, sum.SpacingS)
	checkTriggerKind(&res.Fit.Trigger, &sum.Evidence, d.TriggerKind)
	decay := measureDecay(w, &n)
	res.Capacitance = measureCapacitance(w, d, decay, &n)
	capF := 0.0
	if res.Capacitance != nil {
		capF = res.Capacitance.F.Value
	}
	setEnergy(res.Cycles, capF)
	plateauThreshold(&res.Fit.Trigger, res.Cycles, w, capF)
	motion := classifyPulses(w)
	res.Fit.Load = measureLoad(w, capF, decay, motion.skip(), &n)
	motion.apply(res.Cycles, w, &res.Fit.Load)
	measureESR(w, res.Cycles, &res.Fit.Load)
	res.Fit.Leak = measureLeak(decay, capF, d.ProbeOhm, &n)
	if res.Fit.Leak.TauS != nil {
		res.LeakTrace, res.LeakModel = leakPlot(w)
	}
	res.EquilibriumV, res.Equilibrium = measureEquilibrium(w, res.Fit.Trigger.OnV, &n)
	cell := measureCell(w, cellInputs{capF: capF, decay: decay, probeOhm: d.ProbeOhm, series: d.CellSeries, tempK: d.CellTempK}, &n)
	res.Fit.Cell = cell.fit
	if relu, ok := capRelU(res.Capacitance); ok {
		capBudget(res, relu, !capMeasured(res.Capacitance))
	}
	cell.lightPerCycle(res.Cycles, sum.Cycles)
	res.Light = cell.lightTrace(sum)
	res.Envelope = envelopeOf(s.env)
	res.Traces = traces(w)
	res.CycleDensity = s.col.dens.result(s.det)
	if !d.IsZero() {
		dd := *d
		res.Declared = &dd
	}
	res.Notes = identifiability(n, res, sum.Samples, capF)
	return res
}

// swings is the read-only view of the stream that the measurements share: the
// detector's summary, what the collector kept of each swing, the calibration stretch and
// the load-current log.
type swings struct {
	sum  *detect.Summary
	info []swingInfo
	col  *collector
	cal  *calWindow
	chg  *chargeLog // nil without a current channel
	opts *Options
}

// at returns swing i and what was kept of it (an empty record when nothing was).
func (w *swings) at(i int) (*detect.Swing, *swingInfo) {
	var inf *swingInfo
	if i >= 0 && i < len(w.info) {
		inf = &w.info[i]
	} else {
		inf = &swingInfo{}
	}
	return &w.sum.Swings[i], inf
}

// full returns the cycles that are not chatter.
func (w *swings) full() []detect.Cycle {
	var out []detect.Cycle
	for _, c := range w.sum.Cycles {
		if !c.Chatter {
			out = append(out, c)
		}
	}
	return out
}

// inCalibration reports whether a swing overlaps the calibration stretch, whose decay
// runs through the known resistor and is no leak.
func (w *swings) inCalibration(s *detect.Swing) bool {
	c := w.opts.Declared.Calibration
	return w.cal.on && c != nil && s.EndS > c.StartS && s.StartS < c.EndS
}

// screenOf reports what the screen took out before detection (nil when nothing).
func screenOf(s screen.Summary, n *notes) *analysis.Screen {
	if s.Wild == 0 && s.Held == nil {
		return nil
	}
	out := &analysis.Screen{Rows: s.Samples, Wild: s.Wild}
	if s.Wild > 0 {
		out.FirstWildS = ptr(s.FirstWildS)
		n.add(fmt.Sprintf("%d wild sample(s) (not a number, or an absurd jump that came straight back) were dropped before the analysis", s.Wild))
	}
	if h := s.Held; h != nil {
		out.Held = &analysis.Held{Repeat: h.Repeat, FastRuns: h.FastRuns, LoggedSpacingS: h.LoggedSpacingS,
			EffectiveSpacingS: h.EffectiveSpacingS, Dropped: h.Dropped}
		n.add(fmt.Sprintf("the samples are a held-value staircase (each value about %.3g times): only the first of each was analysed, at the effective spacing of %.3g s", h.Repeat, h.EffectiveSpacingS))
	}
	return out
}

// notes collect, in words, what the capture could and could not determine.
type notes []string

func (n *notes) add(s string) { *n = append(*n, s) }

func sourceOf(o *Options, r *capture.Reader) analysis.Source {
	s := analysis.Source{Path: o.Path}
	if p := o.Profile; p != nil {
		s.Profile = p.Name
	}
	if r == nil {
		return s
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
	s.OriginS = r.OriginS()
	for _, w := range r.Warnings() {
		s.Warnings = append(s.Warnings, w.Error())
	}
	s.WarningCount = r.WarningCount()
	if p := r.Picked(); p.Volt != "" && !p.Standard() {
		s.Columns = &analysis.Columns{Time: p.Time, Volt: p.Volt, Current: p.Current,
			TimeScale: p.TimeScale, VoltScale: p.VoltScale, CurrentScale: p.CurrentScale}
	}
	return s
}

func noiseOf(sum *detect.Summary, origin analysis.StepOrigin) *analysis.Noise {
	if sum.Samples < 3 {
		return nil
	}
	n := &analysis.Noise{RMSV: sum.NoiseV, StepV: sum.StepV}
	switch {
	case sum.StepV == 0:
	case origin != analysis.StepNone:
		n.StepOrigin = origin
	default:
		n.StepOrigin = analysis.StepEstimated
	}
	return n
}

func cyclesOf(sum *detect.Summary) []analysis.Cycle {
	out := make([]analysis.Cycle, 0, len(sum.Cycles))
	for k, c := range sum.Cycles {
		cy := analysis.Cycle{Index: k, FireS: c.FireS, FireV: c.FireV, ResetS: c.ResetS, ResetV: c.ResetV,
			PulseS: c.PulseS(), Kind: analysis.CycleFull}
		if c.Chatter {
			cy.Kind = analysis.CycleChatter
		}
		if !math.IsNaN(c.ChargeS) {
			cy.ChargeS = ptr(c.ChargeS)
		}
		out = append(out, cy)
	}
	return out
}

// segmentsOf returns the detector's segments with the capture's gap lines carved in,
// and the total time inside gaps.
func segmentsOf(sum *detect.Summary, r *capture.Reader) ([]analysis.Segment, float64) {
	segs := sum.Segments
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
	out := make([]analysis.Segment, 0, len(segs))
	gaps := 0.0
	for _, s := range segs {
		out = append(out, analysis.Segment{Kind: analysis.SegmentKind(s.Kind), StartS: s.StartS, EndS: s.EndS, StartV: s.StartV, EndV: s.EndV})
		if s.Kind == detect.KindGap {
			gaps += s.EndS - s.StartS
		}
	}
	return out, gaps
}

func covered(segs []detect.Segment, t0, t1 float64) bool {
	for _, s := range segs {
		if s.Kind == detect.KindGap && s.StartS <= t0+1e-9 && s.EndS >= t1-1e-9 {
			return true
		}
	}
	return false
}

// setEnergy sets ½C(fire_v² − reset_v²) on every cycle, when the capacitance is known.
func setEnergy(cs []analysis.Cycle, capF float64) {
	if capF <= 0 {
		return
	}
	for i := range cs {
		c := &cs[i]
		c.EnergyJ = ptr(0.5 * capF * (c.FireV*c.FireV - c.ResetV*c.ResetV))
	}
}

// identifiability adds to the measurements' notes what the capture cannot tell.
func identifiability(n notes, res *analysis.Result, samples int, capF float64) []string {
	if capF <= 0 {
		n.add("the capacitance is not known: only time constants (tau_s) and currents over C (V/s) are determined; resistances, currents and energies are null")
	} else if res.Capacitance != nil && res.Capacitance.F.Origin != analysis.OriginMeasured {
		n.add("resistances, currents and energies use the " + string(res.Capacitance.F.Origin) + " capacitance, not a measured one")
	}
	if res.Fit.Leak.Method == analysis.LeakPlateau {
		n.add("no dark decay: the leak time constant is that of the approach to the plateau, which includes the cell's own slope")
	}
	if len(res.Cycles) == 0 && samples > 0 {
		n.add("no fires were found")
	}
	return n
}
