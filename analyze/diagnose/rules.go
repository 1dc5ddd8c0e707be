package diagnose

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/profile"
	"capcycle/analyze/stats"
	"capcycle/analyze/units"
)

// capture checks the capture itself: clipping, gaps, lost samples and noise.
func (d *diag) capture() {
	r := d.r
	var satS, gapS float64
	var nGaps int
	for _, s := range r.Segments {
		switch s.Kind {
		case "saturated":
			satS += s.EndS - s.StartS
		case "gap":
			gapS += s.EndS - s.StartS
			nGaps++
		}
	}
	if gapS == 0 && r.Source.GapsS > 0 {
		gapS = r.Source.GapsS
	}
	if satS > 0 {
		maxV := d.maxV()
		msg := fmt.Sprintf("The ADC sat at full scale for %s in all; the voltage above %s was not seen.", fmtS(satS), fmtV(maxV))
		d.add(CodeClipping, analysis.Warn, msg,
			"Raise the probe divider's ratio so the highest voltage (the capacitor's rated voltage) reads at about 90 % of the ADC's full scale; never let the ADC pin exceed its reference.",
			map[string]float64{"saturated_s": satS, "max_seen_v": maxV})
	}
	if gapS > 0 {
		sev := analysis.Info
		if r.DurationS > 0 && gapS/r.DurationS > 0.05 {
			sev = analysis.Warn
		}
		d.add(CodeGaps, sev,
			fmt.Sprintf("The capture has %d gap(s) with no samples, %s in all (%.1f %% of it); cycles across a gap are left out.", nGaps, fmtS(gapS), 100*gapS/math.Max(r.DurationS, 1e-9)),
			"Check the USB cable and the port's power saving; the recorder reconnects by itself and notes each gap.",
			map[string]float64{"gaps": float64(nGaps), "gap_s": gapS, "share": gapS / math.Max(r.DurationS, 1e-9)})
	}
	if r.Source.Lost > 0 {
		share := float64(r.Source.Lost) / math.Max(float64(r.Samples+r.Source.Lost), 1)
		d.add(CodeLost, analysis.Warn,
			fmt.Sprintf("The recorder counted %d lost samples (%.2f %% of them): the link or the host did not keep up.", r.Source.Lost, 100*share),
			"Lower the burst rate or the number of channels, or use a faster baud rate; close other programs that use the port.",
			map[string]float64{"lost_samples": float64(r.Source.Lost), "share": share})
	}
	d.screened()
	if r.Noise != nil {
		need := d.neededStepV()
		// Noise within one ADC step is the converter's own rounding (a step q alone reads
		// as q/√12 RMS, and a little noise dithers between two codes): shorter leads and
		// more filtering would not help, so only noise above one step counts.
		if need > 0 && r.Noise.RMSV > need/5 && r.Noise.RMSV > r.Noise.StepV {
			d.add(CodeNoisy, analysis.Warn,
				fmt.Sprintf("The noise (%s RMS) is large beside the smallest step the analysis needs (%s): fires, resets and slopes are uncertain.", fmtV(r.Noise.RMSV), fmtV(need)),
				"Keep the probe leads short and twisted with their ground, add 100 nF from the ADC pin to ground, and let the board average more conversions (a lower slow rate).",
				map[string]float64{"noise_rms_v": r.Noise.RMSV, "needed_step_v": need, "adc_step_v": r.Noise.StepV})
		}
	}
}

