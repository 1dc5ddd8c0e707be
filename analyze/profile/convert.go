package profile

import (
	"fmt"
	"time"

	"capcycle/analyze/units"
)

// profile converts every table, keeping the first problem of each, and then reports the
// problem that comes first in the file (problems without a line come last).
func (c *conv) profile(r *rawProfile) *Profile {
	if c.err != nil {
		return nil
	}
	p := &Profile{}
	var errs []*Error
	part := func(f func()) {
		c.err = nil
		f()
		if c.err != nil {
			errs = append(errs, c.err)
		}
	}
	part(func() {
		p.Name = c.text("name", r.Name, false)
		p.Notes = c.text("notes", r.Notes, false)
	})
	if r.Trigger != nil {
		part(func() { p.Trigger = c.trigger(r.Trigger) })
	}
	if r.Storage != nil {
		part(func() { p.Storage = c.storage(r.Storage, &p.Trigger) })
	}
	if r.Switch != nil {
		part(func() { p.Switch = c.switchTable(r.Switch) })
	}
	if r.Load != nil {
		part(func() { p.Load = c.load(r.Load) })
	}
	if r.Cell != nil {
		part(func() { p.Cell = c.cell(r.Cell) })
	}
	if r.ADC != nil {
		part(func() { p.ADC = c.adc(r.ADC) })
	}
	if len(r.Channel) > 0 {
		part(func() { p.Channels = c.channels(r.Channel) })
	}
	if r.Calibration != nil {
		part(func() { p.Calibration = c.calibration(r.Calibration) })
	}
	if r.Light != nil {
		part(func() { p.Light = c.light(r.Light) })
	}
	part(func() {
		c.requireTable("storage", r.Storage != nil)
		c.requireTable("trigger", r.Trigger != nil)
		c.requireTable("load", r.Load != nil)
		c.requireTable("cell", r.Cell != nil)
		c.requireTable("adc", r.ADC != nil)
		if len(r.Channel) == 0 {
			c.fail("channel", ErrMissing, "no [[channel]] table: at least one ADC channel must read the storage capacitor (node = \"vcap\")")
		}
	})
	c.err = nil
	for _, e := range errs {
		if c.err == nil || (e.Line > 0 && (c.err.Line == 0 || e.Line < c.err.Line)) {
			c.err = e
		}
	}
	return p
}

func (c *conv) requireTable(name string, ok bool) {
	if !ok && c.err == nil {
		c.fail(name, ErrMissing, "table [%s] is missing", name)
	}
}

func (c *conv) storage(r *rawStorage, t *Trigger) Storage {
	var s Storage
	s.Kind = StorageKind(c.text("storage.kind", r.Kind, true, string(Electrolytic), string(Supercapacitor)))
	s.CapF = c.num("storage.cap_f", r.CapF, farads, true)
	s.Tolerance = DefaultTolerance
	if letter := c.text("storage.tolerance", r.Tolerance, false); letter != "" {
		tol, err := LookupTolerance(letter)
		if err != nil {
			c.fail("storage.tolerance", ErrValue, "%v", err)
		}
		s.Tolerance = tol
	}
	s.RatedV = c.num("storage.rated_v", r.RatedV, volts, true)
	s.ESROhm = c.num("storage.esr_ohm", r.ESROhm, ohmsNN, false)
	s.LeakA = c.num("storage.leak_a", r.LeakA, ampsNN, false)
	s.LeakV = c.num("storage.leak_v", r.LeakV, volts, false)
	s.BranchOhm = c.num("storage.branch_ohm", r.BranchOhm, ohms, false)
	s.BranchF = c.num("storage.branch_f", r.BranchF, farads, false)
	if c.err != nil {
		return s
	}
	if t.OnV > 0 {
		c.check(s.RatedV >= t.OnV, "storage.rated_v",
			"rated voltage %s is below the trigger's on_v %s: the capacitor would be charged past its rating",
			fv(s.RatedV, "V"), fv(t.OnV, "V"))
	}
	if r.LeakV.set && !r.LeakA.set {
		c.fail("storage.leak_v", ErrValue, "leak_v is the voltage of a leakage measurement, but leak_a is not given")
	}
	if r.LeakA.set && !r.LeakV.set {
		s.LeakV = t.OnV
		c.check(s.LeakV > 0, "storage.leak_a", "give leak_v, the voltage at which leak_a was measured (no trigger on_v to assume)")
	}
	c.check(s.LeakV <= s.RatedV, "storage.leak_v", "leak_v %s is above the rated voltage %s", fv(s.LeakV, "V"), fv(s.RatedV, "V"))
	if r.BranchOhm.set != r.BranchF.set {
		key := "storage.branch_f"
		if r.BranchF.set {
			key = "storage.branch_ohm"
		}
		c.fail(key, ErrMissing, "the second branch needs both branch_ohm and branch_f")
	}
	if r.BranchOhm.set && s.Kind != Supercapacitor {
		c.fail("storage.branch_ohm", ErrValue, "a second R-C branch models supercapacitor charge redistribution; kind is %q", s.Kind)
	}
	return s
}

