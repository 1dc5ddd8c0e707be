package predict

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/stats"
)

// Fitted returns a copy of the nominal circuit with every part the analysis measured put
// in its place, and the list of the parts it replaced (e.g. "trigger.on_v", "leak.ohm").
// Parts the analysis could not determine (null in the Result) keep their declared value.
func Fitted(nominal *model.Circuit, r *analysis.Result) (*model.Circuit, []string) {
	c := *nominal
	var replaced []string
	set := func(name string, dst *float64, e *analysis.Estimate, conv func(float64) float64) {
		if e == nil || !(e.Value > 0) || math.IsInf(e.Value, 0) {
			return
		}
		v := e.Value
		if conv != nil {
			v = conv(v)
		}
		if v > 0 {
			*dst = v
			replaced = append(replaced, name)
		}
	}
	if r.Capacitance != nil && r.Capacitance.F.Origin == "measured" {
		set("storage.cap_f", &c.Storage.CapF, &r.Capacitance.F, nil)
	}
	ft := r.Fit.Trigger
	switch c.Trigger.Kind {
	case model.TriggerVoltage, model.TriggerPlateau:
		set("trigger.on_v", &c.Trigger.OnV, ft.OnV, nil)
		set("trigger.off_v", &c.Trigger.OffV, ft.OffV, nil)
		if c.Trigger.OffV >= c.Trigger.OnV {
			c.Trigger.OffV, c.Trigger.OnV = nominal.Trigger.OffV, nominal.Trigger.OnV
		}
	case model.TriggerHold:
		// The supervisor watches the hold capacitor, one diode drop below the node; its
		// release stays its own hysteresis below its threshold.
		set("trigger.on_v", &c.Trigger.OnV, ft.OnV, func(v float64) float64 { return v - c.Trigger.DiodeV })
		c.Trigger.OffV = c.Trigger.OnV - (nominal.Trigger.OnV - nominal.Trigger.OffV)
	case model.TriggerTimer:
		set("trigger.period_s", &c.Trigger.PeriodS, ft.PeriodS, nil)
		set("trigger.pulse_s", &c.Trigger.PulseS, ft.PulseS, nil)
	}
	if c.Load.Kind == model.LoadResistor {
		set("load.ohm", &c.Load.Ohm, r.Fit.Load.Ohm, nil)
	}
	if lk, ok := fittedLeak(&c, r); ok {
		c.Storage.LeakOhm = lk
		replaced = append(replaced, "leak.ohm")
	}
	cf := r.Fit.Cell
	if cf.I0A != nil && cf.N != nil && cf.IscA != nil {
		cell := c.Cell
		ref := cell.RefWm2
		if ref == 0 {
			ref = model.RefIrradianceWm2
		}
		// The fitted cell is known at the light of the fit only. Voltage alone cannot tell a
		// dimmer light from a smaller cell, so the difference from the declared cell's
		// short-circuit current is put down to the light: the fit was made at
		// g_fit = ref·Isc_fit/Isc_nominal, and the fitted cell's photocurrent at the
		// reference is Isc_fit·ref/g_fit. Light levels then read the same in W/m² for the
		// nominal and the fitted circuit (a cell fitted in shade at 200 W/m² must not make
		// the measured light 1000 W/m²).
		cell.IphA = cf.IscA.Value
		if iscNom := nominal.Cell.Current(0, ref); iscNom > 0 {
			gFit := cf.IscA.Value / iscNom * ref
			cell.IphA = cf.IscA.Value * ref / gFit
		}
		cell.RefWm2 = ref
		cell.I0A = cf.I0A.Value
		cell.N = cf.N.Value // per cell; the analysis used the profile's cells in series
		if cf.RsOhm != nil {
			cell.RsOhm = cf.RsOhm.Value
		}
		if cf.RshOhm != nil {
			cell.RshOhm = cf.RshOhm.Value
		}
		if cell.IphA > 0 && cell.I0A > 0 && cell.N > 0 && plausibleCell(&cell, nominal, r) {
			c.Cell = cell
			replaced = append(replaced, "cell")
		}
	}
	if c.Trigger.Kind == model.TriggerHold && c.Trigger.HoldF > 0 {
		if fitHold(&c, r) {
			replaced = append(replaced, "trigger.hold_f")
		}
	}
	return &c, replaced
}