// screened reports what was taken out of the samples before the analysis: wild values
// and a held-value staircase.
func (d *diag) screened() {
	sc := d.r.Screen
	if sc == nil {
		return
	}
	if sc.Wild > 0 {
		first := 0.0
		if sc.FirstWildS != nil {
			first = *sc.FirstWildS
		}
		d.add(CodeWild, analysis.Warn,
			fmt.Sprintf("%d sample(s) were not a voltage (not a number, or an absurd jump that came straight back), the first at %s; they were dropped and the rest analysed.", sc.Wild, fmtS(first)),
			"Look at the capture file around that time: a damaged line, a board that sent a bad frame or an overflowed count. Check the probe's ground and the USB cable.",
			map[string]float64{"wild_samples": float64(sc.Wild), "first_wild_s": first, "rows": float64(sc.Rows)})
	}
	if h := sc.Held; h != nil {
		d.add(CodeHeld, analysis.Warn,
			fmt.Sprintf("The board repeated each value about %.3g times: new values came every %s although rows were logged every %s. Only the first of each was analysed; pulses shorter than %s are not resolved.", h.Repeat, fmtS(h.EffectiveSpacingS), fmtS(h.LoggedSpacingS), fmtS(h.EffectiveSpacingS)),
			"Set the recording rate no faster than the board converts (or the link carries), or raise the baud rate.",
			map[string]float64{"repeat": h.Repeat, "effective_spacing_s": h.EffectiveSpacingS, "logged_spacing_s": h.LoggedSpacingS, "dropped_samples": float64(h.Dropped)})
	}
}

// neededStepV is the smallest voltage change the analysis must resolve: a tenth of the
// typical swing of a full cycle, or 1 % of the highest voltage when nothing fires.
func (d *diag) neededStepV() float64 {
	var sw []float64
	for _, c := range d.r.Cycles {
		if c.Kind == analysis.CycleFull {
			sw = append(sw, c.FireV-c.ResetV)
		}
	}
	if len(sw) > 0 {
		sort.Float64s(sw)
		return sw[len(sw)/2] / 10
	}
	return d.maxV() / 100
}

func (d *diag) maxV() float64 {
	m := math.Inf(-1)
	for _, e := range d.r.Envelope {
		m = math.Max(m, e.MaxV)
	}
	for _, s := range d.r.Segments {
		m = math.Max(m, math.Max(s.StartV, s.EndV))
	}
	for _, c := range d.r.Cycles {
		m = math.Max(m, c.FireV)
	}
	if d.r.EquilibriumV != nil {
		m = math.Max(m, d.r.EquilibriumV.Value)
	}
	return m
}

// notFiring explains a capture without a full cycle: either the voltage stalls below the
// trigger (never-reaches-trigger) or it passes the trigger and nothing dumps (no-dump).
func (d *diag) notFiring() {
	on, _ := d.onV()
	maxV := d.maxV()
	if !math.IsNaN(on) && maxV > on*1.02 {
		d.add(CodeNoDump, analysis.Fault,
			fmt.Sprintf("The voltage rose to %s, past the %s trigger, and nothing discharged it: the switching path, not the energy, is at fault.", fmtV(maxV), fmtV(on)),
			"Check the trigger's output, the transistor's base or gate drive and its orientation, and the motor's connection; measure the supervisor's output while the capacitor is above the trigger. Discharge the capacitor through a resistor before you touch the circuit.",
			map[string]float64{"max_v": maxV, "on_v": on})
		return
	}
	veq, peak, ok := d.settlingPoint(on, maxV)
	if !ok || math.IsNaN(on) || veq >= on {
		return
	}
	if peak && d.c != nil && d.in.LightWm2 <= 0 {
		d.g = predict.LightForEquilibrium(d.c, veq)
	}
	nums := map[string]float64{"equilibrium_v": veq, "on_v": on, "short_v": on - veq}
	msg := fmt.Sprintf("The voltage settles at %s, %s below the %s trigger, where the cell's current equals the drains.", fmtV(veq), fmtV(on-veq), fmtV(on))
	if peak {
		delete(nums, "equilibrium_v")
		nums["peak_v"] = veq
		msg = fmt.Sprintf("The voltage never reached the %s trigger: it peaked at %s, %s short, in the brightest light of the capture, where the cell's current fell to the drains.", fmtV(on), fmtV(veq), fmtV(on-veq))
	} else if eq := d.r.EquilibriumV; eq.SD != nil {
		nums["equilibrium_sd_v"] = *eq.SD
	}
	sugg := "Give it more light, less drain or a lower trigger."
	if d.c != nil && d.g > 0 {
		extra, opts := d.stallRemedies(veq, on, peak, nums)
		msg += extra
		sugg = "Any one of these would make it fire (model): " + strings.Join(opts, "; ") + "."
	}
	d.add(CodeNeverFires, analysis.Fault, msg, sugg, nums)
}