func (c *conv) trigger(r *rawTrigger) Trigger {
	var t Trigger
	t.Kind = TriggerKind(c.text("trigger.kind", r.Kind, true, string(Voltage), string(Timer), string(Plateau)))
	t.OnV = c.num("trigger.on_v", r.OnV, volts, t.Kind == Voltage)
	if t.Kind == Voltage {
		t.Release = Release(c.text("trigger.release", r.Release, false, string(ReleaseHold), string(ReleaseFixed)))
		if t.Release == "" {
			t.Release = ReleaseFixed
		}
	} else {
		c.forbid("trigger.release", r.Release, "release is for voltage triggers")
	}
	t.OffV = c.num("trigger.off_v", r.OffV, volts, t.Kind == Voltage && t.Release == ReleaseFixed)
	t.AccuracyPct = c.num("trigger.accuracy_pct", r.AccuracyPct, percent, false)
	t.QuiescentA = c.num("trigger.quiescent_a", r.QuiescentA, ampsNN, t.Release == ReleaseHold)
	hold := t.Release == ReleaseHold
	if hold {
		t.HoldF = c.num("trigger.hold_f", r.HoldF, farads, true)
		t.HysteresisV = c.num("trigger.hysteresis_v", r.HysteresisV, volts, true)
		t.DiodeV = c.num("trigger.diode_v", r.DiodeV, voltsNN, false)
		c.check(t.QuiescentA > 0, "trigger.quiescent_a", "must be more than zero: the hold capacitor is drained by the supervisor's quiescent current")
	} else {
		why := "hold_f, hysteresis_v and diode_v are for a voltage trigger with release = \"hold\""
		c.forbid("trigger.hold_f", r.HoldF, why)
		c.forbid("trigger.hysteresis_v", r.HysteresisV, why)
		c.forbid("trigger.diode_v", r.DiodeV, why)
	}
	switch t.Kind {
	case Timer:
		t.PeriodS = c.num("trigger.period_s", r.PeriodS, seconds, true)
		t.PulseS = c.num("trigger.pulse_s", r.PulseS, seconds, true)
		c.check(c.err != nil || t.PulseS < t.PeriodS, "trigger.pulse_s", "pulse %s must be shorter than the period %s",
			fv(t.PulseS, "s"), fv(t.PeriodS, "s"))
		c.forbid("trigger.threshold_a", r.ThresholdA, "threshold_a is for plateau triggers")
	case Plateau:
		t.ThresholdA = c.num("trigger.threshold_a", r.ThresholdA, amps, true)
		t.PulseS = c.num("trigger.pulse_s", r.PulseS, seconds, false)
		c.check(c.err != nil || (t.OffV > 0) != (t.PulseS > 0), "trigger",
			"a plateau trigger needs exactly one of off_v (release voltage) and pulse_s (fixed pulse)")
		c.forbid("trigger.period_s", r.PeriodS, "period_s is for timer triggers")
	default:
		c.forbid("trigger.period_s", r.PeriodS, "period_s is for timer triggers")
		c.forbid("trigger.pulse_s", r.PulseS, "pulse_s is for timer and plateau triggers")
		c.forbid("trigger.threshold_a", r.ThresholdA, "threshold_a is for plateau triggers")
	}
	if c.err != nil {
		return t
	}
	if t.OffV > 0 && t.OnV > 0 {
		c.check(t.OffV < t.OnV, "trigger.off_v", "off_v %s must be below on_v %s", fv(t.OffV, "V"), fv(t.OnV, "V"))
	}
	c.check(t.AccuracyPct < 100, "trigger.accuracy_pct", "%g %%: want a stated accuracy below 100 %%", t.AccuracyPct)
	if hold {
		c.check(t.DiodeV < t.OnV, "trigger.diode_v", "diode drop %s must be below on_v %s", fv(t.DiodeV, "V"), fv(t.OnV, "V"))
		vd, said := t.DiodeV, ""
		if !r.DiodeV.set {
			vd, said = AssumedHoldDiodeV, fmt.Sprintf(" (diode_v not given: %s assumed)", fv(AssumedHoldDiodeV, "V"))
		}
		c.check(t.HysteresisV < t.OnV-vd, "trigger.hysteresis_v", "hysteresis %s must be below the supervisor threshold on_v - diode_v = %s%s",
			fv(t.HysteresisV, "V"), fv(t.OnV-vd, "V"), said)
	}
	return t
}