// Bounds on a fitted cell's ideality per cell: real cells lie between about 1 and 2,
// amorphous ones up to about 3 to 4 (common practice, no source); outside [0.5, 5] the fit
// has gone astray.
const (
	minIdeality = 0.5
	maxIdeality = 5
)

// plausibleCell reports whether a fitted cell may replace the declared one: its ideality is
// within the bounds above, and at the light of the fit it can reach the voltage at which the
// capture was seen to fire (the median fire voltage), which a cell that reached it must.
// A fit of a short recharge near the trigger (chatter) can give a degenerate diode that fails
// both.
func plausibleCell(cell *model.Cell, nominal *model.Circuit, r *analysis.Result) bool {
	if cell.N < minIdeality || cell.N > maxIdeality {
		return false
	}
	var fires []float64
	for _, cy := range r.Cycles {
		fires = append(fires, cy.FireV)
	}
	if len(fires) == 0 {
		return true
	}
	g := IrradianceFor(nominal, r.Fit.Cell.IscA.Value)
	return g > 0 && cell.OpenCircuitV(g) >= stats.Median(fires)
}

// fittedLeak turns the analysis's dark drain into the capacitor's own leakage resistance.
// The dark decay measures every drain on the node together, less the probe: the
// capacitor's leakage, the supervisor's quiescent current and, without a blocking diode, the
// cell's own dark current through its diode and shunt. The model has the last two as parts
// of their own, so their conductance at the decay's typical voltage is subtracted; what is
// left is the leakage. A drain fully explained by the other parts leaves no leakage (0).
//
// A leak the analysis took from the approach to a plateau (Method "plateau", when the
// capture has no dark decay) is not used: that time constant includes the lit cell's own
// slope dI/dV, which for a cell near its open-circuit voltage is far steeper than any
// leakage (a Wren-like cell settling at 3.9 V gives about 0.5 kΩ against a 0.9 MΩ leak).
func fittedLeak(c *model.Circuit, r *analysis.Result) (float64, bool) {
	lk := r.Fit.Leak
	if lk.Ohm == nil || !(lk.Ohm.Value > 0) || math.IsInf(lk.Ohm.Value, 0) || lk.Method == "plateau" {
		return 0, false
	}
	v := 0.5 * c.Trigger.OnV
	if tr := r.LeakTrace; tr != nil && len(tr.V) > 0 {
		var sum float64
		for _, x := range tr.V {
			sum += x
		}
		v = sum / float64(len(tr.V))
	}
	if !(v > 0) {
		return 0, false
	}
	g := 1 / lk.Ohm.Value
	if q := lk.QuiescentA; q != nil && q.Value > 0 {
		g += q.Value / v
	}
	other := QuiescentA(c, v)/v - c.Cell.Current(v, 0)/v
	if rest := g - other; rest > 0 {
		return 1 / rest, true
	}
	return 0, true
}

// fitHold scales the hold capacitance of a hold trigger so that the steady pulse at the
// capture's typical light matches the measured median pulse: the hold time C_hold·ΔV/I_q
// is what the pulses measure, and of its three parts the capacitance is the one least well
// known (a few microfarads of electrolytic, ±20 % and more). It reports whether it did.
func fitHold(c *model.Circuit, r *analysis.Result) bool {
	var pulses []float64
	for _, cy := range r.Cycles {
		if cy.Kind == analysis.CycleFull && cy.PulseS > 0 {
			pulses = append(pulses, cy.PulseS)
		}
	}
	g := MeasuredLight(r, c)
	if len(pulses) < 3 || !(g > 0) {
		return false
	}
	want := stats.Median(pulses)
	for range 4 { // the pulse is nearly proportional to C_hold; a few rounds converge
		f, err := Steady(c, g, nil)
		if err != nil || !f.Fires || !(f.PulseS > 0) {
			return false
		}
		ratio := want / f.PulseS
		if math.Abs(ratio-1) < 1e-3 {
			break
		}
		c.Trigger.HoldF *= ratio
	}
	return true
}

// MeasuredLight estimates the irradiance a capture was taken under, W/m², for the circuit
// c: from the median short-circuit current of the cycles' charges, or, when the circuit
// never fired, from the irradiance at which c settles at the measured equilibrium voltage.
// It returns 0 when neither is known.
func MeasuredLight(r *analysis.Result, c *model.Circuit) float64 {
	var iscs []float64
	for _, cy := range r.Cycles {
		if cy.Kind == analysis.CycleFull && cy.LightA != nil && *cy.LightA > 0 {
			iscs = append(iscs, *cy.LightA)
		}
	}
	if len(iscs) > 0 {
		return IrradianceFor(c, stats.Median(iscs))
	}
	if g := chatterLight(r, c); g > 0 {
		return g
	}
	if r.EquilibriumV != nil && r.EquilibriumV.Value > 0 {
		return LightForEquilibrium(c, r.EquilibriumV.Value)
	}
	return 0
}