// settlingPoint is where the voltage settles: the extrapolated equilibrium, or, when the
// light kept changing and the voltage never levelled off (a day behind a window), the
// highest voltage reached (peak), which is a lower bound on the equilibrium at the
// brightest light of the capture. ok is false when there is nothing to say, or when the
// capture ended while the voltage still climbed (a still-charging finding is made).
func (d *diag) settlingPoint(on, maxV float64) (veq float64, peak, ok bool) {
	if eq := d.r.EquilibriumV; eq != nil {
		return eq.Value, false, true
	}
	if math.IsNaN(on) || !(maxV > 0) || maxV >= on {
		return 0, true, false
	}
	if d.risingAtEnd() {
		d.add(CodeStillCharging, analysis.Info,
			fmt.Sprintf("The voltage was still rising when the capture ended, at %s after %s, below the %s trigger: too short to tell whether it fires or settles.", fmtV(maxV), fmtS(d.r.DurationS), fmtV(on)),
			"Record longer, until it fires or the voltage levels off.",
			map[string]float64{"max_v": maxV, "on_v": on, "duration_s": d.r.DurationS})
		return 0, true, false
	}
	return maxV, true, true
}

// stallRemedies says which drain is largest where the voltage settles (a sentence for
// the message) and the remedies that would each make it fire, with the model's cycle.
func (d *diag) stallRemedies(veq, on float64, peak bool, nums map[string]float64) (extra string, opts []string) {
	thr := on * 1.03 // 3 % margin above the node voltage the trigger needs
	nums["light_wm2"] = d.g
	extra, largest := d.largestDrain(veq, nums)
	if o := d.moreLight(thr, nums); o != "" {
		opts = append(opts, o)
	}
	o, cannot := d.lessDrain(thr, largest, nums)
	if o != "" {
		opts = append(opts, o)
	}
	extra += cannot
	opts = append(opts, d.lowerTrigger(veq, peak, nums))
	return extra, opts
}

// largestDrain names the largest drain at v and its share.
func (d *diag) largestDrain(v float64, nums map[string]float64) (sentence, largest string) {
	c := d.c
	leak, probe, iq := 0.0, 0.0, predict.QuiescentA(c, v)
	if c.Storage.LeakOhm > 0 {
		leak = v / c.Storage.LeakOhm
	}
	if c.ProbeOhm > 0 {
		probe = v / c.ProbeOhm
	}
	total := leak + probe + iq
	nums["leak_a"], nums["probe_a"], nums["quiescent_a"] = leak, probe, iq
	largest, share := "leakage", leak/total
	if probe > leak && probe >= iq {
		largest, share = "the probe divider", probe/total
	} else if iq > leak && iq > probe {
		largest, share = "the supervisor's quiescent current", iq/total
	}
	nums["largest_share"] = share
	return fmt.Sprintf(" Of the %s drain there, %s takes %.0f %%.", units.Format(total, "A"), largest, 100*share), largest
}

// moreLight is the light that brings the node to thr, and the cycle it gives.
func (d *diag) moreLight(thr float64, nums map[string]float64) string {
	gNeed := predict.LightForEquilibrium(d.c, thr)
	if !(gNeed > 0) {
		return ""
	}
	nums["light_factor"] = gNeed / d.g
	if f, ok := steadyWith(d.c, gNeed, func(*model.Circuit) {}); ok && f.Fires {
		nums["period_with_light_s"] = f.PeriodS
		return fmt.Sprintf("%.2g× the light (a brighter sill or a larger cell), firing once every %s", gNeed/d.g, fmtS(f.PeriodS))
	}
	return fmt.Sprintf("%.2g× the light, which brings it to the trigger", gNeed/d.g)
}