func (c *conv) switchTable(r *rawSwitch) Switch {
	var s Switch
	s.OnOhm = c.num("switch.on_ohm", r.OnOhm, ohmsNN, false)
	s.DropV = c.num("switch.drop_v", r.DropV, voltsNN, false)
	c.check(c.err != nil || s.OnOhm == 0 || s.DropV == 0, "switch.drop_v",
		"give on_ohm (a MOSFET's on-resistance) or drop_v (a bipolar transistor's saturation drop), not both")
	return s
}

func (c *conv) load(r *rawLoad) LoadSpec {
	var l LoadSpec
	l.Kind = LoadKind(c.text("load.kind", r.Kind, true, string(Resistor), string(Motor)))
	if l.Kind == Resistor {
		l.Ohm = c.num("load.ohm", r.Ohm, ohms, true)
		why := "motor parameters need kind = \"motor\""
		for key, v := range map[string]rawValue{"load.armature_ohm": r.ArmatureOhm, "load.armature_h": r.ArmatureH,
			"load.back_emf_v_s": r.BackEMFVs, "load.inertia_kg_m2": r.InertiaKgM2, "load.friction_n_m": r.FrictionNm,
			"load.damping_n_m_s": r.DampingNmS} {
			if v.set {
				c.forbid(key, v, why)
			}
		}
	} else {
		c.forbid("load.ohm", r.Ohm, "ohm is for kind = \"resistor\"; a motor's winding resistance is armature_ohm")
		l.ArmatureOhm = c.num("load.armature_ohm", r.ArmatureOhm, ohms, l.Kind == Motor)
		l.ArmatureH = c.num("load.armature_h", r.ArmatureH, henries, false)
		l.BackEMFVs = c.num("load.back_emf_v_s", r.BackEMFVs, q{"V*s", units.NonNegative, "a back-EMF constant in V·s/rad, e.g. 0.001"}, false)
		l.InertiaKgM2 = c.num("load.inertia_kg_m2", r.InertiaKgM2, plainNN, false)
		l.FrictionNm = c.num("load.friction_n_m", r.FrictionNm, plainNN, false)
		l.DampingNmS = c.num("load.damping_n_m_s", r.DampingNmS, plainNN, false)
	}
	l.StartJ = c.num("load.start_j", r.StartJ, joules, false)
	l.StartA = c.num("load.start_a", r.StartA, ampsNN, false)
	return l
}

func (c *conv) cell(r *rawCell) Cell {
	var cl Cell
	cl.VocV = c.num("cell.voc_v", r.VocV, volts, true)
	cl.IscA = c.num("cell.isc_a", r.IscA, amps, true)
	cl.SeriesCells = int(c.integer("cell.series_cells", r.SeriesCells, 1, 1000, 1))
	cl.RefWm2 = c.num("cell.ref_w_m2", r.RefWm2, q{"W/m2", units.Positive, "an irradiance in W/m², e.g. 1000"}, false)
	if cl.RefWm2 == 0 {
		cl.RefWm2 = 1000
	}
	cl.Ideality = c.num("cell.ideality", r.Ideality, plainPos, false)
	cl.SaturationA = c.num("cell.saturation_a", r.SaturationA, amps, false)
	cl.SeriesOhm = c.num("cell.series_ohm", r.SeriesOhm, ohmsNN, false)
	cl.ShuntOhm = c.num("cell.shunt_ohm", r.ShuntOhm, ohms, false)
	cl.TempK = c.num("cell.temp_k", r.TempK, kelvin, false)
	if cl.TempK == 0 {
		cl.TempK = 298.15
	}
	if c.err != nil {
		return cl
	}
	c.check(cl.VocV/float64(cl.SeriesCells) <= MaxVocPerCellV, "cell.voc_v",
		"%s over %d cell(s) in series is %s per cell; a solar cell gives at most about %s: give series_cells",
		fv(cl.VocV, "V"), cl.SeriesCells, fv(cl.VocV/float64(cl.SeriesCells), "V"), fv(MaxVocPerCellV, "V"))
	// The single-diode model through (0, Isc) and (Voc, 0) needs Voc > Isc·Rs and
	// Rs + Rsh > Voc/Isc: otherwise the resistors alone would put the two points where
	// they are, with no diode current left.
	c.check(cl.VocV > cl.IscA*cl.SeriesOhm, "cell.series_ohm",
		"%s: the series resistance must be below voc_v/isc_a = %s, or the short-circuit current could not flow",
		fv(cl.SeriesOhm, units.Ohm), fv(cl.VocV/cl.IscA, units.Ohm))
	if cl.ShuntOhm > 0 {
		c.check(cl.ShuntOhm+cl.SeriesOhm > cl.VocV/cl.IscA, "cell.shunt_ohm",
			"%s: series plus shunt resistance must be above voc_v/isc_a = %s, or the shunt alone would hold the voltage below voc_v",
			fv(cl.ShuntOhm, units.Ohm), fv(cl.VocV/cl.IscA, units.Ohm))
	}
	return cl
}

