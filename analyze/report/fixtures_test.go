package report

// Test data. Everything in this file is invented for layout tests: a deterministic
// simulation of the demo scenarios, not a measurement and not a reference. It feeds the
// report tests only; the numbers are physically plausible so that the plots look like
// the real thing, nothing more.

import (
	"capcycle/analyze/analysis"
	"math"
	"math/rand/v2"
)

func f64(v float64) *float64 { return &v }

func est(v, sd float64, origin analysis.Origin) *analysis.Estimate {
	e := &analysis.Estimate{Value: v, Origin: origin}
	if sd > 0 {
		e.SD = f64(sd)
		e.Lo95, e.Hi95 = f64(v-1.96*sd), f64(v+1.96*sd)
	}
	return e
}

// spreadEst is a mean measured over n cycles, as the analysis writes one: SD the
// cycle-to-cycle spread, the 95 % interval that of the mean (± 1.96 SD/√n).
func spreadEst(v, sd float64, n int) *analysis.Estimate {
	h := 1.96 * sd / math.Sqrt(float64(max(n, 1)))
	return &analysis.Estimate{Value: v, SD: f64(sd), Lo95: f64(v - h), Hi95: f64(v + h), Origin: analysis.OriginMeasured}
}

// simCircuit is the invented circuit behind the test results.
type simCircuit struct {
	capF, onV, offV, loadOhm, leakOhm, qA float64
	iscA, vocV, nVt                       float64
	light                                 func(tS float64) float64 // 0..1
}

func (c simCircuit) cellA(v, level float64) float64 {
	if level <= 0 {
		return 0
	}
	voc := c.vocV + c.nVt*math.Log(level) // Voc falls with light, logarithmically
	return math.Max(0, c.iscA*level*(1-math.Exp((v-voc)/c.nVt)))
}

// windowsill is the light on a sunny sill: up at 6 h, peak at 13 h, dark after 20 h.
func windowsill(tS float64) float64 {
	h := tS / 3600
	if h < 6 || h > 20 {
		return 0
	}
	return math.Pow(math.Sin(math.Pi*(h-6)/14), 1.5)
}

// simDay steps the circuit for durS seconds and fills a Result the way the analysis
// would: envelope, cycles, traces, segments, light.
func simDay(c simCircuit, durS float64, gap [2]float64, seed uint64) *analysis.Result {
	rng := rand.New(rand.NewPCG(seed, 7))
	r := &analysis.Result{Schema: analysis.Schema, DurationS: durS}
	const binS = 30.0
	v, on := 0.4, false
	var lastReset float64 = -1
	var fireT, fireV float64
	binMin, binMax, binT0 := math.Inf(1), math.Inf(-1), 0.0
	var samples int
	var trace *analysis.Trace
	var traceFire float64
	traceWant := map[int]bool{}
	for i := 3; i < 400; i += 31 {
		traceWant[i] = true
	}
	var pending []float64 // recent (t, v) pairs to start a trace with the charging part
	t := 0.0
	for t < durS {
		if t >= gap[0] && t < gap[1] {
			t = gap[1]
			binT0 = t
			continue
		}
		dt := 0.25
		if on || v > c.onV-0.02 {
			dt = 0.005
		}
		level := c.light(t)
		i := c.cellA(v, level) - v/c.leakOhm - c.qA
		if on {
			i -= v / c.loadOhm
		}
		v = math.Max(0, v+i/c.capF*dt)
		t += dt
		if !on && v >= c.onV {
			on, fireT, fireV = true, t, v
		} else if on && v <= c.offV {
			on = false
			cy := analysis.Cycle{Index: len(r.Cycles), FireS: fireT, FireV: fireV, ResetS: t, ResetV: v,
				PulseS: t - fireT, Kind: "full", EnergyJ: f64(0.5 * c.capF * (fireV*fireV - v*v))}
			if lastReset >= 0 {
				cy.ChargeS = f64(fireT - lastReset)
			}
			if level > 0 {
				cy.LightA = f64(c.iscA * level)
			}
			r.Cycles = append(r.Cycles, cy)
			lastReset = t
		}
		noisy := v + 0.003*rng.NormFloat64()
		samples++
		binMin, binMax = math.Min(binMin, noisy), math.Max(binMax, noisy)
		if t-binT0 >= binS {
			r.Envelope = append(r.Envelope, analysis.EnvelopePt{TS: binT0 + binS/2, MinV: binMin, MaxV: binMax})
			binMin, binMax, binT0 = math.Inf(1), math.Inf(-1), t
		}
		// Traces: keep a rolling minute of points; start a trace at a wanted fire.
		if len(pending) == 0 || t-pending[len(pending)-2] >= 0.2 {
			pending = append(pending, t, noisy)
			if len(pending) > 2*1200 {
				pending = pending[2:]
			}
		}
		if trace == nil && on && t == fireT && traceWant[len(r.Cycles)] {
			trace = &analysis.Trace{Label: "cycle"}
			traceFire = fireT
			for k := 0; k+1 < len(pending); k += 2 {
				if lastReset >= 0 && pending[k] >= lastReset {
					trace.TS = append(trace.TS, pending[k]-fireT)
					trace.V = append(trace.V, pending[k+1])
				}
			}
		} else if trace != nil {
			trace.TS = append(trace.TS, t-traceFire)
			trace.V = append(trace.V, noisy)
			if t-traceFire > 3 {
				r.Traces = append(r.Traces, *trace)
				trace = nil
			}
		}
	}
	r.Samples = samples
	if gap[1] > gap[0] {
		r.Segments = append(r.Segments, analysis.Segment{Kind: "gap", StartS: gap[0], EndS: gap[1]})
		r.Source.GapsS = gap[1] - gap[0]
	}
	for h := 0.25; h*3600 < durS; h += 0.25 {
		r.Light = append(r.Light, analysis.LightPt{TS: h * 3600, Level: c.light(h * 3600)})
	}
	return r
}