// lessDrain compares the cell's current at thr with the drains there: the cut that
// would let it fire, or a sentence saying no cut can (the cell cannot reach thr at all).
func (d *diag) lessDrain(thr float64, largest string, nums map[string]float64) (opt, cannot string) {
	c := d.c
	icell := c.Cell.Current(thr, d.g)
	drainThr := predict.DrainA(c, thr)
	nums["cell_at_trigger_a"], nums["drain_at_trigger_a"] = icell, drainThr
	switch {
	case icell > 0 && drainThr > icell:
		cut := 1 - icell/drainThr
		nums["drain_cut"] = cut
		o := fmt.Sprintf("%.0f %% less drain at the trigger (the cell gives %s there, the drains take %s)", 100*cut, units.Format(icell, "A"), units.Format(drainThr, "A"))
		if largest == "the probe divider" {
			if f, ok := steadyWith(c, d.g, func(cc *model.Circuit) { cc.ProbeOhm *= 10 }); ok && f.Fires {
				nums["period_probe_x10_s"] = f.PeriodS
				o += fmt.Sprintf(", e.g. a probe divider of ten times the resistance, firing every %s", fmtS(f.PeriodS))
			}
		}
		return o, ""
	case icell <= 0:
		return "", fmt.Sprintf(" At this light the cell cannot reach %s at all, whatever the drain.", fmtV(thr))
	}
	return "", ""
}

// lowerTrigger is a trigger 5 % below where the node settles, and the cycle it gives.
func (d *diag) lowerTrigger(veq float64, peak bool, nums map[string]float64) string {
	newOn := 0.95 * veq
	f, ok := steadyWith(d.c, d.g, func(cc *model.Circuit) {
		delta := cc.Trigger.OnV - cc.Trigger.OffV
		switch cc.Trigger.Kind {
		case model.TriggerHold:
			cc.Trigger.OnV = newOn - cc.Trigger.DiodeV
			cc.Trigger.OffV = cc.Trigger.OnV - delta
		default:
			cc.Trigger.OnV = newOn
			if cc.Trigger.OffV >= newOn || cc.Trigger.OffV <= 0 {
				cc.Trigger.OffV = newOn - math.Min(delta, 0.5*newOn)
			}
		}
	})
	nums["lower_on_v"] = newOn
	where := "the equilibrium"
	if peak {
		where = "the peak"
	}
	if ok && f.Fires {
		nums["period_lower_on_s"] = f.PeriodS
		nums["energy_lower_on_j"] = f.EnergyJ
		return fmt.Sprintf("a trigger at %s (5 %% below %s), firing every %s with %s per pulse", fmtV(newOn), where, fmtS(f.PeriodS), units.Format(f.EnergyJ, "J"))
	}
	return fmt.Sprintf("a trigger at %s (5 %% below %s)", fmtV(newOn), where)
}

// risingAtEnd reports whether the highest voltage of the envelope lies in its last 5 % and
// the voltage there still climbs: the capture stopped while the node was charging.
func (d *diag) risingAtEnd() bool {
	env := d.r.Envelope
	n := len(env)
	if n < 4 {
		return false
	}
	top := 0
	for i, e := range env {
		if e.MaxV >= env[top].MaxV {
			top = i
		}
	}
	tail := max(1, n/20)
	return top >= n-tail && env[n-1].MaxV > env[n-1-tail].MaxV
}