// chatterLight is the irradiance a capture of chatter alone was taken under, from the
// recharges between the tiny fires: from the previous cycle's reset to this fire the cell
// gives C·(V_fire − V_reset,prev)/t_charge plus the drains at the recharge's mid voltage, and the light is where c's cell gives that current there
// (bisection on a log scale between 1e-3 and 1e4 W/m²). This needs only the cycles' times
// and voltages, not the per-cycle light_a, whose extrapolation to 0 V from a recharge of a
// few tens of millivolts is not relied on. It returns 0 without chatter or without the
// capacitance.
func chatterLight(r *analysis.Result, c *model.Circuit) float64 {
	if c.Storage.CapF <= 0 {
		return 0
	}
	var gs []float64
	for k, cy := range r.Cycles {
		if k == 0 || cy.Kind != analysis.CycleChatter || cy.ChargeS == nil || !(*cy.ChargeS > 0) {
			continue
		}
		from := r.Cycles[k-1].ResetV
		if !(cy.FireV > from) {
			continue
		}
		v := 0.5 * (cy.FireV + from)
		need := c.Storage.CapF*(cy.FireV-from) / *cy.ChargeS + DrainA(c, v)
		lo, hi := math.Log(1e-3), math.Log(1e4)
		if c.Cell.Current(v, math.Exp(hi)) < need || c.Cell.Current(v, math.Exp(lo)) > need {
			continue
		}
		for range 60 {
			m := 0.5 * (lo + hi)
			if c.Cell.Current(v, math.Exp(m)) < need {
				lo = m
			} else {
				hi = m
			}
		}
		gs = append(gs, math.Exp(0.5*(lo+hi)))
	}
	if len(gs) == 0 {
		return 0
	}
	return stats.Median(gs)
}

// LightForEquilibrium finds the irradiance at which c settles at veq (bisection on a log
// scale between 1e-3 and 1e4 W/m²), or 0 if none does.
func LightForEquilibrium(c *model.Circuit, veq float64) float64 {
	lo, hi := math.Log(1e-3), math.Log(1e4)
	if EquilibriumV(c, math.Exp(hi)) < veq || EquilibriumV(c, math.Exp(lo)) > veq {
		return 0
	}
	for range 80 {
		m := 0.5 * (lo + hi)
		if EquilibriumV(c, math.Exp(m)) < veq {
			lo = m
		} else {
			hi = m
		}
	}
	return math.Exp(0.5 * (lo + hi))
}

// cache memoises Steady by light level: measured cycles at nearly the same light share one
// simulation (levels are binned to 0.5 % on a log scale).
type cache struct {
	c *model.Circuit
	m map[int]*entry
}

type entry struct {
	f   Figures
	err error
}

func newCache(c *model.Circuit) *cache { return &cache{c: c, m: map[int]*entry{}} }

func (k *cache) at(g float64) (Figures, error) {
	key := int(math.Round(math.Log(g) / math.Log1p(0.005)))
	if e, ok := k.m[key]; ok {
		return e.f, e.err
	}
	gq := math.Exp(float64(key) * math.Log1p(0.005))
	f, err := Steady(k.c, gq, nil)
	k.m[key] = &entry{f, err}
	return f, err
}

// Compare predicts every full measured cycle with the nominal and the fitted circuit (either
// may be nil), each at the light measured during that cycle's charge, and sums up the
// errors. Cycles without a light measurement are listed with null predictions.
func Compare(r *analysis.Result, nominal, fitted *model.Circuit) *analysis.Prediction {
	p := &analysis.Prediction{Cycles: []analysis.PredictedCycle{}}
	var kn, kf *cache
	if nominal != nil {
		kn = newCache(nominal)
	}
	if fitted != nil {
		kf = newCache(fitted)
	}
	for _, cy := range r.Cycles {
		if cy.Kind != analysis.CycleFull {
			continue
		}
		pc := analysis.PredictedCycle{Index: cy.Index, Measured: measured(cy)}
		if cy.LightA != nil && *cy.LightA > 0 {
			pc.Nominal = predictOne(kn, *cy.LightA)
			pc.Fitted = predictOne(kf, *cy.LightA)
		}
		p.Cycles = append(p.Cycles, pc)
	}
	p.Nominal = Summarize(p.Cycles, func(c analysis.PredictedCycle) *analysis.CycleFigs { return c.Nominal })
	p.Fitted = Summarize(p.Cycles, func(c analysis.PredictedCycle) *analysis.CycleFigs { return c.Fitted })
	return p
}