// segmentsFromCycles fills charging and firing segments between the cycles.
func segmentsFromCycles(r *analysis.Result) {
	prev := 0.0
	for _, c := range r.Cycles {
		if c.FireS-prev > 200*3600 { // never in the fixtures
			continue
		}
		r.Segments = append(r.Segments,
			analysis.Segment{Kind: "charging", StartS: prev, EndS: c.FireS, StartV: c.ResetV, EndV: c.FireV},
			analysis.Segment{Kind: "firing", StartS: c.FireS, EndS: c.ResetS, StartV: c.FireV, EndV: c.ResetV})
		prev = c.ResetS
	}
}

// cellIV traces the invented cell from 0 V to its open-circuit voltage.
func cellIV(c simCircuit, level float64) (iv [][2]float64, mppV, mppW float64) {
	voc := c.vocV + c.nVt*math.Log(level)
	for k := 0; k <= 160; k++ {
		v := voc * float64(k) / 160
		i := c.cellA(v, level)
		iv = append(iv, [2]float64{v, i})
		if v*i > mppW {
			mppV, mppW = v, v*i
		}
	}
	return iv, mppV, mppW
}

var wrenCircuit = simCircuit{capF: 0.033, onV: 2.71, offV: 1.52, loadOhm: 18, leakOhm: 120e3, qA: 1.1e-6,
	iscA: 2.2e-3, vocV: 5.1, nVt: 0.33, light: windowsill}

