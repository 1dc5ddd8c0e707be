package profile

import (
	"capcycle/analyze/units"
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"
)

// Peak is the brightest light of a windowsill day: its irradiance and its time, seconds
// from midnight (solar time). The circuit model computes it (package model); this package
// only shows it.
type Peak struct {
	Wm2, AtS float64
}

// WriteCheck writes what "capcycle profile check" prints: the profile in words, each
// channel's ratio, full scale and volts per count, the derived figures, and the things
// worth a second look. peak may be nil (a light other than a windowsill day, or none).
func WriteCheck(w io.Writer, file string, p *Profile, d Derived, peak *Peak) error {
	s, t := p.Storage, p.Trigger
	F := units.Format
	fmt.Fprintf(w, "%s: %s is a valid profile\n", file, p.Name)
	if p.Notes != "" {
		fmt.Fprintf(w, "  %s\n", p.Notes)
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	row := func(label, format string, a ...any) { fmt.Fprintf(tw, "  %s\t%s\n", label, fmt.Sprintf(format, a...)) }

	fmt.Fprintln(tw, "circuit")
	row("storage", "%s %s, tolerance %s (%s to %s), rated %s", s.Kind, F(s.CapF, "F"), s.Tolerance,
		F(d.CapMinF, "F"), F(d.CapMaxF, "F"), F(s.RatedV, "V"))
	if s.BranchF > 0 {
		row("second branch", "%s through %s (τ %s)", F(s.BranchF, "F"), F(s.BranchOhm, units.Ohm), duration(s.BranchF*s.BranchOhm))
	}
	row("trigger", "%s", describeTrigger(t, p.Cell.VocV))
	row("load", "%s", describeLoad(p.Load))
	row("cell", "Voc %s, Isc %s, %d cell(s) in series, at %g W/m²", F(p.Cell.VocV, "V"), F(p.Cell.IscA, "A"),
		p.Cell.SeriesCells, p.Cell.RefWm2)
	row("ADC", "%d bits, reference %s = %s", p.ADC.Bits, p.ADC.Reference, F(p.ADC.ReferenceV, "V"))

	fmt.Fprintln(tw, "probe")
	for i, c := range d.Channels {
		ch := p.Channels[i]
		if ch.IsCurrent() {
			row(fmt.Sprintf("channel %d: %s", c.ADC, c.Node), "shunt %s × gain %.4g = %s/A at the pin, full scale %s, %s per count, peak load current %s",
				F(ch.ShuntOhm, units.Ohm), ch.AmpGain, F(ch.VoltsPerAmp(), "V"), F(c.FullScaleA, "A"), F(c.LSBA, "A"), F(c.ExpectedA, "A"))
			continue
		}
		pin := ""
		if ch.PinF > 0 {
			pin = fmt.Sprintf(", pin capacitor %s (the pin follows with τ %s)", F(ch.PinF, "F"), duration(c.PinTauS))
		}
		row(fmt.Sprintf("channel %d: %s", c.ADC, c.Node), "ratio %.4g (%s / %s), full scale %s, %s per count, draws %s at %s%s",
			c.Ratio, F(ch.TopOhm, units.Ohm), F(ch.BottomOhm, units.Ohm), F(c.FullScaleV, "V"), F(c.LSBV, "V"),
			F(c.LoadA, "A"), F(c.ExpectedV, "V"), pin)
	}
	row("probe load on vcap", "%s at %s (%s across the capacitor; alone it would drain it with τ %s)",
		F(d.ProbeLoadA, "A"), F(d.ProbeAtV, "V"), F(d.ProbeLoadOhm, units.Ohm), duration(d.ProbeTauS))

	fmt.Fprintln(tw, "derived")
	row("energy per pulse", "%s", orWhy(d.EnergyPerPulseJ, "J", "needs on_v and off_v",
		fmt.Sprintf(" = ½·C·(Von²−Voff²); %s to %s over the tolerance", F(d.EnergyMinJ, "J"), F(d.EnergyMaxJ, "J"))))
	row("stored at on_v", "%s", orWhy(d.StoredAtOnJ, "J", "needs on_v", " = ½·C·Von²"))
	leak := orWhy(d.LeakLimitA, "A", d.LeakLimitRule, " at "+F(s.RatedV, "V")+": "+d.LeakLimitRule)
	row("leakage limit", "%s", leak)
	if s.LeakA > 0 {
		row("leakage measured", "%s at %s", F(s.LeakA, "A"), F(s.LeakV, "V"))
	}
	if !math.IsNaN(d.HoldTimeS) {
		row("hold time", "%s = %s × %s / %s", duration(d.HoldTimeS), F(t.HoldF, "F"), F(t.HysteresisV, "V"), F(d.HoldDrainA, "A"))
	}
	row("first charge", "%s", orWhy(d.FirstChargeMinS, "s", "needs on_v", " at least, from 0 V at the rated Isc without losses"))
	row("recharge", "%s", orWhy(d.RechargeMinS, "s", "needs on_v and off_v", " at least, from release at the rated Isc without losses"))
	row("drain at on_v", "%s", orWhy(d.DrainAtOnA, "A", "needs on_v", " besides the load: probe, quiescent current, measured leakage"))
	row("light", "%s", describeLight(p, d, peak))
	if err := tw.Flush(); err != nil {
		return err
	}
	if len(d.Warnings) > 0 {
		fmt.Fprintln(w, "\nworth a second look:")
		for _, s := range d.Warnings {
			fmt.Fprintf(w, "  - %s\n", s)
		}
	}
	return nil
}

func describeTrigger(t Trigger, vocV float64) string {
	F := units.Format
	var b strings.Builder
	switch t.Kind {
	case Voltage:
		fmt.Fprintf(&b, "voltage, fires at %s", F(t.OnV, "V"))
		if t.Release == ReleaseHold {
			fmt.Fprintf(&b, ", hold capacitor %s releases after %s of hysteresis", F(t.HoldF, "F"), F(t.HysteresisV, "V"))
			if t.OffV > 0 {
				fmt.Fprintf(&b, " (nominal reset %s)", F(t.OffV, "V"))
			}
		} else {
			fmt.Fprintf(&b, ", releases at %s", F(t.OffV, "V"))
		}
	case Timer:
		fmt.Fprintf(&b, "timer, every %s for %s", duration(t.PeriodS), duration(t.PulseS))
	case Plateau:
		fmt.Fprintf(&b, "plateau, fires when the charging current falls below %s", F(t.ThresholdA, "A"))
		if t.OnV > 0 {
			fmt.Fprintf(&b, " at or above %s (on_v)", F(t.OnV, "V"))
		} else {
			fmt.Fprintf(&b, " at or above %s (half voc_v, or 50 mV above off_v)", F(PlateauArmV(&t, vocV), "V"))
		}
		if t.OffV > 0 {
			fmt.Fprintf(&b, ", releases at %s", F(t.OffV, "V"))
		} else {
			fmt.Fprintf(&b, ", pulse %s", duration(t.PulseS))
		}
	}
	if t.AccuracyPct > 0 {
		fmt.Fprintf(&b, ", ±%g %%", t.AccuracyPct)
	}
	if t.QuiescentA > 0 {
		fmt.Fprintf(&b, ", draws %s", F(t.QuiescentA, "A"))
	}
	return b.String()
}

// describeLight says what the [light] table gives the cell.
func describeLight(p *Profile, d Derived, peak *Peak) string {
	F := units.Format
	l := p.Light
	switch {
	case l == nil:
		return "no [light] table (the virtual robot of robot and demo needs one)"
	case l.Kind == Windowsill:
		s := fmt.Sprintf("a windowsill day, %s at %g°, the window facing %g°", l.Date, l.LatitudeDeg, l.AzimuthDeg)
		if peak != nil {
			voc, atOn, _ := CellInLight(p, peak.Wm2)
			s += fmt.Sprintf(": brightest %.3g W/m² at %s solar time, cell open-circuit voltage then about %s", peak.Wm2, Clock(peak.AtS), F(voc, "V"))
			if !math.IsNaN(atOn) {
				s += fmt.Sprintf(", at most %s at on_v", F(atOn, "A"))
			}
		}
		return s
	}
	s := fmt.Sprintf("constant %g W/m²: cell open-circuit voltage about %s", l.IrradianceWm2, F(d.LightVocV, "V"))
	if !math.IsNaN(d.LightCellA) {
		s += fmt.Sprintf(", at most %s at on_v", F(d.LightCellA, "A"))
	}
	return s
}

func describeLoad(l LoadSpec) string {
	if l.Kind == Resistor {
		return "resistor " + units.Format(l.Ohm, units.Ohm)
	}
	s := "motor, armature " + units.Format(l.ArmatureOhm, units.Ohm)
	if l.BackEMFVs > 0 {
		s += ", back-EMF " + units.Format(l.BackEMFVs, "V·s/rad")
	}
	return s
}

// orWhy formats v with unit and a tail, or says why it is not known.
func orWhy(v float64, unit, why, tail string) string {
	if math.IsNaN(v) {
		return "not known: " + why
	}
	if unit == "s" {
		return duration(v) + tail
	}
	return units.Format(v, unit) + tail
}

// duration formats a span of seconds as a person reads it.
func duration(s float64) string { return units.Duration(s) }

// Clock formats seconds from midnight as HH:MM.
func Clock(s float64) string {
	m := int(s / 60)
	return fmt.Sprintf("%02d:%02d", m/60, m%60)
}