func (c *conv) adc(r *rawADC) ADC {
	var a ADC
	a.Reference = Reference(c.text("adc.reference", r.Reference, true, string(RefAVCC), string(RefInternal)))
	a.ReferenceV = c.num("adc.reference_v", r.ReferenceV, volts, true)
	a.Bits = int(c.integer("adc.bits", r.Bits, 1, 24, 10))
	if a.Reference == RefInternal {
		c.check(c.err != nil || a.ReferenceV <= 2.75, "adc.reference_v",
			"%s: an internal band-gap reference is 1.1 V to 2.56 V; for the supply use reference = \"avcc\"", fv(a.ReferenceV, "V"))
	}
	return a
}

func (c *conv) channels(rs []rawChannel) []Channel {
	out := make([]Channel, len(rs))
	byNode := map[Node]int{}
	byADC := map[int]int{}
	for i, r := range rs {
		k := fmt.Sprintf("channel[%d].", i)
		ch := &out[i]
		ch.Node = Node(c.text(k+"node", r.Node, true, string(NodeVcap), string(NodeVcell), string(NodeVhold), string(NodeVload), string(NodeIload)))
		if !r.ADC.set {
			c.fail(k+"adc", ErrMissing, "required: the ADC input number, 0 to %d", MaxADCInputs-1)
		}
		ch.ADC = int(c.integer(k+"adc", r.ADC, 0, MaxADCInputs-1, 0))
		if c.err == nil && ch.Node == NodeVcap && ch.ADC != 0 {
			c.fail(k+"adc", ErrValue, "%d: the vcap channel is on ADC input 0 (the recorder writes ADC0 as vcap_v)", ch.ADC)
		}
		if ch.Node == NodeIload {
			why := "an iload channel reads a shunt (shunt_ohm, amp_gain), not a divider"
			c.forbid(k+"top_ohm", r.TopOhm, why)
			c.forbid(k+"bottom_ohm", r.BottomOhm, why)
			ch.ShuntOhm = c.num(k+"shunt_ohm", r.ShuntOhm, q{units.Ohm, units.Positive,
				"the current-sense shunt in the load's return, in Ω, e.g. 1 or \"100m\""}, true)
			ch.AmpGain = c.num(k+"amp_gain", r.AmpGain, plainPos, false)
			if !r.AmpGain.set {
				ch.AmpGain = 1
			}
		} else {
			why := fmt.Sprintf("shunt_ohm and amp_gain are for node = %q (the load current)", NodeIload)
			c.forbid(k+"shunt_ohm", r.ShuntOhm, why)
			c.forbid(k+"amp_gain", r.AmpGain, why)
		}
		ch.TopOhm = c.num(k+"top_ohm", r.TopOhm, ohmsNN, false)
		ch.BottomOhm = c.num(k+"bottom_ohm", r.BottomOhm, ohmsNN, false)
		if c.err == nil && r.BottomOhm.set && ch.BottomOhm == 0 {
			c.fail(k+"bottom_ohm", ErrValue, "0 Ω from the pin to ground would short the pin; leave bottom_ohm out when there is no bottom resistor")
		}
		ch.PinF = c.num(k+"pin_f", r.PinF, q{units.Farad, units.NonNegative, "a capacitance in F from the ADC pin to ground, e.g. \"100n\""}, false)
		ch.SeriesOhm = c.num(k+"series_ohm", r.SeriesOhm, ohmsNN, false)
		ch.Gain = c.num(k+"gain", r.Gain, plainPos, false)
		if !r.Gain.set {
			ch.Gain = 1
		}
		ch.OffsetV = c.num(k+"offset_v", r.OffsetV, voltsAny, false)
		if c.err != nil {
			return out
		}
		if j, dup := byNode[ch.Node]; dup {
			c.fail(k+"node", ErrValue, "node %q is already read by channel[%d]", ch.Node, j)
		}
		if j, dup := byADC[ch.ADC]; dup {
			c.fail(k+"adc", ErrValue, "ADC input %d is already used by channel[%d]", ch.ADC, j)
		}
		byNode[ch.Node], byADC[ch.ADC] = i, i
	}
	if _, ok := byNode[NodeVcap]; !ok {
		c.fail("channel[0].node", ErrMissing, "no channel reads the storage capacitor: one [[channel]] needs node = \"vcap\"")
	}
	return out
}