// wrenResult is the invented analysis of a day of "Wren", the rover on the sunny sill.
func wrenResult() *analysis.Result {
	c := wrenCircuit
	r := simDay(c, 24*3600, [2]float64{15.2 * 3600, 15.7 * 3600}, 1)
	r.Source = analysis.Source{Path: "captures/wren-sill.csv", Profile: "wren.toml", StartRFC: "2026-06-21T00:00:00+01:00",
		GapsS: r.Source.GapsS, Lost: 212, Meta: map[string]string{"board": "test fixture"}}
	segmentsFromCycles(r)
	r.Segments = append(r.Segments, analysis.Segment{Kind: "dark-decay", StartS: 20.5 * 3600, EndS: 24 * 3600, StartV: 2.3, EndV: 1.9})
	r.Noise = &analysis.Noise{RMSV: 0.0031, StepV: 0.00488}
	r.Capacitance = &analysis.Capacity{F: analysis.Estimate{Value: 0.0298, SD: f64(0.0006), Origin: "measured"}, Tol: "M"}
	r.Declared = &analysis.Declared{CapF: 0.033, CapTol: "M", OnV: 2.70, OffV: 1.55, LoadOhm: 15,
		ProbeOhm: 1.0e6, QuiescentA: 1e-6, VocV: 5.0, IscA: 5e-3}
	var charge, pulse []float64
	for _, cy := range r.Cycles {
		if cy.ChargeS != nil && *cy.ChargeS < 600 {
			charge = append(charge, *cy.ChargeS)
		}
		pulse = append(pulse, cy.PulseS)
	}
	r.Fit = analysis.Fit{
		Trigger: analysis.TriggerFit{Kind: "voltage", OnV: spreadEst(2.7132, 0.041, len(pulse)), OffV: spreadEst(1.5207, 0.063, len(pulse)),
			OnDriftVPerH: est(0.0021, 0.0009, "fitted"), PeriodS: spreadEst(mean(charge)+mean(pulse), 3.1, len(pulse)),
			PulseS: spreadEst(mean(pulse), 0.004, len(pulse))},
		Load: analysis.LoadFit{TauS: est(0.541, 0.012, "fitted"), Ohm: est(18.2, 0.6, "fitted"), Resistive: new(bool),
			StartOhm: est(9.4, 0.5, "fitted"), EndOhm: est(24.8, 0.9, "fitted"), RMSResidV: f64(0.018)},
		Leak: analysis.LeakFit{TauS: est(3580, 95, "fitted"), Ohm: est(121e3, 4e3, "fitted"), QuiescentA: est(1.07e-6, 0.08e-6, "fitted"),
			ProbeOhm: est(1.0e6, 0, "declared"), Method: "dark-decay"},
	}
	iv, mv, mw := cellIV(c, 0.8)
	r.Fit.Cell = analysis.CellFit{IscA: est(c.iscA*0.8, 0.00008, "fitted"), VocV: est(c.vocV+c.nVt*math.Log(0.8), 0.03, "fitted"),
		I0A: est(8.1e-10, 2e-10, "fitted"), N: est(12.8, 0.4, "fitted"), RsOhm: est(14.5, 2.1, "fitted"), RshOhm: est(41e3, 6e3, "fitted"),
		MppV: f64(mv), MppW: f64(mw), IV: iv}
	// Model trace: the same circuit, noiseless, one cycle at the brightest stretch.
	if len(r.Traces) > 0 {
		m := analysis.Trace{Label: "fitted model"}
		for k, ts := range r.Traces[len(r.Traces)/2].TS {
			if k%3 == 0 {
				m.TS = append(m.TS, ts)
			}
		}
		// a smooth curve through the middle trace: charging ramp, then the RC fall
		for _, ts := range m.TS {
			var vv float64
			if ts < 0 {
				vv = 1.52 + (2.7132-1.52)*math.Max(0, 1+ts/mean(charge))
			} else {
				vv = math.Max(1.5207, 2.7132*math.Exp(-ts/0.541))
			}
			m.V = append(m.V, vv)
		}
		r.ModelTrace = &m
	}
	// Leak trace: the evening dark decay.
	lt, lm := analysis.Trace{Label: "dark decay"}, analysis.Trace{Label: "fit"}
	for k := 0; k < 4000; k++ {
		ts := 20.5*3600 + float64(k)*3
		vv := 2.31 * math.Exp(-(ts-20.5*3600)/40000)
		lt.TS, lt.V = append(lt.TS, ts), append(lt.V, vv+0.003*math.Sin(float64(k)*1.7))
		if k%40 == 0 {
			lm.TS, lm.V = append(lm.TS, ts), append(lm.V, vv)
		}
	}
	r.LeakTrace, r.LeakModel = &lt, &lm
	// Prediction: nominal with a bias (the declared parts are off), fitted close.
	rng := rand.New(rand.NewPCG(2, 9))
	p := &analysis.Prediction{}
	var nomAbs, fitAbs []float64
	for _, cy := range r.Cycles {
		if cy.ChargeS == nil {
			continue
		}
		m := *cy.ChargeS
		n := m * (1.09 + 0.03*rng.NormFloat64())
		fv := m * (1 + 0.025*rng.NormFloat64())
		p.Cycles = append(p.Cycles, analysis.PredictedCycle{Index: cy.Index,
			Measured: analysis.CycleFigs{ChargeS: f64(m), PulseS: f64(cy.PulseS), FireV: f64(cy.FireV), ResetV: f64(cy.ResetV), EnergyJ: cy.EnergyJ},
			Nominal:  &analysis.CycleFigs{ChargeS: f64(n)},
			Fitted:   &analysis.CycleFigs{ChargeS: f64(fv)}})
		nomAbs = append(nomAbs, math.Abs(n-m)/m*100)
		fitAbs = append(fitAbs, math.Abs(fv-m)/m*100)
	}
	p.Nominal = &analysis.ErrorSummary{N: len(nomAbs), BiasPct: f64(9.02), MAPEPct: f64(mean(nomAbs)), RMSS: f64(4.4), Within10Pct: f64(0.61),
		PulseMAPEPct: f64(21.3), EnergyMAPEPct: f64(12.8)}
	p.Fitted = &analysis.ErrorSummary{N: len(fitAbs), BiasPct: f64(-0.31), MAPEPct: f64(mean(fitAbs)), RMSS: f64(1.2), Within10Pct: f64(0.998),
		PulseMAPEPct: f64(3.9), EnergyMAPEPct: f64(2.2)}
	r.Prediction = p
	r.Findings = []analysis.Finding{
		{Code: "motor-load", Severity: "info", Message: "The discharge is not exponential: the load behaves like a motor spinning up.",
			Numbers: map[string]float64{"start_ohm": 9.4, "end_ohm": 24.8}},
		{Code: "cap-below-nominal", Severity: "warn", Message: "The storage capacitor measures 9.7 % below its declared value.",
			Suggestion: "Within its M tolerance, but an aged electrolytic loses capacitance first; note it and measure again in a month.",
			Numbers:    map[string]float64{"declared_f": 0.033, "measured_f": 0.0298, "diff_pct": -9.7}},
	}
	return r
}