// cycling states the headline figures of a firing circuit.
func (d *diag) cycling() {
	var n int
	var per, pulse, energy []float64
	for _, c := range d.r.Cycles {
		if c.Kind != analysis.CycleFull {
			continue
		}
		n++
		if c.ChargeS != nil {
			per = append(per, *c.ChargeS+c.PulseS)
		}
		pulse = append(pulse, c.PulseS)
		if c.EnergyJ != nil {
			energy = append(energy, *c.EnergyJ)
		}
	}
	nums := map[string]float64{"cycles": float64(n)}
	msg := fmt.Sprintf("The circuit fired %d times", n)
	if len(per) > 0 {
		nums["median_period_s"] = stats.Median(per)
		msg += fmt.Sprintf(", every %s (median)", fmtS(stats.Median(per)))
	}
	nums["median_pulse_s"] = stats.Median(pulse)
	msg += fmt.Sprintf(", with %s pulses", fmtS(stats.Median(pulse)))
	if len(energy) > 0 {
		nums["median_energy_j"] = stats.Median(energy)
		msg += fmt.Sprintf(" of %s each", units.Format(stats.Median(energy), "J"))
	}
	d.add(CodeCycling, analysis.Info, msg+".", "", nums)
}

// chatter flags cycles whose swing is tiny and works out the hold capacitance that would
// give a useful swing: the hold capacitor keeps the supervisor on for t = C_hold·ΔV/I_q.
func (d *diag) chatter() {
	var nch, nfull int
	var sw []float64
	for _, c := range d.r.Cycles {
		switch c.Kind {
		case "chatter":
			nch++
			sw = append(sw, c.FireV-c.ResetV)
		case "full":
			nfull++
		}
	}
	if nch == 0 || float64(nch) < 0.1*float64(nch+nfull) {
		return
	}
	seen := stats.Median(sw)
	nums := map[string]float64{"chatter_cycles": float64(nch), "full_cycles": float64(nfull), "swing_v": seen}
	msg := fmt.Sprintf("%d of %d fires were chatter: the voltage fell only %s before the trigger let go.", nch, nch+nfull, fmtV(seen))
	sugg := "Stretch the trigger's hysteresis with a larger hold capacitor."
	p := d.in.Profile
	tau, tauFrom := d.loadTau()
	if p != nil && p.Trigger.QuiescentA > 0 && p.Trigger.HysteresisV > 0 && tau > 0 {
		on, _ := d.onV()
		off := p.Trigger.OffV
		if !(off > 0 && off < on) {
			off = 0.7 * on
		}
		nums["load_tau_s"] = tau
		if tauFrom != "fitted" {
			msg += fmt.Sprintf(" No full pulse was seen, so the load's time constant is the declared %s.", fmtS(tau))
		}
		need := tau * math.Log(on/off) // time to discharge from on to off through the load
		hold := p.Trigger.QuiescentA * need / p.Trigger.HysteresisV
		std := nearestStandard("E6", hold)
		nums["wanted_off_v"], nums["pulse_needed_s"], nums["hold_needed_f"], nums["hold_standard_f"] = off, need, hold, std
		sugg = fmt.Sprintf("For a swing down to %s the pulse must last about %s (load time constant %s); with %s quiescent current and %s hysteresis that needs C_hold = I_q·t/ΔV = %s, e.g. %s (E6).",
			fmtV(off), fmtS(need), fmtS(tau), units.Format(p.Trigger.QuiescentA, "A"), fmtV(p.Trigger.HysteresisV), units.Format(hold, "F"), units.Format(std, "F"))
		if f, ok := steadyWith(d.c, d.g, func(cc *model.Circuit) {
			if cc.Trigger.Kind == model.TriggerHold {
				cc.Trigger.HoldF = std
			}
		}); ok && f.Fires && d.c.Trigger.Kind == model.TriggerHold {
			nums["predicted_swing_v"], nums["predicted_period_s"] = f.FireV-f.ResetV, f.PeriodS
			sugg += fmt.Sprintf(" The model predicts a %s swing every %s with it.", fmtV(f.FireV-f.ResetV), fmtS(f.PeriodS))
		}
	}
	d.add(CodeChatter, analysis.Warn, msg, sugg, nums)
}