func (c *conv) calibration(r *rawCalibration) *Calibration {
	cal := &Calibration{}
	cal.ResistorOhm = c.num("calibration.resistor_ohm", r.ResistorOhm, ohms, true)
	cal.StartS = c.num("calibration.start_s", r.StartS, secondsNN, false)
	cal.EndS = c.num("calibration.end_s", r.EndS, secondsNN, false)
	c.check(c.err != nil || cal.EndS == 0 || cal.EndS > cal.StartS, "calibration.end_s",
		"end %s must be after start %s", fv(cal.EndS, "s"), fv(cal.StartS, "s"))
	return cal
}

func (c *conv) light(r *rawLight) *Light {
	l := &Light{}
	l.Kind = LightKind(c.text("light.kind", r.Kind, true, string(Constant), string(Windowsill)))
	if l.Kind == Constant {
		l.IrradianceWm2 = c.num("light.irradiance_w_m2", r.IrradianceWm2, wm2, true)
		why := "window and day settings need kind = \"windowsill\""
		for key, v := range map[string]rawValue{"light.date": r.Date, "light.latitude_deg": r.LatitudeDeg,
			"light.window_azimuth_deg": r.AzimuthDeg, "light.window_tilt_deg": r.TiltDeg,
			"light.diffuse_fraction": r.DiffuseFraction, "light.cloud_seed": r.CloudSeed} {
			if v.set {
				c.forbid(key, v, why)
			}
		}
		return l
	}
	c.forbid("light.irradiance_w_m2", r.IrradianceWm2, "irradiance_w_m2 is for kind = \"constant\"")
	l.Date = c.date("light.date", r.Date)
	l.LatitudeDeg = c.num("light.latitude_deg", r.LatitudeDeg, degrees, true)
	c.check(c.err != nil || (l.LatitudeDeg >= -90 && l.LatitudeDeg <= 90), "light.latitude_deg", "%g: want -90 to 90 degrees", l.LatitudeDeg)
	l.AzimuthDeg = 180
	if r.AzimuthDeg.set {
		l.AzimuthDeg = c.num("light.window_azimuth_deg", r.AzimuthDeg, degrees, false)
		c.check(c.err != nil || (l.AzimuthDeg >= 0 && l.AzimuthDeg <= 360), "light.window_azimuth_deg",
			"%g: want 0 to 360 degrees clockwise from north", l.AzimuthDeg)
	}
	l.TiltDeg = 90
	if r.TiltDeg.set {
		l.TiltDeg = c.num("light.window_tilt_deg", r.TiltDeg, degrees, false)
		c.check(c.err != nil || (l.TiltDeg >= 0 && l.TiltDeg <= 90), "light.window_tilt_deg",
			"%g: want 0 (flat, facing up) to 90 degrees (upright)", l.TiltDeg)
	}
	l.DiffuseFraction = 0.2
	if r.DiffuseFraction.set {
		l.DiffuseFraction = c.num("light.diffuse_fraction", r.DiffuseFraction, plainNN, false)
		c.check(c.err != nil || l.DiffuseFraction <= 1, "light.diffuse_fraction", "%g: want a fraction from 0 to 1", l.DiffuseFraction)
	}
	l.CloudSeed = c.integer("light.cloud_seed", r.CloudSeed, 0, 1<<62, 0)
	return l
}

// date reads a TOML local date (date = 2026-06-21) or the same as a string.
func (c *conv) date(key string, r rawValue) string {
	if c.err != nil {
		return ""
	}
	switch x := r.v.(type) {
	case nil:
		c.fail(key, ErrMissing, "required: the day, e.g. date = 2026-06-21")
	case time.Time:
		return x.Format(time.DateOnly)
	case string:
		d, err := time.Parse(time.DateOnly, x)
		if err != nil {
			c.failCause(key, ErrValue, err, "%q: want a day as YYYY-MM-DD", x)
			return ""
		}
		return d.Format(time.DateOnly)
	default:
		c.fail(key, ErrType, "%s is not a date; want a day as YYYY-MM-DD", tomlType(r.v))
	}
	return ""
}