// wrenAfterResult is Wren after a part change: a 47 mF capacitor in place of the 33 mF
// one, recorded from 10:00 to 16:00. Only what the comparison page uses is filled in.
func wrenAfterResult() *analysis.Result {
	c := wrenCircuit
	c.capF = 0.047
	c.light = func(tS float64) float64 { return windowsill(tS + 10*3600) }
	r := simDay(c, 6*3600, [2]float64{}, 5)
	r.Source = analysis.Source{Path: "captures/wren-sill-47m.csv", Profile: "wren-47m.toml"}
	var charge, pulse []float64
	for _, cy := range r.Cycles {
		if cy.ChargeS != nil {
			charge = append(charge, *cy.ChargeS)
		}
		pulse = append(pulse, cy.PulseS)
	}
	r.Capacitance = &analysis.Capacity{F: analysis.Estimate{Value: 0.0452, SD: f64(0.0009), Origin: "measured"}, Tol: "M"}
	r.Fit = analysis.Fit{
		Trigger: analysis.TriggerFit{Kind: "voltage", OnV: spreadEst(2.7118, 0.045, len(pulse)), OffV: spreadEst(1.5231, 0.060, len(pulse)),
			PeriodS: spreadEst(mean(charge)+mean(pulse), 2.2, len(pulse)), PulseS: spreadEst(mean(pulse), 0.005, len(pulse))},
		Load: analysis.LoadFit{TauS: est(0.823, 0.015, "fitted"), Ohm: est(18.0, 0.5, "fitted")},
		Leak: analysis.LeakFit{TauS: est(5350, 150, "fitted"), Ohm: est(118e3, 4e3, "fitted"), QuiescentA: est(1.12e-6, 0.09e-6, "fitted")},
	}
	r.Fit.Cell = analysis.CellFit{IscA: est(2.01e-3, 0.00009, "fitted"), VocV: est(5.05, 0.03, "fitted")}
	r.Findings = []analysis.Finding{}
	return r
}