// loadTau is the pulse's time constant: fitted from the full pulses, else the circuit's
// C·(R_load + R_on) (a motor at stall: its armature resistance), else 0.
func (d *diag) loadTau() (float64, string) {
	if e := d.r.Fit.Load.TauS; e != nil && e.Value > 0 {
		return e.Value, "fitted"
	}
	if c := d.c; c != nil && c.Load.Ohm > 0 {
		return c.Storage.CapF * (c.Load.Ohm + c.Switch.OnOhm), "declared"
	}
	return 0, ""
}

// pulse compares the energy per pulse with what the load needs to start, and the reset
// voltage with the declared release.
func (d *diag) pulse() {
	var energy, reset []float64
	for _, c := range d.r.Cycles {
		if c.Kind != analysis.CycleFull {
			continue
		}
		if c.EnergyJ != nil {
			energy = append(energy, *c.EnergyJ)
		}
		reset = append(reset, c.ResetV)
	}
	p := d.in.Profile
	if p == nil {
		return
	}
	if need := p.Load.StartJ; need > 0 && len(energy) > 0 && stats.Median(energy) < need {
		e := stats.Median(energy)
		nums := map[string]float64{"energy_j": e, "start_j": need}
		sugg := "A larger storage capacitor gives more energy per pulse (E = ½C(Von² − Voff²))."
		on, _ := d.onV()
		off := stats.Median(reset)
		if on > off && d.c != nil {
			capNeed := 2 * need * 1.2 / (on*on - off*off) // 20 % margin
			std := nearestStandard("E6", capNeed)
			nums["cap_needed_f"], nums["cap_standard_f"] = capNeed, std
			sugg = fmt.Sprintf("A %s storage capacitor (E6; %s with a 20 %% margin) would give enough per pulse", units.Format(std, "F"), units.Format(capNeed, "F"))
			if f, ok := steadyWith(d.c, d.g, func(cc *model.Circuit) { cc.Storage.CapF = std }); ok && f.Fires {
				nums["predicted_energy_j"], nums["predicted_period_s"] = f.EnergyJ, f.PeriodS
				sugg += fmt.Sprintf(": the model predicts %s per pulse, every %s", units.Format(f.EnergyJ, "J"), fmtS(f.PeriodS))
			}
			sugg += "; check its rated voltage is above the trigger voltage."
		}
		d.add(CodeWeakPulse, analysis.Warn,
			fmt.Sprintf("Each pulse delivers %s, less than the %s the load needs to start.", units.Format(e, "J"), units.Format(need, "J")),
			sugg, nums)
	}
	if off := p.Trigger.OffV; off > 0 && len(reset) > 0 {
		on, _ := d.onV()
		got := stats.Median(reset)
		swing := on - off
		if swing > 0 && got-off > 0.25*swing {
			d.add(CodeEarlyRelease, analysis.Warn,
				fmt.Sprintf("The trigger releases at %s (median), well above the declared %s: each pulse uses only %.0f %% of the intended swing.", fmtV(got), fmtV(off), 100*(on-got)/swing),
				"For a hold-capacitor trigger, a larger hold capacitor or a supervisor with less quiescent current keeps it on longer; check the hold diode's polarity and leakage.",
				map[string]float64{"reset_v": got, "declared_off_v": off, "swing_used": (on - got) / swing})
		}
	}
}