// HeldOut predicts the cycles that fire at or after splitS with a circuit fitted on the
// capture before splitS, and sums up the errors: the check that the fit generalises.
func HeldOut(r *analysis.Result, fittedBefore *model.Circuit, splitS float64) *analysis.ErrorSummary {
	k := newCache(fittedBefore)
	var cs []analysis.PredictedCycle
	for _, cy := range r.Cycles {
		if cy.Kind != analysis.CycleFull || cy.FireS < splitS || cy.LightA == nil || *cy.LightA <= 0 {
			continue
		}
		cs = append(cs, analysis.PredictedCycle{Index: cy.Index, Measured: measured(cy), Fitted: predictOne(k, *cy.LightA)})
	}
	return Summarize(cs, func(c analysis.PredictedCycle) *analysis.CycleFigs { return c.Fitted })
}

func measured(cy analysis.Cycle) analysis.CycleFigs {
	fv, rv, ps := cy.FireV, cy.ResetV, cy.PulseS
	return analysis.CycleFigs{ChargeS: cy.ChargeS, PulseS: &ps, FireV: &fv, ResetV: &rv, EnergyJ: cy.EnergyJ}
}

func predictOne(k *cache, iscA float64) *analysis.CycleFigs {
	if k == nil {
		return nil
	}
	g := IrradianceFor(k.c, iscA)
	if !(g > 0) {
		return nil
	}
	f, err := k.at(g)
	if err != nil {
		return nil
	}
	if !f.Fires {
		return &analysis.CycleFigs{} // predicted never to fire: every figure null
	}
	return &analysis.CycleFigs{ChargeS: ptr(f.ChargeS), PulseS: ptr(f.PulseS), FireV: ptr(f.FireV),
		ResetV: ptr(f.ResetV), EnergyJ: ptr(f.EnergyJ)}
}

func ptr(v float64) *float64 { return &v }

// Summarize sums up the errors of the predictions that pick selects, on the charge time
// (bias and mean absolute percentage error in %, RMS error in seconds, share within 10 %),
// and the mean absolute percentage errors of the pulse length and the energy per pulse.
// A cycle predicted never to fire counts as missing. It returns nil when nothing compares.
func Summarize(cs []analysis.PredictedCycle, pick func(analysis.PredictedCycle) *analysis.CycleFigs) *analysis.ErrorSummary {
	var n, within int
	var sumRel, sumAbs, sumSq float64
	var pulse, energy mape
	for _, c := range cs {
		p := pick(c)
		if p == nil {
			continue
		}
		pulse.add(c.Measured.PulseS, p.PulseS)
		energy.add(c.Measured.EnergyJ, p.EnergyJ)
		m := c.Measured.ChargeS
		if m == nil || p.ChargeS == nil || *m <= 0 {
			continue
		}
		e := *p.ChargeS - *m
		r := e / *m
		n++
		sumRel += r
		sumAbs += math.Abs(r)
		sumSq += e * e
		if math.Abs(r) <= 0.10 {
			within++
		}
	}
	if n == 0 && pulse.n == 0 {
		return nil
	}
	s := &analysis.ErrorSummary{N: n, PulseMAPEPct: pulse.pct(), EnergyMAPEPct: energy.pct()}
	if n > 0 {
		s.BiasPct = ptr(100 * sumRel / float64(n))
		s.MAPEPct = ptr(100 * sumAbs / float64(n))
		s.RMSS = ptr(math.Sqrt(sumSq / float64(n)))
		s.Within10Pct = ptr(float64(within) / float64(n))
	}
	return s
}

type mape struct {
	n   int
	sum float64
}

func (m *mape) add(meas, pred *float64) {
	if meas == nil || pred == nil || *meas == 0 {
		return
	}
	m.n++
	m.sum += math.Abs(*pred-*meas) / math.Abs(*meas)
}

func (m *mape) pct() *float64 {
	if m.n == 0 {
		return nil
	}
	return ptr(100 * m.sum / float64(m.n))
}