var fernCircuit = simCircuit{capF: 0.1, onV: 2.70, offV: 1.6, loadOhm: 40, leakOhm: 20e3, qA: 1.5e-6,
	iscA: 0.35e-3, vocV: 4.4, nVt: 0.3,
	// shaded north window: dull, nearly even light all day
	light: func(tS float64) float64 { return 0.33 + 0.01*math.Sin(2*math.Pi*tS/(12*3600)) }}

// fernResult is the invented analysis of "Fern", the chime in the shaded north window:
// it charges and stalls below its trigger.
func fernResult() *analysis.Result {
	c := fernCircuit
	r := simDay(c, 12*3600, [2]float64{}, 3)
	r.Source = analysis.Source{Path: "captures/fern-north.csv", Profile: "fern.toml", StartRFC: "2026-11-02T06:00:00Z"}
	r.Segments = append(r.Segments, analysis.Segment{Kind: "charging", StartS: 0, EndS: 3 * 3600, StartV: 0.4, EndV: 2.29},
		analysis.Segment{Kind: "plateau", StartS: 3 * 3600, EndS: 12 * 3600, StartV: 2.29, EndV: 2.31})
	r.Noise = &analysis.Noise{RMSV: 0.0028, StepV: 0.00488}
	r.Declared = &analysis.Declared{CapF: 0.1, CapTol: "Z", OnV: 2.70, OffV: 1.6, VocV: 4.4, IscA: 1e-3}
	r.Capacitance = &analysis.Capacity{F: analysis.Estimate{Value: 0.1, Origin: "declared"}, Tol: "Z"}
	r.EquilibriumV = est(2.314, 0.006, "fitted")
	r.Equilibrium = &analysis.Settling{Within1PctS: f64(2.6 * 3600), TauS: est(2050, 80, "fitted")}
	r.Fit.Trigger.Kind = "unknown"
	r.Fit.Leak = analysis.LeakFit{TauS: est(2050, 80, "fitted"), Ohm: est(20.5e3, 0.8e3, "fitted"), QuiescentA: est(1.4e-6, 0.3e-6, "fitted"), Method: "plateau"}
	iv, mv, mw := cellIV(c, 0.33)
	r.Fit.Cell = analysis.CellFit{IscA: est(c.iscA*0.33, 0.000004, "fitted"), VocV: est(c.vocV+c.nVt*math.Log(0.33), 0.04, "fitted"),
		MppV: f64(mv), MppW: f64(mw), IV: iv}
	lt, lm := analysis.Trace{Label: "plateau approach"}, analysis.Trace{Label: "fit"}
	for k := 0; k < 1080; k++ {
		ts := 1800 + float64(k)*10
		vv := 2.314 - 1.6*math.Exp(-(ts-1800)/2050)
		lt.TS, lt.V = append(lt.TS, ts), append(lt.V, vv+0.0028*math.Sin(float64(k)*2.3))
		if k%25 == 0 {
			lm.TS, lm.V = append(lm.TS, ts), append(lm.V, vv)
		}
	}
	r.LeakTrace, r.LeakModel = &lt, &lm
	r.Notes = []string{"no fire: the trigger's on and off voltages and the load cannot be fitted"}
	r.Findings = []analysis.Finding{{Code: "never-reaches-trigger", Severity: "fault",
		Message:    "The voltage levels off at 2.31 V, 0.39 V short of the 2.70 V trigger, so the chime never fires.",
		Suggestion: "Give the cell more light, or cut the leakage: at this light the 20.5 kΩ leak takes 113 µA at the plateau, more than the cell gives above 2.3 V.",
		Numbers:    map[string]float64{"equilibrium_v": 2.314, "on_v": 2.70, "leak_ohm": 20.5e3}}}
	return r
}

// sparseResult has samples and nothing else: every section must say its data is absent.
func sparseResult() *analysis.Result {
	return &analysis.Result{Schema: analysis.Schema, Samples: 1200, DurationS: 600,
		Source: analysis.Source{Path: "captures/short.csv"}}
}

func mean(v []float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	var s float64
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}