// drains compares the leakage with the capacitor's datasheet limit and the probe's share.
func (d *diag) drains() {
	r := d.r
	p := d.in.Profile
	// Only a decay in the dark measures the leakage: the approach to a plateau (Method
	// "plateau") includes the lit cell's own slope, which is no fault of the capacitor.
	if p != nil && p.Storage.Kind == profile.Electrolytic && r.Fit.Leak.Ohm != nil && r.Fit.Leak.Ohm.Value > 0 &&
		r.Fit.Leak.Method != "plateau" {
		der := profile.Derive(p)
		limit := der.LeakLimitA
		atRated := p.Storage.RatedV / r.Fit.Leak.Ohm.Value
		if limit > 0 && atRated > limit {
			d.add(CodeLeakyCap, analysis.Warn,
				fmt.Sprintf("The capacitor leaks %s at its %s rating (from the fitted %s), above the datasheet limit of %s (%s).",
					units.Format(atRated, "A"), fmtV(p.Storage.RatedV), units.Format(r.Fit.Leak.Ohm.Value, "Ω"), units.Format(limit, "A"), der.LeakLimitRule),
				"Electrolytics leak more when new, hot or long unused; leave it charged for a day and measure again, or replace it with a low-leakage part. Never reverse an electrolytic's polarity.",
				map[string]float64{"leak_at_rated_a": atRated, "limit_a": limit, "leak_ohm": r.Fit.Leak.Ohm.Value})
		}
	}
	c := d.c
	if c == nil || c.ProbeOhm <= 0 {
		return
	}
	on, _ := d.onV()
	v := on
	if math.IsNaN(v) {
		v = d.maxV()
	}
	probe := v / c.ProbeOhm
	total := predict.DrainA(c, v)
	if total > 0 && probe/total > 0.10 {
		nums := map[string]float64{"probe_a": probe, "drain_a": total, "share": probe / total, "probe_ohm": c.ProbeOhm}
		msg := fmt.Sprintf("The probe divider (%s) draws %s at %s, %.0f %% of the node's drain.", units.Format(c.ProbeOhm, "Ω"), units.Format(probe, "A"), fmtV(v), 100*probe/total)
		sugg := "Use a divider of higher resistance (with 100 nF across the lower resistor so the ADC still sees a low source impedance), or switch the divider off between readings."
		// How much it matters: the period (or the equilibrium) with ten times the resistance.
		sev := analysis.Warn
		base, ok1 := steadyWith(c, d.g, func(*model.Circuit) {})
		f, ok2 := steadyWith(c, d.g, func(cc *model.Circuit) { cc.ProbeOhm *= 10 })
		switch {
		case ok1 && ok2 && base.Fires && f.Fires:
			change := 1 - f.PeriodS/base.PeriodS
			nums["period_now_s"], nums["period_probe_x10_s"], nums["period_change"] = base.PeriodS, f.PeriodS, change
			if change < 0.05 {
				sev = analysis.Info
				msg += fmt.Sprintf(" At this light it shortens the period by only %.1f %% (model), so the measurement hardly changes the circuit.", 100*change)
			} else {
				msg += " The measurement changes the circuit."
				sugg += fmt.Sprintf(" With ten times the resistance the model predicts a period of %s instead of %s.", fmtS(f.PeriodS), fmtS(base.PeriodS))
			}
		case ok1 && ok2 && !base.Fires && f.Fires:
			nums["period_probe_x10_s"] = f.PeriodS
			msg += " The measurement itself keeps the circuit from firing."
			sugg += fmt.Sprintf(" With ten times the resistance the model predicts a fire every %s.", fmtS(f.PeriodS))
		case ok1 && ok2 && !base.Fires && !f.Fires:
			// Neither fires: how far the probe pulls the settling voltage down.
			shift := f.EquilibriumV - base.EquilibriumV
			nums["equilibrium_v"], nums["equilibrium_probe_x10_v"] = base.EquilibriumV, f.EquilibriumV
			if shift < 0.01*base.EquilibriumV {
				sev = analysis.Info
				msg += fmt.Sprintf(" It lowers the settling voltage by only %s (model), so it is not why the circuit stalls.", fmtV(shift))
			} else {
				msg += fmt.Sprintf(" It holds the settling voltage %s lower (model).", fmtV(shift))
			}
		default:
			msg += " The measurement changes the circuit."
		}
		d.add(CodeProbeHeavy, sev, msg, sugg, nums)
	}
}

// nominal compares measured parts with their declared values and tolerances.
func (d *diag) nominal() {
	p := d.in.Profile
	if p == nil {
		return
	}
	r := d.r
	if r.Capacitance != nil && r.Capacitance.F.Origin == "measured" && p.Storage.CapF > 0 {
		got := r.Capacitance.F.Value
		diff := got/p.Storage.CapF - 1
		tol := p.Storage.Tolerance
		lo, hi := tol.MinusPct/100, tol.PlusPct/100
		if diff < -lo || diff > hi {
			d.add(CodeCapOffNominal, analysis.Warn,
				fmt.Sprintf("The capacitance measures %s, %+.0f %% from the declared %s: outside tolerance code %s.",
					units.Format(got, "F"), 100*diff, units.Format(p.Storage.CapF, "F"), tol.String()),
				"Electrolytics lose capacitance with age and heat; replace it, or declare the measured value so predictions use it.",
				map[string]float64{"measured_f": got, "declared_f": p.Storage.CapF, "diff": diff, "tol_minus": lo, "tol_plus": hi})
		}
	}
	if e := r.Fit.Trigger.OnV; e != nil && p.Trigger.OnV > 0 && p.Trigger.AccuracyPct > 0 && d.fullCycles() > 0 {
		diff := e.Value/p.Trigger.OnV - 1
		band, rise := d.fireReading()
		lo := p.Trigger.OnV * (1 - p.Trigger.AccuracyPct/100)
		hi := p.Trigger.OnV * (1 + p.Trigger.AccuracyPct/100)
		// The true fire voltage lies between the reading less the band and the reading plus
		// the rise and the band; it is off nominal only when all of that is outside.
		if e.Value-band > hi || e.Value+rise+band < lo {
			d.add(CodeTrigOffNominal, analysis.Warn,
				fmt.Sprintf("The circuit fires at %s, %+.1f %% from the declared %s: outside the part's stated ±%.1f %% (the reading is good to about %s).", fmtV(e.Value), 100*diff, fmtV(p.Trigger.OnV), p.Trigger.AccuracyPct, fmtV(rise+band)),
				"Check the supervisor's part and the hold diode's drop (the node must rise one diode drop above the threshold); declare the measured value for predictions.",
				map[string]float64{"measured_on_v": e.Value, "declared_on_v": p.Trigger.OnV, "diff": diff, "accuracy_pct": p.Trigger.AccuracyPct,
					"reading_band_v": band, "rise_per_sample_v": rise})
		}
	}
}

// fireReading says how well the capture pins down the fire voltage. The analysis reads it
// from the samples still at the starting level (within four noise SDs, at least one ADC
// step, of the peak) before the fall, and the fire comes somewhere within one sample
// interval after the last of them, so the reading is low by up to the rise per sample plus
// that band, and high by at most the band. rise is the median charging slope
// of the full cycles, (fire_v − reset_v)/charge_s, times the mean sample spacing outside
// gaps: an upper bound where the charge slows towards the fire, which makes the check err on
// the side of no finding.
func (d *diag) fireReading() (band, rise float64) {
	r := d.r
	if n := r.Noise; n != nil {
		band = math.Max(4*n.RMSV, n.StepV)
	}
	var slopes []float64
	for _, c := range r.Cycles {
		if c.Kind == analysis.CycleFull && c.ChargeS != nil && *c.ChargeS > 0 && c.FireV > c.ResetV {
			slopes = append(slopes, (c.FireV-c.ResetV) / *c.ChargeS)
		}
	}
	if len(slopes) > 0 && r.Samples > 1 {
		dt := math.Max(r.DurationS-r.Source.GapsS, 0) / float64(r.Samples-1)
		rise = stats.Median(slopes) * dt
	}
	return band, rise
}
